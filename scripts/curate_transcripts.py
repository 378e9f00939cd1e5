#!/usr/bin/env python3
"""Build panels/transcripts.yaml: genomic exon structure of panel genes for PVS1's NMD rule.

    python scripts/curate_transcripts.py \
        --mane ../shared/refdata/mane/MANE.GRCh38.v1.5.summary.txt.gz \
        --grch38 ../shared/refdata/gene_spans/gencode_canonical_grch38.txt.gz \
        --grch37 ../shared/refdata/gene_spans/gencode_canonical_grch37.txt.gz \
        --panel panels/genes.yaml --out panels/transcripts.yaml \
        --lrg ../shared/refdata/refseqgene/LRG_702.xml \
        --refseqgene ../shared/refdata/refseqgene/NG_009497.1.gff3 NM_206933.2 1:216428397:-

Sources (facts copied into transcripts.yaml, cited in its header):

* MANE v1.5 summary (NCBI / EMBL-EBI, public domain): the MANE Select transcript's GRCh38
  span and strand.  It has no exon coordinates.
* GENCODE-derived canonical-transcript tables shipped in the PyPI package spliceai 1.3.1
  (``NAME CHROM STRAND TX_START TX_END EXON_START EXON_END``, comma-separated exon lists).

A gene is kept only when its canonical transcript in the GRCh38 table has exactly the outer
boundaries of its MANE Select span (same chromosome, strand, 1-based start and end): that is
the only evidence available here that the table's exon list is the MANE Select one
(``mane_boundaries_match: true``).  Other genes are listed under ``skipped`` with the reason.
The GRCh37 exon list is added when the GRCh37 table's transcript has the same exon count and
the same exon lengths in order; otherwise ``grch37: null`` with a note.

Coordinate base (checked from the data, not assumed): over all MANE Select genes, the pair
(MANE start - TX_START, MANE end - TX_END) is (1, 0) far more often than any other pair, so
TX_START and EXON_START are 0-based and TX_END and EXON_END are 1-based inclusive ends
(UCSC/BED style).  The script re-derives this and stops if it no longer holds.  Exons are
written 1-based inclusive, in ascending genomic order.  The tables have no CDS coordinates.

Coding structure (``coding:``; protein length, CDS length, CDS ends and exons on GRCh38) comes
only from records that carry a CDS, each given as an argument and cited per gene:

* ``--lrg FILE``: a Locus Reference Genomic XML record (transcript t1, its coding region and
  translation; placed on GRCh38 by the record's own main-assembly mapping, indels included);
* ``--refseqgene GFF3 TRANSCRIPT CHROM:ANCHOR:STRAND``: an NCBI RefSeqGene GFF3 (NG_ coordinates);
  exons from the transcript's gapless cDNA_match rows, CDS from its CDS rows; GRCh38 position =
  ANCHOR + NG (strand +) or ANCHOR - NG (strand -).

Each coding entry records whether its protein accession.version is the MANE Select protein's
(``same_protein_as_mane``: identical sequence, so the protein and CDS lengths are MANE's).
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
                            one_based, read_lrg_coding, read_mane, read_refseqgene_gff_coding, read_table,
                            sha256, write_text_atomic)

NAME = "irdtriage-transcripts"
VERSION = "2026.12.1"


def lengths_in_transcript_order(exons: list[list[int]], strand: str) -> list[int]:
    ln = [e - s + 1 for s, e in exons]
    return ln if strand == "+" else ln[::-1]


def curate(mane: dict, t38: dict, t37: dict, panel_genes: list[dict]) -> tuple[list[dict], list[dict]]:
    kept, skipped = [], []
    for g in panel_genes:
        sym, strand = g["symbol"], g["strand"]
        m, t = mane.get(sym), t38.get(sym)
        if m is None:
            skipped.append({"symbol": sym, "reason": "no MANE Select row in the MANE summary"})
            continue
        if t is None:
            skipped.append({"symbol": sym, "reason": "not in the GENCODE-derived GRCh38 table"})
            continue
        span = (t["tx_start0"] + 1, t["tx_end"])
        if t["chrom"] != m["chrom"] or t["strand"] != m["strand"] or span != (m["start"], m["end"]):
            skipped.append({"symbol": sym, "reason": (
                f"GENCODE-derived canonical transcript {t['chrom']}:{span[0]}-{span[1]} ({t['strand']}) does not "
                f"have the MANE Select boundaries {m['chrom']}:{m['start']}-{m['end']} ({m['strand']})")})
            continue
        if strand != m["strand"]:
            skipped.append({"symbol": sym, "reason": f"panel strand {strand} differs from MANE strand {m['strand']}"})
            continue
        ex38 = one_based(t["exons"])
        if ex38[0][0] != span[0] or ex38[-1][1] != span[1]:
            skipped.append({"symbol": sym, "reason": "exon list does not reach the transcript ends in the table"})
            continue
        entry: dict[str, Any] = {
            "symbol": sym, "strand": strand, "mane_refseq": m["refseq"], "mane_ensembl": m["ensembl"],
            "mane_boundaries_match": True, "exon_count": len(ex38),
            "grch38": {"chrom": m["chrom"], "exons": ex38},
        }
        o = t37.get(sym)
        if o is None:
            entry["grch37"] = None
            entry["grch37_note"] = "not in the GENCODE-derived GRCh37 table"
        else:
            ex37 = one_based(o["exons"])
            same = (o["strand"] == strand and len(ex37) == len(ex38)
                    and lengths_in_transcript_order(ex37, strand) == lengths_in_transcript_order(ex38, strand))
            if same:
                entry["grch37"] = {"chrom": o["chrom"], "exons": ex37}
            else:
                entry["grch37"] = None
                entry["grch37_note"] = (f"GRCh37 table transcript has {len(ex37)} exons with different lengths "
                                        f"from the GRCh38 one ({len(ex38)} exons)" if len(ex37) != len(ex38)
                                        else "GRCh37 table transcript exon lengths differ from the GRCh38 one")
        kept.append(entry)
    return kept, skipped


def coding_entry(facts: dict, mane: dict, panel_symbols: set, source: dict) -> dict[str, Any]:
    """One ``coding:`` entry: the record's facts, checked against the MANE Select row."""
    sym = facts["symbol"]
    if sym not in panel_symbols:
        raise SystemExit(f"{source['file']}: {sym} is not a panel gene")
    m = mane.get(sym)
    if m is None or m["chrom"] != facts["chrom"] or m["strand"] != facts["strand"]:
        raise SystemExit(f"{source['file']}: {sym} chromosome/strand disagree with its MANE Select row")
    lo, hi = facts["exons"][0][0], facts["exons"][-1][1]
    if hi < m["start"] or lo > m["end"]:
        raise SystemExit(f"{source['file']}: {sym} exons lie outside the MANE Select span")
    return {"symbol": sym, "transcript": facts["transcript"], "protein": facts["protein"],
            "mane_refseq": m["refseq"], "mane_protein": m["refseq_protein"],
            "same_protein_as_mane": facts["protein"] == m["refseq_protein"],
            "protein_length": facts["protein_length"], "cds_length": facts["cds_length"],
            "strand": facts["strand"], "exon_count": len(facts["exons"]),
            "grch38": {"chrom": facts["chrom"], "cds_start": facts["cds_start"], "cds_end": facts["cds_end"],
                       "exons": facts["exons"]},
            "source": source}


