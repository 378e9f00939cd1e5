"""The output folder is written as one transaction: a reader sees the previous set or the new
set, never a mix, whatever goes wrong (full disk, file-size limit, read-only folder, signals,
a second run into the same folder, an input inside the folder).

Every check runs the real `irdtriage` command in a subprocess on real files. The inputs are
the invented demo VCF (demo_vcfs/) and copies of the invented example result
(tests/fixtures/large_result.py); nothing here checks a clinical answer, only which files
exist, their bytes and which run wrote them. Disk and signal behaviour follow POSIX:
RLIMIT_FSIZE makes a write past the limit fail with EFBIG once SIGXFSZ is ignored
(setrlimit(2), write(2)); SIGINT/SIGTERM are ordinary catchable signals (signal(7)).
"""
from __future__ import annotations

import fcntl
import hashlib
import importlib.util
import json
import os
import resource
import shutil
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest

from irdtriage.demo import demo_inputs

ROOT = Path(__file__).resolve().parents[1]
FULL_SET = {"result.json", "report.html", "findings.tsv", "findings.vcf.gz", "findings.vcf.gz.tbi"}
TIMEOUT = 300  # seconds for any one subprocess


def _env() -> dict:
    # no .pyc writes: under a file-size limit they could trip SIGXFSZ before irdtriage starts
    return dict(os.environ, NO_COLOR="1", COLUMNS="100", PYTHONPATH=str(ROOT), PYTHONDONTWRITEBYTECODE="1")


def _cmd(*args: str) -> list[str]:
    return [sys.executable, "-m", "irdtriage", *args]


def run(*args: str, cwd: Path = ROOT, preexec_fn=None) -> subprocess.CompletedProcess:
    return subprocess.run(_cmd(*args), capture_output=True, text=True, cwd=cwd, env=_env(), timeout=TIMEOUT,
                          preexec_fn=preexec_fn)


def triage_args(out: Path, sample: str = "ARDEN-P1", *extra: str) -> list[str]:
    return ["triage", demo_inputs()["vcf"], "--sample", sample, "--out", str(out), "--quiet", *extra]


def snapshot(folder: Path) -> dict[str, str]:
    return {p.name: hashlib.sha256(p.read_bytes()).hexdigest() for p in sorted(folder.iterdir())}


def one_error_line(r: subprocess.CompletedProcess, code: int = 2) -> str:
    assert r.returncode == code, (r.returncode, r.stdout, r.stderr)
    lines = [ln for ln in r.stderr.splitlines() if ln.strip()]
    assert len(lines) == 1, r.stderr
    return lines[0]


def leftovers(out: Path) -> list[str]:
    """Temporary folders, lock files and .part files a run may have left beside or in ``out``."""
    beside = [p.name for p in out.parent.iterdir() if p.name.startswith(f".{out.name}.")]
    inside = [p.name for p in out.iterdir() if p.name.endswith(".part")] if out.is_dir() else []
    return beside + inside


@pytest.fixture(scope="module")
def previous(tmp_path_factory) -> Path:
    """A complete output set of an earlier run (sample ARDEN-M), copied into each test's folder."""
    out = tmp_path_factory.mktemp("prev") / "out"
    r = run(*triage_args(out, "ARDEN-M"))
    assert r.returncode == 0, r.stderr
    assert {p.name for p in out.iterdir()} == FULL_SET | {"ARDEN-M.phenopacket.json"}
    return out


@pytest.fixture
def out(tmp_path: Path, previous: Path) -> Path:
    dest = tmp_path / "results"
    shutil.copytree(previous, dest)
    return dest


def tsv_rows(out: Path) -> list[tuple[str, str, str]]:
    """(finding id, position, the triaged person's genotype) of every TSV row: which run wrote it."""
    import csv

    with open(out / "findings.tsv", encoding="utf-8", newline="") as fh:
        return [(r["finding_id"], r["pos"], r["genotype"]) for r in csv.DictReader(fh, delimiter="\t")]


def result_rows(result: dict) -> list[tuple[str, str, str]]:
    return [(f["id"], str(f["pos"]), f["genotype"]) for f in result["findings"]]


