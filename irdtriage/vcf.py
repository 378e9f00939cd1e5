"""VCF/BCF intake: read only the panel's regions, split and trim alleles, recode genotypes.

Two ways in, giving the same variants:

* indexed (bgzipped VCF with .tbi/.csi, or BCF with .csi): ``fetch`` each merged panel
  interval through htslib — the rest of the genome is never read;
* not indexed (plain ``.vcf``, gzip/bgzip without an index): stream the raw text, look only
  at CHROM and POS of each line against the sorted panel intervals, and hand the few lines
  that overlap a panel interval to htslib (written with the original header to a private
  temporary VCF) for proper parsing.  Unindexed BCF is iterated with pysam directly.

A record is in the panel when any of its reference bases overlaps a padded gene interval
(the same overlap rule htslib's region fetch uses; for symbolic alleles the span runs to INFO END).

Checks made on every record read in the panel (one ``FILE:LINE: problem`` InputError each;
``FILE: record CHROM:POS: problem`` when the file is read through its index and the line is
unknown): REF only A/C/G/T/N and ALT bases, ``*``, ``<ID>`` or a breakend (VCF 4.3 §1.6.1);
POS >= 1; the record inside its contig's length (``##contig`` line, else the build's length);
no GT allele index beyond the record's ALT count.  Alleles are uppercased (the specification
makes them case-insensitive).

Duplicate alleles (same chromosome, position, REF and ALT after splitting, trimming and
left-aligning over the reference bases the records themselves show) are counted once: the better
call is kept (FILTER PASS, then GQ, DP, QUAL) and a warning names both records; when their
genotypes disagree the kept allele carries an intake flag, so it never counts as a confident call.
Left-alignment without the reference FASTA is limited to bases some record's REF spells out.

An index older than its data, or one that does not find the file's first records, is not used:
the file is streamed instead and a warning says so (see ``irdtriage.evidence.indexed``).
"""
from __future__ import annotations

import bisect
import gzip
import os
import re
import tempfile
import zlib
from dataclasses import dataclass, field
from typing import Any, Iterable, Iterator, Optional

import pysam

from .build import CONTIG_LENGTHS, bare, chrom_style as _chrom_style, resolve_build
from .errors import InputError
from .evidence.indexed import REINDEX_HINT, index_problem
from .models import Call, Panel, Variant

# Empty BGZF block that ends every complete bgzip file (SAM/BAM format specification, 4.1.2).
BGZF_EOF = bytes.fromhex("1f8b08040000000000ff0600424302001b0003000000000000000000")

NO_ANNOTATION_HINT = (
    "no CSQ/ANN annotation found: consequences unknown; annotate with your annotator first"
)


@dataclass
class QualityThresholds:
    """Per-call quality limits used to flag (not drop) calls.

    Defaults are common practice for germline short-variant calls from short-read
    sequencing: depth >= 8 reads, genotype quality >= 20 (Phred, 1% error), heterozygous
    allele balance within 0.2-0.8 and homozygous-alt balance >= 0.8, FILTER PASS.
    All are configurable; set a value to None to switch that check off.
    """

    min_dp: Optional[int] = 8
    min_gq: Optional[int] = 20
    het_ab_min: Optional[float] = 0.2
    het_ab_max: Optional[float] = 0.8
    hom_ab_min: Optional[float] = 0.8
    require_pass: bool = True


@dataclass
class VcfIntake:
    """What read_vcf found.

    counts (they add up: ``check_counts``):
      records_read = records_in_panel + records_outside_panel
        records_read: records htslib/the stream looked at (panel regions only when indexed,
        every record when streamed); records_outside_panel: streamed records touching no
        panel interval (0 when indexed); records_in_panel: records that reached the converter;
        records_without_alt: of those, records whose ALT is '.' (no allele).
      alleles = in_panel + symbolic_skipped + reference_blocks_ignored + duplicates_merged
        alleles: every ALT allele of the in-panel records; in_panel: alleles kept as variants;
        symbolic_skipped: '*', <DEL>/<DUP>/... and breakends (see structural_events);
        reference_blocks_ignored: gVCF <NON_REF>/<*>; duplicates_merged: second copies of an
        allele already kept.
      no_alt_in_sample, failed_quality: of the kept alleles, those the proband carries no copy
        of, and those the proband carries with a quality flag raised (see quality_flags).

    structural_events: symbolic records (<DEL>, <DUP>, <INV>, <CNV>, breakends ...) in the
    panel regions, as plain dicts (chrom, pos, end, svtype, alt, genotype, zygosity, genes,
    line, alt_index, and as written: ref, id, qual, filters, info_text, samples with GT/CN): checked
    and classified by irdtriage.sv; breakends are listed for review.
    """

    path: str
    build: Optional[str]
    samples: list[str]
    proband: str
    variants: list[Variant]
    counts: dict[str, int]
    warnings: list[str]
    chrom_style: str
    header_info: dict[str, Any] = field(default_factory=dict)
    structural_events: list[dict[str, Any]] = field(default_factory=list)


COUNT_KEYS = (
    "records_read", "records_outside_panel", "records_in_panel", "records_without_alt",
    "alleles", "in_panel", "symbolic_skipped", "reference_blocks_ignored", "duplicates_merged",
    "no_alt_in_sample", "failed_quality",
)


def check_counts(counts: dict[str, int]) -> list[str]:
    """The intake count identities that do not hold ([] when the counts add up)."""
    bad = []
    if counts["records_read"] != counts["records_in_panel"] + counts["records_outside_panel"]:
        bad.append("records_read != records_in_panel + records_outside_panel")
    parts = ("in_panel", "symbolic_skipped", "reference_blocks_ignored", "duplicates_merged")
    if counts["alleles"] != sum(counts[k] for k in parts):
        bad.append("alleles != " + " + ".join(parts))
    return bad


