"""Genotype reasoning for one person: sex check, phase, de novo status and genotype fit per gene.

Everything here reads :class:`~irdtriage.models.Call` objects (one per sample per split
allele: ``gt`` 0 = reference, 1 = this allele, 2 = another allele, None = missing) and
returns plain dataclasses with a reason for every decision.

Rules used (common practice: Mendelian inheritance, no sources beyond textbook genetics)
-------------------------------------------------------------------------------------
* Phase from a read-backed or population-phased genotype: two ``|`` genotypes in the same
  phase set (VCF ``PS``; phased genotypes without ``PS`` form one set, VCF 4.2 §1.4.2,
  from memory) are in cis when the allele sits on the same haplotype index, else in trans.
* Phase from parents: each parent carries a different one of the two alleles -> in trans;
  one parent carries both and the other neither -> in cis; anything else -> unknown.
* De novo: the proband carries the allele, both parents are confidently homozygous
  reference (depth >= ``min_dp``, GQ >= ``min_gq``) with no alternate reads. On chrX
  outside the pseudoautosomal regions a son's allele comes from his mother only.

Qualifying-allele policy (``assess_gene``)
-----------------------------------------
Findings classed Pathogenic or Likely pathogenic are *strong* alleles. Findings of
Uncertain significance are *candidate* alleles: they may complete a biallelic or dominant
genotype fit (so a recessive gene is not dropped because one allele is a VUS), but the
hypothesis built on them is weaker and is ranked and reported as a candidate, never as
causative. Findings that fail the quality thresholds (``Finding.quality_flags``) never
qualify; they are named in the notes so a reviewer can look at them. Benign and Likely
benign findings never qualify, even when a caller lists those classes in ``qualifying``:
no genotype fit (homozygous, hemizygous, biallelic, dominant) is ever built from them.

Disease mechanism per inheritance mode (``irdtriage.mechanism``)
---------------------------------------------------------------
Each mode of the gene (``Gene.modes``) names the allele classes its disease arises from. An
allele counts towards a mode's fit only when the mode accepts its class
(:func:`irdtriage.mechanism.mode_accepts`): a heterozygous *null* allele (Sequence Ontology
consequence in ``NULL_CONSEQUENCES``) completes a dominant fit only where the dominant mode lists
``LOF`` (haploinsufficiency, e.g. PRPF31, PRPH2, TOPORS) or an allele rule that matches it (a
truncation escaping nonsense-mediated decay where that is how the dominant disease arises, e.g.
a last-exon CRX frameshift). Otherwise it is left out of the dominant mode with a plain reason and
stays a recessive carrier allele when the gene has a recessive mode. This follows the first
question of the ClinGen SVI PVS1 decision tree (is loss of function a disease mechanism; Abou
Tayoun et al., Hum Mutat 2018;39:1517-1524) asked per mode. Modes whose disease is not retinal
(``retinal: false``, e.g. ELOVL4 recessive ichthyosis syndrome, OFD1 X-linked dominant
oral-facial-digital syndrome) make no genotype fit; a complete genotype in such a mode is named
in the notes. Genes without curated modes use the default rule of
:func:`irdtriage.mechanism.default_modes`, which reproduces the gene-level rule used before modes.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from typing import Iterable, NamedTuple, Optional, Sequence

from . import heteroplasmy
from .mechanism import NULL_CONSEQUENCES, mode_accepts, modes_of
from .models import Call, Finding, Gene, Variant

# ---------------------------------------------------------------------------
# Pseudoautosomal regions, 1-based inclusive, on chrX.
# GRCh38: PAR1 X:10,001-2,781,479, PAR2 X:155,701,383-156,030,895 (GRC definitions as
# listed by Ensembl, "Pseudoautosomal regions in human").
# GRCh37: PAR1 X:60,001-2,699,520 (GRC, as quoted by UCSC Genome Browser support);
# PAR2 X:154,931,044-155,260,560 (from memory; GRC GRCh37 assembly report).
# ---------------------------------------------------------------------------
PAR = {
    "GRCh38": ((10_001, 2_781_479), (155_701_383, 156_030_895)),
    "GRCh37": ((60_001, 2_699_520), (154_931_044, 155_260_560)),
}

STRONG_CLASSES = ("Pathogenic", "Likely pathogenic")
CANDIDATE_CLASSES = ("Uncertain significance",)
BENIGN_CLASSES = ("Benign", "Likely benign")
def is_null(f: Finding) -> bool:
    """True when the finding's annotated consequence predicts a null allele (``NULL_CONSEQUENCES``)."""
    return any(c in NULL_CONSEQUENCES for c in (f.annotation.consequence or ()))


def bare_chrom(chrom: str) -> str:
    c = chrom[3:] if chrom.lower().startswith("chr") else chrom
    return "MT" if c in ("M", "MT") else c


def in_par(chrom: str, pos: int, build: Optional[str] = None) -> bool:
    """True when chrX:pos lies in a pseudoautosomal region (either build when ``build`` is None)."""
    if bare_chrom(chrom) != "X":
        return False
    builds = [build] if build in PAR else list(PAR)
    return any(lo <= pos <= hi for b in builds for lo, hi in PAR[b])


def is_x_nonpar(variant: Variant, build: Optional[str] = None) -> bool:
    return bare_chrom(variant.chrom) == "X" and not in_par(variant.chrom, variant.pos, build)


# ---------------------------------------------------------------------------
# Allelic state once the sex is settled
# ---------------------------------------------------------------------------
# Mitochondrial calls: a call whose allele fraction (AD) is at least this share is taken as
# homoplasmic, below it as heteroplasmic (panels/heteroplasmy.yaml, with its source: the gnomAD
# mtDNA convention). A 0/1 chrM call is heteroplasmic whatever its reads.
HOMOPLASMIC_MIN_FRACTION = heteroplasmy.bundled().homoplasmic_min_fraction


