"""Rank gene hypotheses, call the case, and give each finding an interpretation status.

Ranking model
-------------
Genotype first, phenotype second. Each gene hypothesis gets

    genotype evidence ``G = fit weight x class weight``            (0..1)
    phenotype weight  ``P``                                         (0..1)
    ``score = (1 - PHENOTYPE_SHARE) x G + PHENOTYPE_SHARE x P``     when G > 0, else 0

with ``PHENOTYPE_SHARE = 0.1``. The score rises monotonically with each factor.

* **fit weight** (genotype fit, from :mod:`irdtriage.genotype`): biallelic in trans 1.0,
  hemizygous 1.0, de novo 1.0, homozygous 0.95 (a deletion on the other allele can mimic
  it), heterozygous in a dominant gene 0.85 (penetrance and the allele's dominant action
  are assumed, not shown), biallelic phase unknown 0.6, single heterozygous in a recessive
  gene 0.05 (a carrier state explains nothing by itself), no qualifying finding 0.
* **class weight**: the *weakest* allele the fit needs (a biallelic genotype is only as
  strong as its weaker allele): Pathogenic 1.0, Likely pathogenic 0.9, Uncertain
  significance 0.5, Likely benign / Benign 0 (such findings never make up a fit).
* **phenotype weight** ``P``: ``0.25 + 0.75 x calibrated`` from the phenotype match (0..1,
  comparable across genes); 0.625 — the value of a calibrated match of 0.5 — when no
  phenotype was given; halved when the person has excluded terms that are hallmarks of
  the gene (``conflicting_terms``).

Invariants (checked in ``tests/test_rank.py``):

1. *Genotype fit dominates a carrier state.* The weakest complete or biallelic fit (phase
   unknown, one VUS: G = 0.6 x 0.5 = 0.3) scores at least 0.9 x 0.3 = 0.27 whatever its
   phenotype; the best carrier state (Pathogenic, perfect phenotype) scores at most
   0.9 x 0.05 + 0.1 = 0.145. So a heterozygous allele in a recessive gene never outranks
   a complete or biallelic fit of another gene, even one built on VUS alleles with a
   conflicting phenotype.
2. *Phenotype breaks near-ties only.* P moves the score by at most 0.1, so it reorders two
   hypotheses only when their genotype evidence differs by less than 0.1 / 0.9 = 0.111
   (e.g. two genes with the same fit and classes, or homozygous P vs in trans P); a
   hypothesis with no qualifying finding scores 0 whatever its phenotype.
3. *Deterministic order.* Ties are broken by fit preference, then class weight, then gene
   symbol.
4. *A candidate non-coding allele ranks between.* When the genotype fit rests on a candidate
   non-coding allele (``irdtriage.noncoding``: rare, intronic/UTR/flanking, no splice prediction,
   kept only because it completes the genotype), G is capped at ``NONCODING_GENOTYPE = 0.16``,
   so the score lies in 0.9 x 0.16 + 0.1 x [0.125, 1] = [0.157, 0.244]: below the weakest coding
   complete or biallelic fit (>= 0.27, invariant 1) and above every carrier state (<= 0.145) and
   every gene with no qualifying finding (0). Listed recurrent non-coding alleles
   (``panels/noncoding_alleles.yaml``) are not capped: their class is weighed like any other.

This is a design choice for a gene panel that already selects for the phenotype: allele
evidence is the observation, the phenotype match is a weak prior over panel genes (the
phenotype-only rank of the causal gene among 252 panel genes was top-1 in under a third of
the published reference cases, ``benchmarks/bench_phenopackets.py``). The case call below
still requires a fitting phenotype before a case is SOLVED.

Case call (GA4GH Phenopacket status words)
------------------------------------------
* ``SOLVED``: a gene hypothesis has a complete genotype fit (biallelic in trans,
  homozygous, hemizygous, heterozygous in a dominant gene, de novo) made only of
  Pathogenic / Likely pathogenic alleles, and the phenotype fits (calibrated match >= 0.5,
  no conflicting hallmark, and the phenotype is not judged non-retinal).
* ``IN_PROGRESS``: otherwise, when a candidate exists: a complete fit that rests on a
  candidate non-coding allele (never SOLVED, whatever its class), a complete fit that includes a
  VUS, a biallelic genotype of unknown phase, a P/LP complete fit whose phenotype is
  unknown or poor, or a single heterozygous allele in a recessive gene with a strong
  phenotype match (P/LP single hits also count when no phenotype was given).
* ``UNSOLVED``: nothing of the above.

Alleles that cannot be assessed: an allele whose consequence is unknown (no CSQ/ANN
annotation) *and* whose population frequency is unknown (BA1, BS1, BS2 and PM2 all not
evaluable) could be a common benign allele as easily as a null one, so no hypothesis built on
it is a solving or candidate explanation. Such a hypothesis is still ranked, but the case is
at best IN_PROGRESS, its alleles keep UNKNOWN_STATUS, and the first next step asks for an
annotated VCF.

Per-finding statuses: CAUSATIVE for the P/LP alleles of the solving hypothesis;
CONTRIBUTORY for the P/LP alleles of a second complete, phenotype-fitting hypothesis (a
possible second diagnosis, rare); CANDIDATE for the alleles of candidate hypotheses;
REJECTED for Benign / Likely benign findings and for single heterozygous alleles in
recessive genes whose phenotype match is poor; UNKNOWN_STATUS otherwise (including calls
that failed quality thresholds).
"""
from __future__ import annotations

