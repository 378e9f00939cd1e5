"""Which genes and exons a structural event covers, whether the reading frame is kept and whether
nonsense-mediated decay (NMD) is expected, in plain words.

The exon structure is the panel transcript of ``panels/transcripts.yaml``
(:mod:`irdtriage.transcripts`); exon numbers are in transcript order (exon 1 is the 5' exon).

Frame arithmetic (the rule of the ClinGen SVI PVS1 tree, Abou Tayoun et al., Hum Mutat
2018;39:1517-1524, Figure 1 and Table 2): removing or duplicating whole exons keeps the reading frame
when the coding nucleotides involved are a multiple of 3.  When it does not, the reading is shifted
from the first exon after the change; NMD is expected when that exon lies before the penultimate
exon (the exon-based reading of the 50-nt rule that :func:`irdtriage.transcripts.nmd_predicted`
uses for frameshifts whose new stop is unknown), not expected when the change reaches the last exon,
and not predictable when the shift starts in the penultimate exon.  A breakpoint inside an exon
removes a splice site, so the transcript is not predictable; a change inside one exon is counted
like an indel.
"""
from __future__ import annotations

from dataclasses import asdict, dataclass
from typing import Any, Optional

from .. import transcripts as tx_mod
from ..models import Gene

EXTENTS = ("whole gene", "exons", "partial exon", "within one exon", "intronic only", "outside the transcript",
           "structure unknown", "breakpoint")


@dataclass
class GeneOverlap:
    gene: str
    transcript: str = ""
    exon_count: Optional[int] = None
    extent: str = "structure unknown"  # one of EXTENTS
    exons: tuple[int, ...] = ()  # exons the event touches, transcript order
    partial_exons: tuple[int, ...] = ()  # of those, exons only partly covered
    introns: tuple[int, ...] = ()  # intron(s) holding the breakpoints when no exon is touched
    coding_nt: Optional[int] = None  # coding nucleotides removed / duplicated / inserted
    frame: Optional[str] = None  # "in frame", "out of frame" or None (not assessable)
    frame_reason: str = ""
    nmd: Optional[bool] = None
    nmd_reason: str = ""
    protein_fraction: Optional[float] = None  # share of the coding sequence involved
    includes_start: bool = False  # the CDS's first base (start codon)
    includes_last_exon: bool = False
    five_prime_end: bool = False  # the event covers the transcript's 5' end (and not its 3' end)
    three_prime_end: bool = False
    words: str = ""
    hgvs_c: str = ""  # HGVS c. of a deletion/duplication with both ends on the transcript, from the breakpoints
    in_cds: Optional[bool] = None  # breakends: the breakpoint lies between the first and last coding base

    def _finish(self) -> "GeneOverlap":
        """Add frame and NMD to the plain-words summary."""
        parts = [self.words]
        if self.frame:
            parts.append(self.frame)
        elif self.frame_reason and self.extent not in ("whole gene", "intronic only", "outside the transcript"):
            parts.append(f"frame not assessable ({self.frame_reason})")
        if self.nmd is True:
            parts.append("NMD expected")
        elif self.nmd is False and (self.frame == "out of frame" or self.includes_last_exon):
            parts.append("NMD not expected")
        elif self.frame == "out of frame" and self.nmd is None:
            parts.append("NMD not predictable")
        self.words = ", ".join(parts)
        return self

    def to_dict(self) -> dict[str, Any]:
        d = asdict(self)
        for k in ("exons", "partial_exons", "introns"):
            d[k] = list(d[k])
        return d


def exon_ranges(numbers) -> str:
    """[6, 7, 8, 10] -> "6-8, 10"."""
    out: list[str] = []
    nums = sorted(set(numbers))
    i = 0
    while i < len(nums):
        j = i
        while j + 1 < len(nums) and nums[j + 1] == nums[j] + 1:
            j += 1
        out.append(str(nums[i]) if i == j else f"{nums[i]}-{nums[j]}")
        i = j + 1
    return ", ".join(out)


_VERB = {"DEL": "deletes", "DUP": "duplicates", "INV": "inverts", "INS": "inserts into", "CNV": "changes the copy number of"}