class AllelicState(NamedTuple):
    zygosity: str  # one of models.ZYGOSITIES
    fraction: Optional[float] = None  # share of reads carrying the allele (chrM calls with AD), else None


def allelic_state(call: Call, chrom: str, pos: int, sex: Optional[str],
                  build: Optional[str] = None) -> AllelicState:
    """Allelic state of one call on chrX, chrY or chrM, given the person's chromosomal sex.

    Pure: reads the call, returns the label (``models.ZYGOSITIES``); other chromosomes, and
    chrX/chrY when the sex is unknown, keep the label the intake gave (``call.zygosity``).

    * male, chrX outside the PARs or chrY: a call without a reference allele (``1/1``, haploid
      ``1``) is **hemizygous** (one copy of the locus); a heterozygous call stays
      **heterozygous** (a quality or sex problem, see :func:`male_heterozygous_x_calls`). chrY
      PARs are hard-masked in the usual GRCh38/GRCh37 analysis sets (common practice), so all
      of chrY is taken as single-copy.
    * male, chrX inside a PAR: diploid like an autosome; a one-allele GT is a **haploid call**.
    * female, chrX: diploid; a one-allele GT is a **haploid call**.
    * chrM (any sex): **heteroplasmic** when the GT holds the reference or another allele too
      (``0/1``) or when the AD fraction is below ``HOMOPLASMIC_MIN_FRACTION``, else
      **homoplasmic**; the fraction is returned when AD is present.
    """
    gt = call.gt
    called = [a for a in gt if a is not None]
    if not called:
        return AllelicState("no call")
    copies = sum(1 for a in called if a == 1)
    if copies == 0:
        return AllelicState("reference")
    c = bare_chrom(chrom)
    sex_n = sex.upper() if isinstance(sex, str) else None
    if c == "MT":
        frac = call.allele_balance
        mixed = any(a != 1 for a in called)
        if mixed or (frac is not None and frac < HOMOPLASMIC_MIN_FRACTION):
            return AllelicState("heteroplasmic", frac)
        return AllelicState("homoplasmic", frac)
    single_copy = all(a == 1 for a in gt)  # 1/1 or 1: no reference or other allele in the call
    if c == "Y" and sex_n == "MALE":
        return AllelicState("hemizygous" if single_copy else "heterozygous")
    if c == "X" and sex_n in ("MALE", "FEMALE"):
        if sex_n == "MALE" and not in_par(chrom, pos, build):
            return AllelicState("hemizygous" if single_copy else "heterozygous")
        if len(gt) == 1:
            return AllelicState("haploid call")
        return AllelicState("homozygous" if copies == len(gt) else "heterozygous")
    return AllelicState(call.zygosity)


def settle_zygosity(variants: Iterable[Variant], sexes: dict[str, Optional[str]],
                    build: Optional[str] = None) -> int:
    """Set every call's ``zygosity`` from :func:`allelic_state` for the people in ``sexes``
    (sample id -> "MALE"/"FEMALE"/None); chrM calls of every sample. Returns how many labels
    changed. The pipeline calls this once, right after the sex is settled, so every output
    (built from the result dict) shows the same allelic state."""
    changed = 0
    for v in variants:
        c = v.chrom_bare
        if c not in ("X", "Y", "MT"):
            continue
        for sid, call in v.calls.items():
            if c != "MT" and sexes.get(sid) is None:
                continue
            state = allelic_state(call, v.chrom, v.pos, sexes.get(sid), build).zygosity
            if state != call.zygosity:
                call.zygosity = state
                changed += 1
    return changed


def male_heterozygous_x(call: Optional[Call], variant: Variant, sex: Optional[str],
                        build: Optional[str] = None) -> bool:
    """True for a heterozygous call (reference or another allele beside this one) of a male on
    chrX outside the PARs or on chrY: one copy is expected there, so it is a quality or sex problem."""
    if call is None or not isinstance(sex, str) or sex.upper() != "MALE" or not carries(call):
        return False
    if not (is_x_nonpar(variant, build) or bare_chrom(variant.chrom) == "Y"):
        return False
    return any(a != 1 for a in call.gt if a is not None) and len(call.gt) >= 2


def male_heterozygous_x_warning(findings: Sequence[Finding], sexes: dict[str, Optional[str]],
                                build: Optional[str] = None, shown: int = 5) -> Optional[str]:
    """One warning naming the findings whose call is heterozygous in a male where one copy is
    expected (chrX outside the PARs, chrY); None when there are none."""
    items = []
    for f in findings:
        for sid, sex in sexes.items():
            c = f.variant.calls.get(sid)
            if male_heterozygous_x(c, f.variant, sex, build):
                items.append(f"{f.id} ({f.gene} {f.variant.key}) {_gt(c)} in {sid}, allele balance {_fmt_ab(c)}")
    if not items:
        return None
    more = f" and {len(items) - shown} more" if len(items) > shown else ""
    return ("heterozygous call(s) in a male on chrX outside the pseudoautosomal regions, where one copy is "
            "expected: " + "; ".join(items[:shown]) + more + ". Kept as heterozygous and not counted as "
            "hemizygous: check the stated sex, sample contamination, XXY or a mapping artefact")


# ---------------------------------------------------------------------------
# Sex check
# ---------------------------------------------------------------------------
@dataclass
class SexInference:
    sex: Optional[str]  # "MALE", "FEMALE" or None when the data cannot tell
    het_fraction: Optional[float]  # heterozygous / all non-reference calls on chrX outside the PARs
    n_sites: int
    warning: str = ""


# Thresholds (common practice, no single source): males show almost no heterozygous calls
# on chrX outside the PARs (only genotyping errors), females show many.
MALE_MAX_HET_FRACTION = 0.10
FEMALE_MIN_HET_FRACTION = 0.25
MIN_SEX_SITES = 10


