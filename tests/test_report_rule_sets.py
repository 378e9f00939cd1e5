"""The combining rule set behind each class is named, versioned and hashed in every output of a
real ``irdtriage triage`` run (subprocess, real files), each output read back by its own reader:
result.json (json), findings.vcf.gz (pysam/htslib header and INFO), findings.tsv (pandas), the HTML
report (its text) and the terminal report (standard output).

Two panel genes with different rule sets in panels/combining.yaml: RPE65 (the ClinGen LCA/EORD
specification) and ABCA4 (the default rule set). Coordinates: RPE65 MANE Select on GRCh38 (MANE
v1.5) chr1:68,428,822-68,449,954; ABCA4 chr1:93,992,834-94,121,148 (GRCh38, from memory). The
variants are constructed for the test and checked only for how the rule set is written out; the
expected hashes are recomputed here from the rule set's content, not copied from a run."""
from __future__ import annotations

import hashlib
import json
import os
import subprocess
import sys
from pathlib import Path

import pandas as pd
import pysam
import pytest

from irdtriage.acmg.rulesets import load_combining
from vcf_builder import write_csq_vcf

ROOT = Path(__file__).resolve().parents[1]
FIELDS = "Allele|Consequence|IMPACT|SYMBOL|Feature_type|Feature|BIOTYPE|EXON|HGVSc|HGVSp|ENSP|Protein_position"


def _csq(alt, gene, tx, prot, cons, exon, c, p, pos, length):
    return "|".join([alt, cons, "HIGH", gene, "Transcript", tx, "protein_coding", exon,
                     f"{tx}:{c}", f"{prot}:{p}", prot, f"{pos}/{length}"])


@pytest.fixture(scope="module")
def run(tmp_path_factory):
    tmp = tmp_path_factory.mktemp("rulesets")
    vcf = write_csq_vcf(tmp / "case.vcf", ["KID"], [
        ("chr1", 68431000, "G", "A", _csq("A", "RPE65", "ENST00000262340.6", "ENSP00000262340.5", "stop_gained",
                                          "5/14", "c.400C>T", "p.(Gln134Ter)", 134, 533), ["1/1:0,30:30:99"]),
        ("chr1", 94000000, "G", "A", _csq("A", "ABCA4", "ENST00000370225.4", "ENSP00000359245.3", "stop_gained",
                                          "30/50", "c.4400C>T", "p.(Gln1467Ter)", 1467, 2273), ["1/1:0,30:30:99"]),
    ], FIELDS)
    out = tmp / "out"
    env = dict(os.environ, NO_COLOR="1", COLUMNS="200", PYTHONPATH=str(ROOT))
    proc = subprocess.run([sys.executable, "-m", "irdtriage", "triage", vcf, "--sample", "KID", "--hpo", "HP:0000510",
                           "--out", str(out)], capture_output=True, text=True, cwd=ROOT, env=env, timeout=600)
    assert proc.returncode == 0, proc.stderr
    result = json.loads((out / "result.json").read_text())
    return out, proc.stdout, result


def _expected():
    comb = load_combining()
    return {n: comb.rule_sets[n] for n in ("clingen-lca-eord-rpe65-v1", comb.default)}, comb


def test_result_json_names_each_rule_set_with_its_own_hash(run):
    _, _, result = run
    expected, comb = _expected()
    block = result["rules"]["combining"]
    raw = (ROOT / "panels" / "combining.yaml").read_bytes()
    assert block["sha256"] == hashlib.sha256(raw).hexdigest()  # the file's own hash is kept
    used = {r["name"]: r for r in block["rule_sets"]}
    assert set(used) == set(expected)
    for name, rs in expected.items():
        assert used[name] == {"name": name, "version": rs.version, "sha256": rs.sha256}
    hashes = [r["sha256"] for r in block["rule_sets"]]
    assert len(set(hashes)) == len(hashes) and block["sha256"] not in hashes  # one hash per rule set
    assert {f["gene"]: f["rule_set"] for f in result["findings"]} == {
        "RPE65": "clingen-lca-eord-rpe65-v1", "ABCA4": comb.default}


def test_every_rule_set_has_a_distinct_content_hash():
    # Three rule sets share the same rules today; each still has its own hash (its content includes
    # its name, version and source), and the hash is not the file's.
    comb = load_combining()
    hashes = [rs.sha256 for rs in comb.rule_sets.values()]
    assert len(set(hashes)) == len(hashes) and comb.sha256 not in hashes
    assert all(len(h) == 64 for h in hashes)


def test_vcf_header_and_records_name_the_rule_set(run):
    out, _, _ = run
    expected, comb = _expected()
    with pysam.VariantFile(str(out / "findings.vcf.gz")) as vf:
        lines = [r for r in vf.header.records if r.key == "irdtriage_combining"]
        got = {r["ID"]: (r["Version"].strip('"'), r["SHA256"]) for r in lines}  # htslib keeps the quotes
        assert "IRDT_RULESET" in vf.header.info
        per_gene = {r.info["IRDT_GENE"]: r.info["IRDT_RULESET"] for r in vf}
    assert got == {n: (rs.version, rs.sha256) for n, rs in expected.items()}
    assert per_gene == {"RPE65": "clingen-lca-eord-rpe65-v1", "ABCA4": comb.default}


def test_tsv_has_rule_set_column_before_caution(run):
    out, _, _ = run
    df = pd.read_csv(out / "findings.tsv", sep="\t", dtype=str, keep_default_na=False)
    # added columns sit just before the final caution column (rule_set, then evidence_sources)
    assert list(df.columns[-3:]) == ["rule_set", "evidence_sources", "caution"]
    assert dict(zip(df["gene"], df["rule_set"])) == {"RPE65": "clingen-lca-eord-rpe65-v1",
                                                      "ABCA4": load_combining().default}


def test_html_and_terminal_show_name_version_and_short_hash(run):
    out, stdout, _ = run
    expected, _ = _expected()
    (html_path,) = out.glob("*.html")
    html = html_path.read_text()
    assert "<dt>Criteria</dt>" in html and "<dt>Combining rule sets</dt>" in html
    for name, rs in expected.items():
        for text in (html, stdout):
            assert name in text and rs.sha256[:12] in text
        assert rs.version.replace('"', "&quot;") in html or rs.version in html
    assert "combining rule sets:" in stdout