from dataclasses import dataclass, field
from typing import Iterable, Optional, Sequence

from . import CAUTION, models
from .genotype import FIT_PREFERENCE
from .models import Finding, Gene, GeneHypothesis, Panel
from .panel import NOT_SOLVING_LEVELS

FIT_WEIGHT = {
    "biallelic in trans": 1.0,
    "hemizygous": 1.0,
    "de novo": 1.0,
    "homozygous": 0.95,
    "heterozygous in a dominant gene": 0.85,
    "biallelic phase unknown": 0.6,
    "single heterozygous in a recessive gene": 0.05,
    "mitochondrial homoplasmic": 0.95,
    "mitochondrial heteroplasmic": 0.85,
    "mitochondrial heteroplasmy below disease level": 0.05,
    "no qualifying finding": 0.0,
}
CLASS_WEIGHT = {
    "Pathogenic": 1.0,
    "Likely pathogenic": 0.9,
    "Uncertain significance": 0.5,
    "Likely benign": 0.0,
    "Benign": 0.0,
}
NO_PHENOTYPE_WEIGHT = 0.625
PHENOTYPE_SHARE = 0.1  # largest change of the score the phenotype can make (see module docstring)
CONFLICT_FACTOR = 0.5
PHENOTYPE_FITS = 0.5  # calibrated match from which the phenotype counts as fitting the gene
NONCODING_GENOTYPE = 0.16  # cap on G for a fit resting on a candidate non-coding allele (invariant 4)

COMPLETE_FITS = ("biallelic in trans", "homozygous", "hemizygous", "heterozygous in a dominant gene", "de novo",
                 "mitochondrial homoplasmic", "mitochondrial heteroplasmic")
BIALLELIC_FITS = ("biallelic in trans", "biallelic phase unknown")
STRONG = ("Pathogenic", "Likely pathogenic")
QUALIFYING = ("Pathogenic", "Likely pathogenic", "Uncertain significance")


@dataclass
class CaseCall:
    status: str  # one of models.CASE_STATUSES
    summary: str  # one sentence
    next_steps: list[str] = field(default_factory=list)
    phenotype_fits_retina: Optional[bool] = None  # the case-level phenotype decision the call used
    caution: str = CAUTION


# ---------------------------------------------------------------------------
def _cls(f: Finding) -> Optional[str]:
    return f.classification.classification if f.classification is not None else None


