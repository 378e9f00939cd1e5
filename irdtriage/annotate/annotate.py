"""Built-in annotation: one genomic allele -> consequence, HGVS c./p. and exon facts per transcript.

:func:`annotate_allele` returns plain :class:`TxConsequence` records; :func:`to_annotation`
turns one into the pipeline's :class:`irdtriage.models.Annotation` (the same object the
CSQ/ANN reader makes), and :func:`pick` chooses the one to report as
``irdtriage.consequence.annotations.pick_annotation`` does (MANE Select transcript of a panel
gene, else the most severe consequence on a panel gene's transcript, else the most severe).

NMD position (for PVS1): a new stop whose last base lies more than 50 nt before the last
exon-exon junction of the altered transcript (counting the stop's last base and the
junction's 5' base) is predicted to trigger NMD; one in the last exon, or within 50 nt of
the last junction, is not (Abou Tayoun et al., Hum Mutat 2018;39:1517-1524, the 50-nt rule;
the same count as :func:`irdtriage.transcripts.nmd_predicted`).
"""
from __future__ import annotations

from dataclasses import dataclass, field
from typing import Iterable, Optional

from ..consequence.annotations import severity, sort_terms
from ..models import Annotation
from .consequence import place
from .hgvs_c import TxMap, describe, trim
from .hgvs_p import protein_change
from .providers import SequenceProvider, TranscriptProvider, TxModel, revcomp, versionless

NMD_NT = 50
SOURCE = "built-in"
NO_SEQUENCE = "no reference sequence: amino-acid change unknown"
BAD_ORF = ("the reference CDS of this transcript does not translate from ATG to one stop codon at its end "
           "(wrong FASTA or transcript model?): amino-acid change unknown")


@dataclass
class TxConsequence:
    gene: str
    transcript: str
    protein: str
    terms: tuple[str, ...]
    hgvs_c: str = ""
    hgvs_p: str = ""
    exon: str = ""  # "5/72" (or "5-6/72")
    intron: str = ""  # "4/71"
    splice_distance: Optional[int] = None
    splice_side: str = ""
    protein_position: Optional[int] = None
    protein_length: Optional[int] = None
    nmd: Optional[bool] = None  # new stop > 50 nt before the last exon-exon junction
    nmd_distance: Optional[int] = None
    notes: list[str] = field(default_factory=list)


class TxCache:
    """Per-transcript maps and spliced sequences, computed once."""

    def __init__(self, seq: Optional[SequenceProvider]):
        self.seq = seq
        self._maps: dict[str, TxMap] = {}
        self._tx_seq: dict[str, Optional[str]] = {}
        self._prot: dict[str, str] = {}
        self._orf: dict[str, bool] = {}

    def map(self, tx: TxModel) -> TxMap:
        m = self._maps.get(tx.transcript_id)
        if m is None:
            m = self._maps[tx.transcript_id] = TxMap(tx)
        return m

    def covers(self, chrom: str) -> bool:
        return self.seq is not None and self.seq.has(chrom)

    def tx_seq(self, m: TxMap) -> Optional[str]:
        """The spliced transcript sequence, or None when the provider lacks part of it."""
        if not self.covers(m.tx.chrom):
            return None
        if m.tx.transcript_id not in self._tx_seq:
            s = m.transcript_sequence(self.seq)
            self._tx_seq[m.tx.transcript_id] = s if len(s) == m.length else None
        return self._tx_seq[m.tx.transcript_id]

    def orf_ok(self, m: TxMap, tx_seq: str) -> bool:
        """The reference CDS is one open reading frame: a multiple of 3 whose only stop is its last codon."""
        ok = self._orf.get(m.tx.transcript_id)
        if ok is None:
            n = m.cds_end - m.cds_start + 1
            prot = self.protein(m, tx_seq)
            ok = self._orf[m.tx.transcript_id] = n % 3 == 0 and len(prot) * 3 == n and prot.endswith("*")
        return ok

    def protein(self, m: TxMap, tx_seq: str) -> str:
        """The reference translation from c.1 to the first stop (kept)."""
        p = self._prot.get(m.tx.transcript_id)
        if p is None:
            from .hgvs_p import translate

            p = self._prot[m.tx.transcript_id] = translate(tx_seq[m.cds_start - 1:m.cds_end], to_stop=True)
        return p


def _frac(nums: list[int], total: int) -> str:
    if not nums:
        return ""
    return f"{nums[0]}/{total}" if len(nums) == 1 else f"{nums[0]}-{nums[-1]}/{total}"