def infer_sex(variants: Iterable[Variant], sample: str, stated: Optional[str] = None,
              build: Optional[str] = None, min_sites: int = MIN_SEX_SITES) -> SexInference:
    """Infer chromosomal sex from heterozygosity on chrX outside the pseudoautosomal regions.

    Counts non-reference calls of ``sample`` at chrX non-PAR sites (each original VCF site
    once); haploid calls count as non-heterozygous. Returns ``sex=None`` with fewer than
    ``min_sites`` sites or a fraction between the two thresholds, and a warning when the
    inference contradicts ``stated``.
    """
    seen: set[tuple[str, int]] = set()
    het = nonref = 0
    for v in variants:
        if not is_x_nonpar(v, build):
            continue
        site = (bare_chrom(v.chrom), v.original_pos or v.pos)
        if site in seen:
            continue
        c = v.calls.get(sample)
        if c is None or any(a is None for a in c.gt) or not c.gt:
            continue
        if all(a == 0 for a in c.gt):
            continue
        seen.add(site)
        nonref += 1
        if len(c.gt) >= 2 and len(set(c.gt)) > 1:
            het += 1
    stated_n = stated.upper() if isinstance(stated, str) else None
    if nonref < min_sites:
        return SexInference(None, (het / nonref) if nonref else None, nonref,
                            "" if stated_n else f"sex not inferred: only {nonref} non-reference chrX "
                                                 f"sites outside the pseudoautosomal regions (need {min_sites})")
    frac = het / nonref
    if frac <= MALE_MAX_HET_FRACTION:
        sex = "MALE"
    elif frac >= FEMALE_MIN_HET_FRACTION:
        sex = "FEMALE"
    else:
        sex = None
    warning = ""
    if sex is None:
        warning = (f"sex unclear from chrX: heterozygous fraction {frac:.2f} over {nonref} sites "
                   f"(male <= {MALE_MAX_HET_FRACTION}, female >= {FEMALE_MIN_HET_FRACTION})")
    elif stated_n in ("MALE", "FEMALE") and stated_n != sex:
        warning = (f"stated sex {stated_n} but chrX heterozygosity suggests {sex} "
                   f"(heterozygous fraction {frac:.2f} over {nonref} sites): check for a sample mix-up "
                   f"or a sex-chromosome aneuploidy")
    return SexInference(sex, frac, nonref, warning)


class StatedSex(NamedTuple):
    sex: Optional[str]  # "MALE", "FEMALE" or None
    source: str  # "stated" (--sex), "phenopacket", "ped" or "unknown"
    warnings: list[str]


def settle_stated_sex(explicit: Optional[str], explicit_given: bool = False,
                      phenopacket_sex: Optional[str] = None, phenopacket_path: Optional[str] = None,
                      ped_sex: Optional[str] = None, ped_path: Optional[str] = None,
                      ped_line: Optional[int] = None) -> StatedSex:
    """The sex the sources *state* (before any inference from chrX).

    ``explicit`` is the normalised ``--sex`` value (``explicit_given`` True when the option was
    used, even as "unknown"). When the phenopacket and the PED file state different sexes and
    no ``--sex`` decides, raises :class:`InputError`; an explicit ``--sex`` that differs from a
    stated source wins and the disagreement is returned as a warning.
    """
    from .errors import InputError

    stated = [(name, value, where) for name, value, where in (
        ("phenopacket", phenopacket_sex, phenopacket_path),
        ("PED file", ped_sex, f"{ped_path}:{ped_line}" if ped_path and ped_line else ped_path),
    ) if value is not None]
    if explicit_given:
        warns = [f"--sex {explicit.lower() if explicit else 'unknown'} overrides the {name}, which states "
                 f"{value.lower()} ({where})" for name, value, where in stated if value != explicit]
        return StatedSex(explicit, "stated", warns)
    if len({v for _, v, _ in stated}) > 1:
        (n1, v1, w1), (n2, v2, w2) = stated[0], stated[1]
        raise InputError(f"the {n1} states sex {v1.lower()} but the {n2} ({w2}) states {v2.lower()}; "
                         f"give --sex male or --sex female to decide", w1)
    if stated:
        name, value, _ = stated[0]
        return StatedSex(value, "phenopacket" if name == "phenopacket" else "ped", [])
    return StatedSex(None, "unknown", [])


# ---------------------------------------------------------------------------
# Call helpers
# ---------------------------------------------------------------------------
def _call(f: Finding, sample: Optional[str]) -> Optional[Call]:
    if sample is None:
        return None
    return f.variant.calls.get(sample)


def _called(c: Optional[Call]) -> bool:
    return c is not None and bool(c.gt) and all(a is not None for a in c.gt)


def carries(c: Optional[Call]) -> Optional[bool]:
    """True/False whether the sample carries this allele; None when the genotype is missing."""
    if c is None or not c.gt:
        return None
    if any(a == 1 for a in c.gt):
        return True
    if all(a is not None for a in c.gt):
        return False
    return None


def _confident(c: Optional[Call], min_dp: int, min_gq: int) -> bool:
    if not _called(c):
        return False
    if c.dp is not None and c.dp < min_dp:
        return False
    if c.gq is not None and c.gq < min_gq:
        return False
    return True


def _class(f: Finding) -> Optional[str]:
    return f.classification.classification if f.classification is not None else None


def _fmt_ab(c: Optional[Call]) -> str:
    ab = c.allele_balance if c is not None else None
    return "n/a" if ab is None else f"{ab:.2f}"


# ---------------------------------------------------------------------------
# Phase
# ---------------------------------------------------------------------------
class Phase(NamedTuple):
    phase: str  # "trans", "cis" or "unknown"
    how: str


