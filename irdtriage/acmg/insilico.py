"""Computational criteria PP3, BP4 and BP7 with calibrated thresholds.

* Missense: the first calibrated score available (REVEL by default) mapped to strengths with
  the intervals in criteria.yaml (Pejaver et al., Am J Hum Genet 2022;109:2163-2177, Table 2).
* Splicing: SpliceAI maximum delta >= 0.2 supports PP3 (Supporting), <= 0.1 supports BP4 /
  BP7 (Walker et al., Am J Hum Genet 2023;110:1046-1067).
* A missense variant gets BP4 only when the missense score is benign and, if SpliceAI is
  given, splicing is also predicted unaffected; PP3 takes the stronger of the two lines.
* Synonymous and deep intronic variants with no predicted splice impact get BP7 (and then
  not BP4 too, so one prediction is not counted twice).
* Null variants assessed by PVS1 get neither PP3 nor BP4 (no double counting).
"""
from __future__ import annotations

from typing import Optional

from ..models import Annotation, CriterionResult
from .common import INFRAME, INTRONIC, MISSENSE, NULL_TERMS, SYNONYMOUS, intron_offset, result, terms
from .rules import STRENGTH_NAMES, Rules


def score_strength(value: float, thresholds: dict[str, float], higher: bool) -> Optional[str]:
    """Strongest strength whose threshold the value reaches (>= when higher, <= otherwise)."""
    best = None
    for s in STRENGTH_NAMES:
        if s in thresholds and ((value >= thresholds[s]) if higher else (value <= thresholds[s])):
            best = s
    return best


def _missense_score(ev: dict, rules: Rules) -> tuple[Optional[str], Optional[float], Optional[dict]]:
    scores = rules.in_silico["scores"]
    for name, spec in scores.items():
        if name == "revel" and ev.get("revel") is not None:
            return name, ev["revel"], spec
        v = (ev.get("scores") or {}).get(name)
        if v is not None:
            return name, v, spec
    return None, None, None


def evaluate_insilico(ann: Optional[Annotation], rules: Rules, ev: dict) -> list[CriterionResult]:
    t = terms(ann)
    ins = rules.in_silico
    sai = ev.get("spliceai_max")
    name, value, spec = _missense_score(ev, rules)
    evidence = {"spliceai_max": sai, "spliceai": ev.get("spliceai"), "score_name": name, "score": value}
    if t & NULL_TERMS:
        why = "null variant: assessed by PVS1, computational evidence not counted again"
        return [result("PP3", False, None, why, **evidence), result("BP4", False, None, why, **evidence),
                result("BP7", False, None, "not a synonymous or intronic variant", **evidence)]
    sai_txt = f"SpliceAI max delta {sai:.2f}" if sai is not None else "SpliceAI not available"
    pp3 = bp4 = None
    if t & MISSENSE:
        if value is None and sai is None:
            msg = "no calibrated missense score (REVEL) or SpliceAI value available"
            return [result("PP3", None, None, msg, **evidence), result("BP4", None, None, msg, **evidence),
                    result("BP7", False, None, "missense variant", **evidence)]
        p_str = score_strength(value, spec["pp3"], spec["higher_is_damaging"]) if value is not None else None
        b_str = score_strength(value, spec["bp4"], not spec["higher_is_damaging"]) if value is not None else None
        s_txt = f"{name.upper()} {value:.3f}" if value is not None else "no calibrated missense score"
        splice_p = sai is not None and sai >= ins["spliceai_pp3"]
        if p_str or splice_p:
            strength = p_str or "Supporting"
            pp3 = result("PP3", True, strength, f"{s_txt}" + (f" -> {p_str}" if p_str else "") +
                         (f"; {sai_txt} >= {ins['spliceai_pp3']}" if splice_p else f"; {sai_txt}"), **evidence)
        else:
            below = (f"{s_txt} below PP3 threshold {min(spec['pp3'].values())}" if value is not None
                     else f"{s_txt}; SpliceAI alone below the splice threshold {ins['spliceai_pp3']}")
            pp3 = result("PP3", False if value is not None else None, None, f"{below}; {sai_txt}", **evidence)
        splice_ok = sai is None or sai <= ins["spliceai_benign"]
        if b_str and splice_ok:
            bp4 = result("BP4", True, b_str, f"{s_txt} -> {b_str} (benign interval); {sai_txt}"
                         + ("" if sai is not None else " (splicing not assessed)"), **evidence)
        else:
            if value is None:
                why = f"no calibrated missense score (REVEL); {sai_txt}"
            elif not b_str:
                why = f"{s_txt} not in a benign interval (BP4 needs <= {max(spec['bp4'].values())})"
            else:
                why = f"{s_txt} benign but {sai_txt} > {ins['spliceai_benign']}"
            bp4 = result("BP4", False if value is not None else None, None, why, **evidence)
        return [pp3, bp4, result("BP7", False, None, "missense variant", **evidence)]

    # non-missense, non-null: splicing prediction only
    synonymous = bool(t & SYNONYMOUS)
    off = intron_offset(ann.hgvs_c) if ann else None
    deep = False
    if t & INTRONIC and off is not None:
        deep = off[1] >= (ins["bp7_intron_donor_min"] if off[0] == "+" else ins["bp7_intron_acceptor_min"])
    if sai is None:
        msg = "SpliceAI not available"
        return [result("PP3", None, None, msg, **evidence), result("BP4", None, None, msg, **evidence),
                result("BP7", None if (synonymous or deep) else False, None,
                       msg if (synonymous or deep) else "not synonymous or deep intronic", **evidence)]
    if sai >= ins["spliceai_pp3"]:
        pp3 = result("PP3", True, "Supporting", f"{sai_txt} >= {ins['spliceai_pp3']} (predicted splice impact)",
                     **evidence)
    else:
        pp3 = result("PP3", False, None, f"{sai_txt} < {ins['spliceai_pp3']}", **evidence)
    benign = sai <= ins["spliceai_benign"]
    if (synonymous or deep) and benign:
        kind = "synonymous" if synonymous else f"intronic at {off[0]}{off[1]}"
        bp7 = result("BP7", True, "Supporting", f"{kind} variant with {sai_txt} <= {ins['spliceai_benign']}",
                     **evidence)
        bp4 = result("BP4", False, None, "no splice impact predicted; counted under BP7", **evidence)
    else:
        bp7 = result("BP7", False, None, ("not synonymous or deep intronic" if not (synonymous or deep)
                                          else f"{sai_txt} > {ins['spliceai_benign']}"), **evidence)
        if benign and not (t & INFRAME):
            bp4 = result("BP4", True, "Supporting", f"{sai_txt} <= {ins['spliceai_benign']} (no splice impact)",
                         **evidence)
        else:
            bp4 = result("BP4", False, None, f"{sai_txt}" + (" > " + str(ins["spliceai_benign"]) if not benign
                         else "; in-frame indel effect on protein not predicted here"), **evidence)
    return [pp3, bp4, bp7]