# ---------------------------------------------------------------------------
# Panel intervals
# ---------------------------------------------------------------------------
def panel_intervals(panel: Panel, build: str, padding: int = 50) -> list[tuple[str, int, int, str]]:
    """Sorted (bare_chrom, start, end, symbol) per panel gene, padded, 1-based inclusive."""
    try:  # the panel module's own function when present (same contract)
        from . import panel as panel_mod  # type: ignore

        fn = getattr(panel_mod, "intervals", None)
        if fn is not None:
            return list(fn(panel, build, padding))
    except ImportError:
        pass
    out = []
    for symbol, gene in panel.genes.items():
        span = gene.span(build)
        if span is None:
            continue
        out.append((bare(span.chrom), max(1, span.start - padding), span.end + padding, symbol))
    out.sort(key=lambda t: (t[0], t[1], t[2]))
    return out


def merge_intervals(intervals: Iterable[tuple], gap: int = 0) -> dict[str, list[tuple[int, int]]]:
    """bare chrom -> sorted, non-overlapping (start, end) list; intervals closer than ``gap`` bp
    are joined (fewer index queries for many small intervals such as exons)."""
    by_chrom: dict[str, list[tuple[int, int]]] = {}
    for chrom, start, end, *_ in intervals:
        by_chrom.setdefault(bare(chrom), []).append((int(start), int(end)))
    merged: dict[str, list[tuple[int, int]]] = {}
    for chrom, spans in by_chrom.items():
        spans.sort()
        out: list[list[int]] = []
        for s, e in spans:
            if out and s <= out[-1][1] + 1 + gap:
                out[-1][1] = max(out[-1][1], e)
            else:
                out.append([s, e])
        merged[chrom] = [(s, e) for s, e in out]
    return merged


class _Overlap:
    """Fast 'does [pos, pos+len-1] touch any interval' for one chromosome."""

    __slots__ = ("starts", "ends")

    def __init__(self, spans: list[tuple[int, int]]):
        self.starts = [s for s, _ in spans]
        self.ends = [e for _, e in spans]

    def hit(self, pos: int, last: int) -> bool:
        i = bisect.bisect_right(self.starts, last) - 1
        return i >= 0 and self.ends[i] >= pos


# ---------------------------------------------------------------------------
# Opening and checking the file
# ---------------------------------------------------------------------------
def _sniff(path: str) -> str:
    """'bgzf', 'gzip', 'bcf' or 'text'; InputError for anything else."""
    if not os.path.exists(path):
        raise InputError("file not found", path)
    if os.path.isdir(path):
        raise InputError("is a directory, not a VCF file", path)
    try:
        with open(path, "rb") as fh:
            head = fh.read(18)
    except OSError as e:
        raise InputError(f"cannot read file ({e.strerror})", path)
    if not head:
        raise InputError("file is empty", path)
    if head[:2] == b"\x1f\x8b":
        is_bgzf = len(head) >= 16 and head[3] & 4 and head[12:14] == b"BC"
        try:
            with gzip.open(path, "rb") as fh:
                magic = fh.read(5)
        except (OSError, EOFError, zlib.error) as e:
            raise InputError(f"compressed file cannot be read ({e})", path)
        if is_bgzf:
            with open(path, "rb") as fh:
                fh.seek(max(0, os.path.getsize(path) - len(BGZF_EOF)))
                if fh.read() != BGZF_EOF:
                    raise InputError("truncated bgzip file (end-of-file block missing)", path)
        if magic[:3] == b"BCF":
            return "bcf"
        if not magic.startswith(b"#"):
            raise InputError("not a VCF file (compressed content does not start with a '#' header line)", path)
        return "bgzf" if is_bgzf else "gzip"
    if head.startswith(b"BCF"):
        return "bcf"
    if not head.startswith(b"#"):
        raise InputError("not a VCF file (expected a '##fileformat=VCF' header line)", path)
    return "text"


def _open_header(path: str) -> pysam.VariantFile:
    try:
        vf = pysam.VariantFile(path)
    except (ValueError, OSError) as e:
        raise InputError(f"not a readable VCF/BCF header ({e})", path)
    return vf


def _check_header_text(path: str, kind: str) -> list[bytes]:
    """For text VCFs: make sure a #CHROM line ends the header; return the header lines."""
    opener = gzip.open if kind in ("gzip", "bgzf") else open
    n = 0
    lines: list[bytes] = []
    try:
        with opener(path, "rb") as fh:
            for n, line in enumerate(fh, 1):
                lines.append(line)
                if line.startswith(b"#CHROM"):
                    return lines
                if not line.startswith(b"##"):
                    raise InputError("header has no #CHROM line before the first data line", path, n)
    except (OSError, EOFError, zlib.error) as e:
        raise InputError(f"compressed file cannot be read ({e})", path)
    raise InputError("header has no #CHROM line", path, n or None)


def _has_index(path: str, vf: pysam.VariantFile) -> bool:
    try:
        return vf.index is not None
    except Exception:
        return any(os.path.exists(path + ext) for ext in (".tbi", ".csi"))


# ---------------------------------------------------------------------------
# Record -> Variants
# ---------------------------------------------------------------------------
# VCF 4.3 §1.6.1: REF is made of A, C, G, T, N (case-insensitive); an ALT is bases, '*'
# (allele missing because of an upstream deletion), '.', a symbolic <ID> or a breakend.
_REF_OK = re.compile(r"[ACGTN]+", re.I)
_ALT_BASES = re.compile(r"[ACGTN]+", re.I)
_BREAKEND = re.compile(r"[ACGTN]*[\[\]][^\[\]]+[\[\]][ACGTN]*|\.[ACGTN]+|[ACGTN]+\.", re.I)
REFERENCE_BLOCK_ALTS = ("<NON_REF>", "<*>")  # gVCF: "any other allele", not a variant