FREQUENCY_CODES = ("BA1", "BS1", "BS2", "PM2")


def consequence_unknown(f: Finding) -> bool:
    """No consequence annotation for this allele (the VCF had no CSQ/ANN for it), or built-in
    annotation without a reference sequence that could only say "somewhere in the CDS" (a
    substitution whose amino-acid change is unknown: missense, synonymous or stop alike)."""
    terms = tuple(f.annotation.consequence or ())
    if f.annotation.source == "built-in":
        return terms == ("coding_sequence_variant",) and f.annotation.hgvs_p in ("p.?", "") \
            and "no reference sequence" in f.annotation.extra.get("notes", "")
    return f.annotation.source == "none" and (not terms or terms == ("not annotated",))


def frequency_unknown(f: Finding) -> bool:
    """The frequency criteria were evaluated and none could be (no population data)."""
    crit = {c.code: c for c in f.criteria}
    return all(code in crit for code in FREQUENCY_CODES) and all(crit[c].met is None for c in FREQUENCY_CODES)


def unassessable(f: Finding) -> bool:
    """Consequence and population frequency both unknown: the allele cannot support an explanation."""
    return consequence_unknown(f) and frequency_unknown(f)


def blocked(h: GeneHypothesis) -> bool:
    """The hypothesis's genotype fit rests on at least one allele that cannot be assessed."""
    return any(unassessable(f) for f in fit_findings(h))


def fit_findings(h: GeneHypothesis) -> list[Finding]:
    """The findings that make up the hypothesis's genotype fit."""
    a = getattr(h, "assessment", None)
    ids = list(getattr(a, "qualifying_ids", []) or [])
    if ids:
        by_id = {f.id: f for f in h.findings}
        return [by_id[i] for i in ids if i in by_id]
    pool = [f for f in h.findings if f.passes_quality and _cls(f) in QUALIFYING]
    pool.sort(key=lambda f: (-CLASS_WEIGHT[_cls(f)], f.id))
    if h.genotype_fit == "no qualifying finding":
        return []
    return pool[:2] if h.genotype_fit in BIALLELIC_FITS else pool[:1]


def noncoding_candidate(f: Finding) -> bool:
    """A candidate non-coding allele (irdtriage.noncoding): kept only because it completes a genotype."""
    note = getattr(f, "noncoding", None)
    return note is not None and getattr(note, "kind", "") == "candidate"


def relies_on_noncoding(h: GeneHypothesis) -> bool:
    """The hypothesis's genotype fit rests on at least one candidate non-coding allele."""
    return any(noncoding_candidate(f) for f in fit_findings(h))


def _class_weight(h: GeneHypothesis) -> float:
    fs = fit_findings(h)
    if not fs:
        return 0.0
    return min(CLASS_WEIGHT.get(_cls(f) or "", 0.0) for f in fs)


def _pheno_weight(h: GeneHypothesis) -> float:
    m = h.phenotype_match
    if m is None:
        return NO_PHENOTYPE_WEIGHT
    c = min(max(float(m.calibrated), 0.0), 1.0)
    w = 0.25 + 0.75 * c
    if m.conflicting_terms:
        w *= CONFLICT_FACTOR
    return w


def _fit_weight(h: GeneHypothesis, gene: Optional[Gene]) -> float:
    fit = h.genotype_fit
    if gene is not None and fit == "heterozygous in a dominant gene" and not gene.dominant:
        fit = "single heterozygous in a recessive gene"  # inconsistent input: score as a carrier state
    return FIT_WEIGHT.get(fit, 0.0)


def genotype_evidence(h: GeneHypothesis, gene: Optional[Gene]) -> float:
    """G = fit weight x class weight of the weakest allele in the fit (0..1), capped at
    NONCODING_GENOTYPE when the fit rests on a candidate non-coding allele (invariant 4)."""
    g = _fit_weight(h, gene) * _class_weight(h)
    if relies_on_noncoding(h):
        g = min(g, NONCODING_GENOTYPE)
    return g