def phase_between(a: Finding, b: Finding, proband: str, mother: Optional[str] = None,
                  father: Optional[str] = None, min_dp: int = 10, min_gq: int = 20) -> Phase:
    """Phase of two alleles the proband carries, from phased genotypes or from the parents."""
    ca, cb = _call(a, proband), _call(b, proband)
    if not carries(ca) or not carries(cb):
        return Phase("unknown", "the proband does not carry both alleles")
    from .sv.pairing import trans_by_position  # a small variant inside a heterozygous deletion

    by_position = trans_by_position(a, b, proband)
    if by_position is not None:
        return Phase(*by_position)
    if ca.alt_copies >= 2 or cb.alt_copies >= 2:
        return Phase("unknown", "one allele is homozygous, so phase between the two is not defined")
    if len(ca.gt) < 2 or len(cb.gt) < 2:
        return Phase("unknown", "haploid call: phase not defined")

    # 1. read-backed / statistical phasing in one phase set
    if ca.phased and cb.phased and ca.phase_set == cb.phase_set:
        ps = "no PS (one phase set)" if ca.phase_set is None else f"PS {ca.phase_set}"
        same = ca.gt.index(1) == cb.gt.index(1)
        return Phase("cis" if same else "trans",
                     f"phased genotypes {_gt(ca)} and {_gt(cb)} in the same phase set ({ps})")

    # 2. parental genotypes
    def parent_carries(f: Finding, pid: Optional[str]) -> Optional[bool]:
        c = _call(f, pid)
        k = carries(c)
        if k is False and not _confident(c, min_dp, min_gq):
            return None  # a low-quality reference call does not exclude carriage
        return k

    ma, mb = parent_carries(a, mother), parent_carries(b, mother)
    fa, fb = parent_carries(a, father), parent_carries(b, father)
    names = (f"{a.id}", f"{b.id}")
    if mother is None and father is None:
        extra = ""
        if ca.phased and cb.phased:
            extra = f" (phased genotypes are in different phase sets: {ca.phase_set} and {cb.phase_set})"
        return Phase("unknown", "no phased genotypes in one phase set and no parental genotypes" + extra)
    if None not in (ma, mb, fa, fb):
        if ma and not mb and fb and not fa:
            return Phase("trans", f"mother carries {names[0]} only, father carries {names[1]} only")
        if fa and not fb and mb and not ma:
            return Phase("trans", f"father carries {names[0]} only, mother carries {names[1]} only")
        if ma and mb and not fa and not fb:
            return Phase("cis", "mother carries both alleles, father neither")
        if fa and fb and not ma and not mb:
            return Phase("cis", "father carries both alleles, mother neither")
        if not (ma or mb or fa or fb):
            return Phase("unknown", "neither parent carries either allele (both apparently de novo)")
        if (ma or fa) != (mb or fb):
            novo = names[1] if (ma or fa) else names[0]
            inh = names[0] if novo == names[1] else names[1]
            return Phase("unknown", f"{inh} is inherited but {novo} is absent from both parents (apparently "
                                    f"de novo); parental genotypes cannot place it on a haplotype")
        return Phase("unknown", "both alleles are present in the parents in a pattern that does not resolve phase")
    # one parent only (or missing calls)
    for who, x, y in (("mother", ma, mb), ("father", fa, fb)):
        if x is not None and y is not None and x != y:
            carried = names[0] if x else names[1]
            other = names[1] if x else names[0]
            return Phase("unknown", f"only the {who} is informative: she/he carries {carried} but not {other}; "
                                    f"{other} probably came from the other parent (in trans) unless it arose de "
                                    f"novo - test the other parent")
    return Phase("unknown", "parental genotypes missing, low quality or uninformative")


def _gt(c: Call) -> str:
    sep = "|" if c.phased else "/"
    return sep.join("." if x is None else str(x) for x in c.gt)


# ---------------------------------------------------------------------------
# De novo
# ---------------------------------------------------------------------------
def de_novo_evidence(finding: Finding, proband: str, mother: Optional[str], father: Optional[str],
                     min_dp: int = 10, min_gq: int = 20, proband_sex: Optional[str] = None,
                     build: Optional[str] = None) -> tuple[Optional[bool], str]:
    """(decision, reason): True de novo, False inherited / parental alt reads, None not decidable."""
    pc = _call(finding, proband)
    if not carries(pc):
        return False, "the proband does not carry the allele"
    if not _confident(pc, min_dp, min_gq):
        return None, f"proband call below quality (DP {pc.dp}, GQ {pc.gq}; need DP>={min_dp}, GQ>={min_gq})"
    son_on_x = (proband_sex or "").upper() == "MALE" and is_x_nonpar(finding.variant, build)
    parents = [("mother", mother)] if son_on_x else [("mother", mother), ("father", father)]
    parts: list[str] = []
    undecided: list[str] = []
    for who, pid in parents:
        if pid is None:
            undecided.append(f"no {who} genotype")
            continue
        c = _call(finding, pid)
        if c is None or not _called(c):
            undecided.append(f"{who} genotype missing")
            continue
        if carries(c):
            return False, f"{who} carries the allele ({_gt(c)})"
        if c.ad_alt is not None and c.ad_alt > 0:
            return False, (f"{who} is called reference but has {c.ad_alt} alternate read(s): possible "
                           f"parental mosaicism or inheritance, not counted as de novo")
        if c.dp is None:
            undecided.append(f"{who} depth unknown")
            continue
        if c.dp < min_dp or (c.gq is not None and c.gq < min_gq):
            undecided.append(f"{who} reference call has low support (DP {c.dp}, GQ {c.gq})")
            continue
        parts.append(f"{who} reference ({_gt(c)}, DP {c.dp}, GQ {c.gq})")
    if undecided:
        return None, "; ".join(undecided + parts)
    why = "; ".join(parts)
    if son_on_x:
        why += " (chrX outside the PARs in a male: father's genotype not needed)"
    return True, why


