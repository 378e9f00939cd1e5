"""findings.tsv: one row per finding, tab-separated, written with the csv module.

Line 1 is a comment starting with ``#`` (tool, panel, rules, build, sample, caution); line 2
is the header with the column names in ``COLUMNS`` (stable; new columns are only appended).
Lists are joined with ``;`` and unknown values are empty cells. When the input has limits
(``result["input_limits"]``, e.g. no consequence annotation), they open the comment line.
"""
from __future__ import annotations

import csv
import io
from pathlib import Path
from typing import Iterator, Union

from irdtriage import __version__
from irdtriage.atomic import atomic_open

from .common import cautions, criterion_label, input_limits, met_criteria, phenotype_rank

COLUMNS = (
    "finding_id", "gene", "gene_rank", "genotype_fit", "chrom", "pos", "ref", "alt",
    "original_pos", "original_ref", "original_alts", "transcript", "hgvs_c", "hgvs_p",
    "consequence", "zygosity", "genotype", "depth", "genotype_quality", "allele_balance",
    "filters", "quality_flags", "classification", "points", "posterior", "met_criteria",
    "not_evaluable", "interpretation_status", "cascade_step", "phenotype_rank",
)


def _cell(v) -> str:
    if v is None:
        return ""
    if isinstance(v, (list, tuple)):
        return ";".join(str(x) for x in v)
    if isinstance(v, float):
        return f"{v:.6g}"
    return " ".join(str(v).split())  # no tabs or newlines inside a cell


def rows(result: dict) -> list[dict]:
    return list(iter_rows(result))


def iter_rows(result: dict) -> Iterator[dict]:
    gene_of = {}
    for g in result.get("genes") or []:
        for fid in g.get("findings") or []:
            gene_of[fid] = g
    for f in result.get("findings") or []:
        g = gene_of.get(f.get("id")) or {}
        o = f.get("original") or {}
        yield {
            "finding_id": f.get("id"), "gene": f.get("gene"), "gene_rank": g.get("rank"),
            "genotype_fit": g.get("genotype_fit"), "chrom": f.get("chrom"), "pos": f.get("pos"),
            "ref": f.get("ref"), "alt": f.get("alt"), "original_pos": o.get("pos"),
            "original_ref": o.get("ref"), "original_alts": o.get("alts"),
            "transcript": f.get("transcript"), "hgvs_c": f.get("hgvs_c"), "hgvs_p": f.get("hgvs_p"),
            "consequence": f.get("consequence"), "zygosity": f.get("zygosity"),
            "genotype": f.get("genotype"), "depth": f.get("dp"), "genotype_quality": f.get("gq"),
            "allele_balance": f.get("allele_balance"), "filters": f.get("filters"),
            "quality_flags": f.get("quality_flags"), "classification": f.get("classification"),
            "points": f.get("points"), "posterior": f.get("posterior"),
            "met_criteria": [criterion_label(c) for c in met_criteria(f)],
            "not_evaluable": [c.get("code") for c in f.get("criteria") or [] if c.get("met") is None],
            "interpretation_status": f.get("interpretation_status"),
            "cascade_step": (g.get("cascade_step") or {}).get("id"),
            "phenotype_rank": phenotype_rank(g.get("phenotype_match") or {}),  # ties as "1–69 of 252"
        }


def iter_tsv(result: dict, batch: int = 2000) -> Iterator[str]:
    """The text of findings.tsv in pieces of ``batch`` rows (one row per finding, none dropped)."""
    panel = result.get("panel") or {}
    rules = result.get("rules") or {}
    sample = result.get("sample") or {}
    comment = (
        f"# irdtriage {__version__}; panel {panel.get('name')} {panel.get('version')} sha256:{panel.get('sha256')};"
        f" rules {rules.get('name')} {rules.get('version')}; build {result.get('genome_build')};"
        f" sample {sample.get('id')}; CAUTION: {' '.join(cautions(result))}"
    )
    limits = input_limits(result)  # the input's limits lead the comment line, before anything else
    if limits:
        comment = "# " + " ".join(limits) + "; " + comment[2:]
    buf = io.StringIO()
    buf.write(" ".join(comment.split()) + "\n")
    w = csv.writer(buf, delimiter="\t", lineterminator="\n", quoting=csv.QUOTE_MINIMAL)
    w.writerow(COLUMNS)
    for i, row in enumerate(iter_rows(result), 1):
        w.writerow([_cell(row[k]) for k in COLUMNS])
        if i % batch == 0:
            yield buf.getvalue()
            buf.seek(0)
            buf.truncate()
    yield buf.getvalue()


def render_tsv(result: dict) -> str:
    return "".join(iter_tsv(result))


def write_tsv(result: dict, path: Union[str, Path]) -> Path:
    with atomic_open(path) as fh:
        for chunk in iter_tsv(result):
            fh.write(chunk)
    return Path(path)