def assert_set_of_one_run(out: Path) -> str:
    """The folder holds one complete set and every file names the same sample (and run start)."""
    result = json.loads((out / "result.json").read_text(encoding="utf-8"))
    sample, started = result["sample"]["id"], result["run"]["started"]
    assert {p.name for p in out.iterdir()} == FULL_SET | {f"{sample}.phenopacket.json"}
    html = (out / "report.html").read_text(encoding="utf-8")
    assert sample in html and started in html
    assert tsv_rows(out) == result_rows(result)
    import pysam

    with pysam.VariantFile(str(out / "findings.vcf.gz")) as vf:
        assert list(vf.header.samples) == [sample]
    pp = json.loads((out / f"{sample}.phenopacket.json").read_text(encoding="utf-8"))
    assert pp["subject"]["id"] == sample and pp["metaData"]["created"] == started
    return sample


# --- disk and folder problems: one line, exit 2, previous set untouched ------------------

def test_file_size_limit_is_one_line_and_keeps_previous_set(out: Path):
    # Regression: EFBIG was an "internal error" (exit 1), or SIGXFSZ killed the run leaving .part files.
    before = snapshot(out)
    limit = 50_000  # bytes; the demo's result.json and report.html are larger

    def small_files():
        resource.setrlimit(resource.RLIMIT_FSIZE, (limit, limit))

    r = run(*triage_args(out), preexec_fn=small_files)
    line = one_error_line(r)
    assert str(out) in line and "EFBIG" in line
    assert snapshot(out) == before
    assert leftovers(out) == []


@pytest.mark.skipif(os.geteuid() == 0, reason="root ignores folder permissions; the file-size limit test covers "
                                              "the same path")
def test_read_only_parent_folder_is_one_line(tmp_path: Path):
    parent = tmp_path / "locked"
    parent.mkdir()
    parent.chmod(0o555)
    try:
        line = one_error_line(run(*triage_args(parent / "out")))
        assert str(parent / "out") in line and ("EACCES" in line or "EROFS" in line)
        assert list(parent.iterdir()) == []
    finally:
        parent.chmod(0o755)


def test_out_that_is_a_file_is_one_line(tmp_path: Path):
    target = tmp_path / "results"
    target.write_text("not a folder\n")
    line = one_error_line(run(*triage_args(target)))
    assert str(target) in line and "file" in line
    assert target.read_text() == "not a folder\n"
    assert leftovers(target) == []


def test_folder_with_foreign_files_is_refused_not_emptied(tmp_path: Path):
    # Regression: outputs were added beside whatever the folder held; now the whole folder is
    # replaced, so a folder with files irdtriage did not write is refused.
    out = tmp_path / "results"
    out.mkdir()
    (out / "notes.txt").write_text("mine\n")
    line = one_error_line(run(*triage_args(out)))
    assert str(out) in line and "notes.txt" in line
    assert snapshot(out) == {"notes.txt": hashlib.sha256(b"mine\n").hexdigest()}
    assert leftovers(out) == []


def test_input_inside_out_is_refused(out: Path, tmp_path: Path):
    # Regression: `triage OUT/findings.vcf.gz --out OUT` overwrote its own input.
    before = snapshot(out)
    line = one_error_line(run("triage", str(out / "findings.vcf.gz"), "--out", str(out), "--quiet"))
    assert "findings.vcf.gz" in line and str(out) in line
    assert snapshot(out) == before
    # a PED (any input, not only the VCF) inside --out is refused too
    fresh = tmp_path / "fresh"
    fresh.mkdir()
    shutil.copy(demo_inputs()["ped"], fresh / "family.ped")
    line = one_error_line(run(*triage_args(fresh, "ARDEN-P1", "--ped", str(fresh / "family.ped"))))
    assert "family.ped" in line
    assert [p.name for p in fresh.iterdir()] == ["family.ped"]
    assert leftovers(out) == [] and leftovers(fresh) == []


# --- the set is replaced whole ----------------------------------------------------------

def test_fewer_formats_leave_no_stale_files(out: Path):
    # Regression: files of the earlier run stayed beside the new result.json.
    r = run(*triage_args(out, "ARDEN-P1", "--formats", "json,tsv"))
    assert r.returncode == 0, r.stderr
    assert sorted(p.name for p in out.iterdir()) == ["findings.tsv", "result.json"]
    result = json.loads((out / "result.json").read_text(encoding="utf-8"))
    assert result["sample"]["id"] == "ARDEN-P1"
    assert tsv_rows(out) == result_rows(result)
    assert leftovers(out) == []


def test_report_replaces_the_set_in_another_folder(out: Path, previous: Path, tmp_path: Path):
    # `report` follows the same rules: into another folder the set is exactly the formats asked for.
    src = tmp_path / "src"
    shutil.copytree(previous, src)
    r = run("report", str(src / "result.json"), "--format", "tsv", "--out", str(out))
    assert r.returncode == 0, r.stderr
    assert [p.name for p in out.iterdir()] == ["findings.tsv"]
    assert leftovers(out) == []