def _is_symbolic(alt: Optional[str]) -> bool:
    return (
        alt is None or alt in ("*", ".", "") or alt.startswith("<") or "[" in alt or "]" in alt
        or alt.startswith(".") or alt.endswith(".")
    )


def _alt_problem(alt: str) -> Optional[str]:
    if _ALT_BASES.fullmatch(alt) or alt in ("*", ".") or _BREAKEND.fullmatch(alt):
        return None
    if alt.startswith("<") and alt.endswith(">") and len(alt) > 2 and "<" not in alt[1:-1]:
        return None
    return (f"ALT {alt[:30]!r} is not bases (A, C, G, T, N), '*', a symbolic <ID> or a breakend "
            "(VCF 4.3 section 1.6.1)")


def trim_alleles(pos: int, ref: str, alt: str) -> tuple[int, str, str]:
    """Drop shared trailing bases, then shared leading bases (keeping >= 1 base each)."""
    while len(ref) > 1 and len(alt) > 1 and ref[-1] == alt[-1]:
        ref, alt = ref[:-1], alt[:-1]
    while len(ref) > 1 and len(alt) > 1 and ref[0] == alt[0]:
        ref, alt, pos = ref[1:], alt[1:], pos + 1
    return pos, ref, alt


def left_align(pos: int, ref: str, alt: str, base_at) -> tuple[int, str, str]:
    """Left-align an allele over the bases ``base_at(pos) -> str | None`` knows, then trim.

    The normalisation algorithm of Tan, Abecasis and Kang (Bioinformatics 2015, "Unified
    representation of genetic variants"): while both alleles end in the same base drop it, and
    when an allele would become empty prepend the reference base before it; finally drop shared
    leading bases.  Stops where the base before is unknown (no reference FASTA here).
    """
    while ref and alt and ref[-1] == alt[-1]:
        if len(ref) == 1 or len(alt) == 1:
            before = base_at(pos - 1)
            if not before:
                break
            ref, alt, pos = before + ref[:-1], before + alt[:-1], pos - 1
        else:
            ref, alt = ref[:-1], alt[:-1]
    while len(ref) > 1 and len(alt) > 1 and ref[0] == alt[0]:
        ref, alt, pos = ref[1:], alt[1:], pos + 1
    return pos, ref, alt


def _zygosity(gt: tuple, chrom_bare: str) -> str:
    """Allelic state from the recoded GT alone (0 ref, 1 this allele, 2 another allele).

    A one-allele GT is "hemizygous" on chrX/chrY and "haploid call" elsewhere (an autosome
    carries two copies); the chrM label and the sex-specific chrX/chrY labels are settled later,
    when the sex is known (irdtriage.genotype).
    """
    called = [a for a in gt if a is not None]
    if not called:
        return "no call"
    copies = sum(1 for a in called if a == 1)
    if copies == 0:
        return "reference"
    if len(gt) == 1:
        if chrom_bare in ("X", "Y"):
            return "hemizygous"
        if chrom_bare == "MT":
            return "homozygous"
        return "haploid call"
    if copies == len(gt):
        return "homozygous"
    return "heterozygous"


def _int_or_none(v) -> Optional[int]:
    if v is None:
        return None
    try:
        return int(v)
    except (TypeError, ValueError):
        return None


def _gt_text(gt: tuple, phased: bool) -> str:
    return ("|" if phased else "/").join("." if a is None else str(a) for a in gt)


