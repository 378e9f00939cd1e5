"""Non-coding alleles that may complete a genotype: kept past the reporting filter and flagged.

The reporting filter (``pipeline._not_reported``, DEVELOPERS.md) counts but does not report
intronic/flanking alleles deep in an intron with no splice prediction. This module decides,
after ACMG pass 1, which non-coding alleles are reported anyway and why:

* a **listed** allele (``panels/noncoding_alleles.yaml``, a recurrent pathogenic non-coding IRD
  allele recognised by its HGVS c. on the MANE transcript) is always reported; its reason names
  the source, and it is a partner for the genotype fit;
* a **candidate non-coding allele** is an allele whose consequences are all non-coding
  (intronic, UTR, up/downstream: :data:`NONCODING_TERMS`), with no splice prediction
  (SpliceAI < 0.2), no pathogenic assertion (PS1/PP5) and no curated evidence, that is

  - rare: BA1 and BS1 not met (BS1 not met, or not evaluable when no frequency is known),
  - of good call quality,
  - and completes a qualifying genotype: homozygous in a recessive gene, hemizygous in a male
    in an X-linked gene, or heterozygous in a recessive gene beside a *partner*: another allele
    of the gene that is itself not an evidence-free non-coding allele and whose pass-1 class
    makes up a genotype fit (Pathogenic, Likely pathogenic or Uncertain significance; a null
    allele annotated without exon numbers is often only VUS here), or a listed allele; a partner
    shown to be in cis (phased genotypes or parents) does not count,
  - in a gene whose phenotype fits (calibrated match >= ``rank.PHENOTYPE_FITS``, no
    conflicting hallmark, phenotype not judged non-retinal), or with no phenotype given (the
    fit is then stated as unknown).

  It is reported with :class:`NoncodingNote` (``kind="candidate"``). The gene hypothesis
  resting on it ranks below coding explanations and the case is never SOLVED on it
  (``irdtriage.rank``). Candidates of the near-exon or UTR kind, which the filter keeps anyway,
  get the same flag when they complete a genotype.

Everything else keeps the reporting filter. Two candidate non-coding alleles are never each
other's partner (neither has evidence), and a dominant gene's heterozygous non-coding allele is
not a candidate (the filter would otherwise report every rare intronic allele of such genes).
"""
from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any, NamedTuple, Optional, Sequence

from .models import Finding, Gene, Panel, PhenotypeMatch

# Sequence Ontology terms that say nothing about the protein or splicing by themselves
NONCODING_TERMS = frozenset({
    "intron_variant", "upstream_gene_variant", "downstream_gene_variant", "intergenic_variant",
    "regulatory_region_variant", "TF_binding_site_variant", "5_prime_UTR_variant", "3_prime_UTR_variant",
})
SPLICE_SIGNAL = 0.2  # SpliceAI delta at which splicing evidence starts (Walker et al. 2023)
QUALIFYING = ("Pathogenic", "Likely pathogenic", "Uncertain significance")  # classes that make up a genotype fit


@dataclass
class NoncodingNote:
    """Why a non-coding allele is reported, and what to do next."""

    kind: str  # "candidate" (rare, evidence-free, completes a genotype) or "listed" (panels/noncoding_alleles.yaml)
    reason: str
    next_step: str
    completes: str = ""  # "homozygous", "hemizygous", "second allele" or "" (listed alleles alone)
    partners: list[Finding] = field(default_factory=list)
    phenotype_fit: str = ""  # "fits" or "unknown" (candidates only)
    source: str = ""  # citation for a listed allele
    listed: Any = None  # noncoding_alleles.ListedAllele

    @property
    def candidate(self) -> bool:
        return self.kind == "candidate"

    def to_dict(self) -> dict[str, Any]:
        return {"kind": self.kind, "reason": self.reason, "next_step": self.next_step,
                "completes": self.completes or None, "partners": [p.id for p in self.partners],
                "phenotype_fit": self.phenotype_fit or None, "source": self.source or None}


def _cls(f: Finding) -> Optional[str]:
    return f.classification.classification if f.classification is not None else None


def _met(f: Finding, code: str) -> Optional[bool]:
    for c in f.criteria:
        if c.code == code:
            return c.met
    return None


def is_noncoding(f: Finding) -> bool:
    terms = set(f.annotation.consequence or ())
    return bool(terms) and terms <= NONCODING_TERMS


def evidence_free(f: Finding, curated: dict) -> bool:
    """Non-coding with nothing to say it matters: no splice prediction, assertion or curated evidence."""
    if not is_noncoding(f) or f.variant.key in curated:
        return False
    splice = f.evidence.get("spliceai_max") if isinstance(f.evidence, dict) else None
    if splice is not None and splice >= SPLICE_SIGNAL:
        return False
    return not any(c.code in ("PS1", "PP5") and c.met for c in f.criteria)


def is_rare(f: Finding) -> bool:
    """BA1 not met and BS1 not met (not evaluable when no frequency is known)."""
    return _met(f, "BA1") is not True and _met(f, "BS1") is not True


def phenotype_state(match: Optional[PhenotypeMatch], phenotype_given: bool, fits_retina: Optional[bool],
                    threshold: float) -> Optional[str]:
    """"fits", "unknown" (no phenotype given) or None (given and not fitting)."""
    if not phenotype_given:
        return "unknown"
    if fits_retina is False or match is None:
        return None
    if match.calibrated >= threshold and not match.conflicting_terms:
        return "fits"
    return None


