"""Outside data for built-in annotation: reference sequence and transcript models.

Two small interfaces, each with plain implementations:

* a *sequence provider* has ``fetch(chrom, start, end) -> str``: the forward-strand bases of
  ``chrom:start-end`` (1-based, inclusive, uppercase; "" outside the sequence).
  :class:`FastaSequence` reads a FASTA the user names (``pysam.FastaFile``; plain or bgzipped,
  indexed on first use); :class:`RegionSequence` holds one region in memory with its offset.
* a *transcript provider* has ``overlapping(chrom, start, end, flank)`` and ``get(id)`` over
  :class:`TxModel` records. :class:`TranscriptSet` holds them; :func:`read_gff` fills one
  from a GFF3 or GTF file the user names (RefSeq/MANE or Ensembl layout).

Chromosome names are compared bare: ``chr1``, ``1`` and ``NC_000001.11`` all mean ``1``.
"""
from __future__ import annotations

import bisect
import re
from dataclasses import dataclass
from typing import Iterable, Optional, Protocol

from ..errors import InputError

_COMPLEMENT = str.maketrans("ACGTNacgtn", "TGCANtgcan")


def revcomp(seq: str) -> str:
    return seq.translate(_COMPLEMENT)[::-1]


_NC = re.compile(r"^NC_0+(\d+)\.\d+$")


def bare_chrom(name: str) -> str:
    """"chr1" / "1" / "NC_000001.11" -> "1"; chrM / MT / NC_012920.1 -> "MT"; X/Y kept."""
    n = str(name)
    m = _NC.match(n)
    if m:
        num = int(m.group(1))
        return {23: "X", 24: "Y", 12920: "MT"}.get(num, str(num))
    if n.lower().startswith("chr"):
        n = n[3:]
    return "MT" if n in ("M", "MT") else n


class SequenceProvider(Protocol):
    def has(self, chrom: str) -> bool: ...

    def fetch(self, chrom: str, start: int, end: int) -> str: ...


_REGION_NAME = re.compile(r"^(.+):(\d+)-(\d+)$")


class FastaSequence:
    """A FASTA the user names, read with ``pysam.FastaFile`` (an index is made when missing).

    A record named ``CHROM:START-END`` (as ``samtools faidx ref.fa chr1:1000-2000`` or
    ``pysam.faidx`` write it) is taken as that region of CHROM, so a FASTA of the regions of
    interest serves as well as a whole genome."""

    def __init__(self, path: str):
        import pysam

        self.path = str(path)
        try:
            self._fa = pysam.FastaFile(self.path)
        except (OSError, ValueError) as e:
            raise InputError(f"cannot read the reference FASTA ({e}); it must be plain or bgzipped "
                             "and its folder writable for the index", self.path) from None
        self._lengths = dict(zip(self._fa.references, self._fa.lengths))
        # bare chrom -> [(first position, record name, length)]
        self._parts: dict[str, list[tuple[int, str, int]]] = {}
        for name, length in self._lengths.items():
            m = _REGION_NAME.match(name)
            if m and int(m.group(3)) - int(m.group(2)) + 1 == length:
                self._parts.setdefault(bare_chrom(m.group(1)), []).append((int(m.group(2)), name, length))
            else:
                self._parts.setdefault(bare_chrom(name), []).append((1, name, length))

    def has(self, chrom: str) -> bool:
        return bare_chrom(chrom) in self._parts

    def fetch(self, chrom: str, start: int, end: int) -> str:
        parts = self._parts.get(bare_chrom(chrom))
        if not parts or end < start:
            return ""
        for first, name, length in parts:
            if first <= start and end <= first + length - 1:
                return self._fa.fetch(name, start - first, end - first + 1).upper()
        # partly outside every record: the covered bases only when they are contiguous from start
        for first, name, length in parts:
            if first <= start <= first + length - 1:
                return self._fa.fetch(name, start - first, length).upper()
        if start < 1:
            return self.fetch(chrom, 1, end)
        return ""

    def close(self) -> None:
        self._fa.close()