def score_hypothesis(h: GeneHypothesis, gene: Optional[Gene]) -> float:
    g = genotype_evidence(h, gene)
    if g <= 0:
        return 0.0
    return round((1 - PHENOTYPE_SHARE) * g + PHENOTYPE_SHARE * _pheno_weight(h), 6)


def _reason(h: GeneHypothesis, gene: Optional[Gene]) -> str:
    fs = fit_findings(h)
    alleles = ", ".join(f"{f.id} {_cls(f)}" for f in fs) or "none"
    phase = _phase_note(h)
    inh = "/".join(gene.inheritance) if gene is not None else "?"
    m = h.phenotype_match
    if m is None:
        ph = "no phenotype given"
    else:
        ph = f"phenotype match {m.calibrated:.2f}"
        if m.conflicting_terms:
            ph += f", conflicting: {', '.join(m.conflicting_terms)}"
    if blocked(h):
        ph += "; not an explanation: consequence and population frequency unknown for " + ", ".join(
            f.id for f in fs if unassessable(f))
    nc = ""
    if relies_on_noncoding(h):
        ids = ", ".join(f.id for f in fs if noncoding_candidate(f))
        ph += (f"; rests on candidate non-coding allele {ids} (no splice evidence): ranked below coding "
               f"explanations")
        nc = f" capped at {NONCODING_GENOTYPE:.2f}"
    return (f"{_fit_words(h.genotype_fit)}{phase} in a {inh} gene; alleles: {alleles}; {ph}; score "
            f"{1 - PHENOTYPE_SHARE:.1f} x genotype ({_fit_weight(h, gene):.2f} x {_class_weight(h):.2f}{nc}) + "
            f"{PHENOTYPE_SHARE:.1f} x phenotype {_pheno_weight(h):.3f} = {h.score:.3f}")


def rank_hypotheses(hypotheses: Iterable[GeneHypothesis], panel: Optional[Panel]) -> list[GeneHypothesis]:
    """Score, order and number the hypotheses (the objects get ``score``, ``rank`` and ``reason``)."""
    genes = panel.genes if panel is not None else {}
    hs = list(hypotheses)
    for h in hs:
        h.score = score_hypothesis(h, genes.get(h.symbol))
        h.evidence_level = getattr(genes.get(h.symbol), "evidence_level", "") or ""
    hs.sort(key=lambda h: (-h.score, FIT_PREFERENCE.get(h.genotype_fit, 99), -_class_weight(h), h.symbol))
    for i, h in enumerate(hs, 1):
        h.rank = i
        h.reason = _reason(h, genes.get(h.symbol))
    return hs


# ---------------------------------------------------------------------------
def _pheno_state(h: GeneHypothesis, fits_retina: Optional[bool]) -> Optional[bool]:
    """True fits, False does not, None unknown (no phenotype given)."""
    m = h.phenotype_match
    if fits_retina is False:
        return False
    if m is None:
        return None if fits_retina is None else False
    return m.calibrated >= PHENOTYPE_FITS and not m.conflicting_terms


def _all_strong(h: GeneHypothesis) -> bool:
    fs = fit_findings(h)
    return bool(fs) and all(_cls(f) in STRONG for f in fs)


def _solving(h: GeneHypothesis, fits_retina) -> bool:
    return (h.genotype_fit in COMPLETE_FITS and _all_strong(h) and _pheno_state(h, fits_retina) is True
            and not blocked(h) and not relies_on_noncoding(h))


def _candidate(h: GeneHypothesis, fits_retina) -> bool:
    if blocked(h):
        return False
    p = _pheno_state(h, fits_retina)
    if h.genotype_fit in COMPLETE_FITS:
        return not _solving(h, fits_retina) and bool(fit_findings(h))
    if h.genotype_fit == "biallelic phase unknown":
        return True
    if h.genotype_fit == "single heterozygous in a recessive gene":
        return p is True or (p is None and _all_strong(h))
    return False