def test_report_in_place_keeps_source_and_the_rest_of_the_set(out: Path):
    before = snapshot(out)
    (out / "report.html").unlink()
    r = run("report", str(out / "result.json"), "--format", "html,json")
    assert r.returncode == 0, r.stderr
    after = snapshot(out)
    assert set(after) == set(before)
    for name in set(before) - {"report.html"}:
        assert after[name] == before[name], name  # result.json is the source: never rewritten
    assert_set_of_one_run(out)
    assert leftovers(out) == []


def test_report_refuses_folder_with_foreign_files(tmp_path: Path, previous: Path):
    dest = tmp_path / "mixed"
    dest.mkdir()
    (dest / "letter.docx").write_bytes(b"x")
    line = one_error_line(run("report", str(previous / "result.json"), "--out", str(dest)))
    assert "letter.docx" in line
    assert [p.name for p in dest.iterdir()] == ["letter.docx"]


# --- concurrency --------------------------------------------------------------------------

def test_run_refused_while_another_holds_the_folder(out: Path):
    # Regression: nothing stopped two runs from writing into one folder. The lock is an flock on
    # .<name>.lock beside the folder; here this test process holds it the way a running triage would.
    before = snapshot(out)
    lock = out.parent / f".{out.name}.lock"
    fd = os.open(lock, os.O_RDWR | os.O_CREAT, 0o644)
    try:
        fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
        line = one_error_line(run(*triage_args(out)))
        assert str(out) in line and "another irdtriage run" in line
        assert snapshot(out) == before
    finally:
        os.close(fd)
        lock.unlink()
    r = run(*triage_args(out))  # free again: the run goes ahead
    assert r.returncode == 0, r.stderr
    assert assert_set_of_one_run(out) == "ARDEN-P1"
    assert leftovers(out) == []


def test_two_concurrent_runs_give_one_complete_set(out: Path):
    lock = out.parent / f".{out.name}.lock"
    first = subprocess.Popen(_cmd(*triage_args(out, "ARDEN-P1")), stdout=subprocess.PIPE, stderr=subprocess.PIPE,
                             text=True, cwd=ROOT, env=_env())
    try:
        deadline = time.monotonic() + TIMEOUT
        while not lock.exists() and first.poll() is None and time.monotonic() < deadline:
            time.sleep(0.01)
        second = run(*triage_args(out, "ARDEN-F"))
        first_out, first_err = first.communicate(timeout=TIMEOUT)
    finally:
        if first.poll() is None:
            first.kill()
            first.wait(timeout=30)
    codes = (first.returncode, second.returncode)
    assert set(codes) <= {0, 2} and 0 in codes, (codes, first_err, second.stderr)
    for code, err in ((first.returncode, first_err), (second.returncode, second.stderr)):
        if code == 2:  # refused, not mixed
            assert "another irdtriage run" in err and len(err.strip().splitlines()) == 1, err
    sample = assert_set_of_one_run(out)
    winners = {"ARDEN-P1" if first.returncode == 0 else None, "ARDEN-F" if second.returncode == 0 else None}
    assert sample in winners
    assert leftovers(out) == []


# --- signals while a run is writing --------------------------------------------------------

def _staging(out: Path) -> list[Path]:
    return [p for p in out.parent.glob(f".{out.name}.new-*") if p.is_dir()]


def _signal_when(proc: subprocess.Popen, out: Path, min_entries: int, sig: int) -> bool:
    """Send ``sig`` once the staging folder beside ``out`` holds ``min_entries`` entries."""
    deadline = time.monotonic() + TIMEOUT
    while proc.poll() is None and time.monotonic() < deadline:
        for st in _staging(out):
            try:
                if len(os.listdir(st)) >= min_entries:
                    proc.send_signal(sig)
                    return True
            except FileNotFoundError:
                pass
        time.sleep(0.005)
    return False


def _check_after_signal(proc: subprocess.Popen, out: Path, before: dict, sig: int) -> None:
    _, err = proc.communicate(timeout=TIMEOUT)
    assert proc.returncode == 128 + sig, (proc.returncode, err)
    lines = [ln for ln in err.splitlines() if ln.strip()]
    assert len(lines) == 1, err
    assert leftovers(out) == [], leftovers(out)
    if "were complete" in lines[0]:  # the signal came during the swap itself: the new set is whole
        assert_set_of_one_run(out)
    else:
        assert "no output was written" in lines[0]
        assert snapshot(out) == before  # the previous set, complete and unchanged


