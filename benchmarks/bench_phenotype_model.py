#!/usr/bin/env python3
"""One case with phenotype: wall time and peak memory of ``irdtriage triage``; prints figures, asserts nothing.

Writes a small synthetic single-sample VCF (tests/cohort_cases.py: one rare missense allele) and runs,
each in a fresh process, ``--repeat`` times:

* ``irdtriage triage VCF --hpo TERMS --out DIR`` (phenotype from the shipped phenotype model),
* the same without ``--hpo`` (no phenotype: the floor),
* with ``--before REV``: the same two commands on the source of git revision REV (extracted with
  ``git archive`` into a temporary folder and run with the same interpreter), e.g. the revision
  before the phenotype model, when every case loaded the whole HPO through hpo3.

Peak RSS is the child's ``ru_maxrss`` (os.wait4). Also prints the in-process cost of the
phenotype step: model load, matcher set-up for the bundled panel, the null pool, and the null for
one query size (what each new query size costs a long-running worker).

Usage: python benchmarks/bench_phenotype_model.py [--repeat 5] [--before REV] [--terms N]
"""
from __future__ import annotations

import argparse
import os
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT / "tests"))

from cohort_cases import KINDS, write_vcf  # noqa: E402

# HPO terms of retinal dystrophy signs (from memory: rod-cone dystrophy, nyctalopia, abnormal colour vision,
# abnormal electroretinogram, reduced visual acuity, nystagmus, constricted peripheral visual field)
TERMS = ["HP:0000510", "HP:0000662", "HP:0000551", "HP:0000512", "HP:0007663", "HP:0000639", "HP:0001133"]


def run(cmd: list[str], env: dict, cwd: str) -> tuple[float, float]:
    t0 = time.perf_counter()
    # cwd = the source folder: ``python -m`` puts the working folder first on sys.path
    p = subprocess.Popen(cmd, env=env, cwd=cwd, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)
    _, status, ru = os.wait4(p.pid, 0)
    wall = time.perf_counter() - t0
    err = p.stderr.read().decode(errors="replace") if p.stderr else ""
    p.returncode = os.waitstatus_to_exitcode(status)
    if p.returncode != 0:
        raise SystemExit(f"{' '.join(cmd)} exited {p.returncode}: {err.strip().splitlines()[-1:]}")
    return wall, ru.ru_maxrss / 1024.0  # MB (ru_maxrss is in KB on Linux)


def series(label: str, cmd_for, n: int, env: dict, work: Path, cwd: str) -> None:
    walls, rss = [], []
    for k in range(n):
        w, r = run(cmd_for(work / f"{label.replace(' ', '_').replace(':', '')}_{k}"), env, cwd)
        walls.append(w)
        rss.append(r)
    print(f"{label:42s} wall median {statistics.median(walls):.2f} s (min {min(walls):.2f}), "
          f"peak RSS median {statistics.median(rss):.0f} MB")


def in_process(terms: list[str]) -> None:
    sys.path.insert(0, str(ROOT))
    t0 = time.perf_counter()
    from irdtriage.phenotype_model import get_model

    model = get_model()
    t1 = time.perf_counter()
    from irdtriage.models import PhenotypeProfile
    from irdtriage.panel import load_panel
    from irdtriage.phenotype import PhenotypeMatcher

    genes = list(load_panel(None).genes)
    t2 = time.perf_counter()
    m = PhenotypeMatcher(genes, model=model)
    t3 = time.perf_counter()
    m._pool()
    t4 = time.perf_counter()
    m.null(len(terms))
    t5 = time.perf_counter()
    m.match(PhenotypeProfile(present=tuple(terms)))
    t6 = time.perf_counter()
    print(f"in process: model load {1000 * (t1 - t0):.0f} ms (HPO {model.version}, hpo3 {model.hpo3_version}); "
          f"matcher for {len(genes)} genes {1000 * (t3 - t2):.0f} ms; null pool ({model.pool.size} eye terms) "
          f"{1000 * (t4 - t3):.0f} ms; null for {len(terms)} terms {1000 * (t5 - t4):.0f} ms; "
          f"match {1000 * (t6 - t5):.0f} ms")


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeat", type=int, default=5)
    ap.add_argument("--before", help="git revision to compare with (its source is run with this interpreter)")
    ap.add_argument("--terms", type=int, default=3, help="number of HPO terms in the query (default 3)")
    args = ap.parse_args()
    terms = TERMS[: args.terms]
    with tempfile.TemporaryDirectory(prefix="bench_pheno_") as tmp:
        work = Path(tmp)
        records, _sex = KINDS[3]  # one rare missense allele (no loss-of-function: no PVS1 transcript look-up)
        vcf = write_vcf(work / "case.vcf", "C1", records)
        sources = [("now", str(ROOT))]
        if args.before:
            src = work / "before"
            src.mkdir()
            arch = subprocess.run(["git", "-C", str(ROOT), "archive", args.before], check=True, capture_output=True)
            subprocess.run(["tar", "-x", "-C", str(src)], input=arch.stdout, check=True)
            sources.insert(0, (f"before ({args.before})", str(src)))
        for name, src in sources:
            env = dict(os.environ, PYTHONPATH=src)
            base = [sys.executable, "-m", "irdtriage", "triage", str(vcf), "--formats", "json,tsv"]
            series(f"{name}: triage with {len(terms)} HPO terms", lambda out: base + ["--hpo", ",".join(terms),
                                                                                       "--out", str(out)],
                   args.repeat, env, work, src)
            series(f"{name}: triage without phenotype", lambda out: base + ["--out", str(out)], args.repeat, env, work,
                   src)
    in_process(terms)
    return 0


if __name__ == "__main__":
    sys.exit(main())