def _mode(h: GeneHypothesis) -> str:
    return getattr(getattr(h, "assessment", None), "mode", "") or ""


def _describe(h: GeneHypothesis) -> str:
    fs = fit_findings(h)
    alleles = " + ".join(f"{(f.annotation.hgvs_c or f.variant.key)} ({_cls(f)})" for f in fs)
    return f"{h.symbol} {_fit_words(h.genotype_fit)}" + _phase_note(h) + (f": {alleles}" if alleles else "")


def _phase_note(h: GeneHypothesis) -> str:
    """How the phase was established, without repeating what the genotype fit already says."""
    p = (h.phase or "").strip()
    if not p or p in ("homozygous", "unknown") or p == h.genotype_fit:
        return ""
    if p.startswith("in trans (") and h.genotype_fit == "biallelic in trans":
        return f" (phase from {p[len('in trans ('):].rstrip(')')})"
    return f" ({p})"


def case_call(ranked: Sequence[GeneHypothesis], phenotype_fits_retina: Optional[bool]) -> CaseCall:
    # a gene whose gene-disease evidence is limited or disputed never solves a case on its own
    # (panels/curation/POLICY.md): its complete fit stays a candidate, reviewed before reporting
    weak = [h for h in ranked if _solving(h, phenotype_fits_retina) and h.evidence_level in NOT_SOLVING_LEVELS]
    solving = [h for h in ranked if _solving(h, phenotype_fits_retina) and h not in weak]
    candidates = [h for h in ranked if _candidate(h, phenotype_fits_retina) or h in weak]
    unassessed = [h for h in ranked if h.genotype_fit != "no qualifying finding" and blocked(h)]
    steps: list[str] = []
    if unassessed:
        n = sum(1 for h in unassessed for f in fit_findings(h) if unassessable(f))
        steps.append(f"Annotate the VCF with consequences (CSQ or ANN in INFO, with HGVS names) and population "
                     f"frequencies (gnomAD fields, or --population-vcf) and run again: {n} allele(s) in "
                     f"{', '.join(h.symbol for h in unassessed)} could not be assessed.")

    if solving:
        top = solving[0]
        status = "SOLVED"
        m = top.phenotype_match
        summary = (f"{_describe(top)} fits the gene's inheritance and the phenotype "
                   f"(match {m.calibrated:.2f}).") if m is not None else f"{_describe(top)} fits inheritance and phenotype."
        # once a gene explains the case, a single allele in another recessive gene is a carrier
        # result (family planning), not a lead to chase with a second-hit search
        focus = solving[:2] + [h for h in candidates if h.rank <= 3
                               and h.genotype_fit != "single heterozygous in a recessive gene"][:2]
    elif candidates:
        top = candidates[0]
        status = "IN_PROGRESS"
        missing = (f"the evidence linking {top.symbol} to disease is {top.evidence_level}, so a limited-evidence "
                   f"gene cannot solve the case on its own" if top in weak else _missing(top, phenotype_fits_retina))
        summary = f"Candidate explanation, not yet complete: {_describe(top)} - {missing}."
        focus = candidates[:3]
        if top in weak:
            steps.append(f"Review the published gene-disease evidence for {top.symbol} (evidence level "
                         f"{top.evidence_level}) before reporting it as the cause.")
    elif unassessed:
        status = "IN_PROGRESS"
        summary = (f"Not assessable yet: {_describe(unassessed[0])} - consequence and population frequency unknown, "
                   f"so no allele can be called causative or a candidate until the VCF is annotated.")
        focus = []
    else:
        status = "UNSOLVED"
        n = sum(1 for h in ranked if h.findings)
        summary = (f"No finding in the panel genes explains the phenotype ({n} gene(s) with findings, none with a "
                   f"qualifying genotype that fits).")
        focus = []

    for h in focus:
        steps.extend(_gene_steps(h, phenotype_fits_retina))
    if solving or candidates:
        genes = ", ".join(dict.fromkeys(h.symbol for h in focus))
        steps.append(f"Confirm the reported {genes} finding(s) with an orthogonal method (e.g. Sanger sequencing) "
                     f"in an accredited laboratory before clinical use.")
        sv = [f for h in focus for f in fit_findings(h) if getattr(f, "structural", None) is not None]
        if sv:  # copy-number / structural events (irdtriage.sv)
            steps.append("Confirm the copy-number or structural finding(s) " + ", ".join(
                f"{f.gene} {f.annotation.hgvs_c or f.structural['type']}" for f in sv) + " by an orthogonal method "
                "(MLPA, chromosomal microarray or long-read sequencing) and define the breakpoints.")
    carriers = [h for h in ranked if h.genotype_fit == "single heterozygous in a recessive gene" and _all_strong(h)
                and h not in focus]
    if carriers:
        steps.append("Carrier result(s) in " + ", ".join(h.symbol for h in carriers) + ": not an explanation on "
                     "their own, but relevant to family planning (partner testing) and cascade testing of relatives.")
    low_mt = [h for h in ranked if h.genotype_fit == "mitochondrial heteroplasmy below disease level" and h not in focus]
    for h in low_mt:  # a low blood level of a pathogenic mtDNA allele is not a negative result (irdtriage.genotype)
        said = [n for n in h.next_steps if "below the level at which it usually causes disease" in n]
        steps.append(f"Mitochondrial allele in {h.symbol} below the usual disease level: "
                     + (said[0] if said else "measure the heteroplasmy level in another tissue (e.g. urine or muscle)")
                     + ".")
    if status == "UNSOLVED" and phenotype_fits_retina is not False:
        steps.append("Check coverage of hard-to-sequence regions (e.g. RPGR ORF15, poorly covered by short reads - "
                     "common practice) and look for copy-number variants; consider genome sequencing and periodic "
                     "reanalysis.")
    if phenotype_fits_retina is False:
        steps.append("The phenotype does not look like a retinal disease: review the HPO terms or consider a "
                     "different gene panel.")
    if phenotype_fits_retina is None and all(h.phenotype_match is None for h in ranked):
        steps.append("No phenotype was given: add HPO terms so the genotype fits can be weighed against the "
                     "clinical picture.")
    return CaseCall(status, summary, list(dict.fromkeys(steps)), phenotype_fits_retina)