@dataclass(frozen=True)
class RegionSequence:
    """One forward-strand region held in memory: ``seq[0]`` is ``chrom:start``."""

    chrom: str
    start: int
    seq: str

    def has(self, chrom: str) -> bool:
        return bare_chrom(chrom) == bare_chrom(self.chrom)

    def fetch(self, chrom: str, start: int, end: int) -> str:
        if bare_chrom(chrom) != bare_chrom(self.chrom):
            return ""
        lo = max(start, self.start) - self.start
        hi = min(end, self.start + len(self.seq) - 1) - self.start + 1
        return self.seq[lo:hi].upper() if hi > lo else ""

    @classmethod
    def from_gene_orientation(cls, chrom: str, seq: str, anchor: int, strand: str) -> "RegionSequence":
        """A record written in gene orientation (RefSeqGene, LRG) whose position ``p`` lies at
        ``anchor + p`` (strand "+") or ``anchor - p`` (strand "-") on ``chrom``."""
        if strand == "+":
            return cls(bare_chrom(chrom), anchor + 1, seq.upper())
        return cls(bare_chrom(chrom), anchor - len(seq), revcomp(seq.upper()))


# ---------------------------------------------------------------------------------------------
# Transcript models
# ---------------------------------------------------------------------------------------------
@dataclass(frozen=True)
class TxModel:
    """One transcript on the genome: exons and coding region 1-based inclusive, ascending."""

    transcript_id: str  # versioned accession when the source gives one: "NM_206933.2"
    gene: str
    chrom: str  # bare
    strand: str  # "+" or "-"
    exons: tuple[tuple[int, int], ...]
    cds: Optional[tuple[int, int]] = None  # genomic span of the CDS, stop codon included
    protein_id: str = ""
    source: str = ""

    @property
    def start(self) -> int:
        return self.exons[0][0]

    @property
    def end(self) -> int:
        return self.exons[-1][1]

    @property
    def coding(self) -> bool:
        return self.cds is not None


class TranscriptProvider(Protocol):
    def overlapping(self, chrom: str, start: int, end: int, flank: int = 0) -> list[TxModel]: ...

    def get(self, transcript_id: str) -> Optional[TxModel]: ...


def versionless(acc: str) -> str:
    return acc.split(".")[0] if acc else ""


class TranscriptSet:
    """Transcript models indexed by chromosome for overlap queries."""

    def __init__(self, models: Iterable[TxModel], source: str = ""):
        self.source = source
        self._by_chrom: dict[str, list[TxModel]] = {}
        self._by_id: dict[str, TxModel] = {}
        for m in models:
            self._by_chrom.setdefault(m.chrom, []).append(m)
            self._by_id[m.transcript_id] = m
            self._by_id.setdefault(versionless(m.transcript_id), m)
        self._starts: dict[str, list[int]] = {}
        self._max_len: dict[str, int] = {}
        for chrom, ms in self._by_chrom.items():
            ms.sort(key=lambda m: (m.start, m.end, m.transcript_id))
            self._starts[chrom] = [m.start for m in ms]
            self._max_len[chrom] = max(m.end - m.start + 1 for m in ms)

    def __len__(self) -> int:
        return sum(len(v) for v in self._by_chrom.values())

    def __iter__(self):
        for ms in self._by_chrom.values():
            yield from ms

    def get(self, transcript_id: str) -> Optional[TxModel]:
        return self._by_id.get(transcript_id) or self._by_id.get(versionless(transcript_id))

    def overlapping(self, chrom: str, start: int, end: int, flank: int = 0) -> list[TxModel]:
        c = bare_chrom(chrom)
        ms = self._by_chrom.get(c)
        if not ms:
            return []
        lo = bisect.bisect_left(self._starts[c], start - flank - self._max_len[c])
        hi = bisect.bisect_right(self._starts[c], end + flank)
        return [m for m in ms[lo:hi] if m.start - flank <= end and start <= m.end + flank]


# ---------------------------------------------------------------------------------------------
# GFF3 / GTF
# ---------------------------------------------------------------------------------------------
_TX_TYPES = {"mRNA", "transcript", "lnc_RNA", "ncRNA", "primary_transcript", "miRNA", "snRNA", "snoRNA",
             "rRNA", "tRNA", "misc_RNA", "scRNA", "antisense_RNA", "C_gene_segment", "V_gene_segment",
             "unconfirmed_transcript", "pseudogenic_transcript", "NMD_transcript_variant"}