def _cds_length(tx: tx_mod.Transcript) -> Optional[int]:
    co = tx_mod.coding_offsets(tx)
    return None if co is None else co[1] - co[0] + 1


def _coding_overlap(tx: tx_mod.Transcript, a: int, b: int) -> int:
    if not tx.has_cds:
        return 0
    lo, hi = max(a, tx.cds_start), min(b, tx.cds_end)
    n = 0
    for s, e in tx.exons:
        n += max(0, min(e, hi) - max(s, lo) + 1)
    return n


def _shift_nmd(first_shifted: int, n: int) -> tuple[Optional[bool], str]:
    if first_shifted <= n - 2:
        return True, (f"the reading is shifted from exon {first_shifted} of {n}, before the penultimate exon: "
                      "NMD expected")
    if first_shifted == n - 1:
        return None, (f"the reading is shifted from the penultimate exon ({first_shifted} of {n}): the new stop "
                      "may fall in the last 50 nt before the last junction, NMD cannot be predicted")
    return False, "the change reaches the last exon: no exon-exon junction downstream, NMD not expected"


def gene_overlap(svtype: str, start: int, end: int, gene: Gene, build: str, length: int = 0,
                 model: Optional[tx_mod.TranscriptModel] = None) -> GeneOverlap:
    """How an event covering ``start..end`` (1-based inclusive reference bases; an insertion has
    ``end = start - 1`` and ``length`` inserted bases) meets ``gene``'s panel transcript."""
    m = model if model is not None else tx_mod.default_model()
    tx = m.get(gene.symbol, build)
    if tx is None and build == "GRCh38" and m.coding_for(gene.symbol) is not None:
        tx = m.coding_for(gene.symbol).transcript_model()
    verb = _VERB.get(svtype, "affects")
    if tx is None or not tx.exons:
        span = gene.span(build)
        o = GeneOverlap(gene.symbol)
        if span is not None and svtype != "INS" and start <= span.start and end >= span.end:
            o.extent = "whole gene"
            o.words = f"{verb} the whole of {gene.symbol} (gene span; no exon structure for {build})"
        else:
            o.words = (f"{verb} part of the {gene.symbol} region; the panel has no exon structure for "
                       f"{gene.symbol} on {build}, so exons, frame and NMD are not assessed")
        return o
    name = tx.refseq or tx.ensembl
    n = tx.exon_count
    o = GeneOverlap(gene.symbol, name, n)
    lo, hi = tx.exons[0][0], tx.exons[-1][1]
    if svtype == "INS":
        return _insertion(o, tx, start - 1, length, verb)
    if end < lo or start > hi:
        o.extent = "outside the transcript"
        side = "upstream" if (end < lo) == (tx.strand == "+") else "downstream"
        o.words = f"lies {side} of {gene.symbol} ({name}) without reaching its exons"
        return o
    order = tx.ordered()
    touched, partial = [], []
    for k, (s, e) in enumerate(order, 1):
        if min(e, end) >= max(s, start):
            touched.append(k)
            if not (start <= s and e <= end):
                partial.append(k)
    o.exons, o.partial_exons = tuple(touched), tuple(partial)
    o.includes_last_exon = n in touched
    covers_lo, covers_hi = start <= lo, end >= hi
    five, three = (covers_lo, covers_hi) if tx.strand == "+" else (covers_hi, covers_lo)
    o.five_prime_end, o.three_prime_end = five and not three, three and not five
    o.coding_nt = _coding_overlap(tx, start, end)
    o.hgvs_c = hgvs_c(tx, svtype, start, end)
    cds_len = _cds_length(tx)
    if cds_len and o.coding_nt is not None:
        o.protein_fraction = round(o.coding_nt / cds_len, 4)
    if tx.has_cds:
        first_coding = tx.cds_start if tx.strand == "+" else tx.cds_end
        o.includes_start = start <= first_coding <= end
    label = f"{gene.symbol} ({name})"
    if covers_lo and covers_hi:
        o.extent = "whole gene"
        o.frame_reason = "the whole transcript is involved"
        if svtype == "DEL":
            o.nmd, o.nmd_reason = None, "no transcript is left to decay"
        o.words = f"{verb} the whole of {label}, all {n} exons"
        return o
    if not touched:
        o.extent = "intronic only"
        introns = sorted({h.intron_number for h in (tx_mod.locate_in(tx, start), tx_mod.locate_in(tx, end))
                          if h is not None and h.intron_number is not None})
        o.introns = tuple(introns)
        o.frame_reason = "no exonic sequence is involved"
        where = f"intron {exon_ranges(introns)}" if introns else "an intron"
        o.words = f"{verb} sequence within {where} of {label} only: no exon involved"
        return o
    ex_text = f"exon{'s' if len(touched) > 1 else ''} {exon_ranges(touched)}"
    if len(touched) == 1 and partial and order[touched[0] - 1][0] <= start and end <= order[touched[0] - 1][1]:
        o.extent = "within one exon"
        _frame_by_count(o, touched[0], n, svtype)
        o.words = f"{verb} {end - start + 1} bp within exon {touched[0]} of {label}"
    elif partial:
        o.extent = "partial exon"
        o.frame_reason = (f"a breakpoint lies inside exon {exon_ranges(partial)}: a splice site is lost and the "
                          "transcript cannot be predicted")
        o.nmd_reason = "the transcript cannot be predicted"
        o.words = f"{verb} part of {ex_text} of {label} (breakpoint inside exon {exon_ranges(partial)})"
    else:
        o.extent = "exons"
        o.words = f"{verb} {ex_text} of {label}"
        if o.includes_start:
            o.frame_reason = "the start codon is involved"
            o.nmd_reason = "no start codon left to read from"
        elif o.includes_last_exon:
            o.frame_reason = "the 3' end of the coding sequence is involved"
            o.nmd, o.nmd_reason = False, "the change reaches the last exon: no exon-exon junction downstream, " \
                                         "NMD not expected"
        elif svtype in ("DEL", "DUP"):
            _frame_by_count(o, max(touched) + 1, n, svtype)
    return o._finish()


