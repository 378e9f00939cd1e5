"""GRCh37 exons of a GRCh38 structure by splice-boundary anchoring (used by curate_transcripts.py).

Within a gene, GRCh37 and GRCh38 positions differ piecewise by a constant: GRCh37 = GRCh38 + d
where both builds read the region the same way, GRCh37 = c - GRCh38 where the region is inverted
between them (the transcript then lies on the other strand on GRCh37).  The GRCh37 table transcript
(GENCODE-derived canonical table) is a GENCODE transcript of the same gene; it usually shares the
splice sites of the GRCh38 structure even where its first or last exon, or its exon count, differ.

:func:`anchor` maps the GRCh38 exons onto GRCh37 only when

* every internal splice boundary of the GRCh38 structure (each exon boundary except the
  transcript's 5' start and 3' end) lands exactly on a GRCh37 table boundary of the same kind
  (an exon's 5' end -- acceptor -- on a 5' end, a 3' end -- donor -- on a 3' end, each in its own
  build's transcript orientation) under the value of its exon;
* each exon takes one value (d or c) for all its boundaries, so an internal exon keeps its length;
* the value changes (in an intron) only between two exons anchored at both ends: an internal
  exon always is (both splice boundaries); a terminal exon is when its transcript end also falls
  on the table transcript's own end, otherwise it must share its neighbour's value;
* the mapped exons keep transcript order on GRCh37 without touching (an intron of at least 1 nt);
* among the choices allowed, the one with the fewest value changes is unique;
* each CDS end lies in an internal exon, or in a terminal exon whose carried stretch between the
  CDS end and the exon's anchored splice boundary lies within one GRCh37 table exon;
* the table transcript has no boundary of its own inside the CDS part of a carried exon (such a
  boundary is a gap in GENCODE's GRCh37 placement: the GRCh37 reference differs from GRCh38
  there, so positions inside that exon cannot be carried by one value).  Inside a UTR it is said in
  the note.

The two transcript ends are not splice sites: they are carried with the value of their exon's
anchored boundary (UTR ends, said so in the note, beside the table transcript's own ends).  The
CDS is carried by transcript offset and the result is checked: the CDS ends equal those carried
with their exons' values, exon lengths in transcript order and the CDS length equal GRCh38's.

Returns plain data: ({"block": GRCh37 block, "note": ...}, "") or (None, reason).
"""
from __future__ import annotations

from collections import Counter
from typing import Any, Optional

from refdata_tables import tx_offset, tx_position


def _five(e: list[int], strand: str) -> int:
    return e[0] if strand == "+" else e[1]


def _three(e: list[int], strand: str) -> int:
    return e[1] if strand == "+" else e[0]


def _ordered(exons: list[list[int]], strand: str) -> list[list[int]]:
    return list(exons) if strand == "+" else list(exons)[::-1]


def _lengths(exons: list[list[int]], strand: str) -> list[int]:
    return [e - s + 1 for s, e in _ordered(exons, strand)]


