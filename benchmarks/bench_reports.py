#!/usr/bin/env python3
"""Report writers at exome scale: prints figures, asserts nothing.

Builds a large synthetic result by replicating the findings of the invented example
(tests/fixtures/result_example.json) ``--replicas`` times (default 20,000 -> 60,000
findings, each with its 28 criteria) spread over ``--genes`` genes; the first copy keeps
its statuses, the others are REJECTED Benign / Likely benign / VUS with one Likely
pathogenic in 1,000 (roughly what an unannotated exome gives). Then, for each format,
a fresh child process builds the result, renders that one format and prints

    format, wall seconds of the render, peak RSS of the child, RSS added by the render, output size

(RSS from ``resource.getrusage``; the added figure is peak RSS after minus before).

Usage: python benchmarks/bench_reports.py [--replicas 20000] [--genes 250] [--formats json,html,tsv,vcf,phenopacket]
"""
from __future__ import annotations

import argparse
import copy
import json
import resource
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

FIXTURE = ROOT / "tests" / "fixtures" / "result_example.json"
FORMATS = ("json", "html", "tsv", "vcf", "phenopacket")


def build(replicas: int, n_genes: int) -> dict:
    base = json.loads(FIXTURE.read_text(encoding="utf-8"))
    template_gene = base["genes"][-1]
    genes = [dict(g, findings=[]) for g in base["genes"]]
    for i in range(len(genes), n_genes):
        g = copy.deepcopy(template_gene)
        g.update(symbol=f"SYN{i:04d}", rank=i + 1, findings=[], genotype_fit="no qualifying finding")
        genes.append(g)
    by_symbol = {g["symbol"]: g for g in genes}
    classes = ("Benign", "Likely benign", "Uncertain significance")
    findings = []
    n = 0
    for r in range(replicas):
        for f0 in base["findings"]:
            n += 1
            f = dict(f0)  # criteria lists are shared between copies (memory like a real run's dicts)
            f["id"] = f"F{n}"
            f["pos"] = int(f0["pos"]) + r * 37
            if r:
                g = genes[n % n_genes]
                f["gene"] = g["symbol"]
                f["interpretation_status"] = "REJECTED"
                f["classification"] = "Likely pathogenic" if n % 1000 == 0 else classes[n % 3]
            findings.append(f)
            by_symbol[f["gene"]]["findings"].append(f["id"])
    base["genes"] = genes
    base["findings"] = findings
    base["counts"]["findings"] = len(findings)
    return base


def child(fmt: str, replicas: int, n_genes: int) -> None:
    from irdtriage.report import writers

    result = build(replicas, n_genes)
    before = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss
    with tempfile.TemporaryDirectory() as tmp:
        t0 = time.perf_counter()
        paths = writers.write_outputs(result, tmp, formats=[fmt])
        dt = time.perf_counter() - t0
        size = sum(p.stat().st_size for p in paths.values())
    after = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss
    print(json.dumps({"format": fmt, "seconds": dt, "peak_rss_mb": after / 1024,
                      "added_rss_mb": (after - before) / 1024, "bytes": size, "findings": len(result["findings"])}))


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--replicas", type=int, default=20000)
    ap.add_argument("--genes", type=int, default=250)
    ap.add_argument("--formats", default=",".join(FORMATS))
    ap.add_argument("--child", help=argparse.SUPPRESS)
    a = ap.parse_args(argv)
    if a.child:
        child(a.child, a.replicas, a.genes)
        return 0
    print(f"{'format':<12} {'seconds':>8} {'peak MB':>8} {'added MB':>9} {'output MB':>10}  findings")
    for fmt in a.formats.split(","):
        out = subprocess.run([sys.executable, __file__, "--child", fmt, "--replicas", str(a.replicas),
                              "--genes", str(a.genes)], capture_output=True, text=True)
        if out.returncode:
            print(f"{fmt:<12} failed: {out.stderr.strip().splitlines()[-1] if out.stderr.strip() else out.returncode}")
            continue
        d = json.loads(out.stdout.strip().splitlines()[-1])
        print(f"{fmt:<12} {d['seconds']:8.2f} {d['peak_rss_mb']:8.0f} {d['added_rss_mb']:9.0f} "
              f"{d['bytes'] / 1e6:10.1f}  {d['findings']}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
