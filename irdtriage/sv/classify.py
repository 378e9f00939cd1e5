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


def pvs1_breakend(o: GeneOverlap, gene: Gene) -> CriterionResult:
    """PVS1 for a rearrangement breakpoint (translocation, inversion or other junction) in ``gene``.

    The SVI tree (Abou Tayoun 2018) has no branch for a breakpoint that severs a gene.  A reasoned
    call (common practice, from memory): a breakpoint between the first and last coding base
    separates the 3' part of the coding sequence from the promoter, like a truncation whose NMD
    cannot be predicted (the 5' part reads into unknown partner sequence), so the tree's
    "NMD not predicted" truncation branch is followed: Strong when more than 10 % of the coding
    sequence lies 3' of the break, else Moderate.  Outside the coding span, not applied."""
    ev = {"extent": o.extent, "exons": list(o.exons), "introns": list(o.introns), "in_cds": o.in_cds,
          "protein_fraction": o.protein_fraction, "basis": "reasoned call (common practice, from memory)"}
    gate = pvs1_gate(gene)
    if gate:
        return _pvs1(False, None, f"{o.words}; PVS1 not applied: {gate}", **ev)
    if o.extent == "structure unknown":
        return _pvs1(None, None, f"{o.words}; PVS1 needs the exon structure", **ev)
    if not o.in_cds:
        return _pvs1(False, None, f"{o.words}; the coding sequence is not severed, so PVS1 is not applied (an effect "
                                  "on expression would need an RNA study)", **ev)
    limit = float(load_settings()["pvs1"]["protein_fraction_strong"])
    why = ("the tree has no branch for a severed gene; the break is read as a truncation with NMD not predictable "
           f"(reasoned call, common practice, from memory; {TREE})")
    frac = o.protein_fraction
    if frac is not None and frac > limit:
        return _pvs1(True, "Strong", f"{o.words}; {frac * 100:.1f} % of the coding sequence lies 3' of the break "
                                     f"(> {limit * 100:.0f} %): Strong - {why}; confirm the breakpoint by long reads "
                                     "or breakpoint PCR", **ev)
    pct = "an unknown share" if frac is None else f"{frac * 100:.1f} %"
    return _pvs1(True, "Moderate", f"{o.words}; {pct} of the coding sequence lies 3' of the break (<= "
                                   f"{limit * 100:.0f} % or unknown): Moderate - {why}", **ev)


def criteria(svtype: str, tandem: Optional[bool], o: GeneOverlap, gene: Gene) -> dict[str, CriterionResult]:
    """All 28 codes for the event in ``gene`` (automated part; family/phenotype criteria come later)."""
    out: dict[str, CriterionResult] = {}
    out["PVS1"] = pvs1_breakend(o, gene) if svtype == "BND" else pvs1_structural(svtype, tandem, o, gene)
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


def riggs_points(svtype: str, o: GeneOverlap, gene: Gene, pvs1: CriterionResult,
                 gene_count: int = 1) -> Optional[dict[str, Any]]:
    """Sections 1-4 for a copy-number loss (DEL) or gain (DUP) in ``gene``; None for other events.

    ``gene_count``: panel genes the event reaches (section 3 counts protein-coding genes, of which
    the panel genes are a lower bound).  Section 5 needs the family: :func:`riggs_family`."""
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
    # Section 3: the band of the gene count.  Only panel genes are known here, a lower bound of the
    # protein-coding genes in the interval, so a band is never overstated.
    band = [b for b in table["section3"] if gene_count >= b["min_genes"]][-1]
    nxt = [b for b in table["section3"] if b["min_genes"] > gene_count]
    more = (f"; a larger count would reach {nxt[0]['code']} ({nxt[0]['min_genes']} or more genes, "
            f"{nxt[0]['points']:+.2f}): count the RefSeq protein-coding genes of the interval") if nxt else ""
    add(band["code"], band["points"], f"at least {gene_count} protein-coding gene{'s' if gene_count != 1 else ''} "
                                      f"wholly or partially in the {kind} (panel genes; genes outside the panel are "
                                      f"not known to this tool){more}")
    # Section 4: "skip to section 5" when section 2 found an established dosage-sensitive gene;
    # otherwise its categories need reported cases, segregation studies, case-control and
    # population CNV data that a panel tool does not hold.
    hit = [x for x in sections if x["section"][:2] in ("2A", "2C", "2D", "2E", "2I") and x["points"] > 0]
    if hit:
        add("4", 0.0, f"skipped: section 2 ({hit[0]['section']}) already scored an established "
                      f"{'haploinsufficient' if kind == 'loss' else 'dosage-sensitive'} gene, and the table then "
                      "continues with section 5")
    else:
        add("4", 0.0, "not evaluable without case literature: 4A-4N need reported probands, segregation or "
                      "case-control studies and 4O population copy-number data, none of which this tool reads; "
                      "a reviewer may add them")
    return _total({"kind": kind, "sections": sections, "source": cfg["source"]})


