"""`irdtriage explain`: it explains the case it is given, never a stand-in.

Run as a real subprocess. The inputs are the invented example result
(tests/fixtures/result_example.json) and the invented demo case; nothing here checks a
clinical answer, only which case is explained and how a missing case is reported.
"""
from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path

from irdtriage import CAUTION

ROOT = Path(__file__).resolve().parents[1]
EXAMPLE = ROOT / "tests" / "fixtures" / "result_example.json"


def run(*args: str, cwd: Path) -> subprocess.CompletedProcess:
    env = dict(os.environ, NO_COLOR="1", COLUMNS="100", PYTHONPATH=str(ROOT))
    return subprocess.run([sys.executable, "-m", "irdtriage", *args], capture_output=True, text=True,
                          cwd=cwd, env=env, timeout=300)


def _one_error_line(r: subprocess.CompletedProcess) -> str:
    assert r.returncode == 2, (r.returncode, r.stdout, r.stderr)
    lines = [ln for ln in r.stderr.splitlines() if ln.strip()]
    assert len(lines) == 1, r.stderr
    return lines[0]


def test_explain_without_result_refuses_instead_of_explaining_the_demo(tmp_path: Path):
    # Regression: it used to run the invented demo case and print its criteria from any folder.
    r = run("explain", "F1", cwd=tmp_path)
    line = _one_error_line(r)
    assert "--result" in line and "--demo" in line
    assert "Classification" not in r.stdout and "PVS1" not in r.stdout
    assert "ARDEN" not in r.stdout + r.stderr


def test_explain_demo_only_when_asked_and_says_so(tmp_path: Path):
    r = run("explain", "F1", "--demo", cwd=tmp_path)
    assert r.returncode == 0, r.stderr
    first = r.stdout.splitlines()[0]
    assert "invented demo case" in first and "not a patient" in first
    assert " ".join(CAUTION.split()) in " ".join(r.stdout.split())


def test_explain_names_the_case_it_explains(tmp_path: Path):
    src = tmp_path / "case7" / "result.json"
    src.parent.mkdir()
    src.write_text(EXAMPLE.read_text(encoding="utf-8"), encoding="utf-8")
    sample = json.loads(EXAMPLE.read_text(encoding="utf-8"))["sample"]["id"]
    fid = json.loads(EXAMPLE.read_text(encoding="utf-8"))["findings"][0]["id"]
    r = run("explain", fid, "--result", str(src), cwd=tmp_path)
    assert r.returncode == 0, r.stderr
    first = " ".join(r.stdout.split("\n", 2)[0:1])
    assert sample in first and str(src) in " ".join(r.stdout.split())
    assert "demo" not in first


def test_explain_result_and_demo_together_refused(tmp_path: Path):
    line = _one_error_line(run("explain", "F1", "--result", str(EXAMPLE), "--demo", cwd=tmp_path))
    assert "--result" in line and "--demo" in line


def test_explain_missing_result_file_names_it(tmp_path: Path):
    missing = tmp_path / "nowhere" / "result.json"
    line = _one_error_line(run("explain", "F1", "--result", str(missing), cwd=tmp_path))
    assert str(missing) in line and "not found" in line