def annotate_allele(chrom: str, pos: int, ref: str, alt: str, transcripts: TranscriptProvider,
                    cache: TxCache) -> list[TxConsequence]:
    """Consequences of one VCF-style allele on every transcript within the flanks."""
    e0 = trim(pos, ref, alt)
    if not e0.ref and not e0.alt:
        return []
    lo, hi = (e0.start, e0.end) if e0.ref else (e0.start - 1, e0.start)
    out = []
    from .consequence import FLANK_NT

    for tx in transcripts.overlapping(chrom, lo, hi, FLANK_NT):
        r = annotate_on(tx, pos, ref, alt, cache)
        if r is not None:
            out.append(r)
    return out


def annotate_on(tx: TxModel, pos: int, ref: str, alt: str, cache: TxCache) -> Optional[TxConsequence]:
    m = cache.map(tx)
    seq = cache.seq if cache.covers(tx.chrom) else None
    d = describe(m, pos, ref, alt, seq)
    edit = d.edit if d is not None else trim(pos, ref, alt)
    pl = place(m, edit)
    if pl is None:
        return None
    n_ex = len(m.exons)
    res = TxConsequence(tx.gene, tx.transcript_id, tx.protein_id, (), exon=_frac(pl.exons, n_ex),
                        intron=_frac(pl.introns, n_ex - 1), splice_distance=pl.splice_distance,
                        splice_side=pl.splice_side)
    terms = list(pl.terms)
    if d is not None:
        res.hgvs_c = d.text
    elif edit.kind in ("ins", "del"):
        res.notes.append("no reference sequence: HGVS c. of an insertion/deletion needs it (3' rule)")
    if m.cds_start is not None and pl.cds_touched:
        delta = len(edit.alt) - len(edit.ref)
        tx_seq = cache.tx_seq(m) if seq is not None else None
        if not pl.exonic_only:
            terms.append("coding_sequence_variant")
            res.hgvs_p = "p.?"
        elif tx_seq is None or not cache.orf_ok(m, tx_seq):
            if tx_seq is not None:  # the model's CDS and the sequence disagree: no protein is predicted
                res.notes.append(BAD_ORF)
            terms.append("frameshift_variant" if delta % 3 else
                         "inframe_insertion" if delta > 0 else "inframe_deletion" if delta < 0
                         else "coding_sequence_variant")
            res.hgvs_p = "p.?"
            if tx_seq is None:
                res.notes.append(NO_SEQUENCE)
        else:
            alt_tx = revcomp(edit.alt) if m.minus else edit.alt
            pc = protein_change(tx_seq, m.cds_start, m.cds_end, pl.tx_first, pl.tx_last, alt_tx,
                                cache.protein(m, tx_seq))
            terms.append(pc.term)
            res.hgvs_p = pc.hgvs
            res.protein_position, res.protein_length = pc.position, pc.length
            if pc.term in ("stop_gained", "frameshift_variant") and pc.new_stop_last_base is not None:
                res.nmd, res.nmd_distance = _nmd(m, pl.tx_last, delta, pc.new_stop_last_base)
    if ("splice_donor_variant" in terms or "splice_acceptor_variant" in terms) and not res.hgvs_p \
            and m.cds_start is not None:
        res.hgvs_p = "p.?"  # a change of the splice site: the protein consequence cannot be predicted
    res.terms = sort_terms(terms) or ("sequence_variant",)
    return res


def _nmd(m: TxMap, change_last: int, delta: int, stop_last: int) -> tuple[Optional[bool], Optional[int]]:
    """(NMD predicted?, nt from the stop's last base to the last exon-exon junction, both counted)."""
    if len(m.exons) < 2:
        return False, None
    junction = m.starts[-1] - 1  # last base of the penultimate exon (reference cDNA)
    if change_last <= junction:
        junction += delta
    if stop_last > junction:
        return False, None  # in the last exon
    dist = junction - stop_last + 1
    return dist > NMD_NT, dist


# ---------------------------------------------------------------------------------------------
def mane_map(mane_ids: Iterable[str]) -> dict[str, str]:
    """{accession without version: accession as given} of the MANE Select transcripts."""
    return {versionless(x): x for x in mane_ids}


