"""End-to-end checks of the `irdtriage` command, run as a real subprocess on real files.

The demo family is invented: these tests check that the command runs and that its outputs
are valid by outside definitions (JSON Schema, pysam/htslib, the phenopackets library),
never that the invented case gets a particular clinical answer.
"""
from __future__ import annotations

import gzip
import json
import os
import shutil
import subprocess
import sys
from pathlib import Path

import pysam
import pytest

from irdtriage import CAUTION
from irdtriage.demo import demo_inputs
from irdtriage.models import ALL_CODES

ROOT = Path(__file__).resolve().parents[1]


def run(*args: str, cwd: Path | None = None) -> subprocess.CompletedProcess:
    env = dict(os.environ, NO_COLOR="1", COLUMNS="80", PYTHONPATH=str(ROOT))
    return subprocess.run([sys.executable, "-m", "irdtriage", *args], capture_output=True, text=True,
                          cwd=cwd or ROOT, env=env, timeout=600)


@pytest.fixture(scope="module")
def demo_out(tmp_path_factory) -> Path:
    out = tmp_path_factory.mktemp("demo")
    r = run("demo", "--out", str(out))
    assert r.returncode == 0, r.stderr
    assert CAUTION.split(".")[0] in r.stdout
    return out


def test_demo_writes_every_output(demo_out: Path):
    names = {p.name for p in demo_out.iterdir()}
    assert names == {"result.json", "report.html", "findings.tsv", "findings.vcf.gz", "findings.vcf.gz.tbi",
                     "ARDEN-P1.phenopacket.json"}, names  # nothing missing, no temporary file left
    result = json.loads((demo_out / "result.json").read_text())
    ids = [f["id"] for f in result["findings"]]
    assert ids
    # each output holds every finding and the caution, read by the program that consumes it
    first = " ".join(CAUTION.split())
    html = (demo_out / "report.html").read_text(encoding="utf-8")
    assert html.lstrip().lower().startswith("<!doctype html") and html.rstrip().endswith("</html>")
    assert first in " ".join(html.split())
    rows = (demo_out / "findings.tsv").read_text(encoding="utf-8").splitlines()
    header = rows[0].split("\t")  # a table from line 1 (no comment line), the caution on every row
    assert header[0] == "finding_id"
    caution_col = header.index("caution")
    assert all(r.split("\t")[caution_col] == first for r in rows[1:])
    assert [r.split("\t")[0] for r in rows[1:]] == ids
    from google.protobuf.json_format import Parse
    from phenopackets import Phenopacket

    pp = Parse((demo_out / "ARDEN-P1.phenopacket.json").read_text(), Phenopacket())  # GA4GH schema
    assert pp.subject.id == "ARDEN-P1"


def test_demo_result_follows_schema_and_carries_caution(demo_out: Path):
    from irdtriage.report.json_out import validation_errors

    result = json.loads((demo_out / "result.json").read_text())
    assert validation_errors(result) == []
    assert CAUTION in result["cautions"]
    assert result["genome_build"] == "GRCh38"
    assert [g["rank"] for g in result["genes"]] == list(range(1, len(result["genes"]) + 1))
    ids = {f["id"] for f in result["findings"]}
    for g in result["genes"]:
        assert set(g["findings"]) <= ids
        assert g["cascade_step"] and g["cascade_step"]["text"]
    for f in result["findings"]:
        # every finding reports all 28 ACMG/AMP codes (Richards et al. 2015), met or not
        assert [c["code"] for c in f["criteria"]] == list(ALL_CODES)
        for c in f["criteria"]:
            assert c["reason"], c
        assert f["classification"] in ("Pathogenic", "Likely pathogenic", "Uncertain significance",
                                       "Likely benign", "Benign")


def test_demo_vcf_output_reads_back_with_htslib(demo_out: Path):
    result = json.loads((demo_out / "result.json").read_text())
    with pysam.VariantFile(str(demo_out / "findings.vcf.gz")) as vf:
        got = {rec.info["IRDT_ID"]: (rec.chrom, rec.pos, rec.ref, rec.alts[0]) for rec in vf}
        # the tabix index works: every finding is fetched back by its own position
        for f in result["findings"]:
            hits = [r.info["IRDT_ID"] for r in vf.fetch(f["chrom"], f["pos"] - 1, f["pos"])]
            assert f["id"] in hits, f["id"]
    assert got == {f["id"]: (f["chrom"], f["pos"], f["ref"], f["alt"]) for f in result["findings"]}