@pytest.mark.parametrize("sig", [signal.SIGINT, signal.SIGTERM], ids=["SIGINT", "SIGTERM"])
def test_signal_during_triage_keeps_previous_set(out: Path, sig: int):
    # Regression: SIGTERM left .part files; SIGINT could leave a mix and claim nothing was written.
    before = snapshot(out)
    proc = subprocess.Popen(_cmd(*triage_args(out)), stdout=subprocess.DEVNULL, stderr=subprocess.PIPE,
                            text=True, cwd=ROOT, env=_env())
    try:
        assert _signal_when(proc, out, 0, sig), "the run never opened its staging folder"
        _check_after_signal(proc, out, before, sig)
    finally:
        if proc.poll() is None:
            proc.kill()
            proc.wait(timeout=30)


@pytest.fixture(scope="module")
def big_result(tmp_path_factory) -> Path:
    """A result large enough that writing takes a noticeable time (copies of the invented example)."""
    spec = importlib.util.spec_from_file_location("large_result", ROOT / "tests" / "fixtures" / "large_result.py")
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    path = tmp_path_factory.mktemp("big") / "result.json"
    path.write_text(json.dumps(mod.build(150, n_genes=30)), encoding="utf-8")
    return path


@pytest.mark.parametrize("sig", [signal.SIGINT, signal.SIGTERM], ids=["SIGINT", "SIGTERM"])
def test_signal_while_report_writes_keeps_previous_set(out: Path, big_result: Path, sig: int):
    before = snapshot(out)
    proc = subprocess.Popen(_cmd("report", str(big_result), "--out", str(out)), stdout=subprocess.DEVNULL,
                            stderr=subprocess.PIPE, text=True, cwd=ROOT, env=_env())
    try:
        # at least one output file open in the staging folder: the run is writing
        assert _signal_when(proc, out, 1, sig), "the run finished before it could be signalled"
        _check_after_signal(proc, out, before, sig)
    finally:
        if proc.poll() is None:
            proc.kill()
            proc.wait(timeout=30)


# --- the swap without renameat2 -----------------------------------------------------------

def test_two_rename_swap_replaces_folder_whole(tmp_path: Path):
    # The fallback used where the kernel or file system lacks RENAME_EXCHANGE.
    from irdtriage.atomic import swap_in

    target, staging = tmp_path / "out", tmp_path / ".out.new-x"
    target.mkdir()
    (target / "old.txt").write_text("old")
    staging.mkdir()
    (staging / "new.txt").write_text("new")
    swap_in(staging, target, exchange=False)
    assert [p.name for p in target.iterdir()] == ["new.txt"]
    assert sorted(p.name for p in tmp_path.iterdir()) == ["out"]


# --- a signal after the command has finished ------------------------------------------------

def test_signals_after_the_command_are_ignored_and_messages_name_the_state(tmp_path: Path):
    # Regression (hostile corpus): a SIGINT landing after the new output set was complete, while the
    # process was exiting, ended the finished run with a non-zero status and no message.  The program
    # entry (main(exiting=True)) now ignores SIGINT/SIGTERM/SIGHUP once the command has finished, and a
    # Ctrl-C that escapes main is described by the state the run reached (signal(7): SIG_IGN).
    code = (
        "import signal, sys\n"
        "from irdtriage import cli\n"
        "assert cli.interrupted_message() == 'irdtriage: interrupted while starting; nothing was written'\n"
        "rc = cli.main(['panel', 'list'], exiting=True)\n"
        "assert rc == 0, rc\n"
        "assert signal.getsignal(signal.SIGINT) == signal.SIG_IGN\n"
        "assert signal.getsignal(signal.SIGTERM) == signal.SIG_IGN\n"
        "rc = cli.main(['panel', 'list'])\n"  # a library call restores the handlers it found
        "assert signal.getsignal(signal.SIGINT) == signal.SIG_IGN\n"
        "signal.signal(signal.SIGINT, signal.default_int_handler)\n"
        "cli.main(['panel', 'list'])\n"
        "assert signal.getsignal(signal.SIGINT) is signal.default_int_handler\n"
        "class Tx: committed = True; given = 'OUT'\n"
        "cli._RUNNING['args'].transaction = Tx()\n"
        "assert cli.interrupted_message() == 'irdtriage: interrupted; the outputs in OUT were complete before it stopped'\n"
        "print('ok')\n"
    )
    proc = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, cwd=ROOT, env=_env(),
                          timeout=TIMEOUT)
    assert proc.returncode == 0 and proc.stdout.strip().endswith("ok"), proc.stderr
