"""Shared helpers for criterion evaluators: consequence classes, HGVS protein parsing, positions."""
from __future__ import annotations

import re
from typing import Any, Optional

from ..models import Annotation, CriterionResult

NONSENSE_FS = {"stop_gained", "frameshift_variant"}
SPLICE_CANONICAL = {"splice_donor_variant", "splice_acceptor_variant"}
START_LOST = {"start_lost", "initiator_codon_variant"}
ABLATION = {"transcript_ablation"}
EXON_LOSS = {"exon_loss_variant"}
NULL_TERMS = NONSENSE_FS | SPLICE_CANONICAL | START_LOST | ABLATION | EXON_LOSS
MISSENSE = {"missense_variant"}
INFRAME = {"inframe_insertion", "inframe_deletion", "disruptive_inframe_insertion",
           "disruptive_inframe_deletion", "conservative_inframe_insertion", "conservative_inframe_deletion"}
STOP_LOST = {"stop_lost"}
SYNONYMOUS = {"synonymous_variant", "start_retained_variant", "stop_retained_variant"}
INTRONIC = {"intron_variant"}

AA3 = {"A": "Ala", "R": "Arg", "N": "Asn", "D": "Asp", "C": "Cys", "Q": "Gln", "E": "Glu", "G": "Gly",
       "H": "His", "I": "Ile", "L": "Leu", "K": "Lys", "M": "Met", "F": "Phe", "P": "Pro", "S": "Ser",
       "T": "Thr", "W": "Trp", "Y": "Tyr", "V": "Val", "*": "Ter", "X": "Ter", "U": "Sec"}
_THREE = set(AA3.values())
_P = re.compile(r"^p\.\(?([A-Z][a-z]{2}|[A-Z*])(\d+)(.*?)\)?$")


def terms(ann: Optional[Annotation]) -> set[str]:
    if ann is None:
        return set()
    out: set[str] = set()
    for t in ann.consequence:
        out.update(x.strip() for x in str(t).split("&") if x.strip())
    return out


def result(code: str, met: Optional[bool], strength: Optional[str], reason: str, **evidence: Any) -> CriterionResult:
    return CriterionResult(code=code, met=met, strength=strength if met else None, reason=reason,
                           evidence={k: v for k, v in evidence.items()})


def protein_change(hgvs_p: str) -> Optional[tuple[str, int, str]]:
    """(ref aa, position, alt) with three-letter amino acids; alt may be 'fs', 'Ter', '=', '?', 'del'...

    Accepts p.Arg123Ter, p.(Arg123Ter), p.R123*, p.Arg123ProfsTer5, p.Met1?, ENSP...:p.Lys296Glu.
    """
    if not hgvs_p:
        return None
    s = hgvs_p.split(":", 1)[1] if ":" in hgvs_p else hgvs_p
    s = s.strip()
    m = _P.match(s)
    if not m:
        return None
    ref, pos, rest = m.group(1), int(m.group(2)), m.group(3)
    ref = AA3.get(ref, ref) if len(ref) == 1 else ref
    if ref not in _THREE:
        return None
    rest = rest.rstrip(")")
    if "fs" in rest:
        return ref, pos, "fs"
    if rest.startswith(("del", "dup", "ins", "_", "ext")):
        return ref, pos, rest.split("_")[0] if rest.startswith("_") else rest[:3]
    if rest in ("", "?", "="):
        return ref, pos, rest or "?"
    alt = rest[:3] if rest[:3] in _THREE else AA3.get(rest[:1], rest)
    return ref, pos, alt


def fraction(text: Any) -> tuple[Optional[int], Optional[int]]:
    """'5/12' -> (5, 12); '5' -> (5, None); '5-6/12' -> (5, 12)."""
    if text is None:
        return None, None
    s = str(text).strip()
    if not s or s in ("-", "."):
        return None, None
    num, _, den = s.partition("/")
    num = num.split("-")[0].strip()
    try:
        n = int(num)
    except ValueError:
        return None, None
    try:
        d = int(den) if den.strip() else None
    except ValueError:
        d = None
    return n, d


def protein_position(ann: Optional[Annotation]) -> tuple[Optional[int], Optional[int], str]:
    """Protein position and length, and which annotation field gave them."""
    if ann is None:
        return None, None, ""
    for key in ("Protein_position", "AA.pos / AA.length", "AA.pos/AA.length", "AA_position", "protein_position"):
        if key in ann.extra:
            pos, length = fraction(ann.extra[key])
            if pos is not None:
                if length is None:
                    for lk in ("Protein_length", "AA.length", "protein_length"):
                        if lk in ann.extra:
                            length = fraction(ann.extra[lk])[0]
                return pos, length, key
    pc = protein_change(ann.hgvs_p)
    if pc:
        return pc[1], None, "HGVS p."
    return None, None, ""


_INTRON_OFFSET = re.compile(r"c\.-?\*?\d+([+-])(\d+)")


def intron_offset(hgvs_c: str) -> Optional[tuple[str, int]]:
    """('+', 5) for c.123+5G>A, ('-', 2) for c.124-2A>G; None for exonic positions."""
    m = _INTRON_OFFSET.search(hgvs_c or "")
    if not m:
        return None
    return m.group(1), int(m.group(2))