def _missing(h: GeneHypothesis, fits_retina) -> str:
    fs = fit_findings(h)
    nc = [f for f in fs if noncoding_candidate(f)]
    if nc:
        return ("rests on the candidate non-coding allele " + ", ".join(f.annotation.hgvs_c or f.variant.key for f in nc)
                + " (no splice prediction): not a diagnosis until an RNA or minigene study shows its effect")
    if any(_cls(f) == "Uncertain significance" for f in fs):
        return "includes a variant of uncertain significance"
    if h.genotype_fit == "biallelic phase unknown":
        return "phase of the two alleles unknown"
    if h.genotype_fit == "single heterozygous in a recessive gene":
        return "only one allele found in a recessive gene"
    p = _pheno_state(h, fits_retina)
    return "phenotype not given" if p is None else "phenotype does not fit well"


def _gene_steps(h: GeneHypothesis, fits_retina) -> list[str]:
    g = h.symbol
    out: list[str] = []
    a = getattr(h, "assessment", None)
    fs = fit_findings(h)
    for f in fs:  # candidate non-coding allele or listed recurrent non-coding allele: its own next step
        note = getattr(f, "noncoding", None)
        if note is not None and note.next_step:
            out.append(note.next_step + ".")
    if h.genotype_fit == "biallelic phase unknown":
        out.append(f"Test both parents (or phase by long reads) to show whether the two {g} alleles are in trans.")
    if h.genotype_fit == "single heterozygous in a recessive gene" and not getattr(a, "manifesting_carrier_possible",
                                                                                    False):
        out.append(f"Look for a second {g} allele missed by the test: copy-number analysis, deep-intronic and "
                   f"structural variants (genome sequencing or RNA studies).")
        if g == "ABCA4":
            out.append("ABCA4: deep-intronic alleles and hypomorphic alleles such as c.5603A>T p.(Asn1868Ile) are a "
                       "known source of missed second hits (from memory).")
        if g == "USH2A":
            out.append("USH2A: check coverage of exon 13 (site of the frequent c.2299delG allele) and the "
                       "deep-intronic c.7595-2144A>G (from memory).")
    if getattr(a, "manifesting_carrier_possible", False):
        out.append(f"Heterozygous {g} allele in an X-linked recessive gene: offer a retinal examination (possible "
                   f"manifesting carrier) and cascade testing of at-risk male relatives.")
    if getattr(a, "possible_deletion", False):
        out.append(f"Apparent {g} homozygosity: test the parents and check copy number to rule out a deletion on "
                   f"the other allele.")
    if any(_cls(f) == "Uncertain significance" for f in fs):
        out.append(f"Resolve the {g} variant(s) of uncertain significance: segregation in relatives, functional or "
                   f"RNA studies, and reclassification as evidence accrues.")
    if h.genotype_fit == "de novo":
        out.append(f"The {g} de novo call assumes the stated parents: parentage is not confirmed by this tool.")
    if g == "RPE65" and h.genotype_fit in ("biallelic in trans", "homozygous", "biallelic phase unknown") \
            and _all_strong(h):
        out.append("Biallelic RPE65 variants: the person may be assessed for the approved gene therapy voretigene "
                   "neparvovec (requires confirmed biallelic pathogenic variants and enough viable retinal cells; "
                   "local criteria apply).")
    if g == "RPGR" and h.genotype_fit != "no qualifying finding":
        out.append("RPGR ORF15 is repetitive and poorly covered by short reads (common practice): confirm with a "
                   "targeted method.")
    return out