class _Converter:
    def __init__(self, header: pysam.VariantHeader, samples: list[str], path: str, build: str,
                 proband: str, gene_intervals: list[tuple[str, int, int, str]]):
        self.samples = samples
        self.path = path
        self.proband = proband
        self.info_number = {k: header.info[k].number for k in header.info}
        self.fmt = set(header.formats)
        self.has_end = "END" in header.info
        self.lengths: dict[str, Optional[int]] = {}
        for name in header.contigs:
            self.lengths[name] = header.contigs[name].length
        self.build = build
        self.gene_intervals = gene_intervals
        self.events: list[dict[str, Any]] = []

    def _fail(self, problem: str, rec: pysam.VariantRecord, line: Optional[int]):
        where = "" if line else f"record {rec.chrom}:{rec.pos}: "
        raise InputError(where + problem, self.path, line)

    def _contig_length(self, chrom: str) -> tuple[Optional[int], str]:
        length = self.lengths.get(chrom)
        if length:
            return length, "its ##contig header line"
        known = CONTIG_LENGTHS.get(bare(chrom), {}).get(self.build)
        return known, f"{self.build}"

    def _check(self, rec: pysam.VariantRecord, alts: tuple, line: Optional[int]) -> None:
        ref = rec.ref or ""
        if not _REF_OK.fullmatch(ref):
            self._fail(f"REF {ref[:30]!r} has a character other than A, C, G, T, N (VCF 4.3 section 1.6.1)", rec, line)
        for alt in alts:
            problem = _alt_problem(alt)
            if problem:
                self._fail(problem, rec, line)
        breakends_only = bool(alts) and all(_BREAKEND.fullmatch(a) for a in alts)
        if rec.pos < 1 and not breakends_only:
            self._fail(f"POS {rec.pos} is not a position (VCF positions start at 1)", rec, line)
        length, source = self._contig_length(rec.chrom)
        last = rec.pos + len(ref) - 1
        if length and last > length and not breakends_only:
            self._fail(f"record reaches {rec.chrom}:{last}, past the end of {rec.chrom} "
                       f"(length {length} from {source})", rec, line)

    def _check_gt_indexes(self, rec: pysam.VariantRecord, n_alts: int, line: Optional[int]) -> None:
        """pysam turns a GT allele index beyond the ALT list into None: look at the text."""
        fields = str(rec).rstrip("\n").split("\t")
        if len(fields) < 10:
            return
        keys = fields[8].split(":")
        if "GT" not in keys:
            return
        gi = keys.index("GT")
        for s, value in zip(self.samples, fields[9:]):
            parts = value.split(":")
            if gi >= len(parts):
                continue
            for a in re.split(r"[/|]", parts[gi]):
                if a.isdigit() and int(a) > n_alts:
                    self._fail(f"GT {parts[gi]} of sample {s} names allele {a} but the record has "
                               f"{n_alts} ALT allele{'s' if n_alts != 1 else ''}", rec, line)

    def _event(self, rec: pysam.VariantRecord, alt: str, alt_index: int, per_sample, line) -> None:
        cb = bare(rec.chrom)
        end = rec.stop if rec.stop and rec.stop >= rec.pos else rec.pos
        try:
            info_end = rec.info.get("END") if self.has_end else None
        except (ValueError, OSError):
            info_end = None
        if isinstance(info_end, int) and info_end >= rec.pos:
            end = info_end
        try:
            svtype = rec.info.get("SVTYPE") if "SVTYPE" in self.info_number else None
        except (ValueError, OSError):
            svtype = None
        if isinstance(svtype, tuple):
            svtype = svtype[0] if svtype else None
        if not svtype:
            svtype = alt.strip("<>").split(":")[0] if alt.startswith("<") else "BND"
        genes = sorted({sym for c, s, e, sym in self.gene_intervals if c == cb and s <= end and e >= rec.pos})
        gt_text, zyg = "", "no call"
        samples = {}
        for s, gt, phased, ps, dp, gq, _ad in per_sample:
            rgt = tuple(None if a is None else (1 if a == alt_index else (0 if a == 0 else 2)) for a in gt)
            try:
                cn = rec.samples[s].get("CN") if "CN" in self.fmt else None
            except (ValueError, OSError, KeyError):
                cn = None
            samples[s] = {"gt": rgt, "phased": phased, "phase_set": ps, "dp": dp, "gq": gq, "cn": cn}
            if s == self.proband:
                gt_text, zyg = _gt_text(gt, phased), _zygosity(rgt, cb)
        fields = str(rec).rstrip("\n").split("\t")
        self.events.append({
            "chrom": rec.chrom, "pos": rec.pos, "end": end, "svtype": str(svtype), "alt": alt,
            "genotype": gt_text, "zygosity": zyg, "genes": genes, "line": line, "alt_index": alt_index,
            # as written, for irdtriage.sv.intake (htslib drops an END before POS, so INFO is kept as text)
            "ref": rec.ref, "id": rec.id, "qual": rec.qual, "filters": tuple(rec.filter.keys()),
            "info_text": fields[7] if len(fields) > 7 else "", "samples": samples,
        })

    def convert(self, rec: pysam.VariantRecord, counts: dict, line: Optional[int] = None) -> list[Variant]:
        counts["records_in_panel"] += 1
        # ALT "." (or an empty ALT column) means no alternate allele: nothing to triage, but a GT
        # that names allele 1 there contradicts the record and is refused like any index past ALT
        alts = tuple(a for a in (rec.alts or ()) if a not in (".", ""))
        self._check(rec, alts, line)
        if not alts:
            self._check_gt_indexes(rec, 0, line)
            counts["records_without_alt"] += 1
            return []
        try:
            info_items = list(rec.info.items())
        except (ValueError, OSError) as e:
            raise InputError(f"malformed INFO ({e})", self.path, line)
        filters = tuple(rec.filter.keys())
        per_sample = []
        missing_allele = False
        for s in self.samples:
            sd = rec.samples[s]
            try:
                gt = sd.get("GT")
            except (ValueError, OSError, KeyError) as e:
                raise InputError(f"malformed genotype for sample {s} ({e})", self.path, line)
            gt = tuple(gt) if gt is not None else (None,)
            missing_allele = missing_allele or None in gt
            per_sample.append(
                (
                    s,
                    gt,
                    bool(sd.phased),
                    _int_or_none(sd.get("PS")) if "PS" in self.fmt else None,
                    _int_or_none(sd.get("DP")) if "DP" in self.fmt else None,
                    _int_or_none(sd.get("GQ")) if "GQ" in self.fmt else None,
                    sd.get("AD") if "AD" in self.fmt else None,
                )
            )
        if missing_allele:
            self._check_gt_indexes(rec, len(alts), line)
        chrom = rec.chrom
        cb = bare(chrom)
        rec_ref = rec.ref.upper()
        up_alts = tuple(a if a.startswith("<") else a.upper() for a in alts)
        out = []
        for i, alt in enumerate(up_alts, 1):
            counts["alleles"] += 1
            if alt in REFERENCE_BLOCK_ALTS:
                counts["reference_blocks_ignored"] += 1
                continue
            if _is_symbolic(alt):
                counts["symbolic_skipped"] += 1
                if alt != "*":
                    self._event(rec, alt, i, per_sample, line)
                continue
            pos, ref, talt = trim_alleles(rec.pos, rec_ref, alt)
            info: dict[str, Any] = {}
            for k, v in info_items:
                num = self.info_number.get(k)
                if isinstance(v, tuple):
                    if num == "A" and len(v) == len(alts):
                        v = v[i - 1]
                    elif num == "R" and len(v) == len(alts) + 1:
                        v = (v[0], v[i])
                    elif num == "." and k in ("CSQ", "ANN"):
                        v = ",".join(str(x) for x in v)
                info[k] = v
            calls = {}
            for s, gt, phased, ps, dp, gq, ad in per_sample:
                rgt = tuple(None if a is None else (1 if a == i else (0 if a == 0 else 2)) for a in gt)
                ad_ref = ad_alt = None
                if ad is not None and len(ad) > i:
                    ad_ref, ad_alt = ad[0], ad[i]
                calls[s] = Call(
                    sample=s, gt=rgt, phased=phased and len(gt) > 1, phase_set=ps, dp=dp, gq=gq,
                    ad_ref=ad_ref, ad_alt=ad_alt, zygosity=_zygosity(rgt, cb),
                )
            out.append(
                Variant(
                    chrom=chrom, pos=pos, ref=ref, alt=talt, vcf_id=rec.id,
                    qual=rec.qual, filters=filters, original_pos=rec.pos, original_ref=rec_ref,
                    original_alts=up_alts, allele_index=i, line=line, info=info, calls=calls,
                )
            )
        return out