def hgvs_c(tx: tx_mod.Transcript, svtype: str, start: int, end: int) -> str:
    """``c.X_Ydel`` / ``c.X_Ydup`` from the breakpoints as called (HGVS: positions in transcript
    order, intronic offsets from the nearest exon); "" when an end lies off the transcript or the
    structure has no CDS."""
    if svtype not in ("DEL", "DUP"):
        return ""
    five, three = (start, end) if tx.strand == "+" else (end, start)
    a, b = tx_mod.hgvs_c_position(tx, five), tx_mod.hgvs_c_position(tx, three)
    if a is None or b is None:
        return ""
    return f"c.{a}{'' if a == b else '_' + b}{svtype.lower()}"


def _frame_by_count(o: GeneOverlap, first_shifted: int, n: int, svtype: str) -> None:
    if o.coding_nt is None or svtype not in ("DEL", "DUP", "INS"):
        o.frame_reason = "the frame is not assessed for this kind of event"
        return
    if o.coding_nt == 0:
        o.frame_reason = "no coding nucleotides are involved (untranslated region)"
        return
    o.frame = "out of frame" if o.coding_nt % 3 else "in frame"
    o.frame_reason = f"{o.coding_nt} coding nt {'is' if o.coding_nt == 1 else 'are'} " \
                     f"{'not ' if o.coding_nt % 3 else ''}a multiple of 3"
    if o.frame == "in frame":
        o.nmd, o.nmd_reason = False, "in frame: no premature stop expected, NMD not expected"
    else:
        o.nmd, o.nmd_reason = _shift_nmd(first_shifted, n)


