"""Across the cases of a batch: the numbers (``cohort_data``) and the tables ``cohort.tsv`` (one row
per case), ``cohort_genes.tsv`` (one row per gene) and ``cohort_alleles.tsv`` (one row per recurrent
allele).

Read from batch.json's records and each finished case's ``result.json`` (never from internal
objects, so a summary can be rebuilt from a batch folder). ``cohort.html`` is drawn from the same
data by ``summary_html``. Definitions:

- *diagnostic yield*: SOLVED cases / cases that finished (ok or unchanged), failed ones left out;
- *cases per gene*: cases with a CAUSATIVE or CANDIDATE finding in the gene (solved by the gene:
  the CAUSATIVE ones);
- *recurrent allele*: the same chrom-pos-ref-alt reported in two or more cases, benign and likely
  benign ones left out; carriers counted by zygosity.
"""
from __future__ import annotations

import csv
import io
import json
import os
from collections import defaultdict
from pathlib import Path
from typing import Any, Optional

from .. import CAUTION
from ..atomic import write_text
from .compare import allele_key, short_class

STATUSES = ("SOLVED", "IN_PROGRESS", "UNSOLVED")
TSV_COLUMNS = ("case", "run_status", "case_status", "top_gene", "genotype_fit", "plp_findings",
               "candidate_genes", "status_before", "changed", "error", "caution")
GENE_COLUMNS = ("gene", "cases", "solved", "case_names", "caution")
ALLELE_COLUMNS = ("allele", "gene", "hgvs_c", "hgvs_p", "classes", "carriers", "two_copies", "one_copy", "cases",
                  "caution")


def _load(out: Path, case: str) -> Optional[dict]:
    try:
        with open(out / case / "result.json", encoding="utf-8") as fh:
            return json.load(fh)
    except (OSError, ValueError):
        return None


def cohort_data(out: str | os.PathLike, batch: dict) -> dict[str, Any]:
    out = Path(out)
    rows: list[dict] = []
    status_counts = {s: 0 for s in STATUSES}
    status_counts["failed"] = 0
    genes: dict[str, dict] = defaultdict(lambda: {"cases": set(), "solved": set()})
    alleles: dict[str, dict] = {}
    changed_status: list[dict] = []
    failed: list[dict] = []
    for rec in batch.get("cases") or []:
        case = rec.get("case")
        result = _load(out, case) if rec.get("status") in ("ok", "unchanged") else None
        row = {"case": case, "run_status": rec.get("status"), "case_status": None, "top_gene": None,
               "genotype_fit": None, "plp_findings": None, "candidate_genes": None, "status_before": None,
               "changed": rec.get("changed"), "error": rec.get("error"), "caution": " ".join(CAUTION.split())}
        if result is None:
            if rec.get("status") in ("ok", "unchanged"):
                row["run_status"], row["error"] = "failed", "result.json missing or unreadable after the run"
            status_counts["failed"] += 1
            failed.append({"case": case, "line": rec.get("line"), "error": row["error"] or rec.get("status")})
            rows.append(row)
            continue
        status = (result.get("case") or {}).get("status")
        status_counts[status] = status_counts.get(status, 0) + 1
        top = (result.get("genes") or [None])[0] or {}
        findings = result.get("findings") or []
        explaining = sorted({f.get("gene") for f in findings
                             if f.get("interpretation_status") in ("CAUSATIVE", "CANDIDATE")})
        row.update(case_status=status, top_gene=top.get("symbol"), genotype_fit=top.get("genotype_fit"),
                   plp_findings=sum(1 for f in findings if f.get("classification") in ("Pathogenic",
                                                                                       "Likely pathogenic")),
                   candidate_genes=",".join(explaining))
        for f in findings:
            if f.get("interpretation_status") in ("CAUSATIVE", "CANDIDATE"):
                genes[f.get("gene")]["cases"].add(case)
                if f.get("interpretation_status") == "CAUSATIVE":
                    genes[f.get("gene")]["solved"].add(case)
            if f.get("classification") in ("Benign", "Likely benign"):
                continue
            key = allele_key(f)
            a = alleles.setdefault(key, {"key": key, "gene": f.get("gene"), "hgvs_c": f.get("hgvs_c"),
                                         "hgvs_p": f.get("hgvs_p"), "classes": set(), "cases": set(),
                                         "two_copies": 0, "one_copy": 0})
            if case in a["cases"]:
                continue
            a["cases"].add(case)
            a["classes"].add(short_class(f.get("classification")))
            if f.get("zygosity") in ("homozygous", "hemizygous", "homoplasmic"):
                a["two_copies"] += 1
            else:
                a["one_copy"] += 1
        cmp = rec.get("compare") or {}
        before = (cmp.get("status") or {}).get("old")
        row["status_before"] = before
        if cmp and before != status:
            changed_status.append({"case": case, "old": before, "new": status, "changed": rec.get("changed")})
        rows.append(row)
    finished = sum(status_counts[s] for s in status_counts if s != "failed")
    gene_rows = sorted(({"gene": g, "cases": len(v["cases"]), "solved": len(v["solved"]),
                         "case_names": sorted(v["cases"])} for g, v in genes.items()),
                       key=lambda r: (-r["cases"], -r["solved"], r["gene"]))
    recurrent = sorted(({**a, "classes": sorted(a["classes"]), "carriers": len(a["cases"]),
                         "cases": sorted(a["cases"])} for a in alleles.values() if len(a["cases"]) >= 2),
                       key=lambda r: (-r["carriers"], r["gene"] or "", r["key"]))
    return {"cases": rows, "status_counts": status_counts, "finished": finished,
            "solved": status_counts.get("SOLVED", 0),
            "yield": (status_counts.get("SOLVED", 0) / finished) if finished else None,
            "genes": gene_rows, "recurrent_alleles": recurrent, "status_changes": changed_status,
            "failed": failed, "batch": {k: batch.get(k) for k in ("started", "finished", "command", "engine",
                                                                   "manifest", "tool")},
            "cautions": [CAUTION]}