# ---------------------------------------------------------------------------
# Duplicate alleles
# ---------------------------------------------------------------------------
def _call_rank(v: Variant, proband: str) -> tuple:
    """Higher is better: FILTER passed, then GQ, DP, QUAL of the proband's call."""
    c = v.calls.get(proband)
    passed = not v.filters or tuple(v.filters) == ("PASS",)
    return (passed, (c.gq if c and c.gq is not None else -1), (c.dp if c and c.dp is not None else -1),
            v.qual if v.qual is not None else -1.0)


def _written(v: Variant) -> str:
    if v.line:
        return f"line {v.line}"
    return f"{v.chrom}:{v.original_pos} {v.original_ref}>{v.original_alts[v.allele_index - 1]}"


def merge_duplicates(variants: list[Variant], proband: str) -> tuple[list[Variant], int, list[str]]:
    """Keep one allele per (chromosome, left-aligned position, REF, ALT); return (kept, merged, warnings).

    Input order is kept.  Duplicates whose genotypes differ for any sample leave an intake flag
    on the kept allele (its call must be reviewed, never counted as confident).
    """
    bases: dict[tuple[str, int], str] = {}
    for v in variants:
        cb = v.chrom_bare
        for k, b in enumerate(v.original_ref):
            key = (cb, v.original_pos + k)
            if bases.setdefault(key, b) != b:
                bases[key] = "?"  # records disagree about the reference: never used to shift

    groups: dict[tuple, list[Variant]] = {}
    for v in variants:
        cb = v.chrom_bare

        def base_at(p, cb=cb):
            b = bases.get((cb, p))
            return b if b and b != "?" else None

        npos, nref, nalt = left_align(v.pos, v.ref, v.alt, base_at)
        groups.setdefault((cb, npos, nref, nalt), []).append(v)
    drop: set[int] = set()
    warnings: list[str] = []
    for (cb, npos, nref, nalt), group in groups.items():
        if len(group) < 2:
            continue
        best = max(group, key=lambda v: _call_rank(v, proband))
        for v in group:
            if v is not best:
                drop.add(id(v))
        differ = []
        for s in best.calls:
            sigs = {(v.calls[s].alt_copies, sum(1 for a in v.calls[s].gt if a is None))
                    for v in group if s in v.calls}
            if len(sigs) > 1:
                differ.append(s)
        where = ", ".join(_written(v) for v in group)
        msg = (f"duplicate records of {best.chrom}:{npos} {nref}>{nalt} ({where}) counted once, "
               f"keeping {_written(best)}")
        if differ:
            note = (f"duplicate records ({where}) give different genotypes for {', '.join(differ)}: "
                    "review the call")
            best.intake_flags = tuple(best.intake_flags) + (note,)
            msg += f"; their genotypes differ for {', '.join(differ)}: the call is flagged for review"
        warnings.append(msg)
    kept = [v for v in variants if id(v) not in drop]
    return kept, len(variants) - len(kept), warnings


def structural_warnings(events: Iterable[dict[str, Any]]) -> list[str]:
    """One warning per symbolic event (<DEL>, <DUP> ...) the proband may carry over a panel gene:
    this version does not classify them, so they must be reviewed by hand."""
    out = []
    for ev in events:
        if not ev.get("genes") or ev.get("zygosity") == "reference":
            continue
        state = ev.get("zygosity") or "no call"
        gt = f" (GT {ev['genotype']})" if ev.get("genotype") else ""
        out.append(f"{state}{gt} {ev['alt']} ({ev['svtype']}) {ev['chrom']}:{ev['pos']}-{ev['end']} over "
                   f"{', '.join(ev['genes'])} is not classified by this version: review it")
    return out


# ---------------------------------------------------------------------------
# Quality
# ---------------------------------------------------------------------------
def _fmt(x: float) -> str:
    return f"{x:.2f}".rstrip("0").rstrip(".")


