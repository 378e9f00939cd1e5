#!/usr/bin/env python3
"""VCF intake speed and memory: prints figures, asserts nothing.

Generates (once, cached in --workdir) a synthetic genome-size VCF (~5 M records over the
GRCh38 chromosomes) and an exome-size one (~80 k records), bgzips and tabix-indexes them,
writes the panel's intervals as BED, then times (wall clock, peak RSS of the child):

  * start-up: ``import irdtriage.cli`` and loading the HPO ontology;
  * ``read_vcf`` alone: indexed genome, unindexed genome (streamed), exome;
  * ``python -m irdtriage triage`` on the same files (when the CLI runs);
  * ``bcftools view -R panel.bed`` (indexed) and ``-T panel.bed`` (streaming) for scale.

Usage: python benchmarks/bench_vcf.py [--workdir /tmp/irdtriage-bench] [--records 5000000]
"""
from __future__ import annotations

import argparse
import gzip
import json
import os
import random
import shutil
import subprocess
import sys
import time
from pathlib import Path

import pysam

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

# GRCh38 primary chromosome lengths (GRC GCF_000001405.26; chr1 also in the standards notes).
GRCH38 = {
    "1": 248956422, "2": 242193529, "3": 198295559, "4": 190214555, "5": 181538259, "6": 170805979,
    "7": 159345973, "8": 145138636, "9": 138394717, "10": 133797422, "11": 135086622, "12": 133275309,
    "13": 114364328, "14": 107043718, "15": 101991189, "16": 90338345, "17": 83257441, "18": 80373285,
    "19": 58617616, "20": 64444167, "21": 46709983, "22": 50818468, "X": 156040895, "Y": 57227415,
}

# Used only when irdtriage.panel is not available yet: a retinal gene list (from memory),
# spans looked up in MANE v1.5 from the shared reference data.
FALLBACK_GENES = """ABCA4 RPE65 RHO USH2A EYS RPGR RP1 RP2 PRPF31 PRPF8 PRPF3 CRB1 CEP290 GUCY2D AIPL1 LCA5
RPGRIP1 RDH12 TULP1 CNGA1 CNGB1 CNGA3 CNGB3 PDE6A PDE6B PDE6C PDE6H GNAT1 GNAT2 SAG GRK1 RGS9 RGS9BP
GUCA1A NR2E3 NRL CRX BEST1 PRPH2 ROM1 CHM RS1 NYX TRPM1 GRM6 CACNA1F CABP4 MERTK LRAT RLBP1 RDH5 RBP3
BBS1 BBS2 MKKS USH1C MYO7A CDH23 PCDH15 USH1G CLRN1 ADGRV1 WHRN CLN3 IFT140 KCNV2 PROM1 IMPDH1 SNRNP200
TOPORS FAM161A C2orf71 MAK ARL6 CERKL ZNF513 KLHL7 RDH11 RBP4 ABCA4 TTC8 ARL13B INPP5E NPHP1 NPHP4 IQCB1""".split()

PANEL_CODE = r"""
import sys
sys.path.insert(0, {root!r})
sys.path.insert(0, {bench!r})
from bench_vcf import load_bench_panel
"""


def load_bench_panel():
    try:
        from irdtriage.panel import load_panel  # type: ignore

        return load_panel()
    except Exception:
        pass
    from irdtriage.models import Gene, Panel, Span

    mane = ROOT.parent / "shared" / "refdata" / "mane" / "MANE.GRCh38.v1.5.summary.txt.gz"
    if not mane.is_file():
        raise SystemExit("no irdtriage.panel and no MANE file to build a panel from")
    want = set(FALLBACK_GENES)
    genes = {}
    with gzip.open(mane, "rt") as fh:
        for line in fh:
            f = line.rstrip("\n").split("\t")
            if len(f) > 13 and f[3] in want and f[9] == "MANE Select":
                num = int(f[10].split("_")[1].split(".")[0])
                chrom = {23: "X", 24: "Y"}.get(num, str(num))
                genes[f[3]] = Gene(f[3], f[2], f[4], f[5], f[7], f[6], f[13],
                                   Span(chrom, int(f[11]), int(f[12])), None, ("AR",), ("LOF",), (), "")
    return Panel("bench-fallback", "0", "", genes, {})


