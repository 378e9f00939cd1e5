"""Benchmark on published cases (GA4GH phenopacket-store, ../shared/refdata/phenopackets).

For every case: phenotype-only rank of the causal gene among the candidate genes (panel, or
the stand-in list while the panel is absent), retinal fit, PP4 on the causal gene and on the
other genes, matching time; and, when ``irdtriage.pipeline.triage`` imports, the full-pipeline
rank of the causal gene (top-1 / top-3), whether the genotype fit is the published allelic
state, the classes the case's alleles received, the score margin over the best other gene,
the case status and the wall time per case; for the non-retinal IFT140 cases, whether the
pipeline says the phenotype does not fit a retinal disease. Prints figures; asserts nothing.

``--hold-out-genes`` measures each gene of the reference folder as a held-out gene instead (see
``hold_out``): the gene's own settings in criteria.yaml are removed for its cases, and per gene
it prints the full-pipeline top-1/top-3 and genotype fit, the phenotype-only rank (observed terms
only, ties kept), and the rank when the case's own alleles carry no evidence beyond "missense".

    python benchmarks/bench_phenopackets.py [--no-pipeline] [--limit N] [--gene RPGRIP1]
    python benchmarks/bench_phenopackets.py --hold-out-genes [--refdata ../shared/refdata]
"""
from __future__ import annotations

import argparse
import dataclasses
import statistics
import sys
import tempfile
import time
from collections import Counter, defaultdict
from pathlib import Path
from typing import Optional

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(ROOT / "tests" / "external"))

import phenopacket_cases  # noqa: E402
from phenopacket_cases import (  # noqa: E402
    NON_RETINAL_GENES, candidate_genes, load_cases, pick_decoys, write_case_phenopacket, write_case_vcf,
)

from irdtriage.phenopacket_in import read_phenopacket  # noqa: E402
from irdtriage.phenotype import PhenotypeMatcher, get_ontology, phenotype_ranks, pp4, retinal_fit  # noqa: E402


def pct(a: int, b: int) -> str:
    return f"{a}/{b} ({100 * a / b:.0f} %)" if b else "-"


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--no-pipeline", action="store_true")
    ap.add_argument("--limit", type=int, default=0, help="at most N cases per gene")
    ap.add_argument("--gene", action="append", default=[])
    ap.add_argument("--hold-out-genes", action="store_true",
                    help="measure each gene as held out (per-gene table, phenotype alone, evidence removed)")
    ap.add_argument("--refdata", default=str(phenopacket_cases.REFDATA),
                    help="the shared reference data folder (default ../shared/refdata beside the project)")
    args = ap.parse_args(argv)
    phenopackets = Path(args.refdata) / "phenopackets"
    if not phenopackets.is_dir():
        print(f"reference cases not found at {phenopackets}; nothing to measure "
              f"(GA4GH phenopacket-store cases, see ../shared/refdata/README.md)")
        return 1
    phenopacket_cases.MANE = Path(args.refdata) / "mane" / "MANE.GRCh38.v1.5.summary.txt.gz"

    t0 = time.perf_counter()
    get_ontology()
    t_load = time.perf_counter() - t0
    cases = load_cases(phenopackets)
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
    if not args.no_pipeline or args.hold_out_genes:
        try:
            from irdtriage.pipeline import triage  # noqa: F811
        except Exception as exc:  # the pipeline is written by another part of the project
            print(f"full pipeline not measured: cannot import irdtriage.pipeline.triage ({exc})")

    if args.hold_out_genes:
        if triage is None:
            return 1
        hold_out(triage, cases, all_cases, matcher)
        return 0

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


# ---------------------------------------------------------------------------
# --hold-out-genes
# ---------------------------------------------------------------------------
def rules_without(gene: str, tmp: Path) -> tuple[Path, list[str]]:
    """A copy of the bundled criteria.yaml without ``gene``'s own settings; what was removed."""
    import yaml

    from irdtriage.acmg.rules import default_path

    data = yaml.safe_load(default_path().read_text(encoding="utf-8"))
    removed = []
    if gene in (data.get("genes") or {}):
        removed += [f"criteria.yaml genes.{gene}.{k}" for k in data["genes"].pop(gene)]
    kept = [x for x in data.get("frequency_exceptions") or [] if x.get("gene") != gene]
    if len(kept) != len(data.get("frequency_exceptions") or []):
        removed.append(f"criteria.yaml frequency_exceptions of {gene}")
        data["frequency_exceptions"] = kept
    out = tmp / f"criteria-without-{gene}.yaml"
    out.write_text(yaml.safe_dump(data, sort_keys=False, allow_unicode=True), encoding="utf-8")
    return out, removed


