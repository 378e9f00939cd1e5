"""findings.tsv: one row per finding, tab-separated, written with the csv module.

Line 1 is the header with the column names in ``COLUMNS`` (stable; new columns are added just before
the last one, ``caution``), so the file opens in a spreadsheet as a table. There is no comment line: the run
metadata (tool, panel, rules, build, sample) is in result.json, and the clinical caution is the
last column (``caution``) of every row, so it travels with any row copied out.
``genotype_fit`` and ``cascade_step`` hold reader labels (``common.genotype_fit_label``, the
step title from panels/cascade.yaml); their keys are in ``genotype_fit_id`` / ``cascade_step_id``.
``input_limits`` (every row) names what the input could not support (e.g. no consequence
annotation), and ``phenotype_rank`` shows ties as ranges ("1–69 of 252").
``noncoding_candidate`` is ``yes`` for a candidate non-coding allele (reported only because it
would complete a genotype; see irdtriage/noncoding.py); ``noncoding_reason`` and
``noncoding_next_step`` say why it (or a listed recurrent non-coding allele) is reported and
what to do next.
``evidence_sources`` names the sources behind the row's frequency, clinical and score values
(``none given`` when none gave any; irdtriage/evidence/describe.py).
Lists are joined with ``;`` and unknown values are empty cells.
"""
from __future__ import annotations

import csv
import io
from pathlib import Path
from typing import Iterator, Union

from irdtriage import CAUTION
from irdtriage.atomic import atomic_open

from .common import criterion_label, genotype_fit_label, input_limits, met_criteria, phenotype_rank

COLUMNS = (
    "finding_id", "gene", "gene_rank", "genotype_fit", "chrom", "pos", "ref", "alt",
    "original_pos", "original_ref", "original_alts", "transcript", "hgvs_c", "hgvs_p",
    "consequence", "zygosity", "genotype", "depth", "genotype_quality", "allele_balance",
    "filters", "quality_flags", "classification", "points", "posterior", "met_criteria",
    "not_evaluable", "interpretation_status", "cascade_step",
    "cascade_step_id", "genotype_fit_id", "protein_accession", "ad", "phenotype_rank", "input_limits",
    "noncoding_candidate", "noncoding_reason", "noncoding_next_step",
    "finding_kind", "structural_type", "structural_start", "structural_end", "copy_number", "structural_exons",
    "structural_frame", "structural_nmd", "structural_summary", "cnv_points", "cnv_points_class",
    "structural_next_step", "rule_set", "evidence_sources",
    "caution",
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
    caution = " ".join(CAUTION.split())
    limits = input_limits(result)  # what the input could not support, repeated on every row
    from ..evidence.describe import finding_sources, source_index

    ev_sources = result.get("evidence_sources")
    ev_index = source_index(ev_sources)
    for f in result.get("findings") or []:
        g = gene_of.get(f.get("id")) or {}
        o = f.get("original") or {}
        step = g.get("cascade_step") or {}
        fit = g.get("genotype_fit")
        yield {
            "finding_id": f.get("id"), "gene": f.get("gene"), "gene_rank": g.get("rank"),
            "genotype_fit": genotype_fit_label(fit) if fit else None, "chrom": f.get("chrom"), "pos": f.get("pos"),
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
            "cascade_step": step.get("title") or step.get("id"),
            "cascade_step_id": step.get("id"), "genotype_fit_id": fit,
            "protein_accession": f.get("protein_accession"), "ad": None if f.get("ad") is None else ["." if x is None else x for x in f["ad"]],
            "caution": caution,
            "phenotype_rank": phenotype_rank(g.get("phenotype_match") or {}),  # ties as "1–69 of 252"
            "input_limits": limits,
            "noncoding_candidate": "yes" if f.get("noncoding_candidate") else None,
            "noncoding_reason": (f.get("noncoding") or {}).get("reason"),
            "noncoding_next_step": (f.get("noncoding") or {}).get("next_step"),
            **_structural_cells(f),
            "rule_set": f.get("rule_set"),  # the combining rule set that gave the class (panels/combining.yaml)
            "evidence_sources": finding_sources(f, ev_sources, ev_index),  # frequency/clinical/score sources
        }


def _structural_cells(f: dict) -> dict:
    """Columns of a copy-number/structural finding (irdtriage.sv); empty for small variants."""
    s = f.get("structural") or {}
    r = s.get("riggs") or {}
    nmd = s.get("nmd")
    return {
        "finding_kind": f.get("kind"), "structural_type": s.get("type"), "structural_start": s.get("start"),
        "structural_end": s.get("end"), "copy_number": s.get("copy_number"), "structural_exons": s.get("exons") or None,
        "structural_frame": s.get("frame"), "structural_nmd": None if nmd is None else ("yes" if nmd else "no"),
        "structural_summary": s.get("summary"), "cnv_points": r.get("total"),
        "cnv_points_class": r.get("classification"), "structural_next_step": s.get("next_step"),
    }


def iter_tsv(result: dict, batch: int = 2000) -> Iterator[str]:
    """The text of findings.tsv in pieces of ``batch`` rows (one row per finding, none dropped)."""
    buf = io.StringIO()
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