_NOT_TX = {"gene", "pseudogene", "region", "ncRNA_gene", "chromosome", "biological_region", "supercontig"}


@dataclass(frozen=True)
class Placement:
    """Where a record's own coordinates lie on the genome: position ``p`` of ``seqid`` is
    ``anchor + p`` on ``chrom`` (strand "+") or ``anchor - p`` (strand "-")."""

    chrom: str
    anchor: int
    strand: str

    def pos(self, p: int) -> int:
        return self.anchor + p if self.strand == "+" else self.anchor - p

    def span(self, a: int, b: int) -> tuple[int, int]:
        x, y = self.pos(a), self.pos(b)
        return (x, y) if x <= y else (y, x)

    def strand_of(self, s: str) -> str:
        return s if self.strand == "+" else {"+": "-", "-": "+"}.get(s, s)


def parse_placement(text: str, where: str = "--placement") -> tuple[str, Placement]:
    """"SEQID=CHROM:ANCHOR:STRAND" (e.g. NG_009497.1=1:216428397:-)."""
    m = re.match(r"^([^=]+)=([^:]+):(\d+):([+-])$", text.strip())
    if not m:
        raise InputError(f"placement must be SEQID=CHROM:ANCHOR:STRAND, got {text!r}", where)
    return m.group(1), Placement(bare_chrom(m.group(2)), int(m.group(3)), m.group(4))


def _attrs_gff3(text: str) -> dict[str, str]:
    from urllib.parse import unquote

    out = {}
    for part in text.strip().strip(";").split(";"):
        if "=" in part:
            k, v = part.split("=", 1)
            out[k.strip()] = unquote(v.strip())
    return out


_GTF_ATTR = re.compile(r'\s*([^\s";]+)\s+(?:"([^"]*)"|([^;\s]+))\s*;?')


def _attrs_gtf(text: str) -> dict[str, str]:
    out: dict[str, str] = {}
    for m in _GTF_ATTR.finditer(text):
        out.setdefault(m.group(1), m.group(2) if m.group(2) is not None else m.group(3))
    return out


def _strip_prefix(ident: str) -> str:
    for p in ("rna-", "transcript:", "gene-", "gene:", "cds-", "CDS:"):
        if ident.startswith(p):
            return ident[len(p):]
    return ident