def _gene_rank(res: dict, gene: str) -> tuple[int, Optional[str], list[str]]:
    genes = res.get("genes", [])
    syms = [g["symbol"] for g in genes]
    rank = syms.index(gene) + 1 if gene in syms else 999
    fit = next((g.get("genotype_fit") for g in genes if g["symbol"] == gene), None)
    classes = [f.get("classification") or "unclassified" for f in res.get("findings", []) if f.get("gene") == gene]
    return rank, fit, classes


def hold_out(triage, cases, all_cases, matcher) -> None:
    """Each gene of the reference folder as a held-out gene.

    The product has no trainable parameters; what it holds per gene is curated data (the panel
    entry: inheritance and mechanism; gene-specific criteria settings in criteria.yaml; a
    combining rule set in combining.yaml). For a held-out gene's cases the gene's criteria.yaml
    settings are removed (a temporary copy passed as ``rules_path``); a gene mapped to its own
    combining rule set is named in the output. Per case:

    * full pipeline on the case VCF (causal records + 2 decoys) and the phenopacket without
      interpretations: rank of the case gene, genotype fit vs the published allelic state;
    * phenotype alone: the product's matcher on the observed HPO terms only (excluded terms
      dropped), rank of the case gene among the panel genes with ties kept
      (``phenotype.phenotype_ranks``): "strict" counts a gene sharing first place with others
      as not first, "ties" counts it;
    * evidence removed: the same VCF with the case's own records annotated as missense with no
      HGVS, positions or amino acids (``csq_for(strip_evidence=True)``), so they can meet no
      variant-level criterion from the annotation; rank, fit and the classes they received.
    """
    import tempfile as _tf

    from irdtriage.acmg.rulesets import load_combining

    combining = load_combining()
    by_gene = defaultdict(list)
    for c in cases:
        by_gene[c.gene].append(c)
    stats = {}
    with _tf.TemporaryDirectory() as tmpd:
        tmp = Path(tmpd)
        for gene in sorted(by_gene, key=lambda g: (g in NON_RETINAL_GENES, g)):
            rules_path, removed = rules_without(gene, tmp)
            mapped = combining.genes.get(gene)
            s = stats[gene] = defaultdict(list)
            s["removed"] = removed
            s["ruleset"] = mapped
            for case in by_gene[gene]:
                pp_path = write_case_phenopacket(case, tmp / f"{case.sample}.json")
                prof = read_phenopacket(pp_path)
                observed = dataclasses.replace(prof, excluded=())
                ms = matcher.match(observed)
                if ms and gene in ms:
                    pr = phenotype_ranks(ms)[gene]
                    s["ph_low"].append(pr.low)
                    s["ph_high"].append(pr.high)
                else:
                    s["ph_low"].append(999)
                    s["ph_high"].append(999)
                if not case.complete:
                    s["incomplete"].append(case.id)
                    continue
                decoys = pick_decoys(case, all_cases)
                for label, strip in (("full", False), ("vus", True)):
                    vcf = write_case_vcf(case, tmp / f"{case.sample}.{label}.vcf", decoys, strip_causal_evidence=strip)
                    try:
                        res = triage(str(vcf), sample=case.sample, phenopacket=str(pp_path),
                                     phenotype_matcher=matcher, rules_path=str(rules_path))
                    except Exception as exc:
                        s["errors"].append(f"{case.id} ({label}): {type(exc).__name__}: {exc}")
                        continue
                    rank, fit, classes = _gene_rank(res, gene)
                    s[f"{label}_rank"].append(rank)
                    s[f"{label}_fit"].append(fit == case.expected_fit)
                    s[f"{label}_classes"].extend(classes)
                    if label == "full":
                        rf = (res.get("phenotype") or {}).get("retinal_fit")
                        s["retinal_decision"].append(None if rf is None else bool(rf.get("fits")))
                        s["status"].append(res.get("case", {}).get("status"))
                        if rank != 1 or fit != case.expected_fit:
                            s["misses"].append(f"{case.path.name}: rank {rank}, fit {fit!r} "
                                               f"(published {case.expected_fit!r})")
    print_hold_out(stats)


