"""PS1 and PM5 against a local clinical-assertion source (see irdtriage.evidence.clinical).

PS1 (Strong): same amino-acid change as an established pathogenic variant, different
nucleotide change.  PM5 (Moderate): different missense change at a residue where a
pathogenic missense change is established.  Assertions count when CLNSIG is one of the
curated pathogenic terms and the review status is not excluded (criteria.yaml).  Splicing:
when SpliceAI predicts a splice effect (>= PP3 cut-off) the amino-acid comparison may not
carry over, and the reason says so.  An identical variant in the source is reported as
evidence only (that would be a reputable-source claim, which ClinGen SVI advises against).
"""
from __future__ import annotations

from typing import Optional

from ..models import Annotation, CriterionResult, Gene
from .common import MISSENSE, protein_change, result, terms
from .rules import Rules


def _pathogenic(entry: dict, rules: Rules) -> bool:
    ca = rules.data["clinical_assertions"]
    sig = entry.get("clnsig", "")
    if "onflicting" in sig:
        return False
    sigs = {s.strip() for s in sig.replace(",", "|").replace("/", "|").split("|")} | {sig}
    if not (sigs & set(ca["pathogenic_terms"])):
        return False
    review = entry.get("review", "")
    return not any(x in review for x in ca["excluded_review_terms"])


def evaluate_assertions(ann: Optional[Annotation], gene: Gene, rules: Rules, ev: dict) -> list[CriterionResult]:
    clin = ev.get("clinical")
    if clin is None:
        msg = "no clinical-assertion source given (needs --clinical-vcf)"
        return [result("PS1", None, None, msg), result("PM5", None, None, msg)]
    t = terms(ann)
    same = clin.get("same_variant", [])
    base = {"same_variant": same}
    if not t & MISSENSE:
        msg = "not a missense variant"
        return [result("PS1", False, None, msg, **base), result("PM5", False, None, msg, **base)]
    mine = protein_change(ann.hgvs_p if ann else "")
    if not mine:
        msg = "protein change not annotated (HGVS p. needed to compare amino-acid changes)"
        return [result("PS1", None, None, msg, **base), result("PM5", None, None, msg, **base)]
    ref, pos, alt = mine
    sai = ev.get("spliceai_max")
    caveat = ""
    if sai is not None and sai >= rules.in_silico["spliceai_pp3"]:
        caveat = f"; caution: SpliceAI {sai:.2f} predicts a splice effect, amino-acid comparison may not hold"
    ps1 = pm5 = None
    unusable = 0
    for e in clin.get("nearby", []):
        if e.get("gene") and e["gene"] != gene.symbol:
            continue
        pc = protein_change(e.get("protein", ""))
        if pc is None:
            unusable += 1
            continue
        if pc[1] != pos or pc[0] != ref or not _pathogenic(e, rules):
            continue
        label = f"{e.get('protein')} ({e.get('clnsig')}, {e.get('review') or 'review status n/a'}, id {e.get('id')})"
        if pc[2] == alt and ps1 is None:
            ps1 = result("PS1", True, "Strong", f"same amino-acid change {ann.hgvs_p} as pathogenic {label} from a "
                         f"different nucleotide change{caveat}", match=e, **base)
        elif pc[2] not in (alt, "Ter", "fs", "=", "?") and len(pc[2]) == 3 and pm5 is None:
            pm5 = result("PM5", True, "Moderate", f"different missense change at residue {ref}{pos}: pathogenic "
                         f"{label}{caveat}", match=e, **base)
    note = f" ({unusable} nearby assertions lacked a protein change)" if unusable else ""
    if same:
        note += f"; identical variant in the source: {same[0].get('clnsig')} (evidence only, not used as PS1)"
    if ps1 is None:
        ps1 = result("PS1", False, None, f"no pathogenic assertion with the same amino-acid change {ann.hgvs_p}"
                     + note, **base)
    if pm5 is None:
        pm5 = result("PM5", False, None, f"no pathogenic different missense change at residue {ref}{pos}" + note,
                     **base)
    return [ps1, pm5]
