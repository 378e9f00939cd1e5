"""Evaluate all 28 ACMG/AMP criteria for one finding.

``evaluate(finding, gene, rules, extra=(), curated=()) -> list[CriterionResult]`` returns the
28 codes in ``models.ALL_CODES`` order, each met / not met / not evaluable (met None) with a
one-line reason.

Merging: results in ``extra`` (family and phenotype criteria from other modules) replace an
automated result only when that one is not evaluable.  ``curated`` results (user evidence,
irdtriage.curated) replace any automated result; the replaced reason is kept in
``evidence["replaced"]``.  After merging, PP3 is lowered so PP3 + PM1 count no more than
Strong (Pejaver et al. 2022).
"""
from __future__ import annotations

from typing import Iterable, Optional

from ..models import ALL_CODES, CriterionResult, Finding, Gene
from .assertions import evaluate_assertions
from .combine import POINTS
from .frequency import evaluate_frequency
from .insilico import evaluate_insilico
from .protein import evaluate_protein
from .pvs1 import evaluate_pvs1
from .rules import Rules

FAMILY_HINTS = {
    "PM3": ("family", "needs the other allele in trans (genotype/phase; parents' genotypes or phased calls)"),
    "PS2": ("family", "needs parental genotypes confirming de novo (trio VCF with PED)"),
    "PM6": ("family", "needs parental genotypes (assumed de novo; trio VCF with PED)"),
    "PP1": ("family", "needs segregation in affected relatives (multi-sample VCF with PED)"),
    "BS4": ("family", "needs segregation data in affected relatives (PED)"),
    "BP2": ("family", "needs phase with a pathogenic variant in the same gene"),
    "BP5": ("family", "needs the case-level finding of an alternate molecular cause"),
    "PP4": ("phenotype", "needs the patient's HPO terms (--hpo or a Phenopacket)"),
}
CURATED_ONLY = {
    "PS3": "functional studies are not automated: add them as curated evidence (--curated)",
    "BS3": "functional studies are not automated: add them as curated evidence (--curated)",
    "PS4": "case-control prevalence is not automated: add it as curated evidence (--curated)",
    "PP5": ("reputable-source claims are not automated; ClinGen SVI (2018) advises against PP5 - "
            "weigh the underlying evidence instead (--curated)"),
    "BP6": ("reputable-source claims are not automated; ClinGen SVI (2018) advises against BP6 - "
            "weigh the underlying evidence instead (--curated)"),
}
_STRENGTH_BY_POINTS = {1: "Supporting", 2: "Moderate", 4: "Strong", 8: "VeryStrong"}


def _placeholder(code: str, ev: dict) -> CriterionResult:
    if code in FAMILY_HINTS:
        kind, hint = FAMILY_HINTS[code]
        return CriterionResult(code, None, None, f"not evaluable: {hint}", source=kind)
    reason = f"not evaluable: {CURATED_ONLY[code]}"
    if code in ("PP5", "BP6") and ev.get("clinsig"):
        reason += f"; clinical significance in the input: {ev['clinsig']}"
    return CriterionResult(code, None, None, reason)


def automated(finding: Finding, gene: Gene, rules: Rules) -> dict[str, CriterionResult]:
    ev = finding.evidence or {}
    ann = finding.annotation
    out: dict[str, CriterionResult] = {}
    out["PVS1"] = evaluate_pvs1(ann, gene, rules, finding.variant, ev.get("build"))
    for r in (evaluate_frequency(finding.variant, ann, gene, rules, ev) + evaluate_insilico(ann, rules, ev)
              + evaluate_protein(ann, gene, rules) + evaluate_assertions(ann, gene, rules, ev)):
        out[r.code] = r
    for code in ALL_CODES:
        if code not in out:
            out[code] = _placeholder(code, ev)
    return out


def _cap_pp3_pm1(res: dict[str, CriterionResult], cap: int) -> None:
    pp3, pm1 = res["PP3"], res["PM1"]
    if not (pp3.met and pm1.met and pp3.strength in POINTS and pm1.strength in POINTS):
        return
    total = POINTS[pp3.strength] + POINTS[pm1.strength]
    if total <= cap:
        return
    allowed = cap - POINTS[pm1.strength]
    if allowed <= 0:
        res["PP3"] = CriterionResult("PP3", False, None, f"{pp3.reason}; not counted: PM1 already reaches the "
                                     f"PP3+PM1 cap ({cap} points, Pejaver et al. 2022)",
                                     dict(pp3.evidence, capped_from=pp3.strength), pp3.source)
        return
    new = max((p for p in _STRENGTH_BY_POINTS if p <= allowed))
    res["PP3"] = CriterionResult("PP3", True, _STRENGTH_BY_POINTS[new],
                                 f"{pp3.reason}; lowered from {pp3.strength} so PP3+PM1 stay within Strong "
                                 "(Pejaver et al. 2022)", dict(pp3.evidence, capped_from=pp3.strength), pp3.source)


def evaluate(finding: Finding, gene: Gene, rules: Rules, extra: Iterable[CriterionResult] = (),
             curated: Iterable[CriterionResult] = (),
             base: Optional[dict[str, CriterionResult]] = None) -> list[CriterionResult]:
    """All 28 criteria for one finding. ``base``: the result of :func:`automated` for this
    finding when the caller already has it (the pipeline's second pass adds only family and
    phenotype criteria); it is copied, never changed."""
    res = dict(base) if base is not None else automated(finding, gene, rules)
    for r in extra:
        if r.code not in res:
            raise ValueError(f"unknown criterion code {r.code!r} from another module")
        if res[r.code].met is None:
            res[r.code] = r
    for r in curated:
        if r.code not in res:
            raise ValueError(f"unknown criterion code {r.code!r} in curated evidence")
        old = res[r.code]
        res[r.code] = CriterionResult(r.code, r.met, r.strength, r.reason,
                                      dict(r.evidence, replaced=old.reason), source="curated")
    _cap_pp3_pm1(res, int(rules.in_silico["pp3_pm1_cap_points"]))
    return [res[c] for c in ALL_CODES]