def _top(xs, k) -> int:
    return sum(x <= k for x in xs)


def print_hold_out(stats) -> None:
    print()
    print("held-out genes (GA4GH phenopacket-store cases; each gene's own criteria.yaml settings removed for its cases)")
    head = (f"{'gene':9} {'cases':>5} {'run':>4} | {'top1':>12} {'top3':>12} {'fit ok':>12} | "
            f"{'pheno top1 strict/ties':>22} {'pheno top10 strict/ties':>23} | "
            f"{'no-evid top1':>12} {'no-evid top3':>12} {'med rank':>8} {'fit ok':>12}")
    print(head)
    print("-" * len(head))
    tot = defaultdict(list)

    def line(name, s):
        n_all = len(s["ph_low"])
        n = len(s["full_rank"])
        nv = len(s["vus_rank"])
        ph = f"{_top(s['ph_high'], 1)}/{_top(s['ph_low'], 1)} of {n_all}"
        ph10 = f"{_top(s['ph_high'], 10)}/{_top(s['ph_low'], 10)} of {n_all}"
        groups = [h - lo + 1 for lo, h in zip(s["ph_low"], s["ph_high"]) if lo == 1]
        if groups:
            s["first_group"] = groups
        med = statistics.median(s["vus_rank"]) if s["vus_rank"] else "-"
        print(f"{name:9} {n_all:>5} {n:>4} | {pct(_top(s['full_rank'], 1), n):>12} {pct(_top(s['full_rank'], 3), n):>12} "
              f"{pct(sum(s['full_fit']), n):>12} | {ph:>22} {ph10:>23} | {pct(_top(s['vus_rank'], 1), nv):>12} "
              f"{pct(_top(s['vus_rank'], 3), nv):>12} {med:>8} {pct(sum(s['vus_fit']), nv):>12}")

    for gene, s in stats.items():
        if gene in NON_RETINAL_GENES:
            continue
        line(gene, s)
        for k in ("ph_low", "ph_high", "full_rank", "full_fit", "vus_rank", "vus_fit", "full_classes", "vus_classes"):
            tot[k].extend(s[k])
    print("-" * len(head))
    line("retinal", tot)
    for gene, s in stats.items():
        if gene in NON_RETINAL_GENES:
            print("-" * len(head))
            line(gene + "*", s)
    print("cases: all cases of the gene (phenotype columns); run: cases with a vcfRecord for every causal variant "
          "(pipeline columns).\npheno: phenotype match alone on the observed HPO terms; strict = no other gene "
          "shares the place, ties = the tie group reaches the place.\nno-evid: the case's own alleles annotated "
          "as missense with nothing else known (no HGVS, positions, amino acids, scores or frequencies).")
    g1 = tot.get("first_group", [])  # set by line("retinal", tot)
    if g1:
        print(f"phenotype alone, retinal: when the case gene is in the first tie group, the group holds "
              f"median {statistics.median(g1)} genes (max {max(g1)}) of the panel")
    print(f"case allele classes, retinal: full {_classes(tot['full_classes'])}; evidence removed "
          f"{_classes(tot['vus_classes'])}")
    for gene, s in stats.items():
        print(f"  {gene}: removed for the hold-out: {', '.join(s['removed']) or 'nothing (no gene-specific settings)'}"
              f"; own combining rule set: {s['ruleset'] or 'none'}; incomplete cases {len(s['incomplete'])}; "
              f"classes full {_classes(s['full_classes'])}, evidence removed {_classes(s['vus_classes'])}")
        for e in s["errors"][:3]:
            print("     error:", e[:200])
    for gene, s in stats.items():
        if gene in NON_RETINAL_GENES:
            v = s["retinal_decision"]
            print(f"* {gene}: phenotype-mismatch controls (non-retinal presentations): the pipeline says the phenotype "
                  f"does not fit a retinal disease in {pct(sum(x is False for x in v), len(v))}; SOLVED in "
                  f"{sum(x == 'SOLVED' for x in s['status'])}/{len(s['status'])}.")
    misses = [m for g, s in stats.items() if g not in NON_RETINAL_GENES for m in s["misses"]]
    if misses:
        print(f"retinal misses, full pipeline ({len(misses)}):")
        for m in misses[:20]:
            print("  ", m)


if __name__ == "__main__":
    sys.exit(main())