def label(f: Finding) -> str:
    return f.annotation.hgvs_c or f.variant.key


def _in_cis(a: Finding, b: Finding, proband: str, mother: Optional[str], father: Optional[str]) -> bool:
    from .genotype import phase_between

    return phase_between(a, b, proband, mother, father).phase == "cis"


class Selection(NamedTuple):
    notes: dict[int, NoncodingNote]  # id(finding) -> why it is reported
    held_back: list[Finding]  # would complete a genotype, but the gene's phenotype does not fit


def held_back_warning(held: Sequence[Finding]) -> Optional[str]:
    """One warning naming the non-coding alleles that would complete a genotype in a gene whose
    phenotype does not fit (counted, not reported), so none is dropped without a word."""
    if not held:
        return None
    names = "; ".join(f"{f.gene} {label(f)}" for f in held[:5]) + (f" and {len(held) - 5} more" if len(held) > 5 else "")
    return (f"{len(held)} rare non-coding allele(s) with no splice prediction would complete a genotype but the "
            f"phenotype does not fit the gene, so they are counted, not reported: {names} (review the phenotype; "
            f"--all-variants reports them)")


def select(findings: Sequence[Finding], panel: Panel, proband: str, *, curated: dict,
           listed_table: Any, matches: dict[str, PhenotypeMatch], phenotype_given: bool,
           fits_retina: Optional[bool], threshold: float, mother: Optional[str] = None,
           father: Optional[str] = None) -> Selection:
    """The listed and candidate non-coding alleles among ``findings`` (after ACMG pass 1), and
    those held back only by the phenotype. Sets nothing on the findings."""
    from .noncoding_alleles import match as listed_match

    notes: dict[int, NoncodingNote] = {}
    for f in findings:
        gene = panel.genes.get(f.gene)
        hit = listed_match(f.annotation, gene, listed_table)
        if hit is not None:
            notes[id(f)] = NoncodingNote(
                kind="listed", listed=hit, source=hit.source,
                reason=(f"{hit.gene} {hit.hgvs_c} is a recurrent pathogenic non-coding allele ({hit.effect}); "
                        f"source: {hit.source}. Reported whatever its splice prediction; its class here comes "
                        f"from this run's evidence"),
                next_step=(f"Confirm {hit.gene} {hit.hgvs_c} in an accredited laboratory and test the parents "
                           f"for segregation (recurrent non-coding allele, {hit.source})"))

    by_gene: dict[str, list[Finding]] = {}
    for f in findings:
        by_gene.setdefault(f.gene, []).append(f)

    def partner_ok(p: Finding) -> bool:
        if not p.passes_quality:
            return False
        call = p.variant.calls.get(proband)
        if call is None or call.alt_copies == 0:
            return False
        if id(p) in notes and notes[id(p)].kind == "listed":
            return _cls(p) not in ("Benign", "Likely benign")
        return _cls(p) in QUALIFYING and not evidence_free(p, curated)

    # Qualifying partners per gene, judged once (partner_ok does not depend on the allele it is
    # paired with), so a gene with thousands of intronic alleles costs linear, not quadratic, time.
    partners_by_gene = {g: [p for p in fs if partner_ok(p)] for g, fs in by_gene.items()}

    held: list[Finding] = []
    for f in findings:
        if id(f) in notes or not f.passes_quality or not evidence_free(f, curated) or not is_rare(f):
            continue
        gene: Optional[Gene] = panel.genes.get(f.gene)
        call = f.variant.calls.get(proband)
        if gene is None or call is None or call.alt_copies == 0:
            continue
        pheno = phenotype_state(matches.get(f.gene), phenotype_given, fits_retina, threshold)
        completes, partners = "", []
        if call.zygosity == "hemizygous" and gene.x_linked:
            completes = "hemizygous"
        elif call.zygosity == "homozygous" and gene.recessive:
            completes = "homozygous"
        elif call.zygosity == "heterozygous" and gene.recessive:
            partners = [p for p in partners_by_gene.get(f.gene, []) if p is not f
                        and not _in_cis(f, p, proband, mother, father)]
            completes = "second allele" if partners else ""
        if not completes:
            continue
        if pheno is None:
            held.append(f)
            continue
        c = label(f)
        if completes == "hemizygous":
            what = f"hemizygous in a male in an X-linked gene ({'/'.join(gene.inheritance)})"
        elif completes == "homozygous":
            what = "homozygous in a recessive gene"
        else:
            what = "the second allele beside " + ", ".join(f"{label(p)} ({_cls(p)})" for p in partners)
        ph = ("the phenotype fits the gene" if pheno == "fits"
              else "no phenotype was given, so whether the phenotype fits is unknown")
        notes[id(f)] = NoncodingNote(
            kind="candidate", completes=completes, partners=partners, phenotype_fit=pheno,
            reason=(f"candidate non-coding allele: rare {'/'.join(f.annotation.consequence)} allele {c} with no "
                    f"splice prediction or assertion, {what} in {f.gene}; {ph}. Kept past the reporting filter "
                    f"because it would complete the genotype; not a diagnosis until its effect is shown"),
            next_step=(f"RNA or minigene splice study of {f.gene} {c}; test parents for segregation"
                       + (" (and confirm phase with the partner allele)" if partners else "")))
    return Selection(notes, held)
