"""Genotype reasoning when a deletion and small variants meet in one gene (called by irdtriage.genotype).

Mendelian arithmetic (common practice): a heterozygous deletion leaves one copy of its interval, so
a small variant the person carries inside that interval sits on the remaining copy.  Its call may
look homozygous (no reference reads: the other copy is missing), but it is one allele, hemizygous in
effect, and it is necessarily in trans with the deletion.  A carried small variant inside a
homozygous deletion, or a heterozygous call inside a heterozygous deletion, contradicts the
deletion: the breakpoints or one of the calls need review.
"""
from __future__ import annotations

from dataclasses import replace
from typing import NamedTuple, Optional, Sequence

from ..models import Call, Finding


class Inside(NamedTuple):
    deletion: Finding
    copies_left: int  # copies of the interval the deletion leaves (1: heterozygous, 0: homozygous)


def _span(f: Finding) -> tuple[int, int]:
    s = f.structural
    return int(s["start"]), int(s["end"])


def _is_deletion(f: Finding) -> bool:
    return f.structural is not None and f.structural["type"] == "DEL"


def inside_deletion(small: Finding, findings: Sequence[Finding], proband: str) -> Optional[Inside]:
    """The deletion (among ``findings``) the proband carries over ``small``'s position, if any."""
    if small.structural is not None:
        return None
    v = small.variant
    first, last = v.pos, v.pos + max(len(v.ref), 1) - 1
    for d in findings:
        if not _is_deletion(d) or d.variant.chrom_bare != v.chrom_bare:
            continue
        s, e = _span(d)
        c = d.variant.calls.get(proband)
        if c is None or c.alt_copies == 0 or not (s <= first and last <= e):
            continue
        expected = len(c.gt)
        return Inside(d, max(0, expected - c.alt_copies))
    return None


def trans_by_position(a: Finding, b: Finding, proband: str) -> Optional[tuple[str, str]]:
    """("trans", how) when one of the two is a small variant inside the other, a heterozygous
    deletion the proband carries; None otherwise."""
    for small, other in ((a, b), (b, a)):
        hit = inside_deletion(small, [other], proband)
        if hit is not None and hit.copies_left == 1:
            return "trans", (f"{small.id} lies inside the heterozygous deletion {other.id}, so it can only be on the "
                             f"other copy (inside the deletion)")
    return None


def hemizygous_in_effect(alleles: list[tuple[Finding, Call]], proband: str
                         ) -> tuple[list[tuple[Finding, Call]], list[str]]:
    """Small-variant calls inside a heterozygous deletion counted as one allele; notes for each.

    Returns the alleles (an apparently homozygous call inside a heterozygous deletion replaced by a
    one-copy view of it) and notes naming what was done or what contradicts the deletion."""
    findings = [f for f, _ in alleles]
    out: list[tuple[Finding, Call]] = []
    notes: list[str] = []
    for f, c in alleles:
        hit = inside_deletion(f, findings, proband)
        if hit is None:
            out.append((f, c))
            continue
        d = hit.deletion.id
        if hit.copies_left == 0:
            notes.append(f"{f.id} is called inside the homozygous deletion {d}, where no copy is left: the "
                         f"breakpoints or one of the calls are wrong - review both")
            out.append((f, c))
        elif c.alt_copies >= 2:
            notes.append(f"{f.id} looks homozygous but lies inside the heterozygous deletion {d}: it is hemizygous "
                         f"in effect (the other copy is deleted), one allele in trans with {d}; its apparent "
                         f"homozygosity is the loss of the other allele")
            out.append((f, replace(c, gt=(0, 1), zygosity="heterozygous")))
        else:
            notes.append(f"{f.id} is called heterozygous inside the heterozygous deletion {d}: one copy is deleted, "
                         f"so a heterozygous call there is unexpected - check the breakpoints (the deletion may be "
                         f"smaller) or mosaicism")
            out.append((f, c))
    return out, notes