def _flow(obj):
    """Dump exon pairs on one line each (readable, diff-friendly YAML)."""
    class Dumper(yaml.SafeDumper):
        pass

    def pair(d, data):
        if len(data) == 2 and all(isinstance(x, int) for x in data):
            return d.represent_sequence("tag:yaml.org,2002:seq", data, flow_style=True)
        return d.represent_sequence("tag:yaml.org,2002:seq", data, flow_style=False)

    Dumper.add_representer(list, pair)
    return yaml.dump(obj, Dumper=Dumper, sort_keys=False, width=120, allow_unicode=True)


def main(argv: Optional[list[str]] = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--mane", required=True, type=Path, help="MANE summary (txt or txt.gz)")
    ap.add_argument("--grch38", required=True, type=Path, help="GENCODE-derived canonical table, GRCh38")
    ap.add_argument("--grch37", required=True, type=Path, help="GENCODE-derived canonical table, GRCh37")
    ap.add_argument("--panel", required=True, type=Path, help="panels/genes.yaml")
    ap.add_argument("--out", required=True, type=Path)
    ap.add_argument("--lrg", action="append", default=[], type=Path, help="LRG XML record (repeatable)")
    ap.add_argument("--refseqgene", action="append", default=[], nargs=3, metavar=("GFF3", "TRANSCRIPT", "PLACE"),
                    help="RefSeqGene GFF3, transcript accession, CHROM:ANCHOR:STRAND on GRCh38 (repeatable)")
    a = ap.parse_args(argv)
    mane, t38, t37 = read_mane(a.mane), read_table(a.grch38), read_table(a.grch37)
    offsets = check_coordinate_base(mane, t38)
    panel = yaml.safe_load(a.panel.read_text())
    kept, skipped = curate(mane, t38, t37, panel["genes"])
    symbols = {g["symbol"] for g in panel["genes"]}
    coding = []
    for f in a.lrg:
        coding.append(coding_entry(read_lrg_coding(f), mane, symbols, {
            "name": "Locus Reference Genomic record", "file": f.name, "sha256": sha256(f),
            "provider": "LRG project (EMBL-EBI / NCBI)",
            "used_for": "transcript t1 exons, coding region and translation; GRCh38 placement from the record's "
                        "main-assembly mapping"}))
    for gff, tx, place in a.refseqgene:
        chrom, anchor, strand = place.split(":")
        gff = Path(gff)
        coding.append(coding_entry(read_refseqgene_gff_coding(gff, tx, chrom, int(anchor), strand), mane, symbols, {
            "name": "NCBI RefSeqGene GFF3", "file": gff.name, "sha256": sha256(gff), "provider": "NCBI RefSeqGene",
            "used_for": f"{tx} exons (cDNA_match) and CDS rows; GRCh38 = {anchor} {'+' if strand == '+' else '-'} "
                        "NG position"}))
    coding.sort(key=lambda c: c["symbol"])
    doc = {
        "name": NAME,
        "version": VERSION,
        "coordinates": "1-based inclusive exon start/end, ascending genomic order; chromosomes without chr",
        "sources": [
            {"name": "MANE", "version": "1.5", "file": a.mane.name, "sha256": sha256(a.mane),
             "provider": MANE_PROVIDER, "used_for": "MANE Select span and strand that a table transcript must match"},
            {"name": "GENCODE-derived canonical transcript table (GRCh38)", "version": "spliceai 1.3.1",
             "file": a.grch38.name, "sha256": sha256(a.grch38), "provider": TABLE_PROVIDER,
             "used_for": "GRCh38 exon coordinates (EXON_START 0-based, converted with +1; EXON_END inclusive)"},
            {"name": "GENCODE-derived canonical transcript table (GRCh37)", "version": "spliceai 1.3.1",
             "file": a.grch37.name, "sha256": sha256(a.grch37), "provider": TABLE_PROVIDER,
             "used_for": "GRCh37 exon coordinates when exon count and lengths equal the GRCh38 transcript's"},
        ],
        "coordinate_check": {"most_common_offset_mane_minus_table": list(offsets.most_common(1)[0][0]),
                             "genes_with_that_offset": offsets.most_common(1)[0][1],
                             "genes_compared": sum(offsets.values())},
        "panel": {"file": str(a.panel.name), "sha256": sha256(a.panel), "gene_count": len(panel["genes"])},
        "transcript_count": len(kept),
        "transcripts": kept,
        "skipped": skipped,
        "coding_count": len(coding),
        "coding_genes_without_source": sorted(symbols - {c["symbol"] for c in coding}),
        "coding": coding,
    }
    head = ("# irdtriage transcript exon model -- GENERATED by scripts/curate_transcripts.py from the\n"
            "# sources listed below; re-run the script rather than editing by hand.  Only panel genes whose\n"
            "# GENCODE-derived canonical transcript has exactly the MANE Select outer boundaries are kept\n"
            "# (mane_boundaries_match).  coding: holds protein/CDS length, CDS ends and exons only for genes\n"
            "# with a record that carries a CDS (named per gene under source).\n")
    text = head + _flow(doc)
    write_text_atomic(a.out, text)
    print(f"{len(kept)} transcripts kept, {len(skipped)} genes skipped, {len(coding)} coding entries -> {a.out}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
