"""Mutation check: does the test suite notice plausible slips in thresholds and decisions?

Each mutation in ``scripts/mutations.yaml`` replaces one exact snippet of one file.  For each,
the repository is copied to a temporary folder (without ``.git``, virtual environments and
caches), the snippet is replaced there, and the mutation's test files are run against the copy
(``PYTHONPATH`` points at the copy so its ``irdtriage`` is the one imported).  A mutation is
*killed* when the tests fail, *survived* when they pass.

    python scripts/mutation_check.py                 # every mutation, its own test files
    python scripts/mutation_check.py --all           # every mutation, the whole suite
    python scripts/mutation_check.py --only bs1-operator-strict-to-ge --only min-an-plus-one
    python scripts/mutation_check.py --list          # check every snippet is still found, run nothing

The check stops before running anything when a snippet is missing or occurs more than once, so
the list stays valid as the code changes.  Exit status: 0 all killed, 1 some survived, 2 a bad
list or an unmutated copy whose tests already fail.
"""
from __future__ import annotations

import argparse
import os
import shutil
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import yaml

ROOT = Path(__file__).resolve().parents[1]
DEFAULT_LIST = Path(__file__).with_name("mutations.yaml")
IGNORE = shutil.ignore_patterns(".git", ".venv", "venv", "__pycache__", "*.egg-info", ".pytest_cache",
                                "irdtriage-out*", "demo-out*", "*.pyc")


class ListError(Exception):
    pass


def load_list(path: Path) -> list[dict]:
    data = yaml.safe_load(path.read_text())
    muts = data.get("mutations") if isinstance(data, dict) else None
    if not isinstance(muts, list) or not muts:
        raise ListError(f"{path}: no 'mutations' list")
    seen = set()
    for i, m in enumerate(muts):
        for k in ("id", "file", "find", "replace", "tests", "what"):
            if k not in m:
                raise ListError(f"{path}: mutation {i + 1} has no {k!r}")
        if m["id"] in seen:
            raise ListError(f"{path}: mutation id {m['id']!r} is used twice")
        seen.add(m["id"])
        if m["find"] == m["replace"]:
            raise ListError(f"{path}: mutation {m['id']} replaces a snippet with itself")
    return muts


def check_sites(muts: list[dict], root: Path) -> None:
    """Every snippet must occur exactly once in its file, and every test file must exist."""
    problems = []
    for m in muts:
        f = root / m["file"]
        if not f.is_file():
            problems.append(f"{m['id']}: file {m['file']} not found")
            continue
        n = f.read_text().count(m["find"])
        if n != 1:
            problems.append(f"{m['id']}: snippet found {n} times in {m['file']} (need exactly 1): {m['find']!r}")
        for t in m["tests"]:
            if not (root / t).is_file():
                problems.append(f"{m['id']}: test file {t} not found")
    if problems:
        raise ListError("mutation list out of date:\n  " + "\n  ".join(problems))


def make_copy(root: Path, dest: Path) -> Path:
    copy = dest / "repo"
    shutil.copytree(root, copy, ignore=IGNORE)
    # The package data (panels/) is installed as irdtriage.panels; in a source copy make the
    # copy's own panels/ that package, so a development install elsewhere is never read instead.
    pkg_panels = copy / "irdtriage" / "panels"
    if not pkg_panels.exists():
        shutil.copytree(copy / "panels", pkg_panels)
    return copy


def env_for(copy: Path) -> dict:
    env = dict(os.environ)
    env["PYTHONPATH"] = str(copy) + (os.pathsep + env["PYTHONPATH"] if env.get("PYTHONPATH") else "")
    env["PYTHONDONTWRITEBYTECODE"] = "1"
    return env


def probe(copy: Path) -> None:
    """The copy's irdtriage and criteria file are the ones a test run imports."""
    code = ("import irdtriage, irdtriage.acmg.rules as r; "
            "print(irdtriage.__file__); print(r.default_path())")
    out = subprocess.run([sys.executable, "-c", code], cwd=copy, env=env_for(copy), capture_output=True,
                         text=True, check=True).stdout.split("\n")
    for line in out[:2]:
        if not Path(line).resolve().is_relative_to(copy.resolve()):
            raise ListError(f"the copy does not import its own files (got {line}); check PYTHONPATH / installs")