def to_annotation(c: TxConsequence, mane_ids: Iterable[str] | dict[str, str] = ()) -> Annotation:
    # extra fields carry the names of the IRDT_TX layout (vcf_writer.FIELDS), read back the same way
    extra: dict[str, str] = {}
    if c.protein_position is not None:
        extra["protein_position"] = f"{c.protein_position}/{c.protein_length}" if c.protein_length else \
            str(c.protein_position)
    if c.protein:
        extra["protein"] = c.protein
    if c.splice_distance is not None:
        extra["splice_distance"] = str(c.splice_distance)
        extra["splice_side"] = c.splice_side
    if c.nmd is not None:
        extra["nmd_50nt"] = "yes" if c.nmd else "no"
    if c.nmd_distance is not None:
        extra["stop_to_last_junction_nt"] = str(c.nmd_distance)
    if c.notes:
        extra["notes"] = "; ".join(c.notes)
    # MANE Select by accession without version, as the CSQ/ANN reader decides it
    # (irdtriage.consequence.annotations), so an annotated and an unannotated run of the same
    # records reach the same criteria; another version of the MANE accession is named in extra.
    by_acc = mane_ids if isinstance(mane_ids, dict) else mane_map(mane_ids)
    mane_acc = by_acc.get(versionless(c.transcript))
    is_mane = mane_acc is not None
    if is_mane and "." in c.transcript and "." in mane_acc and mane_acc != c.transcript:
        extra["mane_select_version"] = mane_acc
    return Annotation(gene=c.gene, transcript=c.transcript, consequence=c.terms, hgvs_c=c.hgvs_c,
                      hgvs_p=c.hgvs_p, exon=c.exon, intron=c.intron, source=SOURCE,
                      is_mane=is_mane, extra=extra)


def pick(anns: list[Annotation], candidate_genes: list[str]) -> Optional[Annotation]:
    """The one annotation to report: MANE Select, else most severe on a panel gene, else most severe."""
    if not anns:
        return None

    def rank(a: Annotation) -> tuple:
        return (severity(a.consequence[0]) if a.consequence else 999, a.transcript)

    mane = [a for a in anns if a.is_mane]
    if mane:
        chosen = min(mane, key=rank)
    else:
        mine = [a for a in anns if a.gene in set(candidate_genes)]
        chosen = min(mine or anns, key=rank)
    chosen.extra.setdefault("entries_for_allele", str(len(anns)))
    return chosen


class Annotator:
    """Built-in annotation for the pipeline: transcript models (a GFF3/GTF the user names, else
    the panel's own structure for ``build``) and optionally a reference FASTA, opened once."""

    def __init__(self, transcripts_path: Optional[str] = None, reference_path: Optional[str] = None,
                 placements: Optional[dict] = None, build: Optional[str] = None,
                 genes: Optional[Iterable[str]] = None):
        from .providers import FastaSequence, read_gff

        if transcripts_path:
            self.transcripts = read_gff(transcripts_path, placements)
            if not len(self.transcripts):
                from ..errors import InputError

                raise InputError("no transcript with exons found", transcripts_path)
            self.model_source = transcripts_path
        else:  # the panel's own exon/CDS table (irdtriage.annotate.panel_models)
            from .panel_models import panel_transcripts

            self.transcripts = panel_transcripts(build or "GRCh38", genes=genes)
            self.model_source = self.transcripts.source
        self.reference = FastaSequence(reference_path) if reference_path else None
        self.cache = TxCache(self.reference)
        self.transcripts_path, self.reference_path = transcripts_path, reference_path
        self._mane_src: object = None
        self._mane: dict[str, str] = {}

    def consequences(self, chrom: str, pos: int, ref: str, alt: str) -> list[TxConsequence]:
        return annotate_allele(chrom, pos, ref, alt, self.transcripts, self.cache)

    def check_ref(self, chrom: str, pos: int, ref: str) -> Optional[str]:
        """The reference FASTA's bases where they differ from a VCF REF (None when they agree or
        cannot be checked)."""
        if self.reference is None or not self.reference.has(chrom) or set(ref) - set("ACGT"):
            return None
        got = self.reference.fetch(chrom, pos, pos + len(ref) - 1)
        return None if got == ref.upper() else got

    def annotation_for(self, chrom: str, pos: int, ref: str, alt: str, candidate_genes: list[str],
                       mane_ids: Iterable[str]) -> Optional[Annotation]:
        if self._mane_src is not mane_ids:  # the pipeline passes one list per run: map it once
            self._mane_src, self._mane = mane_ids, mane_map(mane_ids)
        anns = [to_annotation(c, self._mane) for c in self.consequences(chrom, pos, ref, alt)]
        return pick(anns, candidate_genes)

    def describe(self) -> str:
        ref = self.reference_path or "no reference FASTA (amino-acid changes unknown)"
        return f"built-in annotation from {self.model_source} ({len(self.transcripts)} transcripts) and {ref}"

    def close(self) -> None:
        if self.reference is not None:
            self.reference.close()