def _tsv(rows, columns) -> str:
    buf = io.StringIO()
    w = csv.DictWriter(buf, fieldnames=columns, delimiter="\t", lineterminator="\n", extrasaction="ignore")
    w.writeheader()
    for row in rows:
        w.writerow({k: ("" if row.get(k) is None else " ".join(str(row.get(k)).split())) for k in columns})
    return buf.getvalue()


def _caution() -> str:
    return " ".join(CAUTION.split())


def render_tsv(data: dict) -> str:
    """One row per case; the caution on every row, as in findings.tsv."""
    return _tsv(data["cases"], TSV_COLUMNS)


def render_genes_tsv(data: dict) -> str:
    """One row per gene with a CAUSATIVE or CANDIDATE finding in some case: the number of such
    cases, how many of them it solves (CAUSATIVE), and their names (comma-separated)."""
    return _tsv(({**g, "case_names": ",".join(g["case_names"]), "caution": _caution()} for g in data["genes"]),
                GENE_COLUMNS)


def render_alleles_tsv(data: dict) -> str:
    """One row per recurrent allele (chrom-pos-ref-alt in two or more cases): carriers, carriers
    of two copies (homozygous/hemizygous) and of one copy, the classes given, and the cases."""
    return _tsv(({**a, "allele": a["key"], "classes": ",".join(c for c in a["classes"] if c),
                  "cases": ",".join(a["cases"]), "caution": _caution()} for a in data["recurrent_alleles"]),
                ALLELE_COLUMNS)


def write_summary(out: str | os.PathLike, batch: dict) -> dict[str, Path]:
    """Write cohort.tsv, cohort_genes.tsv, cohort_alleles.tsv and cohort.html into ``out`` (each
    atomically); returns their paths."""
    from .summary_html import render_html

    out = Path(out)
    data = cohort_data(out, batch)
    write_text(out / "cohort.tsv", render_tsv(data))
    write_text(out / "cohort_genes.tsv", render_genes_tsv(data))
    write_text(out / "cohort_alleles.tsv", render_alleles_tsv(data))
    write_text(out / "cohort.html", render_html(data))
    return {"tsv": out / "cohort.tsv", "genes_tsv": out / "cohort_genes.tsv",
            "alleles_tsv": out / "cohort_alleles.tsv", "html": out / "cohort.html"}