# ---------------------------------------------------------------------------
# Synthetic data
# ---------------------------------------------------------------------------
HEADER = """##fileformat=VCFv4.2
##FILTER=<ID=PASS,Description="All filters passed">
##FILTER=<ID=LowQual,Description="Low quality">
##INFO=<ID=AC,Number=A,Type=Integer,Description="Allele count in genotypes">
##INFO=<ID=AF,Number=A,Type=Float,Description="Allele frequency">
##INFO=<ID=AN,Number=1,Type=Integer,Description="Total number of alleles">
##INFO=<ID=BaseQRankSum,Number=1,Type=Float,Description="Base quality rank sum">
##INFO=<ID=DP,Number=1,Type=Integer,Description="Approximate read depth">
##INFO=<ID=ExcessHet,Number=1,Type=Float,Description="Excess heterozygosity">
##INFO=<ID=FS,Number=1,Type=Float,Description="Fisher strand bias">
##INFO=<ID=MQ,Number=1,Type=Float,Description="RMS mapping quality">
##INFO=<ID=MQRankSum,Number=1,Type=Float,Description="Mapping quality rank sum">
##INFO=<ID=QD,Number=1,Type=Float,Description="Quality by depth">
##INFO=<ID=ReadPosRankSum,Number=1,Type=Float,Description="Read position rank sum">
##INFO=<ID=SOR,Number=1,Type=Float,Description="Strand odds ratio">
##FORMAT=<ID=GT,Number=1,Type=String,Description="Genotype">
##FORMAT=<ID=AD,Number=R,Type=Integer,Description="Allelic depths">
##FORMAT=<ID=DP,Number=1,Type=Integer,Description="Read depth">
##FORMAT=<ID=GQ,Number=1,Type=Integer,Description="Genotype quality">
##FORMAT=<ID=PL,Number=G,Type=Integer,Description="Phred-scaled genotype likelihoods">
{contigs}##reference=GRCh38
#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\tFORMAT\tSAMPLE1
"""


