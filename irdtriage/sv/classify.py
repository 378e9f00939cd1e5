"""ACMG/AMP criteria for a structural event in one gene, and the Riggs 2020 points as a second opinion.

PVS1 follows the deletion and duplication branches of the ClinGen SVI PVS1 decision tree (Abou
Tayoun et al., Hum Mutat 2018;39:1517-1524, Figure 1):

* full gene deletion: PVS1 (VeryStrong);
* single- or multi-exon deletion that shifts the reading frame with NMD expected: VeryStrong;
* a deletion that keeps the frame, or shifts it without NMD: Strong when the removed part is more
  than 10 % of the protein (``pvs1.protein_fraction_strong``; a region proven critical would also
  give Strong, but the panel does not curate such regions), else Moderate;
* a whole- or multi-exon duplication inside the gene that shifts the frame with NMD expected:
  VeryStrong when it is known to be in tandem (the caller wrote ``<DUP:TANDEM>``), Strong when
  in tandem is only presumed (``<DUP>``/``<CNV>`` with both ends in the gene); otherwise not met;
* a deletion within an intron only, or outside the transcript: PVS1 does not apply.

PVS1 is applied only where loss of function is a mechanism of a retinal mode of the gene
(``irdtriage.mechanism.pvs1_gate``).  PM2 is not evaluable: no population data for structural
events is read.  The other criteria are not assessed for structural events by this version; family
and phenotype criteria (PM3, PP4 ...) are added by the pipeline's second pass as for small variants.

The Riggs et al. (Genet Med 2020;22:245-257) points score copy-number losses (Table 1) and gains
(Table 2) section by section; each section's points and reason are kept beside the ACMG/AMP class.
"""
from __future__ import annotations

from typing import Any, Optional

from ..mechanism import modes_of, pvs1_gate
from ..models import ALL_CODES, CriterionResult, Gene
from .overlap import GeneOverlap
from .settings import load_settings

TREE = "Abou Tayoun et al. 2018, Figure 1"


def _pvs1(met: Optional[bool], strength: Optional[str], reason: str, **evidence: Any) -> CriterionResult:
    return CriterionResult("PVS1", met, strength if met else None, reason, dict(evidence, tree=TREE))


def pvs1_structural(svtype: str, tandem: Optional[bool], o: GeneOverlap, gene: Gene) -> CriterionResult:
    """PVS1 for a deletion or duplication (or a long insertion inside an exon) of ``gene``."""
    ev = {"extent": o.extent, "exons": list(o.exons), "frame": o.frame, "nmd_predicted": o.nmd,
          "protein_fraction": o.protein_fraction}
    gate = pvs1_gate(gene)
    if gate:
        return _pvs1(False, None, f"{o.words}; PVS1 not applied: {gate}", **ev)
    limit = float(load_settings()["pvs1"]["protein_fraction_strong"])
    if o.extent == "structure unknown":
        return _pvs1(None, None, f"{o.words}; PVS1 needs the exon structure", **ev)
    if o.extent in ("intronic only", "outside the transcript"):
        return _pvs1(False, None, f"{o.words}; no exon is involved, so the deletion/duplication branches of the "
                                  f"PVS1 tree do not apply (an effect on splicing would need an RNA study)", **ev)

    def by_size(why: str) -> CriterionResult:
        frac = o.protein_fraction
        if frac is None:
            return _pvs1(True, "Moderate", f"{o.words}; {why}; the share of the protein involved is unknown: "
                                           f"Moderate ({TREE})", **ev)
        pct = f"{frac * 100:.1f} %"
        if frac > limit:
            return _pvs1(True, "Strong", f"{o.words}; {why}; removes {pct} of the coding sequence (> "
                                         f"{limit * 100:.0f} %): Strong ({TREE})", **ev)
        return _pvs1(True, "Moderate", f"{o.words}; {why}; removes {pct} of the coding sequence (<= "
                                       f"{limit * 100:.0f} %, no critical region curated): Moderate ({TREE})", **ev)

    if svtype == "DEL":
        if o.extent == "whole gene":
            return _pvs1(True, "VeryStrong", f"{o.words}: full gene deletion, VeryStrong ({TREE})", **ev)
        if o.frame == "out of frame" and o.nmd:
            return _pvs1(True, "VeryStrong", f"{o.words}: the deletion shifts the reading frame and NMD is "
                                             f"expected, VeryStrong ({TREE})", **ev)
        if o.frame is None and o.coding_nt == 0:
            return _pvs1(False, None, f"{o.words}; no coding nucleotide is removed", **ev)
        if o.frame == "in frame":
            return by_size("the reading frame is kept")
        if o.frame == "out of frame":
            return by_size("the frame shifts but NMD is " + ("not expected" if o.nmd is False else "not predictable"))
        return by_size(f"frame and NMD cannot be followed ({o.frame_reason})")
    if svtype == "DUP":
        if o.extent == "whole gene":
            return _pvs1(False, None, f"{o.words}: a whole-gene duplication leaves the gene's sequence intact, not "
                                      "a loss of function", **ev)
        if o.five_prime_end or o.three_prime_end:
            return _pvs1(False, None, f"{o.words}: one end of the duplication lies outside the gene, so an in-tandem "
                                      f"copy inside the gene is not presumed ({TREE}: N/A)", **ev)
        if o.extent == "partial exon":
            return _pvs1(None, None, f"{o.words}: a breakpoint inside an exon, the product cannot be predicted", **ev)
        if o.frame == "out of frame" and o.nmd:
            if tandem:
                return _pvs1(True, "VeryStrong", f"{o.words}: called in tandem (<DUP:TANDEM>), the frame shifts "
                                                 f"and NMD is expected, VeryStrong ({TREE})", **ev, tandem="called")
            return _pvs1(True, "Strong", f"{o.words}: in tandem presumed (both ends inside the gene, not proven), "
                                         f"the frame shifts and NMD is expected, Strong ({TREE}); long-read sequencing "
                                         "or breakpoint PCR would prove it", **ev, tandem="presumed")
        return _pvs1(False, None, f"{o.words}: the duplication does not shift the frame with NMD expected ({TREE}: "
                                  "N/A)", **ev)
    if svtype == "INS" and o.extent == "within one exon":
        if o.frame == "out of frame" and o.nmd:
            return _pvs1(True, "VeryStrong", f"{o.words}: the insertion shifts the frame and NMD is expected "
                                             f"({TREE}, frameshift branch)", **ev)
        return _pvs1(None, None, f"{o.words}: the effect of the insertion on the protein is not predicted here", **ev)
    return _pvs1(None, None, f"{o.words}: the PVS1 tree has no branch for a {svtype} event", **ev)