def anchor(ex38: list[list[int]], strand: str, cds: dict, ex37_table: list[list[int]], strand37: str,
           chrom37: str, cds_length: int) -> tuple[Optional[dict[str, Any]], str]:
    """GRCh37 block (chrom, optional strand, cds_start, cds_end, exons) of the GRCh38 structure
    ``ex38`` (1-based inclusive, ascending) on ``strand`` with CDS ``cds`` (cds_start, cds_end),
    anchored on the GRCh37 table transcript ``ex37_table`` (1-based inclusive, ascending) on
    ``strand37``; or None and the exact reason."""
    flip = strand37 != strand
    kind = "sum c (GRCh37 = c - GRCh38; region inverted between the builds)" if flip else \
        "offset d (GRCh37 = GRCh38 + d)"
    name_v = "sum c" if flip else "offset d"

    def value(p: int, q: int) -> int:  # the d or c that puts GRCh38 p on GRCh37 q
        return q + p if flip else q - p

    def f(v: int, p: int) -> int:
        return v - p if flip else p + v

    def u(x: int) -> int:  # position along the GRCh37 transcript (5' -> 3')
        return x if strand37 == "+" else -x

    mane = _ordered(ex38, strand)
    n = len(mane)
    if n < 2:
        return None, "a single-exon structure has no internal splice boundary to anchor"
    tab = _ordered(ex37_table, strand37)
    t5 = {_five(e, strand37) for e in tab[1:]}  # the table's splice boundaries only, not its
    t3 = {_three(e, strand37) for e in tab[:-1]}  # transcript ends
    tab_ends = (_five(tab[0], strand37), _three(tab[-1], strand37))

    def splice_sides(i: int) -> list[tuple[str, int, set[int]]]:
        """(label, GRCh38 position, values that put it on a table boundary of its kind)."""
        e, out = mane[i], []
        if i > 0:
            p = _five(e, strand)
            out.append(("5' (acceptor)", p, {value(p, q) for q in t5}))
        if i < n - 1:
            p = _three(e, strand)
            out.append(("3' (donor)", p, {value(p, q) for q in t3}))
        return out

    cands = [set.intersection(*(s for _l, _p, s in splice_sides(i))) for i in range(n)]

    def full(i: int, v: int) -> bool:
        """Exon i anchored at both its ends under v: an internal exon (both splice boundaries), or a
        terminal exon whose transcript end also falls on the table transcript's own end."""
        if 0 < i < n - 1:
            return True
        end = _five(mane[0], strand) if i == 0 else _three(mane[-1], strand)
        return f(v, end) == tab_ends[0 if i == 0 else 1]

    def context(i: int) -> Optional[int]:
        """For the reason text: the value of the nearest internal exon with exactly one matching
        value, else the value matching most splice boundaries (when one value leads)."""
        for k in range(1, n):
            for j in (i - k, i + k):
                if 0 < j < n - 1 and len(cands[j]) == 1:
                    return next(iter(cands[j]))
        votes = Counter(v for j in range(n) for _l, _p, vals in splice_sides(j) for v in vals).most_common(2)
        if votes and votes[0][1] > 1 and (len(votes) == 1 or votes[1][1] < votes[0][1]):
            return votes[0][0]
        return None

    def misfit(i: int, v: Optional[int]) -> str:
        e = mane[i]
        text = f"exon {i + 1} (GRCh38 {min(e)}-{max(e)}, {max(e) - min(e) + 1} nt)"
        if v is None:
            return text + f": no {name_v} puts its splice boundaries on GRCh37 table boundaries of their kind"
        parts = []
        for label, p, vals in splice_sides(i):
            q = f(v, p)
            parts.append(f"its {label} boundary falls on GRCh37 {q}, " +
                         ("a table boundary of that kind" if v in vals else "no table boundary of that kind"))
        lo, hi = sorted((f(v, e[0]), f(v, e[1])))
        over = [f"{a}-{b} ({b - a + 1} nt)" for a, b in ex37_table if a <= hi and b >= lo]
        return (text + f": with the neighbouring exons' {name_v} = {v} " + "; ".join(parts) +
                f" (table exon{'s' if len(over) != 1 else ''} there: {', '.join(over) or 'none'})")

    problems = [misfit(i, context(i)) for i in range(1, n - 1) if not cands[i]]
    if problems:
        return None, "; ".join(problems)

    # choose one value per exon: transcript order kept on GRCh37 without touching; a change of value
    # only between two exons anchored at both ends; fewest changes; the optimum must be unique
    best: list[dict[int, tuple[int, int, Optional[int]]]] = [{v: (0, 1, None) for v in cands[0]}]
    for i in range(1, n):
        row: dict[int, tuple[int, int, Optional[int]]] = {}
        for v in cands[i]:
            start = u(f(v, _five(mane[i], strand)))
            opts = [(c + (w != v), k, w) for w, (c, k, _p) in best[-1].items()
                    if start - u(f(w, _three(mane[i - 1], strand))) >= 2
                    and (w == v or (full(i - 1, w) and full(i, v)))]
            if opts:
                low = min(o[0] for o in opts)
                ways = sum(o[1] for o in opts if o[0] == low)
                row[v] = (low, ways, next(o[2] for o in opts if o[0] == low))
        if not row:
            if i == 1 or i == n - 1:
                j = 0 if i == 1 else n - 1
                return None, (misfit(j, context(j)) + f"; exon {j + 1} is a terminal exon anchored at its splice "
                              f"boundary only (its transcript end falls on the table transcript's end under no "
                              f"matching {name_v}), so it must share the {name_v} of exon {2 if j == 0 else n - 1}")
            return None, f"no choice of {name_v} keeps exons 1-{i + 1} in transcript order on GRCh37 without overlap"
        best.append(row)
    low = min(c for c, _k, _p in best[-1].values())
    ways = sum(k for c, k, _p in best[-1].values() if c == low)
    if ways != 1:
        multi = [str(i) for i, c in enumerate(cands, 1) if len(c) > 1]
        return None, (f"{ways} choices of {name_v} with {low} change(s) fit equally well (exons with more than one "
                      f"matching value: {', '.join(multi)}): ambiguous")
    vals = [0] * n
    v = next(v for v, (c, _k, _p) in best[-1].items() if c == low)
    for i in range(n - 1, -1, -1):
        vals[i] = v
        v = best[i][v][2]

    mapped = [sorted((f(vals[i], e[0]), f(vals[i], e[1]))) for i, e in enumerate(mane)]
    ex37 = sorted([list(m) for m in mapped])

    # CDS ends: each must lie in an anchored stretch (internal exon, or between the CDS end and the
    # terminal exon's anchored boundary inside one GRCh37 table exon)
    five_cds, three_cds = (cds["cds_start"], cds["cds_end"]) if strand == "+" else (cds["cds_end"], cds["cds_start"])
    for label, pos in (("start codon", five_cds), ("stop codon", three_cds)):
        i = _exon_of(mane, pos)
        if i is None:
            return None, f"CDS {label} end {pos} lies in no exon of the GRCh38 structure"
        if 0 < i < n - 1:
            continue
        anchors = []
        if i > 0:
            anchors.append(_five(mane[i], strand))
        if i < n - 1:
            anchors.append(_three(mane[i], strand))
        x = f(vals[i], pos)
        for a in anchors:
            y = f(vals[i], a)
            lo, hi = min(x, y), max(x, y)
            if not any(s <= lo and hi <= e for s, e in ex37_table):
                return None, (f"the CDS {label} end lies in exon {i + 1}, whose stretch from it to the anchored "
                              f"boundary (GRCh37 {lo}-{hi}) is not within one GRCh37 table exon: the CDS end is "
                              "outside the anchored part of the exon")

    # carried by transcript offset, then checked
    s37 = strand37
    a, b = tx_offset(ex38, strand, cds["cds_start"]), tx_offset(ex38, strand, cds["cds_end"])
    x, y = tx_position(ex37, s37, a), tx_position(ex37, s37, b)
    c37 = {"cds_start": min(x, y), "cds_end": max(x, y)}
    direct = sorted(f(vals[_exon_of(mane, q)], q) for q in (cds["cds_start"], cds["cds_end"]))
    if [c37["cds_start"], c37["cds_end"]] != direct:
        return None, "CDS carried by transcript offset disagrees with the CDS carried with its exons' values"
    if _lengths(ex37, s37) != _lengths(ex38, strand):
        return None, "carried exon lengths differ from GRCh38's in transcript order"
    held = sum(min(e, c37["cds_end"]) - max(s, c37["cds_start"]) + 1 for s, e in ex37
               if min(e, c37["cds_end"]) >= max(s, c37["cds_start"]))
    if held != cds_length:
        return None, f"carried CDS holds {held} exonic nt, GRCh38's {cds_length}"

    # boundaries of the table transcript the structure does not use: inside a carried exon they are
    # gaps in GENCODE's own GRCh37 placement (the GRCh37 reference differs from GRCh38 there);
    # refused inside the CDS, said in the note inside a UTR; in an intron they are exons of the
    # table transcript that the structure does not have
    used = ({_five(e, s37) for e in _ordered(ex37, s37)[1:]} | {_three(e, s37) for e in _ordered(ex37, s37)[:-1]})
    spare = sorted((t5 | t3) - used)
    inside = [p for p in spare if any(s <= p <= e for s, e in ex37)]
    coding = [p for p in inside if c37["cds_start"] <= p <= c37["cds_end"]]
    if coding:
        k = _exon_of(_ordered(ex37, s37), coding[0]) + 1
        return None, (f"the GRCh37 table transcript is interrupted inside the CDS of carried exon {k} (table "
                      f"boundaries {', '.join(map(str, coding))} lie within GRCh37 "
                      f"{min(_ordered(ex37, s37)[k - 1])}-{max(_ordered(ex37, s37)[k - 1])}): GENCODE places the "
                      "transcript there with a gap, so the GRCh37 reference differs from GRCh38 inside the coding "
                      "sequence and c. positions in that exon cannot be carried by one offset")
    intronic = [p for p in spare if ex37[0][0] <= p <= ex37[-1][1] and p not in inside]

    block: dict[str, Any] = {"chrom": chrom37}
    if flip:
        block["strand"] = strand37
    block.update(c37)
    block["exons"] = ex37
    runs = ", ".join((f"c = {v}" if flip else f"d = {v:+d}") + (f" for exons {a}-{b}" if a != b else f" for exon {a}")
                     for a, b, v in _runs(vals))
    o37 = _ordered(ex37, s37)
    note = (f"GRCh37 exons by splice-boundary anchoring against the GRCh37 GENCODE-derived table transcript "
            f"(chr{chrom37}, strand {s37}, {len(tab)} exons): all {2 * (n - 1)} internal splice boundaries of the "
            f"GRCh38 structure fall exactly on table boundaries of the same kind, with {kind}: {runs} (exons in "
            f"transcript order; a value changes only between exons anchored at both ends, a terminal exon counting "
            f"when its transcript end falls on the table transcript's end); the 5' UTR start ({_five(o37[0], s37)}) "
            f"and 3' UTR end ({_three(o37[-1], s37)}) are transcript ends, not splice sites, carried with the value "
            f"of their exon's anchored boundary (the table transcript's own ends: {tab_ends[0]}, {tab_ends[1]}); CDS "
            f"carried by transcript offset ({cds_length} nt, as on GRCh38); exon lengths equal GRCh38's in "
            f"transcript order")
    if inside:
        note += (f"; table boundaries inside carried exons, in UTR only (GENCODE's GRCh37 placement has gaps "
                 f"there, so UTR positions beyond them are approximate): {', '.join(map(str, inside))}")
    if intronic:
        note += f"; table exon boundaries in introns of the structure (unused): {', '.join(map(str, intronic))}"
    return {"block": block, "note": note}, ""


def _exon_of(exons: list[list[int]], pos: int) -> Optional[int]:
    return next((k for k, e in enumerate(exons) if min(e) <= pos <= max(e)), None)


def _runs(vals: list[int]) -> list[tuple[int, int, int]]:
    out: list[tuple[int, int, int]] = []
    for i, v in enumerate(vals, 1):
        if out and out[-1][2] == v:
            out[-1] = (out[-1][0], i, v)
        else:
            out.append((i, i, v))
    return out
