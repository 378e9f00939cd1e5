"""Benchmark on published cases (GA4GH phenopacket-store, ../shared/refdata/phenopackets).

For every case: phenotype-only rank of the causal gene among the candidate genes (panel, or
the stand-in list while the panel is absent), retinal fit, PP4 on the causal gene and on the
other genes, matching time; and, when ``irdtriage.pipeline.triage`` imports, the full-pipeline
rank of the causal gene (top-1 / top-3) and whether the genotype fit is the expected one.
Prints figures; asserts nothing.

    python benchmarks/bench_phenopackets.py [--no-pipeline] [--limit N] [--gene RPGRIP1]
"""
from __future__ import annotations

import argparse
import statistics
import sys
import tempfile
import time
from collections import defaultdict
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(ROOT / "tests" / "external"))

from phenopacket_cases import (  # noqa: E402
    PHENOPACKETS, candidate_genes, load_cases, pick_decoys, write_case_phenopacket, write_case_vcf,
)

from irdtriage.phenopacket_in import read_phenopacket  # noqa: E402
from irdtriage.phenotype import PhenotypeMatcher, get_ontology, pp4, retinal_fit  # noqa: E402


def pct(a: int, b: int) -> str:
    return f"{a}/{b} ({100 * a / b:.0f} %)" if b else "-"


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--no-pipeline", action="store_true")
    ap.add_argument("--limit", type=int, default=0, help="at most N cases per gene")
    ap.add_argument("--gene", action="append", default=[])
    args = ap.parse_args(argv)
    if not PHENOPACKETS.is_dir():
        print(f"reference cases not found at {PHENOPACKETS}; nothing to measure")
        return 1

    t0 = time.perf_counter()
    get_ontology()
    t_load = time.perf_counter() - t0
    cases = load_cases()
    all_cases = cases
    if args.gene:
        cases = [c for c in cases if c.gene in args.gene]
    if args.limit:
        per = defaultdict(int)
        kept = []
        for c in cases:
            per[c.gene] += 1
            if per[c.gene] <= args.limit:
                kept.append(c)
        cases = kept
    genes = candidate_genes()
    t0 = time.perf_counter()
    matcher = PhenotypeMatcher(genes)
    matcher._pool()
    t_init = time.perf_counter() - t0
    print(f"HPO {get_ontology().version()} load {t_load:.2f} s; matcher init for {len(genes)} genes {t_init:.2f} s;"
          f" {len(cases)} cases")

    triage = None
    if not args.no_pipeline:
        try:
            from irdtriage.pipeline import triage  # noqa: F811
        except Exception as exc:  # the pipeline is written by another part of the project
            print(f"full pipeline not measured: cannot import irdtriage.pipeline.triage ({exc})")

    rows = defaultdict(lambda: defaultdict(list))
    times = []
    with tempfile.TemporaryDirectory() as tmp:
        for case in cases:
            pp_path = write_case_phenopacket(case, Path(tmp) / f"{case.sample}.json")
            prof = read_phenopacket(pp_path)
            t0 = time.perf_counter()
            ms = matcher.match(prof)
            times.append(time.perf_counter() - t0)
            r = rows[case.gene]
            fit, fscore, _ = retinal_fit(prof)
            r["retinal_ok"].append(fit == case.retinal)
            if ms and case.gene in ms:
                order = [m.gene for m in sorted(ms.values(), key=lambda m: (-m.score, m.gene))]
                r["pheno_rank"].append(order.index(case.gene) + 1)
                r["calibrated"].append(ms[case.gene].calibrated)
                r["gene_pct"].append(ms[case.gene].gene_percentile)
                r["pp4_true"].append(bool(pp4(ms[case.gene], case.gene, ms).met))
                r["pp4_other"].append(sum(bool(pp4(m, g, ms).met) for g, m in ms.items() if g != case.gene))
            if triage is not None and case.complete:
                vcf = write_case_vcf(case, Path(tmp) / f"{case.sample}.vcf", pick_decoys(case, all_cases))
                try:
                    res = triage(str(vcf), sample=case.sample, phenopacket=str(pp_path),
                                 phenotype_matcher=matcher)
                    syms = [g["symbol"] for g in res.get("genes", [])]
                    rank = syms.index(case.gene) + 1 if case.gene in syms else 999
                    r["pipe_rank"].append(rank)
                    fitv = next((g.get("genotype_fit") for g in res["genes"] if g["symbol"] == case.gene), None)
                    r["fit_ok"].append(fitv == case.expected_fit)
                except Exception as exc:
                    r["pipe_error"].append(f"{case.id}: {type(exc).__name__}: {exc}")

    print()
    print(f"{'gene':8} {'n':>4} {'pheno top1':>14} {'pheno top3':>14} {'pheno top10':>14} {'med rank':>8}"
          f" {'med calib':>9} {'PP4 causal':>13} {'PP4 others/case':>15} {'retinal fit ok':>15}")
    tot = defaultdict(int)
    for gene in sorted(rows):
        r = rows[gene]
        rk = r["pheno_rank"]
        n = len(rk)
        t1, t3, t10 = (sum(x <= k for x in rk) for k in (1, 3, 10))
        if gene in ("IFT140",):
            pass
        else:
            tot["n"] += n; tot["t1"] += t1; tot["t3"] += t3; tot["t10"] += t10
            tot["pp4"] += sum(r["pp4_true"]); tot["pp4o"] += sum(r["pp4_other"])
        tot["rf"] += sum(r["retinal_ok"]); tot["rfn"] += len(r["retinal_ok"])
        print(f"{gene:8} {n:>4} {pct(t1, n):>14} {pct(t3, n):>14} {pct(t10, n):>14} "
              f"{statistics.median(rk) if rk else '-':>8} "
              f"{statistics.median(r['calibrated']) if rk else 0:>9.3f} {pct(sum(r['pp4_true']), n):>13} "
              f"{(sum(r['pp4_other']) / n if n else 0):>15.2f} {pct(sum(r['retinal_ok']), len(r['retinal_ok'])):>15}")
    n = tot["n"]
    print(f"{'retinal':8} {n:>4} {pct(tot['t1'], n):>14} {pct(tot['t3'], n):>14} {pct(tot['t10'], n):>14}"
          f" {'':>8} {'':>9} {pct(tot['pp4'], n):>13} {(tot['pp4o'] / n if n else 0):>15.2f}"
          f" {pct(tot['rf'], tot['rfn']):>15} (retinal-fit column: all cases)")
    if times:
        print(f"\nphenotype match time per case ({len(genes)} genes): median {statistics.median(times) * 1000:.1f} ms,"
              f" max {max(times) * 1000:.1f} ms (first call per term-set size builds its null)")

    if triage is not None:
        print(f"\nfull pipeline (VCF + phenopacket without interpretations, 2 decoy carriers per case)")
        print(f"{'gene':8} {'n':>4} {'top1':>14} {'top3':>14} {'fit correct':>14} {'errors':>6}")
        pt = defaultdict(int)
        for gene in sorted(rows):
            r = rows[gene]
            rk = r["pipe_rank"]
            n = len(rk)
            t1, t3 = sum(x == 1 for x in rk), sum(x <= 3 for x in rk)
            print(f"{gene:8} {n:>4} {pct(t1, n):>14} {pct(t3, n):>14} {pct(sum(r['fit_ok']), n):>14} {len(r['pipe_error']):>6}")
            if gene != "IFT140":
                pt["n"] += n; pt["t1"] += t1; pt["t3"] += t3; pt["fit"] += sum(r["fit_ok"])
            for e in r["pipe_error"][:2]:
                print("   error:", e[:200])
        print(f"{'retinal':8} {pt['n']:>4} {pct(pt['t1'], pt['n']):>14} {pct(pt['t3'], pt['n']):>14} {pct(pt['fit'], pt['n']):>14}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
