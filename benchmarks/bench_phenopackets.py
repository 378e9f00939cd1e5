"""Benchmark on published cases (GA4GH phenopacket-store, ../shared/refdata/phenopackets).

For every case: phenotype-only rank of the causal gene among the candidate genes (panel, or
the stand-in list while the panel is absent), retinal fit, PP4 on the causal gene and on the
other genes, matching time; and, when ``irdtriage.pipeline.triage`` imports, the full-pipeline
rank of the causal gene (top-1 / top-3), whether the genotype fit is the published allelic
state, the classes the case's alleles received, the score margin over the best other gene,
the case status and the wall time per case; for the non-retinal IFT140 cases, whether the
pipeline says the phenotype does not fit a retinal disease. Prints figures; asserts nothing.

    python benchmarks/bench_phenopackets.py [--no-pipeline] [--limit N] [--gene RPGRIP1]
"""
from __future__ import annotations

import argparse
import statistics
import sys
import tempfile
import time
from collections import Counter, defaultdict
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(ROOT / "tests" / "external"))

from phenopacket_cases import (  # noqa: E402
    NON_RETINAL_GENES, PHENOPACKETS, candidate_genes, load_cases, pick_decoys, write_case_phenopacket, write_case_vcf,
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
                run_pipeline(triage, case, all_cases, pp_path, Path(tmp), matcher, r)

    print_phenotype_table(rows, times, len(genes))
    if triage is not None:
        print_pipeline_table(rows)
    return 0


def run_pipeline(triage, case, all_cases, pp_path, tmp: Path, matcher, r) -> None:
    """One case through the whole pipeline; appends per-case figures to ``r``."""
    vcf = write_case_vcf(case, tmp / f"{case.sample}.vcf", pick_decoys(case, all_cases))
    t0 = time.perf_counter()
    try:
        res = triage(str(vcf), sample=case.sample, phenopacket=str(pp_path), phenotype_matcher=matcher)
    except Exception as exc:
        r["pipe_error"].append(f"{case.id}: {type(exc).__name__}: {exc}")
        return
    r["wall"].append(time.perf_counter() - t0)
    genes = res.get("genes", [])
    syms = [g["symbol"] for g in genes]
    rank = syms.index(case.gene) + 1 if case.gene in syms else 999
    r["pipe_rank"].append(rank)
    mine = next((g for g in genes if g["symbol"] == case.gene), {})
    fitv = mine.get("genotype_fit")
    r["fit_ok"].append(fitv == case.expected_fit)
    others = [g.get("score", 0.0) for g in genes if g["symbol"] != case.gene]
    if mine:
        r["margin"].append(mine.get("score", 0.0) - (max(others) if others else 0.0))
    for f in res.get("findings", []):
        if f.get("gene") == case.gene:
            r["classes"].append(f.get("classification") or "unclassified")
    r["status"].append(res.get("case", {}).get("status"))
    rf = (res.get("phenotype") or {}).get("retinal_fit")
    r["retinal_decision"].append(None if rf is None else bool(rf.get("fits")))
    if rank != 1 or fitv != case.expected_fit:
        r["misses"].append(f"{case.path.name}: rank {rank}, fit {fitv!r} (published {case.expected_fit!r}), "
                           f"top {syms[:3]}")


def print_phenotype_table(rows, times, n_genes) -> None:
    print()
    print("phenotype only (HPO terms of the phenopacket vs every panel gene)")
    print(f"{'gene':8} {'n':>4} {'pheno top1':>14} {'pheno top3':>14} {'pheno top10':>14} {'med rank':>8}"
          f" {'med calib':>9} {'PP4 causal':>13} {'PP4 others/case':>15} {'retinal fit ok':>15}")
    tot = defaultdict(int)
    for gene in sorted(rows):
        r = rows[gene]
        rk = r["pheno_rank"]
        n = len(rk)
        t1, t3, t10 = (sum(x <= k for x in rk) for k in (1, 3, 10))
        if gene not in NON_RETINAL_GENES:
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
        print(f"phenotype match time per case ({n_genes} genes): median {statistics.median(times) * 1000:.1f} ms,"
              f" max {max(times) * 1000:.1f} ms (first call per term-set size builds its null)")


def _classes(cs) -> str:
    c = Counter(cs)
    short = {"Pathogenic": "P", "Likely pathogenic": "LP", "Uncertain significance": "VUS",
             "Likely benign": "LB", "Benign": "B"}
    return " ".join(f"{short.get(k, k)}:{c[k]}" for k in ("Pathogenic", "Likely pathogenic",
                                                          "Uncertain significance", "Likely benign", "Benign") if c[k])


def print_pipeline_table(rows) -> None:
    print()
    print("full pipeline (GRCh38 VCF of the published variants + 2 heterozygous decoy carriers from other "
          "recessive genes; phenopacket without interpretations)")
    head = (f"{'gene':8} {'n':>4} {'top1':>14} {'top3':>14} {'fit = published':>16} {'SOLVED':>7} "
            f"{'min margin':>10} {'wall ms med/max':>16}  case allele classes")
    print(head)
    print("-" * len(head))
    pt = defaultdict(list)
    for gene in sorted(rows, key=lambda g: (g in NON_RETINAL_GENES, g)):
        r = rows[gene]
        rk = r["pipe_rank"]
        n = len(rk)
        if not n and not r["pipe_error"]:
            continue
        t1, t3 = sum(x == 1 for x in rk), sum(x <= 3 for x in rk)
        wall = r["wall"]
        w = f"{statistics.median(wall) * 1000:.0f}/{max(wall) * 1000:.0f}" if wall else "-"
        mg = f"{min(r['margin']):.3f}" if r["margin"] else "-"
        print(f"{gene:8} {n:>4} {pct(t1, n):>14} {pct(t3, n):>14} {pct(sum(r['fit_ok']), n):>16} "
              f"{sum(s == 'SOLVED' for s in r['status']):>7} {mg:>10} {w:>16}  {_classes(r['classes'])}")
        if gene not in NON_RETINAL_GENES:
            for k in ("pipe_rank", "fit_ok", "wall", "margin", "status", "classes"):
                pt[k].extend(r[k])
        for e in r["pipe_error"][:3]:
            print("   error:", e[:200])
    rk = pt["pipe_rank"]
    n = len(rk)
    wall = pt["wall"]
    mg = f"{min(pt['margin']):.3f}" if pt["margin"] else "-"
    w = f"{statistics.median(wall) * 1000:.0f}/{max(wall) * 1000:.0f}" if wall else "-"
    print("-" * len(head))
    print(f"{'retinal':8} {n:>4} {pct(sum(x == 1 for x in rk), n):>14} {pct(sum(x <= 3 for x in rk), n):>14} "
          f"{pct(sum(pt['fit_ok']), n):>16} {sum(s == 'SOLVED' for s in pt['status']):>7} {mg:>10} {w:>16}  "
          f"{_classes(pt['classes'])}")
    print("min margin: case gene's score minus the best other gene's score (> 0 means ranked first)")
    for gene in sorted(NON_RETINAL_GENES & set(rows)):
        r = rows[gene]
        v = r["retinal_decision"]
        print(f"\n{gene} (non-retinal presentations): pipeline says the phenotype does not fit a retinal disease "
              f"in {pct(sum(x is False for x in v), len(v))}; case status SOLVED in "
              f"{sum(s == 'SOLVED' for s in r['status'])}/{len(r['status'])}. Fit vs published allelic state "
              f"{pct(sum(r['fit_ok']), len(r['fit_ok']))}: the published inheritance of these (kidney) diseases is "
              f"taken from HPO, the panel lists the gene's retinal (recessive) inheritance only.")
    misses = [m for g in sorted(rows) if g not in NON_RETINAL_GENES for m in rows[g]["misses"]]
    if misses:
        print(f"\nretinal misses ({len(misses)}):")
        for m in misses[:20]:
            print("  ", m)


if __name__ == "__main__":
    sys.exit(main())