def criteria(svtype: str, tandem: Optional[bool], o: GeneOverlap, gene: Gene) -> dict[str, CriterionResult]:
    """All 28 codes for the event in ``gene`` (automated part; family/phenotype criteria come later)."""
    out: dict[str, CriterionResult] = {}
    out["PVS1"] = pvs1_structural(svtype, tandem, o, gene)
    out["PM2"] = CriterionResult("PM2", None, None,
                                 "not evaluable: no population data for structural events is read by this version "
                                 "(a population structural-variant set such as gnomAD-SV would settle it)")
    for code in ALL_CODES:
        if code not in out:
            out[code] = CriterionResult(code, None, None, "not assessed for structural events by this version")
    return out


# ---------------------------------------------------------------------------------------------
# Riggs et al. 2020 point sections
def haploinsufficient(gene: Gene) -> bool:
    """Stand-in for an established haploinsufficient gene: a retinal dominant mode with loss of
    function as its mechanism in the panel (ClinGen dosage scores are not read)."""
    return any(s.retinal and s.mode in ("AD", "XLD") and "LOF" in s.mechanisms for s in modes_of(gene).values())


def riggs_class(total: float) -> str:
    c = load_settings()["riggs"]["classes"]
    if total >= c["pathogenic"]:
        return "Pathogenic"
    if total >= c["likely_pathogenic"]:
        return "Likely pathogenic"
    if total <= c["benign"]:
        return "Benign"
    if total <= c["likely_benign"]:
        return "Likely benign"
    return "Uncertain significance"


def riggs_points(svtype: str, o: GeneOverlap, gene: Gene, pvs1: CriterionResult) -> Optional[dict[str, Any]]:
    """Section points for a copy-number loss (DEL) or gain (DUP) in ``gene``; None for other events."""
    if svtype not in ("DEL", "DUP"):
        return None
    cfg = load_settings()["riggs"]
    kind = "loss" if svtype == "DEL" else "gain"
    table = cfg[kind]
    sections: list[dict[str, Any]] = []

    def add(code: str, points: float, reason: str) -> None:
        sections.append({"section": code, "points": points, "reason": reason})

    content = o.extent not in ("intronic only", "outside the transcript") and (o.coding_nt or o.extent == "whole gene"
                                                                               or o.exons)
    if content:
        add("1A", table["1A"], f"the {kind} contains protein-coding sequence of {gene.symbol}")
    else:
        add("1B", table["1B"], f"the {kind} contains no protein-coding sequence of {gene.symbol} (no exon involved; "
                               "other functional elements are not known to the panel)")
    strength = pvs1.strength if pvs1.met else None
    if not haploinsufficient(gene):
        add("2", 0.0, f"{gene.symbol} is not an established haploinsufficient gene in the panel (no dominant "
                      f"loss-of-function mode): section 2 does not apply; a loss of both copies is weighed by "
                      f"the sequence-variant criteria and the genotype fit")
    elif kind == "loss" and content:
        if o.extent == "whole gene":
            add("2A", table["2A"], f"complete overlap of {gene.symbol}")
        elif o.five_prime_end:
            if o.coding_nt:
                add("2C-1", table["2C-1"], f"5' end of {gene.symbol} with coding sequence")
            else:
                add("2C-2", table["2C-2"], f"5' end of {gene.symbol}, untranslated sequence only")
        elif o.three_prime_end:
            if not o.coding_nt:
                add("2D-1", table["2D-1"], f"3' end of {gene.symbol}, untranslated sequence only")
            elif o.exons == (o.exon_count,):
                add("2D-3", table["2D-3"], f"last exon of {gene.symbol} only; pathogenic variants in that exon are "
                                           "not curated here, so the lower option is taken")
            else:
                add("2D-4", table["2D-4"], f"3' end of {gene.symbol} including exons besides the last")
        else:
            add("2E", table["2E"][strength or "none"],
                f"both breakpoints within {gene.symbol}: points of PVS1 {strength or 'not met'} ({pvs1.reason})")
    elif kind == "gain" and content:
        if o.extent == "whole gene":
            add("2H", table["2H"], f"{gene.symbol} (haploinsufficient) fully contained in the gain")
        elif not (o.five_prime_end or o.three_prime_end):
            add("2I", table["2I"][strength or "none"],
                f"both breakpoints within {gene.symbol}: points of PVS1 {strength or 'not met'} ({pvs1.reason})")
    add("3", 0.0, "gene count: only panel genes are known here; not scored")
    add("4-5", 0.0, "case-level and family evidence (sections 4 and 5): not scored by this version")
    total = round(sum(s["points"] for s in sections), 2)
    return {"kind": kind, "sections": sections, "total": total, "classification": riggs_class(total),
            "source": cfg["source"]}