# ---------------------------------------------------------------------------
def assign_interpretation_status(ranked: Sequence[GeneHypothesis], call: Optional[CaseCall] = None,
                                 phenotype_fits_retina: Optional[bool] = None) -> dict[str, str]:
    """Set ``Finding.interpretation_status`` on every finding of the ranked hypotheses; return id -> status."""
    if phenotype_fits_retina is None and call is not None:
        phenotype_fits_retina = call.phenotype_fits_retina
    out: dict[str, str] = {}
    solved_done = False
    for h in ranked:
        fit_ids = {f.id for f in fit_findings(h)}
        complete = _solving(h, phenotype_fits_retina)
        solving = complete and h.evidence_level not in NOT_SOLVING_LEVELS  # limited genes stay CANDIDATE
        candidate = _candidate(h, phenotype_fits_retina) or complete
        p = _pheno_state(h, phenotype_fits_retina)
        for f in h.findings:
            c = _cls(f)
            if c in ("Benign", "Likely benign"):
                st = "REJECTED"
            elif not f.passes_quality or f.id not in fit_ids:
                st = "UNKNOWN_STATUS"
            elif solving and not solved_done:
                st = "CAUSATIVE"
            elif solving:
                st = "CONTRIBUTORY"
            elif candidate:
                st = "CANDIDATE"
            elif h.genotype_fit == "single heterozygous in a recessive gene" and p is False:
                st = "REJECTED"
            else:
                st = "UNKNOWN_STATUS"
            f.interpretation_status = st
            out[f.id] = st
        if solving:
            solved_done = True
    return out


def _fit_words(fit: str) -> str:
    """The genotype fit as a reader reads it (models.GENOTYPE_FIT_LABELS), for summaries and reasons."""
    return models.GENOTYPE_FIT_LABELS.get(fit, fit)