def test_explain_shows_all_criteria_for_a_finding(demo_out: Path):
    import re

    result = json.loads((demo_out / "result.json").read_text())
    f = next(x for x in result["findings"] if x["id"] == "F1")
    r = run("explain", "F1", "--result", str(demo_out / "result.json"))
    assert r.returncode == 0, r.stderr
    assert f["classification"] in r.stdout
    # one table row per ACMG/AMP code, with the met / not met / not evaluable state of the result
    rows = dict(m.groups() for m in re.finditer(r"^\S (\w+) +\S (met|not met|not evaluable) ", r.stdout, re.M))
    want = {c["code"]: {True: "met", False: "not met", None: "not evaluable"}[c["met"]] for c in f["criteria"]}
    assert rows == want
    assert set(rows) == set(ALL_CODES)


def test_report_rerenders_from_saved_result(demo_out: Path, tmp_path: Path):
    r = run("report", str(demo_out / "result.json"), "--format", "tsv,html", "--out", str(tmp_path))
    assert r.returncode == 0, r.stderr
    assert sorted(p.name for p in tmp_path.iterdir()) == ["findings.tsv", "report.html"]
    # the same result renders to the same table and page as the triage run wrote
    assert (tmp_path / "findings.tsv").read_text() == (demo_out / "findings.tsv").read_text()
    assert (tmp_path / "report.html").read_text() == (demo_out / "report.html").read_text()


def test_panel_commands():
    r = run("panel", "list")
    assert r.returncode == 0 and "RPE65" in r.stdout
    r = run("panel", "show", "RPE65")
    assert r.returncode == 0 and "HGNC:10294" in r.stdout  # HGNC ID of RPE65 (HGNC; also MANE v1.5)
    r = run("panel", "check")
    assert r.returncode == 0, r.stderr


# --- bad input: one line, non-zero exit, nothing half-written --------------------------

def _assert_clean_failure(r: subprocess.CompletedProcess, out: Path, *needles: str):
    assert r.returncode == 2, (r.returncode, r.stdout, r.stderr)
    lines = [ln for ln in r.stderr.splitlines() if ln.strip()]
    assert len(lines) == 1, r.stderr
    for n in needles:
        assert n in lines[0], lines[0]
    assert not out.exists() or not any(out.iterdir()), list(out.iterdir())


def test_missing_file(tmp_path: Path):
    out = tmp_path / "out"
    r = run("triage", str(tmp_path / "nope.vcf.gz"), "--out", str(out))
    _assert_clean_failure(r, out, "nope.vcf.gz")


def test_not_a_vcf(tmp_path: Path):
    bad = tmp_path / "notes.vcf"
    bad.write_text("this is a shopping list\neggs\n")
    out = tmp_path / "out"
    _assert_clean_failure(run("triage", str(bad), "--out", str(out)), out, "notes.vcf")


