"""A copy-number finding in every output of a real ``irdtriage triage`` run (subprocess, real files):
result.json checked by ``jsonschema`` against the bundled schema, findings.tsv read by pandas,
findings.vcf.gz read back by pysam, report.html as text, the terminal summary on stdout.

Input: a heterozygous deletion of ABCA4 exons 6-13 and a heterozygous stop in exon 14 (GRCh37; exon
coordinates typed from the GENCODE-derived canonical table, see tests/test_sv_pipeline.py).  Every output
must keep the clinical caution and, for the deletion, ask for confirmation by an orthogonal method
(MLPA, microarray or long reads: the confirmation step of Riggs et al. 2020 for CNVs found by
sequencing, from memory).
"""
from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path

import jsonschema
import pandas as pd
import pysam
from sv_vcf import write_vcf
from test_sv_pipeline import ABCA4_HPO, DEL_6_13, STOP_EX14

from irdtriage import CAUTION

ROOT = Path(__file__).resolve().parents[1]
SCHEMA = ROOT / "irdtriage" / "schema" / "result.schema.json"


def test_deletion_finding_in_every_output(tmp_path):
    vcf = write_vcf(tmp_path / "kid.vcf", ["KID", "MUM", "DAD"], [DEL_6_13, STOP_EX14])
    out = tmp_path / "out"
    env = dict(os.environ, NO_COLOR="1", COLUMNS="160", PYTHONPATH=str(ROOT))
    r = subprocess.run([sys.executable, "-m", "irdtriage", "triage", vcf, "--sample", "KID", "--hpo", ABCA4_HPO,
                        "--out", str(out)], capture_output=True, text=True, cwd=ROOT, env=env, timeout=600)
    assert r.returncode == 0, r.stderr

    result = json.loads((out / "result.json").read_text())
    jsonschema.validate(result, json.loads(SCHEMA.read_text()))
    (sv,) = [f for f in result["findings"] if f["kind"] == "structural"]
    assert sv["structural"]["exons"] == list(range(6, 14)) and sv["structural"]["copy_number"] == 1

    tsv = pd.read_csv(out / "findings.tsv", sep="\t", dtype=str, keep_default_na=False)
    row = tsv[tsv["finding_kind"] == "structural"].iloc[0]
    assert row["structural_type"] == "DEL" and row["structural_frame"] == "out of frame" and row["structural_nmd"] == "yes"
    assert "deletes exons 6-13 of ABCA4" in row["structural_summary"]
    assert "MLPA" in row["structural_next_step"]
    assert (tsv["caution"] != "").all()

    html = (out / "report.html").read_text()
    assert "deletes exons 6-13 of ABCA4" in html and "MLPA" in html
    assert " ".join(CAUTION.split())[:60] in " ".join(html.split())

    with pysam.VariantFile(str(out / "findings.vcf.gz")) as vf:
        dels = [(rec.pos, rec.stop, rec.info.get("SVTYPE")) for rec in vf if rec.alts[0] == "<DEL>"]
    assert dels == [(94527000, 94566000, "DEL")]  # POS the padding base; htslib reads INFO END as the record stop

    terminal = " ".join(r.stdout.split())
    assert "deletes exons 6-13 of ABCA4" in terminal and "MLPA" in terminal


from test_report_html import _chromium, _Text, needs_chromium  # noqa: E402

from irdtriage.report.html import render_html  # noqa: E402


@needs_chromium
def test_html_gene_sketch_draws_the_deleted_exons(tmp_path):
    # exons 6-13 of ABCA4's 50 (NM_000350, GENCODE-derived canonical table; see tests/test_sv_pipeline.py)
    # drawn hatched on the exon map, read back from the DOM a real headless Chromium builds
    from irdtriage.pipeline import triage

    vcf = write_vcf(tmp_path / "kid.vcf", ["KID", "MUM", "DAD"], [DEL_6_13, STOP_EX14])
    page = tmp_path / "report.html"
    page.write_text(render_html(triage(vcf, sample="KID", hpo=ABCA4_HPO)), encoding="utf-8")
    dom = _Text()
    dom.feed(_chromium(tmp_path, page, "--dump-dom").stdout)
    hatched = [a for t, a in dom.tags if t == "rect" and (a.get("fill") or "").startswith("url(#irdt-exons")]
    assert len(hatched) == 8
    assert "deleted exons 6-13" in dom.text  # the sketch's description