def quality_flags(variant: Variant, sample: str, thresholds: QualityThresholds = QualityThresholds()) -> tuple[str, ...]:
    """Why this sample's call at this allele fails the thresholds; () when it passes."""
    flags: list[str] = []
    t = thresholds
    if t.require_pass and variant.filters and tuple(variant.filters) != ("PASS",):
        flags.append("FILTER=" + ";".join(f for f in variant.filters if f != "PASS"))
    flags.extend(getattr(variant, "intake_flags", ()) or ())
    call = variant.calls.get(sample)
    if call is None:
        flags.append(f"sample {sample} not in file")
        return tuple(flags)
    if call.zygosity == "no call":
        flags.append("no genotype call")
        return tuple(flags)
    if call.zygosity == "haploid call":
        flags.append("one-allele GT where two copies are expected: review the call (caller or copy-number problem)")
    if t.min_dp is not None and call.dp is not None and call.dp < t.min_dp:
        flags.append(f"DP {call.dp} < {t.min_dp}")
    if t.min_gq is not None and call.gq is not None and call.gq < t.min_gq:
        flags.append(f"GQ {call.gq} < {t.min_gq}")
    ab = call.allele_balance
    # ref/alt balance means nothing when the other allele is a different ALT (GT 1/2)
    if ab is not None and 2 not in call.gt:
        if call.zygosity == "heterozygous" and t.het_ab_min is not None and t.het_ab_max is not None:
            if not (t.het_ab_min <= ab <= t.het_ab_max):
                flags.append(f"allele balance {_fmt(ab)} outside {_fmt(t.het_ab_min)}–{_fmt(t.het_ab_max)}")
        elif call.zygosity in ("homozygous", "hemizygous", "haploid call") and t.hom_ab_min is not None and ab < t.hom_ab_min:
            flags.append(f"allele balance {_fmt(ab)} < {_fmt(t.hom_ab_min)} for a {call.zygosity} call")
    return tuple(flags)


# ---------------------------------------------------------------------------
# Streaming (no index)
# ---------------------------------------------------------------------------
_BLOCK = 1 << 22


def _raw_blocks(path: str, kind: str) -> Iterator[bytes]:
    opener = open if kind == "text" else gzip.open
    with opener(path, "rb") as fh:
        while True:
            b = fh.read(_BLOCK)
            if not b:
                return
            yield b


_END_IN_INFO = re.compile(rb"(?:^|;)END=(\d+)")


def _line_last(line: bytes, pos: int, t3: int, t4: int) -> int:
    """Last reference position a data line touches: POS + len(REF) - 1, or INFO END for a
    symbolic ALT (htslib's rule for region queries)."""
    last = pos + (t4 - t3 - 1) - 1
    t5 = line.find(b"\t", t4 + 1)
    if t5 > 0 and line.find(b"<", t4, t5) >= 0:
        # columns ... ALT t5 QUAL t6 FILTER t7 INFO t8 FORMAT ...
        t6 = line.find(b"\t", t5 + 1)
        t7 = line.find(b"\t", t6 + 1) if t6 > 0 else -1
        t8 = line.find(b"\t", t7 + 1) if t7 > 0 else -1
        info = line[t7 + 1:t8 if t8 > 0 else len(line)] if t7 > 0 else b""
        m = _END_IN_INFO.search(info)
        if m:
            last = max(last, int(m.group(1)))
    return last


def _stream_hits(path: str, kind: str, merged: dict[str, list[tuple[int, int]]], counts: dict) -> tuple[list[bytes], list[int], list[bytes]]:
    """Return (header lines, line numbers of hits, hit lines); counts the records outside the panel."""
    lookup: dict[bytes, Optional[_Overlap]] = {}
    for chrom, spans in merged.items():
        ov = _Overlap(spans)
        for alias in _aliases(chrom):
            lookup[alias.encode()] = ov
    header: list[bytes] = []
    hits: list[bytes] = []
    hit_lines: list[int] = []
    lineno = 0
    records = 0
    rest = b""
    in_header = True
    last_chrom = None
    ov = None

    def consider(line: bytes, n: int) -> None:  # the last line when it has no newline
        t1 = line.find(b"\t")
        if t1 <= 0:
            raise InputError("malformed data line (no tab-separated CHROM and POS)", path, n)
        ov = lookup.get(line[:t1])
        if ov is None:
            return
        t2 = line.find(b"\t", t1 + 1)
        try:
            pos = int(line[t1 + 1:t2])
        except ValueError:
            raise InputError(f"malformed data line (POS {line[t1 + 1:t2][:20].decode(errors='replace')!r} is not a number)", path, n)
        if pos < 1 and b"[" not in line and b"]" not in line:
            raise InputError(f"POS {pos} is not a position (VCF positions start at 1)", path, n)
        t3 = line.find(b"\t", t2 + 1)
        t4 = line.find(b"\t", t3 + 1) if t3 > 0 else -1
        if t3 < 0 or t4 < 0:
            raise InputError("malformed data line (fewer than 8 columns)", path, n)
        if ov.hit(pos, pos + (t4 - t3 - 1) - 1) or ov.hit(pos, _line_last(line, pos, t3, t4)):
            hits.append(line)
            hit_lines.append(n)

    try:
        for block in _raw_blocks(path, kind):
            block = rest + block
            cut = block.rfind(b"\n")
            if cut < 0:
                rest = block
                continue
            rest = block[cut + 1:]
            lines = block[:cut].split(b"\n")
            base = lineno
            lineno += len(lines)
            start = 0
            if in_header:
                while start < len(lines) and lines[start].startswith(b"#"):
                    header.append(lines[start])
                    start += 1
                if start < len(lines):
                    in_header = False
            for k in range(start, len(lines)):
                line = lines[k]
                t1 = line.find(b"\t")
                if t1 <= 0:
                    if not line.strip():
                        continue
                    raise InputError("malformed data line (no tab-separated CHROM and POS)", path, base + k + 1)
                records += 1
                chrom = line[:t1]
                if chrom != last_chrom:
                    last_chrom = chrom
                    ov = lookup.get(chrom)
                if ov is None:
                    continue
                t2 = line.find(b"\t", t1 + 1)
                try:
                    pos = int(line[t1 + 1:t2])
                except ValueError:
                    raise InputError(f"malformed data line (POS {line[t1 + 1:t2][:20].decode(errors='replace')!r} is not a number)", path, base + k + 1)
                if pos < 1 and b"[" not in line and b"]" not in line:  # telomeric breakends may use 0
                    raise InputError(f"POS {pos} is not a position (VCF positions start at 1)", path, base + k + 1)
                # last reference base: POS + len(REF) - 1 (INFO END for a symbolic ALT)
                t3 = line.find(b"\t", t2 + 1)
                t4 = line.find(b"\t", t3 + 1)
                if t3 < 0 or t4 < 0:
                    raise InputError("malformed data line (fewer than 8 columns)", path, base + k + 1)
                if ov.hit(pos, pos + (t4 - t3 - 1) - 1) or (
                        line.find(b"<", t4, t4 + 64) >= 0 and ov.hit(pos, _line_last(line, pos, t3, t4))):
                    hits.append(line)
                    hit_lines.append(base + k + 1)
        if rest.strip():
            lineno += 1
            if rest.startswith(b"#"):
                header.append(rest)
            else:
                records += 1
                consider(rest, lineno)
    except (EOFError, zlib.error, OSError) as e:
        raise InputError(f"compressed file is truncated or corrupt ({e})", path)
    counts["records_outside_panel"] += records - len(hits)
    return header, hit_lines, hits


