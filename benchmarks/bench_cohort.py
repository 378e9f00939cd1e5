#!/usr/bin/env python3
"""Batch throughput: prints figures, asserts nothing.

Writes ``--cases`` synthetic single-sample cases (tests/cohort_cases.py: the five kinds of case
cycled, each with two or three HPO terms from a small set of retinal terms) and a manifest, then
runs the same batch, all five outputs per case, in a fresh output folder on:

* the local process pool (``--jobs``, default 2),
* dask.distributed, LocalCluster with 1 worker process,
* dask.distributed, LocalCluster with 2 worker processes,

and prints for each: wall time of the whole batch (cluster start included), cases per minute, the
median and 90th percentile of one case's own time in a worker (``seconds`` in batch.json: the
pipeline and the output transaction), the first case of a worker (loading the phenotype model and
its null scores), and the per-case overhead = wall x workers / cases - median case time
(scheduling, start-up and result traffic spread over the cases).

Usage: python benchmarks/bench_cohort.py [--cases 500] [--jobs 2] [--workdir DIR] [--only pool,dask1,dask2]
"""
from __future__ import annotations

import argparse
import statistics
import sys
import tempfile
import time
from argparse import Namespace
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(ROOT / "tests"))

from cohort_cases import KINDS, write_vcf  # noqa: E402

# HPO terms of retinal dystrophy signs (from memory: rod-cone dystrophy, nyctalopia, abnormal colour vision,
# abnormal electroretinogram, reduced visual acuity, nystagmus, constricted peripheral visual field)
TERMS = ["HP:0000510", "HP:0000662", "HP:0000551", "HP:0000512", "HP:0007663", "HP:0000639", "HP:0001133"]


def make(folder: Path, n: int) -> Path:
    (folder / "vcfs").mkdir(parents=True, exist_ok=True)
    rows = ["case\tvcf\tsample\thpo\tsex"]
    for i in range(n):
        records, sex = KINDS[i % len(KINDS)]
        name = f"B{i + 1:05d}"
        write_vcf(folder / "vcfs" / f"{name}.vcf", name, records)
        k = 2 + (i % 2)
        hpo = ",".join(TERMS[(i + j) % len(TERMS)] for j in range(k))
        rows.append(f"{name}\tvcfs/{name}.vcf.gz\t{name}\t{hpo}\t{sex}")
    manifest = folder / "manifest.tsv"
    manifest.write_text("\n".join(rows) + "\n")
    return manifest


def settings_for(out: Path) -> dict:
    from irdtriage.cli import _tier_genes

    genes, warnings = _tier_genes(Namespace(genes=None, panel=None, tier=None))
    return {"out": str(out), "genes": genes, "extra_warnings": warnings,
            "formats": ["json", "html", "tsv", "vcf", "phenopacket"], "command": "bench_cohort"}


def measure(label: str, engine, workers: int, manifest: Path, out: Path) -> None:
    from irdtriage.cohort.manifest import read_manifest
    from irdtriage.cohort.runner import run_batch

    specs = read_manifest(manifest)
    t0 = time.monotonic()
    batch = run_batch(specs, settings_for(out), engine, engine_name=label)
    wall = time.monotonic() - t0
    ok = [c for c in batch["cases"] if c["status"] == "ok"]
    secs = sorted(c["seconds"] for c in ok)
    first = {}
    for c in sorted(ok, key=lambda c: c["finished"]):
        first.setdefault(c["worker"], c["seconds"])
    med = statistics.median(secs)
    p90 = secs[int(0.9 * (len(secs) - 1))]
    overhead = wall * workers / len(specs) - med
    print(f"| {label} | {len(ok)}/{len(specs)} | {wall:.1f} s | {60 * len(ok) / wall:.0f} | {med:.3f} s | "
          f"{p90:.3f} s | {max(first.values()):.1f} s | {overhead:.3f} s |", flush=True)


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--cases", type=int, default=500)
    ap.add_argument("--jobs", type=int, default=2)
    ap.add_argument("--workdir", default=None)
    ap.add_argument("--only", default="pool,dask1,dask2")
    a = ap.parse_args()
    work = Path(a.workdir or tempfile.mkdtemp(prefix="irdtriage-bench-cohort-"))
    t0 = time.monotonic()
    manifest = make(work, a.cases)
    print(f"{a.cases} synthetic cases written in {time.monotonic() - t0:.1f} s under {work}")
    print("| engine | cases ok | wall | cases/min | median case | p90 case | first case of a worker | "
          "overhead per case |")
    print("|---|---|---|---|---|---|---|---|")
    from irdtriage.cohort.runner import local_engine

    only = set(a.only.split(","))
    if "pool" in only:
        measure(f"local pool, {a.jobs} processes", local_engine(a.jobs), a.jobs, manifest, work / "out-pool")
    for n in (1, 2):
        if f"dask{n}" in only:
            from irdtriage.cohort.dask_runner import dask_engine

            measure(f"dask LocalCluster, {n} worker{'s' if n > 1 else ''}", dask_engine(local_workers=n), n,
                    manifest, work / f"out-dask{n}")


if __name__ == "__main__":
    main()