def run_tests(copy: Path, tests: list[str], timeout: int, extra=()) -> tuple[str, float, str]:
    cmd = [sys.executable, "-m", "pytest", "-q", "-x", "-p", "no:cacheprovider", *extra, *tests]
    t0 = time.monotonic()
    try:
        p = subprocess.run(cmd, cwd=copy, env=env_for(copy), capture_output=True, text=True, timeout=timeout)
    except subprocess.TimeoutExpired:
        return "killed (timeout)", time.monotonic() - t0, ""
    dt = time.monotonic() - t0
    tail = (p.stdout.strip().splitlines() or [""])[-1]
    if p.returncode == 0:
        return "survived", dt, tail
    if p.returncode == 1:
        return "killed", dt, tail
    return f"killed (pytest exit {p.returncode})", dt, tail


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--list-file", type=Path, default=DEFAULT_LIST, help="mutation list (YAML)")
    ap.add_argument("--all", action="store_true", help="run the whole test suite for every mutation")
    ap.add_argument("--only", action="append", default=[], metavar="ID", help="run only this mutation (repeatable)")
    ap.add_argument("--list", action="store_true", help="check the snippets and list the mutations; run nothing")
    ap.add_argument("--no-baseline", action="store_true", help="skip the run of the tests on an unmutated copy")
    ap.add_argument("--timeout", type=int, default=900, help="seconds per test run")
    ap.add_argument("--pytest-arg", action="append", default=[], metavar="ARG",
                    help="extra argument passed to pytest (repeatable), e.g. --pytest-arg=--deselect=...")
    a = ap.parse_args(argv)
    try:
        muts = load_list(a.list_file)
        if a.only:
            unknown = set(a.only) - {m["id"] for m in muts}
            if unknown:
                raise ListError(f"unknown mutation id(s): {', '.join(sorted(unknown))}")
            muts = [m for m in muts if m["id"] in a.only]
        check_sites(muts, ROOT)
    except ListError as e:
        print(f"error: {e}", file=sys.stderr)
        return 2
    if a.list:
        for m in muts:
            print(f"{m['id']:40s} {m['file']}: {m['what']}")
        print(f"{len(muts)} mutations, every snippet found exactly once")
        return 0

    results = []
    with tempfile.TemporaryDirectory(prefix="irdtriage-mutation-") as tmp:
        base = make_copy(ROOT, Path(tmp))
        try:
            probe(base)
        except (ListError, subprocess.CalledProcessError) as e:
            print(f"error: {e}", file=sys.stderr)
            return 2
        if not a.no_baseline:
            tests = ["tests"] if a.all else sorted({t for m in muts for t in m["tests"]})
            status, dt, tail = run_tests(base, tests, a.timeout, a.pytest_arg)
            print(f"baseline (no mutation): {'pass' if status == 'survived' else 'FAIL'} in {dt:.0f} s  {tail}")
            if status != "survived":
                print("error: the tests fail without any mutation; fix them first", file=sys.stderr)
                return 2
        for m in muts:
            target = base / m["file"]
            original = target.read_text()
            target.write_text(original.replace(m["find"], m["replace"], 1))
            if m["file"].startswith("panels/"):  # keep the package-data copy in step
                (base / "irdtriage" / m["file"]).write_text(target.read_text())
            try:
                status, dt, tail = run_tests(base, ["tests"] if a.all else m["tests"], a.timeout, a.pytest_arg)
            finally:
                target.write_text(original)
                if m["file"].startswith("panels/"):
                    (base / "irdtriage" / m["file"]).write_text(original)
            results.append((m, status))
            print(f"{status:28s} {m['id']:40s} {dt:5.1f} s  {m['what']}", flush=True)
    killed = sum(1 for _, s in results if s.startswith("killed"))
    survived = [m["id"] for m, s in results if s == "survived"]
    print(f"\n{killed} killed, {len(survived)} survived of {len(results)} mutations"
          + (f"; survived: {', '.join(survived)}" if survived else ""))
    return 1 if survived else 0


if __name__ == "__main__":
    sys.exit(main())
