"""Sequence Ontology consequence terms of a genomic change on one transcript.

Definitions followed (Sequence Ontology, so.obo):

* splice_donor_variant (SO:0001575): changes the first two bases of an intron (5' end);
* splice_acceptor_variant (SO:0001574): changes the last two bases of an intron (3' end);
* splice_region_variant (SO:0001630): "within the region of the splice site, either within 1-3
  bases of the exon or 3-8 bases of the intron";
* 5_prime_UTR_variant / 3_prime_UTR_variant, intron_variant, coding_sequence_variant,
  non_coding_transcript_exon_variant: the change lies in that part of the transcript;
* upstream_gene_variant / downstream_gene_variant: 5' / 3' of the transcript; within 5,000 nt
  (the distance is common practice);
* the coding terms (missense_variant, synonymous_variant, stop_gained, stop_lost, start_lost,
  stop_retained_variant, frameshift_variant, inframe_insertion, inframe_deletion) come from the
  protein comparison in :mod:`irdtriage.annotate.hgvs_p`, or, without the reference sequence, from
  the length change alone (frameshift_variant / inframe_*; coding_sequence_variant for a
  substitution, whose amino-acid change is then unknown).
"""
from __future__ import annotations

from dataclasses import dataclass, field
from typing import Optional

from .hgvs_c import Edit, TxMap

FLANK_NT = 5000  # common practice for upstream/downstream_gene_variant
SPLICE_REGION_EXON = 3  # SO:0001630
SPLICE_REGION_INTRON = (3, 8)  # SO:0001630


@dataclass
class Placement:
    """Where a change lies on one transcript (no sequence needed)."""

    terms: list[str] = field(default_factory=list)
    exons: list[int] = field(default_factory=list)  # 1-based exon numbers touched
    introns: list[int] = field(default_factory=list)  # 1-based intron numbers touched
    exonic_only: bool = False  # every changed base (both flanks of an insertion) in exons
    cds_touched: bool = False
    splice_distance: Optional[int] = None  # nt from the nearest exon-intron junction
    splice_side: str = ""  # "exon" or "intron"
    tx_first: Optional[int] = None  # cDNA span (exonic changes): a..b, a == b + 1 for an insertion
    tx_last: Optional[int] = None


def _bases(e: Edit) -> list[int]:
    """The genomic positions a change touches (both flanking bases of an insertion)."""
    if e.ref:
        return list(range(e.start, e.end + 1))
    return [e.start - 1, e.start]


def place(m: TxMap, e: Edit) -> Optional[Placement]:
    """Terms that follow from positions alone, or None when the change is beyond the flanks."""
    tx = m.tx
    lo, hi = (e.start, e.end) if e.ref else (e.start - 1, e.start)
    if hi < tx.start - FLANK_NT or lo > tx.end + FLANK_NT:
        return None
    pl = Placement()
    if hi < tx.start or lo > tx.end:
        five_prime_side = (hi < tx.start) != m.minus
        pl.terms.append("upstream_gene_variant" if five_prime_side else "downstream_gene_variant")
        return pl
    positions = _bases(e)
    regions = [m.region_of(g) for g in positions]
    is_ins = not e.ref
    n_ex = len(m.exons)
    terms = pl.terms
    # splice sites, per intron (transcript order k: between exon k and k + 1, 0-based), for the
    # introns next to the touched exons and introns
    near = set()
    for kind, i in regions:
        near.update((i - 1, i) if kind == "exon" else (i,) if kind == "intron" else ())
    for k in sorted(x for x in near if 0 <= x < n_ex - 1):
        a, b = m.exons[k], m.exons[k + 1]
        ilo, ihi = (a[1] + 1, b[0] - 1) if not m.minus else (b[1] + 1, a[0] - 1)
        donor = {ilo, ilo + 1} if not m.minus else {ihi, ihi - 1}
        acceptor = {ihi, ihi - 1} if not m.minus else {ilo, ilo + 1}
        region = set()
        for d in range(SPLICE_REGION_INTRON[0] - 1, SPLICE_REGION_INTRON[1]):  # intron bases 3..8 from each end
            region.update({ilo + d, ihi - d})
        for d in range(SPLICE_REGION_EXON):  # exon bases 1..3 on each side of the intron
            region.update({ilo - 1 - d, ihi + 1 + d})
        touched = set(positions)
        if is_ins:
            if touched <= donor:
                terms.append("splice_donor_variant")
            elif touched <= acceptor:
                terms.append("splice_acceptor_variant")
            elif touched & (region | donor | acceptor):
                terms.append("splice_region_variant")
        else:
            if touched & donor:
                terms.append("splice_donor_variant")
            if touched & acceptor:
                terms.append("splice_acceptor_variant")
            if touched & region:
                terms.append("splice_region_variant")
    exonic = [i for kind, i in regions if kind == "exon"]
    intronic = [i for kind, i in regions if kind == "intron"]
    pl.exons = sorted({i + 1 for i in exonic})
    pl.introns = sorted({i + 1 for i in intronic})
    if intronic and not (is_ins and exonic):
        terms.append("intron_variant")
    pl.exonic_only = len(exonic) == len(regions) and (not is_ins or len(set(exonic)) == 1
                                                     or _adjacent_exons(m, positions))
    if exonic:
        tx_ns = sorted(m.g_to_tx(g).n for g, (kind, _) in zip(positions, regions) if kind == "exon")
        if pl.exonic_only:
            pl.tx_first, pl.tx_last = (tx_ns[-1], tx_ns[0]) if is_ins else (tx_ns[0], tx_ns[-1])
        if m.cds_start is None:
            terms.append("non_coding_transcript_exon_variant")
        else:
            if any(n < m.cds_start for n in tx_ns) and not (is_ins and tx_ns[-1] == m.cds_start):
                terms.append("5_prime_UTR_variant")
            if any(n > m.cds_end for n in tx_ns) and not (is_ins and tx_ns[0] == m.cds_end):
                terms.append("3_prime_UTR_variant")
            pl.cds_touched = any(m.cds_start <= n <= m.cds_end for n in tx_ns) and not (
                is_ins and (tx_ns[-1] == m.cds_start or tx_ns[0] == m.cds_end))
    _splice_distance(m, positions, regions, pl)
    return pl


def _adjacent_exons(m: TxMap, positions: list[int]) -> bool:
    """An insertion whose two flanking bases are the last base of one exon and the first of the
    next is between two adjacent cDNA positions."""
    ns = sorted(m.g_to_tx(g).n for g in positions)
    return ns[1] - ns[0] == 1


def _splice_distance(m: TxMap, positions: list[int], regions: list[tuple[str, int]], pl: Placement) -> None:
    best: Optional[tuple[int, str]] = None
    last = len(m.exons) - 1
    for g, (kind, i) in zip(positions, regions):
        if kind == "intron":
            d = abs(m.g_to_tx(g).offset)
            cand = (d, "intron")
        elif kind == "exon":
            s, e = m.exons[i]
            five, three = (s, e) if not m.minus else (e, s)  # exon's 5' and 3' ends (genome)
            ds = []
            if i > 0:
                ds.append(abs(g - five) + 1)
            if i < last:
                ds.append(abs(three - g) + 1)
            if not ds:
                continue
            cand = (min(ds), "exon")
        else:
            continue
        if best is None or cand[0] < best[0]:
            best = cand
    if best is not None:
        pl.splice_distance, pl.splice_side = best