def read_gff(path: str, placements: Optional[dict[str, Placement]] = None,
             keep: Optional[Iterable[str]] = None) -> TranscriptSet:
    """Transcript models from a GFF3 or GTF file (plain or gzipped).

    GFF3: transcripts are rows whose ID some exon row names as Parent (gene rows excepted);
    CDS rows with the same Parent give the coding region and ``protein_id``. GTF: rows are
    grouped by ``transcript_id``; ``stop_codon`` rows extend the CDS (in GTF the CDS row leaves
    the stop codon out; common practice of GTF writers, from memory). ``placements`` maps a
    record's seqid to its genome placement (RefSeqGene / LRG records in gene orientation).
    ``keep`` limits the result to these transcript IDs (with or without version).
    """
    import gzip

    placements = placements or {}
    wanted = {versionless(k) for k in keep} if keep else None
    rows: dict[str, dict] = {}
    exons: dict[str, list[tuple[int, int]]] = {}
    cds: dict[str, list[tuple[int, int]]] = {}
    meta: dict[str, dict[str, str]] = {}
    genes: dict[str, dict[str, str]] = {}
    kind: Optional[str] = None
    opener = gzip.open if str(path).endswith(".gz") else open
    try:
        fh = opener(path, "rt", encoding="utf-8")
    except OSError as e:
        raise InputError(f"cannot read the transcript file ({e.strerror or e})", path) from None
    with fh:
        for lineno, line in enumerate(fh, 1):
            if not line.strip() or line.startswith("#"):
                if line.startswith("##FASTA"):
                    break
                continue
            f = line.rstrip("\n\r").split("\t")
            if len(f) != 9:
                raise InputError(f"expected 9 tab-separated columns, found {len(f)}", path, lineno)
            seqid, _src, ftype, start, end, _score, strand, _phase, attr_text = f
            try:
                a, b = int(start), int(end)
            except ValueError:
                raise InputError(f"start/end must be whole numbers, got {start!r}/{end!r}", path, lineno) from None
            if a < 1 or b < a:
                raise InputError(f"bad feature span {a}-{b}", path, lineno)
            if kind is None:
                kind = "gff3" if ("=" in attr_text and '"' not in attr_text.split(";")[0]) else "gtf"
            attrs = _attrs_gff3(attr_text) if kind == "gff3" else _attrs_gtf(attr_text)
            place = placements.get(seqid)
            chrom = place.chrom if place else bare_chrom(seqid)
            if place:
                a, b = place.span(a, b)
                strand = place.strand_of(strand)
            if kind == "gff3":
                ident = attrs.get("ID", "")
                if ftype in ("gene", "ncRNA_gene", "pseudogene") and ident:
                    genes[ident] = attrs
                if ident and ftype not in _NOT_TX:
                    rows.setdefault(ident, {"type": ftype, "chrom": chrom, "strand": strand, "attrs": attrs,
                                            "line": lineno})
                parents = [p for p in attrs.get("Parent", "").split(",") if p]
            else:
                tid = attrs.get("transcript_id")
                parents = [tid] if tid else []
                if tid and ftype == "transcript":
                    rows.setdefault(tid, {"type": ftype, "chrom": chrom, "strand": strand, "attrs": attrs,
                                          "line": lineno})
            for p in parents:
                if ftype == "exon":
                    exons.setdefault(p, []).append((a, b))
                    meta.setdefault(p, {"chrom": chrom, "strand": strand, **attrs})
                elif ftype in ("CDS", "stop_codon") and (ftype == "CDS" or kind == "gtf"):
                    cds.setdefault(p, []).append((a, b))
                    if attrs.get("protein_id"):
                        meta.setdefault(p, {"chrom": chrom, "strand": strand}).setdefault("protein_id",
                                                                                          attrs["protein_id"])
    models = []
    for pid, ex in exons.items():
        row = rows.get(pid)
        if kind == "gff3" and (row is None or row["type"] in _NOT_TX):
            continue  # exons of a gene row (RefSeqGene lists them twice)
        attrs = dict(meta.get(pid, {}))
        if row:
            attrs.update(row["attrs"])
        tid = attrs.get("transcript_id") or _strip_prefix(attrs.get("Name", "") if kind == "gtf" else pid)
        if attrs.get("transcript_version") and "." not in tid:
            tid = f"{tid}.{attrs['transcript_version']}"
        if wanted is not None and versionless(tid) not in wanted:
            continue
        gene = attrs.get("gene") or attrs.get("gene_name")
        if not gene and kind == "gff3":
            g = genes.get(attrs.get("Parent", ""), {})
            gene = g.get("gene") or g.get("gene_name") or g.get("Name", "")
        ex_sorted = tuple(sorted(set(ex)))
        for (s1, e1), (s2, e2) in zip(ex_sorted, ex_sorted[1:]):
            if s2 <= e1:
                raise InputError(f"transcript {tid}: exons {s1}-{e1} and {s2}-{e2} overlap", path,
                                 row["line"] if row else None)
        c = cds.get(pid)
        span = (min(x for x, _ in c), max(y for _, y in c)) if c else None
        prot = attrs.get("protein_id", "")
        if prot and attrs.get("protein_version") and "." not in prot:
            prot = f"{prot}.{attrs['protein_version']}"
        strand = (row or attrs)["strand"] if (row or attrs).get("strand") in ("+", "-") else attrs.get("strand")
        if strand not in ("+", "-"):
            raise InputError(f"transcript {tid} has no strand", path, row["line"] if row else None)
        models.append(TxModel(tid, gene or "", (row or attrs)["chrom"], strand, ex_sorted, span, prot,
                              source=str(path)))
    if kind is None:
        raise InputError("no features found (expected GFF3 or GTF rows)", path)
    return TranscriptSet(models, source=str(path))
