"""Protein-level criteria from curated gene facts: PM1, PM4, BP3, PP2, BP1."""
from __future__ import annotations

from typing import Optional

from ..models import Annotation, CriterionResult, Gene
from .common import INFRAME, MISSENSE, STOP_LOST, protein_position, result, terms
from .rules import Rules


def _in(ranges, pos: Optional[int]):
    if pos is None:
        return None
    return next((r for r in ranges or [] if r["start"] <= pos <= r["end"]), None)


def evaluate_protein(ann: Optional[Annotation], gene: Gene, rules: Rules) -> list[CriterionResult]:
    t = terms(ann)
    g = rules.gene(gene.symbol)
    pos, length, key = protein_position(ann)
    ev = {"protein_position": pos, "protein_length": length, "hgvs_p": ann.hgvs_p if ann else ""}
    out = []
    # PM1: curated hotspot / critical residues, missense only.
    if not t & MISSENSE:
        out.append(result("PM1", False, None, "not a missense variant", **ev))
    elif not g.get("pm1_residues"):
        out.append(result("PM1", False, None, f"no curated hotspot or critical domain for {gene.symbol}", **ev))
    elif pos is None:
        out.append(result("PM1", None, None, "protein position not annotated", **ev))
    else:
        hit = _in(g["pm1_residues"], pos)
        out.append(result("PM1", bool(hit), "Moderate",
                          f"residue {pos} is in curated {hit['label']}" if hit else
                          f"residue {pos} is outside the curated {gene.symbol} hotspots", **ev))
    # PM4 / BP3: in-frame indels and stop-loss; repeats curated per gene.
    inframe, stoplost = bool(t & INFRAME), bool(t & STOP_LOST)
    repeat = _in(g.get("repeat_residues"), pos) if inframe else None
    if stoplost:
        out.append(result("PM4", True, rules.data["pm4"]["strength"], f"stop-loss ({ann.hgvs_p or ann.hgvs_c}) "
                          "lengthens the protein", **ev))
    elif inframe and repeat:
        out.append(result("PM4", False, None, f"in-frame indel inside curated repeat {repeat['label']}", **ev))
    elif inframe:
        out.append(result("PM4", True, rules.data["pm4"]["strength"], f"in-frame indel ({ann.hgvs_p or ann.hgvs_c})"
                          f" outside any curated repeat region of {gene.symbol}", **ev))
    else:
        out.append(result("PM4", False, None, "not an in-frame indel or stop-loss", **ev))
    if inframe and repeat:
        out.append(result("BP3", True, "Supporting", f"in-frame indel in curated repeat {repeat['label']}", **ev))
    else:
        out.append(result("BP3", False, None, "not an in-frame indel in a curated repeat region", **ev))
    # PP2 / BP1: gene-level facts, off unless curated.
    if t & MISSENSE and g.get("pp2"):
        out.append(result("PP2", True, "Supporting", f"missense in {gene.symbol}: curated low benign-missense rate "
                          "and missense a common disease mechanism", **ev))
    else:
        out.append(result("PP2", False, None, "not missense" if not t & MISSENSE else
                          f"PP2 not curated for {gene.symbol}", **ev))
    if t & MISSENSE and g.get("bp1"):
        out.append(result("BP1", True, "Supporting", f"missense in {gene.symbol}: curated as truncating-only "
                          "disease mechanism", **ev))
    else:
        out.append(result("BP1", False, None, "not missense" if not t & MISSENSE else
                          f"BP1 not curated for {gene.symbol}", **ev))
    return out