def is_de_novo(finding: Finding, proband: str, mother: Optional[str], father: Optional[str],
               min_dp: int = 10, min_gq: int = 20, proband_sex: Optional[str] = None,
               build: Optional[str] = None) -> Optional[bool]:
    return de_novo_evidence(finding, proband, mother, father, min_dp, min_gq, proband_sex, build)[0]


# ---------------------------------------------------------------------------
# Genotype fit per gene
# ---------------------------------------------------------------------------
@dataclass
class GenotypeAssessment:
    fit: str  # one of models.GENOTYPE_FITS
    phase: str = ""  # "in trans (parents)", "in cis (phased genotypes)", "unknown", "" when not relevant
    qualifying_ids: list[str] = field(default_factory=list)  # findings that make up the fit
    pairs: list[tuple[str, str, str, str]] = field(default_factory=list)  # (id_a, id_b, phase, how)
    notes: list[str] = field(default_factory=list)
    possible_deletion: bool = False
    mode: str = ""  # the inheritance mode the fit belongs to: "AR", "AD", "XLR", "XLD" or ""
    strong_alleles: int = 0  # Pathogenic / Likely pathogenic alleles in the fit (homozygous counts 2)
    candidate_alleles: int = 0  # Uncertain significance alleles in the fit
    manifesting_carrier_possible: bool = False  # heterozygous female in an X-linked recessive gene
    de_novo_ids: list[str] = field(default_factory=list)
    excluded_ids: list[str] = field(default_factory=list)  # carried but failing quality or unclassified


# Order used to choose between the fits of a gene with several modes (lower is better).
FIT_PREFERENCE = {
    "biallelic in trans": 0,
    "homozygous": 1,
    "hemizygous": 1,
    "mitochondrial homoplasmic": 1,
    "mitochondrial heteroplasmic": 2,
    "mitochondrial heteroplasmy below disease level": 6,
    "de novo": 2,
    "biallelic phase unknown": 3,
    "heterozygous in a dominant gene": 4,
    "single heterozygous in a recessive gene": 6,
    "no qualifying finding": 7,
}

# Genes where heterozygous females commonly show signs (from memory: RPGR and CHM carriers
# often have fundus changes; other XL genes may too).
MANIFESTING_CARRIER_GENES = ("RPGR", "RP2", "CHM")


def assess_gene(gene: Gene, findings: Sequence[Finding], proband: str, sex: Optional[str],
                mother: Optional[str] = None, father: Optional[str] = None,
                qualifying: Sequence[str] = ("Pathogenic", "Likely pathogenic", "Uncertain significance"),
                build: Optional[str] = None, context: Sequence[Variant] = (),
                min_dp: int = 10, min_gq: int = 20) -> GenotypeAssessment:
    """Decide how the proband's findings in ``gene`` fit the gene's inheritance.

    ``context``: other variants (any class) near the gene, used only to look for
    heterozygous calls when a homozygous call might hide a deletion on the other allele.
    """
    sex_n = sex.upper() if isinstance(sex, str) else None
    notes: list[str] = []
    alleles: list[tuple[Finding, Call]] = []
    excluded: list[str] = []
    for f in findings:
        c = _call(f, proband)
        if not carries(c):
            continue
        cls = _class(f)
        if not f.passes_quality:
            excluded.append(f.id)
            notes.append(f"{f.id} not counted: failed quality ({'; '.join(f.quality_flags)})")
            continue
        if cls is None:
            excluded.append(f.id)
            notes.append(f"{f.id} not counted: not classified")
            continue
        if cls not in qualifying:
            continue
        if cls in BENIGN_CLASSES:
            notes.append(f"{f.id} not counted: {cls} findings never make up a genotype fit")
            continue
        alleles.append((f, c))

    x_nonpar = [f for f, _ in alleles if is_x_nonpar(f.variant, build)]
    specs = modes_of(gene)
    nuclear = [m for m in gene.inheritance if m in ("AR", "AD", "XLR", "XLD")]
    modes = [m for m in nuclear if m not in specs or specs[m].retinal]
    off_modes = [m for m in nuclear if m not in modes]
    if "MT" in gene.inheritance and not nuclear:
        mt = [(f, c) for f, c in alleles if bare_chrom(f.variant.chrom) == "MT"]
        return _mitochondrial(gene, accepted_mt(gene, mt, notes), proband, mother, notes, excluded, min_dp, min_gq)
    if not alleles:
        return GenotypeAssessment("no qualifying finding", notes=notes, excluded_ids=excluded)

    # A male has one copy of chrX outside the PARs: a call with no reference allele there is
    # hemizygous, a heterozygous one is a quality or sex problem and is never counted as
    # hemizygous; PAR calls are diploid (Mendelian genetics, common practice).
    male_hemi: list[tuple[Finding, Call]] = []
    male_par: list[tuple[Finding, Call]] = []
    if sex_n == "MALE":
        for f, c in alleles:
            if not is_x_nonpar(f.variant, build):
                male_par.append((f, c))
            elif male_heterozygous_x(c, f.variant, sex_n, build):
                notes.append(f"{f.id} is called {_gt(c)} in a male on chrX outside the PARs (allele balance "
                             f"{_fmt_ab(c)}): not counted as hemizygous - check the stated sex, sample "
                             f"contamination, XXY or a mapping artefact")
            else:
                male_hemi.append((f, c))
    for f, c in alleles:
        expected_one = sex_n != "FEMALE" and is_x_nonpar(f.variant, build)  # unknown sex: may be male
        if len(c.gt) == 1 and not expected_one:
            notes.append(f"{f.id} is a haploid call ({_gt(c)}) where two copies are expected: a caller or "
                         f"copy-number problem to review; counted as one allele, never as homozygous")

    def accepted(mode: str, pool: list) -> list:
        """The alleles of ``pool`` whose class causes ``mode``'s disease; notes name the others."""
        spec = specs.get(mode)
        if spec is None:
            return pool
        keep, refused = split_by_mode(spec, pool)
        for f, why in refused if mode in modes else ():
            carrier = (" (it stays a recessive carrier allele)" if mode in ("AD", "XLD") and
                       any(m in ("AR", "XLR") for m in modes) else "")
            note = f"{f.id} not counted for {mode}: {why}{carrier}"
            if note not in notes:
                notes.append(note)
        return keep

    def fit_for(mode: str) -> GenotypeAssessment:
        pool, hemi, par = accepted(mode, alleles), accepted(mode, male_hemi), accepted(mode, male_par)
        return _fit_for_mode(gene, mode, pool, hemi, par, sex_n, proband, mother, father, build, context,
                             min_dp, min_gq)

    options: list[GenotypeAssessment] = [fit_for(mode) for mode in modes]
    off_notes = []
    for mode in off_modes:
        o = fit_for(mode)
        spec = specs[mode]
        if o.fit not in ("no qualifying finding", "single heterozygous in a recessive gene"):
            off_notes.append(f"the genotype would fit {mode} ({o.fit}: {', '.join(o.qualifying_ids)}), but that "
                             f"disease ({'; '.join(spec.conditions)}) is not retinal: not counted as a retinal fit")
        else:
            off_notes.append(f"{mode} ({'; '.join(spec.conditions)}) is not a retinal disease and makes no "
                             f"genotype fit here")
    if not options:
        return GenotypeAssessment("no qualifying finding", notes=notes + off_notes, excluded_ids=excluded)
    best = min(options, key=lambda o: (FIT_PREFERENCE[o.fit], -o.strong_alleles, -len(o.qualifying_ids)))
    best.notes = notes + best.notes + off_notes
    best.excluded_ids = excluded
    if len(modes) > 1:
        alts = ", ".join(f"{o.mode}: {o.fit}" for o in options if o is not best)
        best.notes.append(f"gene has several inheritance modes ({'/'.join(modes)}); chose {best.mode} "
                          f"({best.fit}) as the best-supported fit; other modes: {alts}")
        if best.mode in ("AD", "XLD") and any(m in ("AR", "XLR") for m in modes):
            best.notes.append("check that the allele is known to act dominantly: many alleles in genes with "
                              "both modes act only recessively (common practice)")
    if x_nonpar and sex_n is None and any(m in ("XLR", "XLD") for m in nuclear):
        best.notes.append("sex unknown: chrX calls interpreted as diploid")
    return best


