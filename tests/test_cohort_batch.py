"""`irdtriage batch`: the manifest, per-case outputs, failures, re-runs, through the real command.

Checks are by construction: the per-case outputs must equal what `irdtriage triage --out` writes
for the same inputs (apart from the run-time fields run.started and run.command), a case whose
VCF is missing must fail on its own with one line, and an input file changed on purpose (planted)
must be the only case run again. The synthetic cases are no clinical truth (tests/cohort_cases.py).
"""
from __future__ import annotations

import json

import subprocess
import sys


import pytest

from cohort_cases import HPO, make_cohort, write_vcf, KINDS
from irdtriage.cohort.manifest import read_manifest
from irdtriage.errors import InputError

CLI = [sys.executable, "-m", "irdtriage"]


def run(args, cwd=None):
    return subprocess.run(CLI + [str(a) for a in args], capture_output=True, text=True, cwd=cwd, timeout=600)


def stable(result: dict) -> dict:
    """result.json without the documented run-time fields."""
    r = json.loads(json.dumps(result))
    r["run"].pop("started")
    r["run"].pop("command")
    return r


@pytest.fixture(scope="module")
def batch(tmp_path_factory):
    folder = tmp_path_factory.mktemp("cohort")
    manifest = make_cohort(folder, 4, extra_rows=["MISSING\tvcfs/not_there.vcf.gz\tX\t\t"])
    out = folder / "out"
    proc = run(["batch", manifest, "--out", out, "--jobs", "2"])
    return folder, manifest, out, proc


def test_every_case_written_and_the_failed_one_recorded(batch):
    folder, manifest, out, proc = batch
    assert proc.returncode == 2, proc.stderr  # one case failed
    record = json.loads((out / "batch.json").read_text())
    by_case = {r["case"]: r for r in record["cases"]}
    assert [r["case"] for r in record["cases"]] == ["C0001", "C0002", "C0003", "C0004", "MISSING"]
    for name in ("C0001", "C0002", "C0003", "C0004"):
        assert by_case[name]["status"] == "ok"
        assert sorted(p.name for p in (out / name).iterdir()) == sorted(
            [f"{name}.phenopacket.json", "findings.tsv", "findings.vcf.gz", "findings.vcf.gz.tbi", "report.html",
             "result.json"])
    err = by_case["MISSING"]["error"]
    assert by_case["MISSING"]["status"] == "failed" and "\n" not in err
    assert "not_there.vcf.gz" in err and "VCF file not found" in err and "manifest line 6" in err
    assert not (out / "MISSING").exists()
    # piped: one plain line per case, the failure among them; the caution closes the run
    lines = [ln for ln in proc.stdout.splitlines() if ln.startswith("[")]
    assert len(lines) == 5 and any("MISSING: FAILED" in ln for ln in lines)
    assert "Decision support only" in proc.stdout
    assert record["cautions"] and "qualified clinical scientist" in record["cautions"][0]


def test_case_outputs_equal_the_triage_command(batch, tmp_path):
    folder, manifest, out, proc = batch
    vcf = folder / "vcfs" / "C0002.vcf.gz"
    single = tmp_path / "single"
    p = run(["triage", vcf, "--sample", "C0002", "--hpo", HPO, "--sex", KINDS[1][1], "--out", single, "-q"])
    assert p.returncode == 0, p.stderr
    a = json.loads((out / "C0002" / "result.json").read_text())
    b = json.loads((single / "result.json").read_text())
    assert stable(a) == stable(b)
    assert a["run"]["command"].startswith("irdtriage batch ") and "[case C0002]" in a["run"]["command"]
    assert (out / "C0002" / "findings.tsv").read_text() == (single / "findings.tsv").read_text()