# The revised Cambridge Reference Sequence (rCRS, NC_012920.1; Andrews RM et al., Nat Genet
# 1999;23:147) is 16,569 bp: the chrM of GRCh38 and the MT of GRCh37/b37. UCSC hg19's chrM is an
# older sequence (NC_001807, 16,571 bp; from memory) whose positions differ from the rCRS after
# about m.300, so its calls cannot be placed on the panel's mitochondrial genes.
RCRS_LENGTH = 16_569
HG19_CHRM_LENGTH = 16_571


def non_rcrs_chrm(header: pysam.VariantHeader) -> Optional[str]:
    """A warning when the header declares a mitochondrial contig that is not the rCRS, else None."""
    for name in header.contigs:
        if _bare(name) != "MT":
            continue
        length = header.contigs[name].length
        if length is None or length == RCRS_LENGTH:
            continue
        what = ("UCSC hg19's chrM (NC_001807), not the revised Cambridge Reference Sequence"
                if length == HG19_CHRM_LENGTH else "not the revised Cambridge Reference Sequence")
        return (f"{name} is declared with length {length:,}: {what} (rCRS, NC_012920.1, {RCRS_LENGTH:,} bp) "
                f"that the panel's mitochondrial genes use; {name} records were NOT read, as their positions "
                f"would be wrong - realign the mitochondrial reads to the rCRS (GRCh37 'MT' as in b37, or GRCh38 "
                f"chrM) and call again")
    return None


def _bare(chrom: str) -> str:
    c = chrom[3:] if chrom.lower().startswith("chr") else chrom
    return "MT" if c.upper() in ("M", "MT") else c


def _aliases(bare_chrom: str) -> list[str]:
    if bare_chrom == "MT":
        return ["MT", "M", "chrM", "chrMT"]
    return [bare_chrom, "chr" + bare_chrom]


def _file_contigs(bare_chrom: str, available: set[str]) -> list[str]:
    return [alias for alias in _aliases(bare_chrom) if alias in available]