def _fit_for_mode(gene, mode, alleles, male_hemi, male_par, sex_n, proband, mother, father, build, context,
                  min_dp, min_gq) -> GenotypeAssessment:
    """The genotype fit of one inheritance mode from the alleles that mode accepts."""
    if not (alleles or male_hemi or male_par):
        return GenotypeAssessment("no qualifying finding", mode=mode)
    if mode in ("XLR", "XLD") and sex_n == "MALE":
        if male_hemi:
            opt = _hemizygous(male_hemi, mode, proband, mother, build, min_dp, min_gq)
        elif male_par and mode == "XLR":
            opt = _recessive(gene, male_par, mode, proband, mother, father, build, context, min_dp, min_gq)
            opt.notes.insert(0, "pseudoautosomal call(s) in a male: two copies, assessed as diploid")
        elif male_par:
            opt = _dominant(male_par, mode, proband, mother, father, sex_n, build, min_dp, min_gq)
            opt.notes.insert(0, "pseudoautosomal call(s) in a male: two copies, assessed as diploid")
        else:
            opt = GenotypeAssessment("no qualifying finding", mode=mode)
    elif mode in ("AR",) or (mode == "XLR" and sex_n != "MALE"):
        if not alleles:
            return GenotypeAssessment("no qualifying finding", mode=mode)
        opt = _recessive(gene, alleles, mode, proband, mother, father, build, context, min_dp, min_gq)
        if mode == "XLR" and opt.fit == "single heterozygous in a recessive gene":
            opt.manifesting_carrier_possible = True
            who = "female" if sex_n == "FEMALE" else "person of unknown sex"
            extra = (" (heterozygous females often show signs in this gene, from memory)"
                     if gene.symbol in MANIFESTING_CARRIER_GENES else "")
            opt.notes.append(f"heterozygous {who} in an X-linked recessive gene: carrier, possibly a "
                             f"manifesting carrier (skewed X inactivation){extra}")
            if sex_n is None:
                opt.notes.append("sex unknown: if male, this chrX call would be hemizygous")
    else:  # AD, or XLD in a female / unknown sex
        if alleles:
            opt = _dominant(alleles, mode, proband, mother, father, sex_n, build, min_dp, min_gq)
        else:
            opt = GenotypeAssessment("no qualifying finding", mode=mode)
    return opt


def _strength(fs: Iterable[Finding]) -> tuple[int, int]:
    s = c = 0
    for f in fs:
        if _class(f) in STRONG_CLASSES:
            s += 1
        else:
            c += 1
    return s, c