def test_truncated_gzip(tmp_path: Path):
    data = Path(demo_inputs()["vcf"]).read_bytes()
    bad = tmp_path / "cut.vcf.gz"
    bad.write_bytes(data[: len(data) // 2])
    out = tmp_path / "out"
    _assert_clean_failure(run("triage", str(bad), "--sample", "ARDEN-P1", "--out", str(out)), out, "cut.vcf.gz")


def test_unknown_sample(tmp_path: Path):
    out = tmp_path / "out"
    r = run("triage", demo_inputs()["vcf"], "--sample", "NOBODY", "--out", str(out))
    _assert_clean_failure(r, out, "NOBODY")


def test_ambiguous_sample_needs_choice(tmp_path: Path):
    out = tmp_path / "out"
    r = run("triage", demo_inputs()["vcf"], "--out", str(out))
    _assert_clean_failure(r, out, "--sample")


def test_malformed_hpo(tmp_path: Path):
    out = tmp_path / "out"
    r = run("triage", demo_inputs()["vcf"], "--sample", "ARDEN-P1", "--hpo", "HP:00005X", "--out", str(out))
    _assert_clean_failure(r, out, "HP:00005X")


def test_wrong_build(tmp_path: Path):
    out = tmp_path / "out"
    r = run("triage", demo_inputs()["vcf"], "--sample", "ARDEN-P1", "--build", "GRCh37", "--out", str(out))
    _assert_clean_failure(r, out, "GRCh37")


def test_no_genotypes(tmp_path: Path):
    src = tmp_path / "sites.vcf"
    src.write_text(
        "##fileformat=VCFv4.2\n##contig=<ID=chr1,length=248956422>\n"
        "#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\n"
        "chr1\t68438250\t.\tT\tTA\t50\tPASS\t.\n")
    out = tmp_path / "out"
    _assert_clean_failure(run("triage", str(src), "--out", str(out)), out, "sites.vcf")


def test_unindexed_plain_vcf_gives_same_findings_as_indexed(tmp_path: Path, demo_out: Path):
    plain = tmp_path / "trio.vcf"
    with gzip.open(demo_inputs()["vcf"], "rt") as fh, open(plain, "w") as out:
        shutil.copyfileobj(fh, out)
    out = tmp_path / "out"
    r = run("triage", str(plain), "--sample", "ARDEN-P1", "--ped", demo_inputs()["ped"],
            "--phenopacket", demo_inputs()["phenopacket"], "--out", str(out), "--formats", "json", "--quiet")
    assert r.returncode == 0, r.stderr
    a = json.loads((out / "result.json").read_text())
    b = json.loads((demo_out / "result.json").read_text())
    assert [(f["key"], f["classification"]) for f in a["findings"]] == \
        [(f["key"], f["classification"]) for f in b["findings"]]


def test_proband_taken_from_ped_when_sample_not_given(tmp_path: Path):
    # PED format: the only affected individual whose parents are both genotyped is the proband.
    out = tmp_path / "out"
    d = demo_inputs()
    r = run("triage", d["vcf"], "--ped", d["ped"], "--out", str(out), "--formats", "json", "--quiet")
    assert r.returncode == 0, r.stderr
    result = json.loads((out / "result.json").read_text())
    assert result["sample"]["id"] == "ARDEN-P1"
    assert any("no --sample given" in w for w in result["warnings"])


def test_evidence_file_that_is_not_a_vcf(tmp_path: Path):
    bad = tmp_path / "freq.vcf.gz"
    bad.write_bytes(b"not a variant file")
    out = tmp_path / "out"
    r = run("triage", demo_inputs()["vcf"], "--sample", "ARDEN-P1", "--population-vcf", str(bad), "--out", str(out))
    _assert_clean_failure(r, out, "freq.vcf.gz")


def test_population_vcf_drives_ba1_end_to_end(tmp_path: Path):
    # BA1: allele frequency > 5 % in a continental population with enough alleles
    # (Richards et al. 2015; Ghosh et al., Hum Mutat 2018). The population file is written
    # here in the gnomAD-style INFO layout (AC_<pop>/AN_<pop>) the reader documents.
    plain = tmp_path / "pop.vcf"
    plain.write_text(
        "##fileformat=VCFv4.2\n##contig=<ID=chr1,length=248956422>\n"
        '##INFO=<ID=AC_nfe,Number=A,Type=Integer,Description="Allele count, nfe">\n'
        '##INFO=<ID=AN_nfe,Number=1,Type=Integer,Description="Allele number, nfe">\n'
        '##INFO=<ID=nhomalt_nfe,Number=A,Type=Integer,Description="Homozygotes, nfe">\n'
        "#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\n"
        "chr1\t94008260\t.\tG\tA\t.\tPASS\tAC_nfe=6000;AN_nfe=60000;nhomalt_nfe=180\n")
    pysam.tabix_index(str(plain), preset="vcf", force=True)
    out = tmp_path / "out"
    d = demo_inputs()
    r = run("triage", d["vcf"], "--sample", "ARDEN-P1", "--population-vcf", str(plain) + ".gz",
            "--out", str(out), "--formats", "json", "--all-variants", "--quiet")
    assert r.returncode == 0, r.stderr
    result = json.loads((out / "result.json").read_text())
    f = next(f for f in result["findings"] if f["key"] == "1-94008260-G-A")
    ba1 = next(c for c in f["criteria"] if c["code"] == "BA1")
    assert ba1["met"] is True and f["classification"] == "Benign"
    # without --all-variants the same allele is counted as common, not reported
    out2 = tmp_path / "out2"
    r = run("triage", d["vcf"], "--sample", "ARDEN-P1", "--population-vcf", str(plain) + ".gz",
            "--out", str(out2), "--formats", "json", "--quiet")
    result = json.loads((out2 / "result.json").read_text())
    assert "1-94008260-G-A" not in {f["key"] for f in result["findings"]}
    assert result["counts"]["common_not_reported"] >= 1