def _tails(rng: random.Random, n: int = 2000) -> list[str]:
    out = []
    for _ in range(n):
        dp = rng.randint(8, 60)
        if rng.random() < 0.6:
            alt = rng.randint(dp // 3, dp - dp // 3)
            gt, ac, af, pl = "0/1", 1, 0.5, f"{rng.randint(200, 900)},0,{rng.randint(200, 900)}"
        else:
            alt = dp - rng.randint(0, 1)
            gt, ac, af, pl = "1/1", 2, 1.0, f"{rng.randint(600, 2000)},{rng.randint(60, 200)},0"
        qual = rng.uniform(30, 3000)
        filt = "PASS" if rng.random() < 0.95 else "LowQual"
        info = (f"AC={ac};AF={af:g};AN=2;BaseQRankSum={rng.uniform(-3, 3):.3f};DP={dp};ExcessHet=3.0103;"
                f"FS={rng.uniform(0, 20):.3f};MQ={rng.uniform(40, 60):.2f};MQRankSum={rng.uniform(-2, 2):.3f};"
                f"QD={qual / dp:.2f};ReadPosRankSum={rng.uniform(-2, 2):.3f};SOR={rng.uniform(0, 3):.3f}")
        out.append(f"{qual:.2f}\t{filt}\t{info}\tGT:AD:DP:GQ:PL\t{gt}:{dp - alt},{alt}:{dp}:{rng.randint(20, 99)}:{pl}")
    return out


def _alleles(rng: random.Random, n: int = 500) -> list[tuple[str, str]]:
    bases = "ACGT"
    out = []
    for _ in range(n):
        r = rng.random()
        ref = rng.choice(bases)
        if r < 0.85:  # SNV
            alt = rng.choice([b for b in bases if b != ref])
        elif r < 0.93:  # deletion
            ref = ref + "".join(rng.choice(bases) for _ in range(rng.randint(1, 8)))
            alt = ref[0]
        else:  # insertion
            alt = ref + "".join(rng.choice(bases) for _ in range(rng.randint(1, 8)))
        out.append((ref, alt))
    return out


def generate(path: Path, n_records: int, seed: int, regions=None) -> None:
    """bgzipped VCF with n_records sorted records; regions=[(chrom, start, end)] restricts positions."""
    rng = random.Random(seed)
    tails, alleles = _tails(rng), _alleles(rng)
    contigs = "".join(f"##contig=<ID=chr{c},length={n}>\n" for c, n in GRCH38.items())
    if regions is None:
        regions = [(c, 1, n) for c, n in GRCH38.items()]
    total = sum(e - s for _, s, e in regions)
    tmp = path.with_suffix(".part")
    from pysam.libcbgzf import BGZFile  # htslib's BGZF writer as bundled with pysam (no bgzip binary)

    with BGZFile(str(tmp), "wb") as w:
        w.write(HEADER.format(contigs=contigs).encode())
        by_chrom: dict[str, list] = {}
        for c, s, e in regions:
            by_chrom.setdefault(c, []).append((s, e))
        for c in GRCH38:
            if c not in by_chrom:
                continue
            positions = []
            for s, e in by_chrom[c]:
                k = max(1, round(n_records * (e - s) / total))
                positions.extend(rng.sample(range(s, e), min(k, e - s)))
            positions.sort()
            name = "chr" + c
            buf = []
            nt, na = len(tails) - 1, len(alleles) - 1
            ri = rng.randint
            for pos in positions:
                ref, alt = alleles[ri(0, na)]
                buf.append(f"{name}\t{pos}\t.\t{ref}\t{alt}\t{tails[ri(0, nt)]}\n")
                if len(buf) >= 20000:
                    w.write("".join(buf).encode())
                    buf.clear()
            w.write("".join(buf).encode())
    os.replace(tmp, path)
    pysam.tabix_index(str(path), preset="vcf", force=True)


def exome_regions(rng: random.Random, n: int = 20000):
    """Exome-like targets: ~20 k windows of 200 bp-2 kb scattered over the genome, plus the panel genes."""
    regs = []
    chroms = list(GRCH38)
    weights = [GRCH38[c] for c in chroms]
    for _ in range(n):
        c = rng.choices(chroms, weights)[0]
        s = rng.randint(1, GRCH38[c] - 3000)
        regs.append((c, s, s + rng.randint(200, 2000)))
    return regs


# ---------------------------------------------------------------------------
# Timing
# ---------------------------------------------------------------------------
def timed(cmd: list[str], stdout=subprocess.DEVNULL, env=None) -> dict:
    """Wall time and peak RSS of one child process (measured in a fresh wrapper)."""
    wrapper = (
        "import resource, subprocess, sys, time, json\n"
        "t = time.perf_counter()\n"
        "p = subprocess.run(sys.argv[1:], stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)\n"
        "w = time.perf_counter() - t\n"
        "r = resource.getrusage(resource.RUSAGE_CHILDREN)\n"
        "print(json.dumps({'wall': w, 'rss_mb': r.ru_maxrss / 1024, 'rc': p.returncode,"
        " 'err': p.stderr.decode(errors='replace')[-400:]}))\n"
    )
    out = subprocess.run([sys.executable, "-c", wrapper, *cmd], capture_output=True, text=True, env=env)
    return json.loads(out.stdout)


def report(label: str, r: dict) -> None:
    status = "" if r["rc"] == 0 else f"  (exit {r['rc']}: {r['err'].strip().splitlines()[-1] if r['err'].strip() else ''})"
    print(f"  {label:<52} {r['wall']:8.2f} s  {r['rss_mb']:7.0f} MB{status}", flush=True)


def ensure_bcftools() -> bool:
    if shutil.which("bcftools"):
        return True
    print("bcftools missing: installing from Debian (apt-get)", flush=True)
    subprocess.run(["apt-get", "install", "-y", "bcftools"], check=False)
    return shutil.which("bcftools") is not None


def main(argv=None) -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--workdir", default="/tmp/irdtriage-bench")
    ap.add_argument("--records", type=int, default=5_000_000)
    ap.add_argument("--exome-records", type=int, default=80_000)
    ap.add_argument("--seed", type=int, default=20240601)
    ap.add_argument("--repeat", type=int, default=1, help="runs per measurement (best is printed)")
    args = ap.parse_args(argv)
    work = Path(args.workdir)
    work.mkdir(parents=True, exist_ok=True)

    genome = work / f"genome_{args.records}.vcf.gz"
    exome = work / f"exome_{args.exome_records}.vcf.gz"
    panel = load_bench_panel()
    from irdtriage.vcf import panel_intervals

    ivs = panel_intervals(panel, "GRCh38", 50)
    bed = work / "panel.bed"
    bed.write_text("".join(f"chr{c}\t{s - 1}\t{e}\t{g}\n" for c, s, e, g in ivs))
    print(f"panel: {panel.name} {len(panel.genes)} genes, {len(ivs)} intervals, "
          f"{sum(e - s + 1 for _, s, e, _ in ivs) / 1e6:.2f} Mb", flush=True)

    if not genome.exists() or not Path(str(genome) + ".tbi").exists():
        t = time.perf_counter()
        generate(genome, args.records, args.seed)
        print(f"generated {genome} in {time.perf_counter() - t:.1f} s", flush=True)
    if not exome.exists() or not Path(str(exome) + ".tbi").exists():
        rng = random.Random(args.seed + 1)
        regs = exome_regions(rng) + [(c, s, e) for c, s, e, _ in ivs]
        generate(exome, args.exome_records, args.seed + 1, regions=regs)
    unindexed = work / f"genome_{args.records}_noindex.vcf.gz"
    if not unindexed.exists():
        os.link(genome, unindexed) if hasattr(os, "link") else shutil.copy(genome, unindexed)
    exome_noidx = work / f"exome_{args.exome_records}_noindex.vcf.gz"
    if not exome_noidx.exists():
        shutil.copy(exome, exome_noidx)
    print(f"genome: {genome.stat().st_size / 1e6:.0f} MB compressed; exome: {exome.stat().st_size / 1e6:.1f} MB",
          flush=True)

    def best(cmd, env=None):
        runs = [timed(cmd, env=env) for _ in range(args.repeat)]
        return min(runs, key=lambda r: r["wall"])

    py = sys.executable
    env = dict(os.environ, PYTHONPATH=str(ROOT) + os.pathsep + os.environ.get("PYTHONPATH", ""))
    print("\nstart-up", flush=True)
    startup = best([py, "-c", "import irdtriage.cli"], env)
    report("python -c 'import irdtriage.cli'", startup)
    onto = best([py, "-c", "from pyhpo import Ontology; Ontology()"], env)
    report("HPO ontology load (hpo3)", onto)

    read_code = PANEL_CODE.format(root=str(ROOT), bench=str(Path(__file__).parent)) + (
        "from irdtriage.vcf import read_vcf\n"
        "r = read_vcf(sys.argv[1], load_bench_panel(), build='GRCh38')\n"
        "print(r.counts, r.header_info['access'], file=sys.stderr)\n"
    )
    print("\nread_vcf alone (panel filter, split, genotypes)", flush=True)
    rv = {}
    for label, f in [("indexed genome", genome), ("unindexed genome (streamed)", unindexed),
                     ("indexed exome", exome), ("unindexed exome (streamed)", exome_noidx)]:
        rv[label] = best([py, "-c", read_code, str(f)], env)
        report(label, rv[label])
        counts = rv[label]["err"].strip().splitlines()[-1] if rv[label]["err"].strip() else ""
        print(f"      {counts}")

    print("\nbcftools (for scale)", flush=True)
    bt = {}
    if ensure_bcftools():
        bt["R"] = best(["bcftools", "view", "-H", "-R", str(bed), str(genome)])
        report("bcftools view -R panel.bed (indexed genome)", bt["R"])
        bt["T"] = best(["bcftools", "view", "-H", "-T", str(bed), str(unindexed)])
        report("bcftools view -T panel.bed (streamed genome)", bt["T"])
        bt["Te"] = best(["bcftools", "view", "-H", "-T", str(bed), str(exome_noidx)])
        report("bcftools view -T panel.bed (streamed exome)", bt["Te"])

    print("\nend to end: python -m irdtriage triage", flush=True)
    cli = {}
    for label, f in [("indexed genome", genome), ("unindexed genome", unindexed), ("indexed exome", exome)]:
        out = work / ("out_" + label.replace(" ", "_"))
        cli[label] = best([py, "-m", "irdtriage", "triage", str(f), "--out", str(out), "--build", "GRCh38"], env)
        report(label, cli[label])

    print("\ntargets")
    su = startup["wall"] + onto["wall"]
    if bt:
        print(f"  indexed genome  read_vcf {rv['indexed genome']['wall']:.2f} s  vs start-up + 2 x -R = "
              f"{su + 2 * bt['R']['wall']:.2f} s")
        print(f"  streamed genome read_vcf {rv['unindexed genome (streamed)']['wall']:.2f} s  vs 2 x -T = "
              f"{2 * bt['T']['wall']:.2f} s")
    print(f"  exome end to end {cli['indexed exome']['wall']:.2f} s (rc {cli['indexed exome']['rc']}) vs 3 s")
    peak = max(r["rss_mb"] for r in list(rv.values()) + list(cli.values()))
    print(f"  peak RSS {peak:.0f} MB vs 500 MB")


if __name__ == "__main__":
    main()