def _total(riggs: dict[str, Any]) -> dict[str, Any]:
    riggs["total"] = round(sum(x["points"] for x in riggs["sections"]), 2)
    riggs["classification"] = riggs_class(riggs["total"])
    return riggs


def riggs_family(riggs: Optional[dict[str, Any]], gene: Gene, calls: dict[str, Any], proband: str,
                 mother: Optional[str], father: Optional[str], affected: dict[str, Optional[bool]],
                 specific_phenotype: bool) -> Optional[dict[str, Any]]:
    """Section 5 (inheritance pattern and family history) added to ``riggs`` from the same event's
    calls in the relatives (``calls``: sample -> :class:`irdtriage.models.Call`; ``affected``:
    PED status by sample).

    A carrier parent of a recessive gene is expected, so 5B/5C (inherited from an apparently
    unaffected parent) and 4J/4K (unaffected carrier relatives) are applied only to genes where
    one copy lost causes the retinal disease (dominant loss of function); for the others the
    family evidence is weighed by the genotype fit and the ACMG/AMP family criteria."""
    if riggs is None:
        return None
    riggs["sections"] = [x for x in riggs["sections"] if not x["section"].startswith("5")]
    table = load_settings()["riggs"][riggs["kind"]]["section5"]
    dominant = haploinsufficient(gene)
    sections = riggs["sections"]

    def add(code: str, points: float, reason: str) -> None:
        sections.append({"section": code, "points": points, "reason": reason})

    def carries(sample: str) -> Optional[bool]:
        c = calls.get(sample)
        if c is None or c.zygosity == "no call":
            return None
        return c.alt_copies > 0

    parents = [p for p in (mother, father) if p]
    typed = {p: carries(p) for p in parents}
    relatives = [s for s in calls if s != proband and s not in parents]
    seg = sorted(s for s in relatives if affected.get(s) is True and carries(s) is True)
    seg += [p for p in parents if affected.get(p) is True and typed[p] is True]
    nonseg = sorted(s for s in list(relatives) + parents if affected.get(s) is True and carries(s) is False)
    scored = False
    if len(parents) == 2 and all(v is False for v in typed.values()):
        add("5A", 0.0, f"de novo by the parents' calls ({', '.join(parents)} do not carry it; parentage not "
                       "confirmed): 5A takes the points of the de novo categories 4A-4D, which need reported cases "
                       "with the same gene or region - a reviewer assigns them (0.15 to 0.45 for a specific "
                       "phenotype)")
        scored = True
    unaffected_parents = [p for p in parents if typed.get(p) is True and affected.get(p) is False]
    if unaffected_parents:
        code = "5B" if specific_phenotype else "5C"
        words = "specific" if specific_phenotype else "nonspecific"
        who = ", ".join(unaffected_parents)
        if dominant:
            add(code, table[code], f"inherited from the apparently unaffected parent {who}; the patient's phenotype "
                                   f"is {words} (HPO terms {'given' if specific_phenotype else 'not given'})")
        else:
            add(code, 0.0, f"inherited from the apparently unaffected parent {who}: expected for a carrier of a "
                           f"recessive condition of {gene.symbol}, so {code} (built for dosage-sensitive genes) is not "
                           "applied; the genotype fit and PM3 weigh it")
        scored = True
    if seg:
        bands = [b for b in table["segregations"] if len(seg) >= b["min"]]
        pts = bands[-1]["points"] if bands else 0.0
        need = "" if bands else f"; 4F-4H start at {table['segregations'][0]['min']} segregations"
        add("5D", pts, f"segregates with the phenotype in {len(seg)} affected relative{'s' if len(seg) != 1 else ''} "
                       f"({', '.join(seg)}){need}")
        scored = True
    if nonseg:
        add("5E", table["4I"], f"not found in the affected relative{'s' if len(nonseg) != 1 else ''} "
                              f"{', '.join(nonseg)} (4I, per family; a phenocopy or a second cause in the family "
                              "would lift it)")
        scored = True
    carriers_unaff = sorted(s for s in relatives if affected.get(s) is False and carries(s) is True)
    if carriers_unaff and dominant:
        code = "4J" if specific_phenotype else "4K"
        add("5E", table[code], f"found in the unaffected relative{'s' if len(carriers_unaff) != 1 else ''} "
                               f"{', '.join(carriers_unaff)} ({code}, per family)")
        scored = True
    if not scored:
        why = ("no parent's call of the event" if not any(v is not None for v in typed.values())
               else "the relatives' calls do not place it")
        add("5F", table["5F"], f"inheritance information is unavailable or uninformative ({why}); 5G/5H need "
                               "comparison with described cases")
    return _total(riggs)