# ---------------------------------------------------------------------------
# The entry point
# ---------------------------------------------------------------------------
def read_vcf(
    path,
    panel: Panel,
    *,
    sample: Optional[str] = None,
    build: Optional[str] = None,
    padding: int = 50,
    quality: QualityThresholds = QualityThresholds(),
    unannotated_intervals=None,
) -> VcfIntake:
    """Read the panel's variants from a VCF/BCF (indexed: region fetch; otherwise streamed).

    ``unannotated_intervals``: optional callable ``build -> [(bare_chrom, start, end, symbol)]``
    giving narrower regions to read when the header declares no CSQ/ANN annotation (the
    pipeline passes the padded exons: without consequences nothing else can be assessed).
    """
    path = str(path)
    kind = _sniff(path)
    if kind in ("text", "gzip", "bgzf"):
        header_lines = _check_header_text(path, kind)
    if kind == "gzip":
        # ordinary (non-blocked) gzip: htslib cannot open it, so parse the header alone
        with tempfile.TemporaryDirectory(prefix="irdtriage-") as tmp:
            hpath = os.path.join(tmp, "header.vcf")
            with open(hpath, "wb") as fh:
                fh.write(b"".join(header_lines))
            vf = _open_header(hpath)
    else:
        vf = _open_header(path)
    header = vf.header
    warnings: list[str] = []
    samples = list(header.samples)
    if not samples:
        raise InputError("VCF has no sample columns (genotypes are needed)", path)
    if sample is None:
        if len(samples) > 1:
            raise InputError(
                f"VCF has {len(samples)} samples; choose the proband with --sample (one of: {', '.join(samples)})",
                path,
            )
        proband = samples[0]
    elif sample not in samples:
        raise InputError(f"sample {sample!r} is not in the VCF (available: {', '.join(samples)})", path)
    else:
        proband = sample
    if "GT" not in header.formats:
        raise InputError("no GT (genotype) field declared in the FORMAT header", path)

    use_build, evidence, build_warnings = resolve_build(header, build, path)
    detected = use_build if evidence and not evidence.startswith("--build") else None
    warnings.extend(build_warnings)
    if use_build is None:
        use_build = "GRCh38"
        warnings.append(
            "genome build not stated in the VCF header (no known contig lengths or ##reference); assumed GRCh38 — pass --build to be sure"
        )
    style = _chrom_style(header)
    narrowed = False
    if unannotated_intervals is not None and not ({"CSQ", "ANN"} & set(header.info.keys())):
        # exons are many and small: join those < 1 kb apart so the index is queried a few
        # hundred times, not thousands; the pipeline drops the intronic records this adds
        merged = merge_intervals(unannotated_intervals(use_build), gap=1000)
        narrowed = True
    gene_intervals = panel_intervals(panel, use_build, padding)
    if not narrowed:
        merged = merge_intervals(gene_intervals)
    mt_problem = non_rcrs_chrm(header)
    if mt_problem and "MT" in merged:
        merged = {c: spans for c, spans in merged.items() if c != "MT"}
        warnings.append(mt_problem)

    counts = {k: 0 for k in COUNT_KEYS}
    conv = _Converter(header, samples, path, use_build, proband, gene_intervals)
    variants: list[Variant] = []
    indexed = kind in ("bgzf", "bcf") and _has_index(path, vf)
    if indexed:
        problem = index_problem(path, vf)
        vf.close()
        vf = _open_header(path)  # the probe moved the reader: start again
        if problem is not None:
            indexed = False
            warnings.append(
                f"{os.path.basename(path)}: {problem}; the index was NOT used and the whole file was "
                f"read instead (slower); {REINDEX_HINT.format(path=os.path.basename(path))}")
    try:
        if indexed:
            mode = "indexed"
            available = set(vf.index.keys()) if vf.index is not None else set(header.contigs)
            for chrom in sorted(merged, key=_chrom_order):
                # every spelling present: a file may name one chromosome both chr1 and 1
                for contig in _file_contigs(chrom, available):
                    prev_end = 0
                    for start, end in merged[chrom]:
                        for rec in vf.fetch(contig, start - 1, end):
                            if rec.pos <= prev_end:
                                continue  # long record already returned by the previous interval
                            variants.extend(conv.convert(rec, counts))
                        prev_end = end
        elif kind == "bcf":
            mode = "streamed (BCF)"
            lookup = {}
            for chrom, spans in merged.items():
                ov = _Overlap(spans)
                for alias in _aliases(chrom):
                    lookup[alias] = ov
            for rec in vf:
                ov = lookup.get(rec.chrom)
                if ov is None or not ov.hit(rec.pos, max(rec.stop, rec.pos + len(rec.ref) - 1)):
                    counts["records_outside_panel"] += 1
                    continue
                variants.extend(conv.convert(rec, counts))
        else:
            mode = "streamed"
            variants = _parse_hits(path, kind, merged, conv, counts)
    except (ValueError, OSError) as e:
        if isinstance(e, InputError):
            raise
        raise InputError(f"cannot read records ({e})", path)
    finally:
        if vf.is_open:
            vf.close()

    variants.sort(key=lambda v: (_chrom_order(v.chrom_bare), v.original_pos, v.allele_index))
    variants, merged_n, dup_warnings = merge_duplicates(variants, proband)
    counts["duplicates_merged"] = merged_n
    warnings.extend(dup_warnings)
    counts["records_read"] = counts["records_in_panel"] + counts["records_outside_panel"]
    counts["in_panel"] = len(variants)
    for v in variants:
        call = v.calls.get(proband)
        if call is None or call.alt_copies == 0:
            counts["no_alt_in_sample"] += 1
        elif quality_flags(v, proband, quality):
            counts["failed_quality"] += 1

    from .consequence.annotations import annotation_layouts

    layouts = annotation_layouts(header)
    if not layouts:
        warnings.append(NO_ANNOTATION_HINT)
    header_info = {
        "fileformat": _header_value(header, "fileformat"),
        "reference": _header_value(header, "reference") or _header_value(header, "assembly"),
        "source": _header_value(header, "source"),
        "build_detected": detected,
        "build_evidence": evidence,
        "access": mode,
        "regions": "exons (no annotation)" if narrowed else "gene spans",
        "annotation_fields": sorted(layouts),
        "annotation_layouts": layouts,  # {"CSQ"/"ANN": [field names]} for pick_annotation
        "contigs": len(header.contigs),
    }
    return VcfIntake(
        path=path, build=use_build, samples=samples, proband=proband, variants=variants,
        counts=counts, warnings=warnings, chrom_style=style, header_info=header_info,
        structural_events=conv.events,
    )


def _parse_hits(path: str, kind: str, merged, conv: _Converter, counts: dict) -> list[Variant]:
    header, hit_lines, hits = _stream_hits(path, kind, merged, counts)
    if not hits:
        return []
    variants: list[Variant] = []
    with tempfile.TemporaryDirectory(prefix="irdtriage-") as tmp:
        sub = os.path.join(tmp, "hits.vcf")
        with open(sub, "wb") as fh:
            fh.write(b"\n".join(header))
            fh.write(b"\n")
            fh.write(b"\n".join(hits))
            fh.write(b"\n")
        with pysam.VariantFile(sub) as hvf:
            it = iter(hvf)
            for n in hit_lines:
                try:
                    rec = next(it)
                except StopIteration:
                    raise InputError("malformed data line (could not be parsed)", path, n)
                except (ValueError, OSError) as e:
                    raise InputError(f"malformed data line ({e})", path, n)
                variants.extend(conv.convert(rec, counts, line=n))
    return variants


def _header_value(header: pysam.VariantHeader, key: str) -> Optional[str]:
    for rec in header.records:
        if rec.key == key and rec.value:
            return rec.value
    return None


def _chrom_order(c: str):
    c = bare(c)
    if c.isdigit():
        return (0, int(c), "")
    return (1, {"X": 23, "Y": 24, "MT": 25}.get(c, 99), c)
