"""HGVS c. (and n.) descriptions of a genomic allele on one transcript.

Written from the HGVS recommendations (den Dunnen et al., Hum Mutat 2016;37:564-569;
varnomen.hgvs.org):

* c.1 is the A of the translation start codon; 5' of it c.-1, c.-2 ...; 3' of the stop codon's
  last base c.*1, c.*2 ...; the numbering continues the same way into the flanks.
* an intronic position is written from the nearest exon base: c.87+4 (4 nt after exon base 87),
  c.88-2; in the middle of an intron with an odd length the middle base takes "+".
* a deletion, duplication or insertion in a repeated stretch is described at its most 3'
  position in the reference (the 3' rule) -- on a transcript, 3' in transcript orientation;
  an insertion of a copy of the bases just 5' of it is a duplication (``dup``); a change of
  several bases to others is ``delins``; bases are not repeated after ``del``/``dup``.
* a non-coding transcript uses n. with the same offsets.

Shifting stops at the end of the exon or intron where the change lies (common practice: a
description that crosses an exon/intron border is avoided; the HGVS exception for
exon/intron borders, from memory).
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Optional

from .providers import SequenceProvider, TxModel, revcomp


@dataclass(frozen=True)
class TxPos:
    """A place on a transcript: ``n`` the 1-based cDNA position (< 1 upstream, > length downstream)
    of the nearest exon base and ``offset`` the intronic distance from it (0 in an exon)."""

    n: int
    offset: int = 0


class TxMap:
    """Coordinates of one transcript: genome <-> cDNA <-> c."""

    def __init__(self, tx: TxModel):
        self.tx = tx
        self.minus = tx.strand == "-"
        self.exons = list(reversed(tx.exons)) if self.minus else list(tx.exons)  # transcript order
        self.starts: list[int] = []  # cDNA position of each exon's first base
        n = 1
        for s, e in self.exons:
            self.starts.append(n)
            n += e - s + 1
        self.length = n - 1
        self.cds_start = self.cds_end = None  # cDNA positions of c.1 and of the stop codon's last base
        if tx.cds is not None:
            a, b = tx.cds
            first, last = (b, a) if self.minus else (a, b)
            self.cds_start = self.g_to_tx(first).n
            self.cds_end = self.g_to_tx(last).n

    # --- genome -> transcript -----------------------------------------------------------------
    def exon_index(self, g: int) -> Optional[int]:
        """0-based exon index (transcript order) holding genomic position ``g``, else None."""
        for i, (s, e) in enumerate(self.exons):
            if s <= g <= e:
                return i
        return None

    def g_to_tx(self, g: int) -> TxPos:
        i = self.exon_index(g)
        if i is not None:
            s, e = self.exons[i]
            return TxPos(self.starts[i] + ((e - g) if self.minus else (g - s)))
        first_s, first_e = self.exons[0]
        last_s, last_e = self.exons[-1]
        if (not self.minus and g < first_s) or (self.minus and g > first_e):
            return TxPos(1 - abs(g - (first_s if not self.minus else first_e)))
        if (not self.minus and g > last_e) or (self.minus and g < last_s):
            return TxPos(self.length + abs(g - (last_e if not self.minus else last_s)))
        # intron between exons k and k+1 (transcript order)
        for k in range(len(self.exons) - 1):
            a, b = self.exons[k], self.exons[k + 1]
            lo, hi = (a[1], b[0]) if not self.minus else (b[1], a[0])
            if lo < g < hi:
                up = (g - lo) if not self.minus else (hi - g)  # distance from the 5' exon's last base
                down = (hi - g) if not self.minus else (g - lo)  # distance to the 3' exon's first base
                end_5 = self.starts[k] + (a[1] - a[0])
                if up <= down:
                    return TxPos(end_5, up)
                return TxPos(self.starts[k + 1], -down)
        raise AssertionError("position not placed")  # pragma: no cover

    def region_of(self, g: int) -> tuple[str, int]:
        """("exon", i) / ("intron", k) (0-based, transcript order) / ("upstream"|"downstream", 0)."""
        i = self.exon_index(g)
        if i is not None:
            return "exon", i
        if g < self.tx.start:
            return ("downstream" if self.minus else "upstream"), 0
        if g > self.tx.end:
            return ("upstream" if self.minus else "downstream"), 0
        for k in range(len(self.exons) - 1):
            a, b = self.exons[k], self.exons[k + 1]
            lo, hi = (a[1], b[0]) if not self.minus else (b[1], a[0])
            if lo < g < hi:
                return "intron", k
        raise AssertionError("position not placed")  # pragma: no cover

    def region_bounds(self, g: int) -> tuple[int, int]:
        """Genomic span of the exon, intron or flank holding ``g`` (shifting stays inside it)."""
        kind, i = self.region_of(g)
        if kind == "exon":
            return self.exons[i]
        if kind == "intron":
            a, b = self.exons[i], self.exons[i + 1]
            return ((a[1] + 1, b[0] - 1) if not self.minus else (b[1] + 1, a[0] - 1))
        if g < self.tx.start:
            return (1, self.tx.start - 1)
        return (self.tx.end + 1, 10 ** 10)

    # --- transcript -> c. text ----------------------------------------------------------------
    def c_text(self, p: TxPos) -> str:
        if self.cds_start is None:
            base = str(p.n) if p.n >= 1 else f"-{1 - p.n}"
        elif p.n < self.cds_start:
            base = f"-{self.cds_start - p.n}"
        elif p.n <= self.cds_end:
            base = str(p.n - self.cds_start + 1)
        else:
            base = f"*{p.n - self.cds_end}"
        if p.offset:
            base += f"{p.offset:+d}"
        return base

    @property
    def prefix(self) -> str:
        return "c." if self.cds_start is not None else "n."

    def tx_to_g(self, n: int) -> int:
        """Genomic position of cDNA position ``n`` (1..length)."""
        for i in range(len(self.exons) - 1, -1, -1):
            if n >= self.starts[i]:
                s, e = self.exons[i]
                d = n - self.starts[i]
                return e - d if self.minus else s + d
        raise ValueError(n)

    def c_to_g(self, c: str) -> int:
        """Genomic position of a c. position such as "123", "-12", "*40", "123+5" (for tests/tools)."""
        import re

        m = re.fullmatch(r"([-*]?)(\d+)([+-]\d+)?", c)
        if not m or self.cds_start is None:
            raise ValueError(c)
        sign, num, off = m.group(1), int(m.group(2)), int(m.group(3) or 0)
        n = self.cds_start - num if sign == "-" else (self.cds_end + num if sign == "*" else self.cds_start + num - 1)
        g = self.tx_to_g(n)
        return g - off if self.minus else g + off

    def transcript_sequence(self, seq: SequenceProvider) -> str:
        parts = [seq.fetch(self.tx.chrom, s, e) for s, e in self.exons]
        return "".join(revcomp(p) for p in parts) if self.minus else "".join(parts)


# ---------------------------------------------------------------------------------------------
# Allele normalisation (3' rule, in transcript orientation) and the description
# ---------------------------------------------------------------------------------------------
@dataclass(frozen=True)
class Edit:
    """A trimmed genomic change: ``ref`` at ``start..start+len(ref)-1`` replaced by ``alt``; an
    insertion (``ref`` "") lies between ``start - 1`` and ``start``. Bases on the forward strand."""

    start: int
    ref: str
    alt: str

    @property
    def end(self) -> int:
        return self.start + len(self.ref) - 1

    @property
    def kind(self) -> str:
        if self.ref and self.alt:
            return "sub" if len(self.ref) == len(self.alt) == 1 else "delins"
        return "del" if self.ref else "ins"


def trim(pos: int, ref: str, alt: str) -> Edit:
    """Drop bases shared by REF and ALT: first the common suffix, then the common prefix."""
    ref, alt = ref.upper(), alt.upper()
    while ref and alt and ref[-1] == alt[-1]:
        ref, alt = ref[:-1], alt[:-1]
    while ref and alt and ref[0] == alt[0]:
        ref, alt, pos = ref[1:], alt[1:], pos + 1
    return Edit(pos, ref, alt)


_WINDOW = 120


def shift_3prime(edit: Edit, chrom: str, seq: SequenceProvider, toward_higher: bool,
                 bounds: tuple[int, int]) -> Edit:
    """Roll an insertion or deletion as far as it goes toward higher (``toward_higher``) or lower
    genomic positions through identical bases, without leaving ``bounds``."""
    if edit.kind not in ("ins", "del"):
        return edit
    lo, hi = bounds
    start, ref, alt = edit.start, edit.ref, edit.alt
    unit = ref or alt
    if toward_higher:
        while True:
            nxt = start + len(ref)  # first base after the change
            chunk = seq.fetch(chrom, nxt, min(nxt + _WINDOW - 1, hi))
            moved = 0
            for b in chunk:
                if b != unit[0]:
                    break
                unit = unit[1:] + unit[0]
                moved += 1
            start += moved
            if moved < len(chunk) or not chunk:
                break
    else:
        while True:
            prv = start - 1  # last base before the change
            chunk = seq.fetch(chrom, max(prv - _WINDOW + 1, lo), prv)
            moved = 0
            for b in reversed(chunk):
                if b != unit[-1]:
                    break
                unit = unit[-1] + unit[:-1]
                moved += 1
            start -= moved
            if moved < len(chunk) or not chunk:
                break
    return Edit(start, unit if ref else "", unit if alt else "")


@dataclass(frozen=True)
class CDescription:
    text: str  # "c.2299del" (no accession)
    edit: Edit  # the shifted genomic edit the text describes
    first: TxPos  # 5'-most (transcript orientation) position described
    last: TxPos
    dup: bool = False


def _fmt_range(m: TxMap, a: TxPos, b: TxPos) -> str:
    return m.c_text(a) if a == b else f"{m.c_text(a)}_{m.c_text(b)}"


def describe(m: TxMap, pos: int, ref: str, alt: str, seq: Optional[SequenceProvider]) -> Optional[CDescription]:
    """The HGVS c./n. description of a VCF-style allele on this transcript.

    Without a sequence provider only substitutions and equal-length changes (whose bases the
    VCF gives) are described; insertions and deletions need the reference for the 3' rule and
    return None."""
    e = trim(pos, ref, alt)
    if not e.ref and not e.alt:
        return None
    if e.kind in ("ins", "del"):
        if seq is None:
            return None
        e = shift_3prime(e, m.tx.chrom, seq, not m.minus, m.region_bounds(e.start if e.ref else e.start - (0 if m.minus else 1)))
    rc = revcomp if m.minus else (lambda s: s)
    if e.kind == "sub":
        p = m.g_to_tx(e.start)
        return CDescription(f"{m.prefix}{m.c_text(p)}{rc(e.ref)}>{rc(e.alt)}", e, p, p)
    if e.kind in ("del", "delins"):
        a, b = m.g_to_tx(e.start), m.g_to_tx(e.end)
        if m.minus:
            a, b = b, a
        op = "del" if e.kind == "del" else f"delins{rc(e.alt)}"
        return CDescription(f"{m.prefix}{_fmt_range(m, a, b)}{op}", e, a, b)
    # insertion between e.start - 1 and e.start; a copy of the bases just 5' (transcript) of it is a dup
    k = len(e.alt)
    if m.minus:
        five = seq.fetch(m.tx.chrom, e.start, e.start + k - 1)  # 5' side in transcript orientation
        if five == e.alt:
            a, b = m.g_to_tx(e.start + k - 1), m.g_to_tx(e.start)
            return CDescription(f"{m.prefix}{_fmt_range(m, a, b)}dup", e, a, b, dup=True)
        a, b = m.g_to_tx(e.start), m.g_to_tx(e.start - 1)
    else:
        five = seq.fetch(m.tx.chrom, e.start - k, e.start - 1)
        if five == e.alt:
            a, b = m.g_to_tx(e.start - k), m.g_to_tx(e.start - 1)
            return CDescription(f"{m.prefix}{_fmt_range(m, a, b)}dup", e, a, b, dup=True)
        a, b = m.g_to_tx(e.start - 1), m.g_to_tx(e.start)
    return CDescription(f"{m.prefix}{m.c_text(a)}_{m.c_text(b)}ins{rc(e.alt)}", e, a, b)