def _hemizygous(alleles, mode, proband, mother, build, min_dp, min_gq) -> GenotypeAssessment:
    """Male, chrX outside the PARs: ``alleles`` are single-copy calls (1/1 or haploid 1). One
    allele is enough in both X-linked recessive and X-linked dominant disease."""
    notes: list[str] = []
    hemi = sorted(alleles, key=lambda fc: (_class(fc[0]) not in STRONG_CLASSES, fc[0].id))
    f, c = hemi[0]
    de_novo_ids = []
    if mother is not None:
        v, why = de_novo_evidence(f, proband, mother, None, min_dp, min_gq, "MALE", build)
        if v:
            de_novo_ids.append(f.id)
            notes.append(f"{f.id} de novo: {why}")
        elif v is False:
            notes.append(f"{f.id} not de novo: {why}")
    if mode == "XLD":
        notes.append(f"{f.id} hemizygous in a male in an X-linked dominant gene: one allele is sufficient")
    s, k = _strength([f])
    return GenotypeAssessment("hemizygous", phase="", qualifying_ids=[f.id], notes=notes, mode=mode,
                              strong_alleles=s, candidate_alleles=k, de_novo_ids=de_novo_ids)


def _dominant(alleles, mode, proband, mother, father, sex_n, build, min_dp, min_gq) -> GenotypeAssessment:
    ranked = sorted(alleles, key=lambda fc: (_class(fc[0]) not in STRONG_CLASSES, fc[0].id))
    notes: list[str] = []
    de_novo_ids = []
    chosen = ranked[0]
    for f, c in ranked:
        v, why = de_novo_evidence(f, proband, mother, father, min_dp, min_gq, sex_n, build)
        if v:
            de_novo_ids.append(f.id)
            notes.append(f"{f.id} de novo: {why}")
        elif v is False and (mother or father):
            notes.append(f"{f.id} not de novo: {why}")
    if de_novo_ids:
        chosen = next(fc for fc in ranked if fc[0].id == de_novo_ids[0])
    f, c = chosen
    s, k = _strength([f])
    fit = "de novo" if de_novo_ids else "heterozygous in a dominant gene"
    if c.alt_copies >= 2:
        notes.append(f"{f.id} is homozygous in a dominant gene")
    return GenotypeAssessment(fit, qualifying_ids=[f.id], notes=notes, mode=mode, strong_alleles=s,
                              candidate_alleles=k, de_novo_ids=de_novo_ids)


_PHASE_ORDER = {"trans": 0, "unknown": 1, "cis": 2}


def _recessive(gene, alleles, mode, proband, mother, father, build, context, min_dp, min_gq) -> GenotypeAssessment:
    from .sv.pairing import hemizygous_in_effect

    alleles, notes = hemizygous_in_effect(alleles, proband)  # small variants inside a deletion: one copy
    homs = [(f, c) for f, c in alleles if c.alt_copies >= 2]
    hets = [(f, c) for f, c in alleles if c.alt_copies == 1]
    homs.sort(key=lambda fc: (_class(fc[0]) not in STRONG_CLASSES, fc[0].id))
    if homs:
        f, c = homs[0]
        s = 2 if _class(f) in STRONG_CLASSES else 0
        a = GenotypeAssessment("homozygous", phase="homozygous", qualifying_ids=[f.id], mode=mode,
                               strong_alleles=s, candidate_alleles=2 - s)
        if f.structural is not None:
            a.notes = notes + [f"{f.id} is a homozygous {f.structural['type']}: both copies are affected"]
            return a
        a.possible_deletion, why = _deletion_check(f, c, proband, mother, father, alleles, context, min_dp, min_gq)
        a.notes = notes + why
        return a

    pairs: list[tuple[str, str, str, str]] = []
    best = None
    for i in range(len(hets)):
        for j in range(i + 1, len(hets)):
            fa, fb = hets[i][0], hets[j][0]
            ph = phase_between(fa, fb, proband, mother, father, min_dp, min_gq)
            pairs.append((fa.id, fb.id, ph.phase, ph.how))
            s, k = _strength([fa, fb])
            key = (_PHASE_ORDER[ph.phase], -s, fa.id, fb.id)
            if best is None or key < best[0]:
                best = (key, fa, fb, ph, s, k)
    if best is not None and best[3].phase != "cis":
        _, fa, fb, ph, s, k = best
        if ph.phase == "trans":
            how = ("inside the deletion" if "inside the deletion" in ph.how else
                   "parents" if ("mother" in ph.how or "father" in ph.how) else "phased genotypes")
            fit, phase = "biallelic in trans", f"in trans ({how})"
        else:
            fit, phase = "biallelic phase unknown", "unknown"
        a = GenotypeAssessment(fit, phase=phase, qualifying_ids=[fa.id, fb.id], pairs=pairs, mode=mode,
                               strong_alleles=s, candidate_alleles=k)
        a.notes = notes + [f"{fa.id} + {fb.id}: {ph.phase} - {ph.how}"]
        if k:
            a.notes.append("the biallelic genotype includes a variant of uncertain significance: a weaker "
                           "hypothesis until that variant is resolved")
        return a

    het = sorted(hets, key=lambda fc: (_class(fc[0]) not in STRONG_CLASSES, fc[0].id))
    f = het[0][0]
    s, k = _strength([f])
    a = GenotypeAssessment("single heterozygous in a recessive gene", qualifying_ids=[f.id], pairs=pairs,
                           mode=mode, strong_alleles=s, candidate_alleles=k)
    if best is not None:  # only cis pairs
        a.phase = "in cis"
        a.notes.append("all pairs of alleles are in cis (" + "; ".join(f"{p[0]}+{p[1]}: {p[3]}" for p in pairs)
                       + "): one affected haplotype only")
    return a