def _insertion(o: GeneOverlap, tx: tx_mod.Transcript, after: int, length: int, verb: str) -> GeneOverlap:
    label = f"{o.gene} ({o.transcript})"
    hit_a, hit_b = tx_mod.locate_in(tx, after), tx_mod.locate_in(tx, after + 1)
    if hit_a is None or hit_b is None:
        o.extent = "outside the transcript"
        o.words = f"inserts {length or 'an unknown number of'} bp outside the exons of {label}"
        return o
    if hit_a.in_exon and hit_b.in_exon and hit_a.exon_number == hit_b.exon_number:
        k = hit_a.exon_number
        o.exons, o.extent = (k,), "within one exon"
        inside_cds = tx.has_cds and tx.cds_start <= after and after + 1 <= tx.cds_end
        o.coding_nt = length if inside_cds and length else (0 if not inside_cds else None)
        if o.coding_nt is None:
            o.frame_reason = "the inserted length is not given (no SVLEN)"
        else:
            _frame_by_count(o, k, o.exon_count or 0, "INS")
        o.words = f"inserts {length or 'an unknown number of'} bp into exon {k} of {label}"
        return o._finish()
    introns = sorted({h.intron_number for h in (hit_a, hit_b) if h.intron_number is not None})
    o.extent, o.introns = "intronic only", tuple(introns)
    o.words = f"inserts {length or 'an unknown number of'} bp into intron {exon_ranges(introns)} of {label}: no exon involved"
    return o



def breakend_overlap(pos: int, gene: Gene, build: str, junction: str,
                     model: Optional[tx_mod.TranscriptModel] = None) -> GeneOverlap:
    """Where a breakpoint at ``pos`` falls in ``gene``'s panel transcript ("breakpoint within intron
    N / exon N of GENE"), whether it lies inside the coding span, and whether NMD is expected for
    the 5' part of the severed transcript (the break lies before the penultimate exon's last 50 nt:
    the same exon-based reading as for frameshifts, :func:`irdtriage.transcripts.nmd_predicted`)."""
    m = model if model is not None else tx_mod.default_model()
    tx = m.get(gene.symbol, build)
    if tx is None and build == "GRCh38" and m.coding_for(gene.symbol) is not None:
        tx = m.coding_for(gene.symbol).transcript_model()
    o = GeneOverlap(gene.symbol)
    if tx is None or not tx.exons:
        o.words = (f"{junction}: a breakpoint in the {gene.symbol} region; the panel has no exon structure for "
                   f"{gene.symbol} on {build}, so the exon or intron is not named")
        return o
    o.transcript, o.exon_count = tx.refseq or tx.ensembl, tx.exon_count
    label = f"{gene.symbol} ({o.transcript})"
    hit = tx_mod.locate_in(tx, pos)
    if hit is None:
        o.extent = "outside the transcript"
        o.words = f"{junction}: the breakpoint lies outside {label}"
        return o
    o.extent = "breakpoint"
    if hit.in_exon:
        o.exons = (hit.exon_number,)
        where = f"exon {hit.exon_number}"
    else:
        o.introns = (hit.intron_number,)
        where = f"intron {hit.intron_number}"
    o.includes_last_exon = hit.in_exon and hit.exon_number == hit.exon_count
    in_cds = bool(tx.has_cds and tx.cds_start <= pos <= tx.cds_end)
    o.in_cds = in_cds
    if in_cds:
        lo, hi = tx.exons[0][0], tx.exons[-1][1]
        three = (pos + 1, hi) if tx.strand == "+" else (lo, pos - 1)
        o.coding_nt = _coding_overlap(tx, *three)
        cds_len = _cds_length(tx)
        if cds_len and o.coding_nt is not None:
            o.protein_fraction = round(o.coding_nt / cds_len, 4)
        o.frame_reason = ("the breakpoint severs the coding sequence: the part 3' of it is separated from the "
                          "promoter and joined to other sequence")
        o.nmd_reason = ("the 5' part reads into the partner sequence, whose stops and exon junctions are unknown: "
                        "NMD cannot be predicted")
    else:
        o.frame_reason = "the breakpoint lies outside the coding span (untranslated region)"
    o.words = f"breakpoint within {where} of {label} ({junction})"
    if in_cds:
        share = f" ({o.protein_fraction * 100:.1f} % of the coding sequence lies 3' of it)" \
            if o.protein_fraction is not None else ""
        o.words += f", inside the coding span: the gene is disrupted{share}"
    else:
        o.words += ", outside the coding span"
    return o