def test_rerun_skips_unchanged_and_runs_a_changed_case(batch, tmp_path):
    folder, manifest, out, proc = batch
    before = {n: (out / n / "result.json").stat().st_mtime_ns for n in ("C0001", "C0002", "C0003", "C0004")}
    # plant a change: C0003's VCF now carries a second allele
    write_vcf(folder / "vcfs" / "C0003.vcf", "C0003", KINDS[2][0] + KINDS[4][0])
    p = run(["batch", manifest, "--out", out, "--jobs", "2"])
    assert p.returncode == 2, p.stderr
    rec = {r["case"]: r for r in json.loads((out / "batch.json").read_text())["cases"]}
    assert {n: rec[n]["status"] for n in before} == {"C0001": "unchanged", "C0002": "unchanged", "C0003": "ok",
                                                     "C0004": "unchanged"}
    after = {n: (out / n / "result.json").stat().st_mtime_ns for n in before}
    assert [n for n in before if after[n] != before[n]] == ["C0003"]
    assert rec["MISSING"]["status"] == "failed"  # failed cases are always tried again
    genes = {g["symbol"] for g in json.loads((out / "C0003" / "result.json").read_text())["genes"]}
    assert {"RPGR", "PRPF31"} <= genes
    # --force runs every case again
    p = run(["batch", manifest, "--out", out, "--jobs", "1", "--force"])
    rec = {r["case"]: r for r in json.loads((out / "batch.json").read_text())["cases"]}
    assert [rec[n]["status"] for n in before] == ["ok"] * 4


@pytest.mark.parametrize("text,line,problem", [
    ("case\tvcf\tcolour\nA\ta.vcf\tred\n", 1, "unknown column(s) 'colour'"),
    ("case\tsample\nA\tS\n", 1, "lacks the required column(s) vcf"),
    ("case\tvcf\nA\ta.vcf\n\tb.vcf\n", 3, "required value 'case' is empty"),
    ("# comment\ncase\tvcf\nA\t\n", 3, "required value 'vcf' is empty"),
    ("case\tvcf\nA\ta.vcf\textra\n", 2, "3 tab-separated fields where the header has 2"),
    ("case\tvcf\nA\ta.vcf\nA\tb.vcf\n", 3, "already on line 2"),
    ("case\tvcf\n../up\ta.vcf\n", 2, "cannot be a folder name"),
    ("case\tvcf\ncohort.html\ta.vcf\n", 2, "cannot be a folder name"),
])
def test_manifest_problems_name_the_line(tmp_path, text, line, problem):
    m = tmp_path / "m.tsv"
    m.write_text(text)
    with pytest.raises(InputError) as e:
        read_manifest(m)
    assert e.value.line == line and problem in e.value.problem
    p = run(["batch", m, "--out", tmp_path / "out"])
    assert p.returncode == 2
    assert p.stderr.strip() == f"irdtriage: error: {m}:{line}: {e.value.problem}"
    assert not (tmp_path / "out").exists()


def test_relative_paths_resolve_from_the_manifest_folder(tmp_path):
    (tmp_path / "sub").mkdir()
    m = tmp_path / "sub" / "m.tsv"
    m.write_text("vcf\tcase\thpo\tprevious\nx/a.vcf.gz\tA\t@terms.txt\t/abs/old.json\n")
    spec = read_manifest(m)[0]
    assert spec.vcf == str(tmp_path / "sub" / "x" / "a.vcf.gz")
    assert spec.hpo == "@" + str(tmp_path / "sub" / "terms.txt")
    assert spec.previous == "/abs/old.json" and spec.line == 2


def test_progress_bar_on_a_terminal_and_lines_when_piped():
    import io

    from irdtriage.cohort.progress import Progress

    for terminal in (True, False):
        s = io.StringIO()
        p = Progress(2, stream=s, terminal=terminal)
        p.update({"case": "A", "status": "ok", "case_status": "SOLVED", "seconds": 0.2})
        p.update({"case": "B", "status": "failed", "error": "b.vcf: VCF file not found"})
        p.close()
        text = s.getvalue()
        assert "[2/2] B: FAILED: b.vcf: VCF file not found" in text
        assert ("━" in text and "2/2" in text) if terminal else text.splitlines()[0] == "[1/2] A: SOLVED (0.2 s)"