def _deletion_check(f: Finding, c: Call, proband, mother, father, alleles, context, min_dp, min_gq
                    ) -> tuple[bool, list[str]]:
    """Could an apparent homozygous call be one allele over a deletion (hemizygosity)?"""
    notes: list[str] = []
    mk, fk = carries(_call(f, mother)), carries(_call(f, father))
    if mother and father and mk is not None and fk is not None:
        if mk and fk:
            return False, [f"{f.id} homozygous; both parents carry it, so a deletion on the other allele is "
                           f"not suggested"]
        if mk != fk:
            who, other = ("mother", "father") if mk else ("father", "mother")
            oc = _call(f, father if mk else mother)
            if _confident(oc, min_dp, min_gq):
                return True, [f"{f.id} homozygous but only the {who} carries it and the {other} is reference: "
                              f"a deletion on the {other}'s allele (or uniparental disomy) is possible - "
                              f"check copy number"]
    # heterozygous calls in the gene / nearby argue against a large deletion
    het_nearby = []
    for g, gc in alleles:
        if gc.alt_copies == 1:
            het_nearby.append(g.id)
    for v in context:
        vc = v.calls.get(proband)
        if vc is not None and len(vc.gt) >= 2 and vc.alt_copies == 1 and vc.gt.count(0) == 1:
            het_nearby.append(v.key)
    ab = c.allele_balance
    if het_nearby:
        return False, [f"{f.id} homozygous (allele balance {_fmt_ab(c)}); heterozygous calls nearby "
                       f"({', '.join(het_nearby[:3])}) argue against a large deletion"]
    notes.append(f"{f.id} homozygous (allele balance {_fmt_ab(c)}) with no heterozygous calls in the gene or "
                 f"nearby: a deletion on the other allele cannot be excluded (also consistent with a run of "
                 f"homozygosity); parental testing or copy-number analysis would tell")
    if ab is not None and ab < 0.85:
        notes.append(f"allele balance {ab:.2f} is low for a homozygous call")
    return True, notes


# ---------------------------------------------------------------------------
# Mitochondrial genes (maternal inheritance, heteroplasmy)
# ---------------------------------------------------------------------------
def accepted_mt(gene: Gene, alleles: list, notes: list[str]) -> list:
    """The chrM alleles whose class the gene's mitochondrial mode accepts (notes name the others)."""
    spec = modes_of(gene).get("MT")
    if spec is None:
        return alleles
    keep, refused = split_by_mode(spec, alleles)
    notes.extend(f"{f.id} not counted for MT: {why}" for f, why in refused)
    return keep


def split_by_mode(spec, pool: list) -> tuple[list, list]:
    """(the (finding, call) pairs whose allele class causes the mode's disease, [(finding, why
    not)] for the others), in pool order."""
    keep, refused = [], []
    for f, c in pool:
        ok, why = mode_accepts(spec, f)
        if ok:
            keep.append((f, c))
        else:
            refused.append((f, why))
    return keep, refused


def _pct(x: Optional[float]) -> str:
    return "level unknown (no AD)" if x is None else f"{100 * x:.0f} %"


def _mitochondrial(gene: Gene, alleles: list, proband: str, mother: Optional[str], notes: list[str],
                   excluded: list[str], min_dp: int, min_gq: int) -> GenotypeAssessment:
    """Genotype fit of a gene with mitochondrial (maternal) inheritance.

    mtDNA is present in many copies per cell and passed on by the mother only (textbook
    genetics, common practice). One allele is enough; its level decides the fit: homoplasmic
    (``heteroplasmy.homoplasmic_min_fraction``) or heteroplasmic at or above the allele's disease
    level (``panels/heteroplasmy.yaml``) is a complete fit; a heteroplasmic level below it is not.
    A heteroplasmic call without AD counts as heteroplasmic at an unknown level (complete, with a
    note to measure it). The mother's call, when genotyped, is named (maternal transmission)."""
    if not alleles:
        return GenotypeAssessment("no qualifying finding", notes=notes, excluded_ids=excluded, mode="MT")

    def sort_key(fc):
        f, c = fc
        lv = 1.0 if c.zygosity == "homoplasmic" else (c.allele_balance if c.allele_balance is not None else 0.5)
        return (_class(f) not in STRONG_CLASSES, -lv, f.id)

    f, c = sorted(alleles, key=sort_key)[0]
    frac = c.allele_balance
    v = f.variant
    need, name, source = heteroplasmy.disease_min_fraction(gene.symbol, v.pos, v.ref, v.alt)
    label = name or f"m.{v.pos}{v.ref}>{v.alt}"
    out = list(notes)
    if c.zygosity == "homoplasmic":
        fit = "mitochondrial homoplasmic"
        out.append(f"{f.id} {label} homoplasmic ({_pct(frac)} of reads): mitochondrial (maternal) inheritance, "
                   f"one allele is enough")
    elif frac is None or frac >= need:
        fit = "mitochondrial heteroplasmic"
        out.append(f"{f.id} {label} heteroplasmic at {_pct(frac)} of reads (disease level from about "
                   f"{_pct(need)}: {source}): mitochondrial (maternal) inheritance")
        if frac is None:
            out.append(f"{f.id}: measure the heteroplasmy level (allelic depths missing)")
    else:
        fit = "mitochondrial heteroplasmy below disease level"
        out.append(f"{f.id} {label} heteroplasmic at {_pct(frac)} of reads, below the level at which it usually "
                   f"causes disease (about {_pct(need)}: {source}); levels differ between tissues: measure it in "
                   f"another tissue (e.g. urine or muscle) before ruling it out")
    if mother is not None:
        mc = _call(f, mother)
        if mc is not None and _called(mc):
            if carries(mc):
                out.append(f"{f.id} also carried by the mother ({_pct(mc.allele_balance)} of reads): maternal "
                           f"transmission")
            elif _confident(mc, min_dp, min_gq) and not (mc.ad_alt or 0):
                out.append(f"{f.id} not seen in the mother's sample (no alternate reads): a new mtDNA allele or "
                           f"a level below detection in her blood")
    s, k = _strength([f])
    return GenotypeAssessment(fit, phase="", qualifying_ids=[f.id], notes=out, mode="MT", strong_alleles=s,
                              candidate_alleles=k, excluded_ids=excluded)
