#!/usr/bin/env python3
"""Built-in annotation speed: prints figures, asserts nothing.

Builds a synthetic VCF (fixed seed) of alleles over two transcripts from outside records in
../shared/refdata/refseqgene -- USH2A NM_206933.2 (NG_009497.1 FASTA + GFF3, placed on GRCh38
chr1 = 216,428,397 - NG position) and RS1 NM_000330.3 (LRG_702, GRCh38 mapping) -- about 70 %
exonic or near-exon substitutions, 20 % 1-6 bp deletions and 10 % 1-6 bp insertions, with REF
taken from the record. Then times (wall clock, best of --repeat):

  * reading the VCF alone with pysam (the floor);
  * ``annotate_allele`` over every allele with the reference sequence (HGVS c./p., SO terms);
  * the same without a sequence (positions only).

With ``--synthetic`` it measures instead the synthetic exome and genome of bench_vcf.py
(generated once and cached in ``--vcf-workdir``, the same folder bench_vcf.py uses): ``read_vcf``
alone over the panel's whole gene spans, then built-in annotation of every allele read, with and
without a reference sequence, in alleles per second, and ``triage`` end to end with
``--transcripts``/``--reference``. The synthetic VCFs' REF bases are random, so there is no real
sequence behind them: the transcript models are the panel's own structures
(panels/transcripts.yaml, GRCh38 exons and CDS, written as a GFF3) and the reference is a
random sequence (fixed seed) over the panel gene spans +/- 5 kb (a FASTA of ``chrN:START-END``
records) -- right for timing, meaningless as annotation.

Usage: python benchmarks/bench_annotate.py [--alleles 20000] [--repeat 3] [--workdir /tmp/irdtriage-bench-annotate]
       python benchmarks/bench_annotate.py --synthetic [--repeat 1] [--vcf-workdir /tmp/irdtriage-bench]
"""
from __future__ import annotations

import argparse
import gzip
import random
import sys
import time
from pathlib import Path

import pysam

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from irdtriage.annotate.annotate import TxCache, annotate_allele  # noqa: E402
from irdtriage.annotate.lrg import read_lrg  # noqa: E402
from irdtriage.annotate.providers import Placement, RegionSequence, TranscriptSet, read_gff  # noqa: E402

RSG = ROOT.parent / "shared" / "refdata" / "refseqgene"
NG_ANCHOR = 216428397


class TwoRegions:
    """Both records' sequences behind one provider."""

    def __init__(self, *regions: RegionSequence):
        self.regions = regions

    def has(self, chrom):
        return any(r.has(chrom) for r in self.regions)

    def fetch(self, chrom, start, end):
        for r in self.regions:
            if r.has(chrom):
                return r.fetch(chrom, start, end)
        return ""


def load():
    with gzip.open(RSG / "NG_009497.1.fasta.gz", "rt") as fh:
        ng = "".join(line.strip() for line in fh if not line.startswith(">"))
    ush = RegionSequence.from_gene_orientation("1", ng, NG_ANCHOR, "-")
    ush_tx = read_gff(str(RSG / "NG_009497.1.gff3"), {"NG_009497.1": Placement("1", NG_ANCHOR, "-")},
                      keep=["NM_206933.2"])
    lrg = read_lrg(str(RSG / "LRG_702.xml"))
    txs = TranscriptSet(list(ush_tx) + list(lrg.transcripts))
    return TwoRegions(ush, lrg.sequence), txs


def make_vcf(path: Path, seq, txs, n: int) -> None:
    rng = random.Random(20261202)
    recs = []
    models = list(txs)
    for _ in range(n):
        tx = rng.choice(models)
        lo, hi = tx.exons[rng.randrange(len(tx.exons))]
        pos = rng.randint(max(lo - 30, tx.start + 1), min(hi + 30, tx.end - 10))
        r = rng.random()
        ref = seq.fetch(tx.chrom, pos, pos)
        if r < 0.7:
            alt = rng.choice([b for b in "ACGT" if b != ref])
        elif r < 0.9:
            k = rng.randint(1, 6)
            alt, ref = ref, seq.fetch(tx.chrom, pos, pos + k)
        else:
            alt = ref + "".join(rng.choice("ACGT") for _ in range(rng.randint(1, 6)))
        recs.append(("chr" + tx.chrom, pos, ref, alt))
    order = {"chr1": 0, "chrX": 1}
    recs.sort(key=lambda x: (order[x[0]], x[1]))
    with open(path, "w") as fh:
        fh.write("##fileformat=VCFv4.2\n##contig=<ID=chr1,length=248956422>\n##contig=<ID=chrX,length=156040895>\n"
                 "#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\n")
        for c, p, r, a in recs:
            fh.write(f"{c}\t{p}\t.\t{r}\t{a}\t50\tPASS\t.\n")


def best(fn, repeat):
    times = []
    for _ in range(repeat):
        t = time.perf_counter()
        out = fn()
        times.append(time.perf_counter() - t)
    return min(times), out


# --- synthetic exome and genome (bench_vcf.py's files) -------------------------------------------
def panel_models():
    """TxModels from the panel's own GRCh38 structures (timing only; see the module doc)."""
    from irdtriage.annotate.providers import TxModel
    from irdtriage.transcripts import default_model

    out = []
    for (sym, build), t in default_model().transcripts.items():
        if build != "GRCh38" or not t.exons:
            continue
        cds = (t.cds_start, t.cds_end) if t.has_cds else None
        out.append(TxModel(t.refseq or sym, sym, t.chrom, t.strand, tuple(t.exons), cds, "", "panel structure"))
    return out


_STOPS = {"TAA", "TAG", "TGA"}
_COMP = str.maketrans("ACGT", "TGCA")


def orf(m, fixed: dict, rng: random.Random) -> dict:
    """Genome bases making the model's CDS ATG + random sense codons + TAA, keeping the bases
    ``fixed`` (position -> forward-strand base) where a sense codon allows."""
    pos = [p for a, b in m.exons for p in range(max(a, m.cds[0]), min(b, m.cds[1]) + 1)]
    if m.strand == "-":
        pos.reverse()
    out = {}
    n = len(pos) // 3
    for k in range(n):
        ps = pos[3 * k:3 * k + 3]
        want = [fixed.get(p) for p in ps]
        if m.strand == "-":
            want = [w.translate(_COMP) if w else None for w in want]
        if k == 0:
            codon = "ATG"
        elif k == n - 1:
            codon = "TAA"
        else:
            codon = None
            for _ in range(30):
                c = "".join(w or rng.choice("ACGT") for w in want)
                if c not in _STOPS:
                    codon = c
                    break
            codon = codon or "GCT"
        for p, b in zip(ps, codon):
            out[p] = b if m.strand == "+" else b.translate(_COMP)
    return out


def write_panel_files(work: Path, models, ref_bases: dict) -> tuple[Path, Path]:
    gff, fa = work / "panel_structures.gff3", work / "panel_random_reference.fa"
    if not gff.exists():
        rows = ["##gff-version 3"]
        for m in models:
            tid = m.transcript_id
            rows.append(f"chr{m.chrom}\tb\tmRNA\t{m.start}\t{m.end}\t.\t{m.strand}\t.\tID=rna-{tid};gene={m.gene};"
                        f"transcript_id={tid}")
            for a, b in m.exons:
                rows.append(f"chr{m.chrom}\tb\texon\t{a}\t{b}\t.\t{m.strand}\t.\tParent=rna-{tid}")
                if m.cds and a <= m.cds[1] and m.cds[0] <= b:
                    rows.append(f"chr{m.chrom}\tb\tCDS\t{max(a, m.cds[0])}\t{min(b, m.cds[1])}\t.\t{m.strand}\t0\t"
                                f"Parent=rna-{tid}")
        gff.write_text("\n".join(rows) + "\n")
    if not fa.exists():
        spans: dict[str, list[list[int]]] = {}
        for m in sorted(models, key=lambda m: (m.chrom, m.start)):
            lo, hi = max(1, m.start - 5000), m.end + 5000
            sp = spans.setdefault(m.chrom, [])
            if sp and lo <= sp[-1][1]:
                sp[-1][1] = max(sp[-1][1], hi)
            else:
                sp.append([lo, hi])
        rng = random.Random(20261202)
        with open(fa, "w") as fh:
            for chrom, sp in spans.items():
                for lo, hi in sp:
                    bases = rng.choices("ACGT", k=hi - lo + 1)
                    fixed = {p: b for (c, p), b in ref_bases.items() if c == chrom and lo <= p <= hi}
                    for m in models:  # each CDS one open reading frame, so p. is computed as for real data
                        if m.chrom == chrom and m.cds and lo <= m.start and m.end <= hi:
                            for p, b in orf(m, fixed, rng).items():
                                bases[p - lo] = b
                    for p, b in fixed.items():  # the VCFs' REF bases, so triage's REF check passes
                        bases[p - lo] = b
                    seq = "".join(bases)
                    fh.write(f">chr{chrom}:{lo}-{hi}\n")
                    fh.write("\n".join(seq[i:i + 80] for i in range(0, len(seq), 80)) + "\n")
        pysam.faidx(str(fa))
    return gff, fa


def synthetic(args) -> int:
    import os
    import subprocess

    sys.path.insert(0, str(Path(__file__).resolve().parent))
    import bench_vcf  # noqa: E402

    from irdtriage.annotate.annotate import Annotator
    from irdtriage.vcf import panel_intervals, read_vcf

    work = Path(args.vcf_workdir)
    work.mkdir(parents=True, exist_ok=True)
    panel = bench_vcf.load_bench_panel()
    genome = work / f"genome_{args.records}.vcf.gz"
    exome = work / f"exome_{args.exome_records}.vcf.gz"
    seed = 20240601  # bench_vcf.py's default seed, so both scripts share the files
    if not genome.exists() or not Path(str(genome) + ".tbi").exists():
        t = time.perf_counter()
        bench_vcf.generate(genome, args.records, seed)
        print(f"generated {genome} in {time.perf_counter() - t:.0f} s", flush=True)
    if not exome.exists() or not Path(str(exome) + ".tbi").exists():
        ivs = panel_intervals(panel, "GRCh38", 50)
        regs = bench_vcf.exome_regions(random.Random(seed + 1)) + [(c, s, e) for c, s, e, _ in ivs]
        bench_vcf.generate(exome, args.exome_records, seed + 1, regions=regs)
    models = panel_models()
    reads = {}
    for label, path in (("exome", exome), ("genome", genome)):
        t_read, intake = best(lambda: read_vcf(str(path), panel, build="GRCh38"), args.repeat)
        reads[label] = (t_read, [(v.chrom, v.pos, v.ref, v.alt) for v in intake.variants])
    ref_bases = {}
    for _, alleles in reads.values():
        for c, p, r, _a in alleles:
            for i, b in enumerate(r.upper()):
                ref_bases.setdefault((c.replace("chr", ""), p + i), b)
    gff, fa = write_panel_files(work, models, ref_bases)
    print(f"{len(models)} panel structures (GRCh38); random reference over their spans: {fa}", flush=True)
    env = dict(os.environ, PYTHONPATH=str(ROOT) + os.pathsep + os.environ.get("PYTHONPATH", ""))
    rows = []
    for label, path in (("exome", exome), ("genome", genome)):
        t_read, alleles = reads[label]
        res = {}
        for with_ref in (True, False):
            def run():
                an = Annotator(str(gff), str(fa) if with_ref else None)
                n = sum(len(an.consequences(*a)) for a in alleles)
                an.close()
                return n
            res[with_ref] = best(run, args.repeat)
        n = len(alleles)
        print(f"\n{label}: {path.name}, {n} alleles in the panel's gene spans ({res[True][1]} transcript entries)")
        print(f"  read_vcf alone (whole gene spans)      {t_read:8.2f} s   {n / t_read:10.0f} alleles/s")
        print(f"  built-in annotation, with reference    {res[True][0]:8.2f} s   {n / res[True][0]:10.0f} alleles/s")
        print(f"  built-in annotation, without reference {res[False][0]:8.2f} s   {n / res[False][0]:10.0f} alleles/s",
              flush=True)
        rows.append((label, n, t_read, res[True][0], res[False][0]))
        if not args.end_to_end:
            continue
        e2e = {}
        for with_ref in (True, False):
            cmd = [sys.executable, "-m", "irdtriage", "triage", str(path), "--build", "GRCh38", "--out",
                   str(work / f"out_annotate_{label}_{with_ref}"), "--transcripts", str(gff)]
            if with_ref:
                cmd += ["--reference", str(fa)]
            t = time.perf_counter()
            rc = subprocess.run(cmd, env=env, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, text=True).returncode
            e2e[with_ref] = (time.perf_counter() - t, rc)
        t_base = time.perf_counter()
        subprocess.run([sys.executable, "-m", "irdtriage", "triage", str(path), "--build", "GRCh38", "--out",
                        str(work / f"out_plain_{label}")], env=env, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
        t_base = time.perf_counter() - t_base
        print(f"  triage end to end --transcripts --reference {e2e[True][0]:6.1f} s (rc {e2e[True][1]}); "
              f"--transcripts only {e2e[False][0]:.1f} s (rc {e2e[False][1]}); "
              f"neither (exons +/- 20 bp only) {t_base:.1f} s", flush=True)
    return 0


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--alleles", type=int, default=20000)
    ap.add_argument("--repeat", type=int, default=3)
    ap.add_argument("--workdir", default="/tmp/irdtriage-bench-annotate")
    ap.add_argument("--synthetic", action="store_true", help="measure on bench_vcf.py's synthetic exome and genome")
    ap.add_argument("--vcf-workdir", default="/tmp/irdtriage-bench")
    ap.add_argument("--end-to-end", action="store_true", help="with --synthetic: also time triage end to end "
                                                              "(minutes: whole gene spans are assessed)")
    ap.add_argument("--records", type=int, default=5_000_000)
    ap.add_argument("--exome-records", type=int, default=80_000)
    args = ap.parse_args()
    if args.synthetic:
        return synthetic(args)
    if not RSG.is_dir():
        print(f"outside records not present: {RSG}")
        return 0
    seq, txs = load()
    work = Path(args.workdir)
    work.mkdir(parents=True, exist_ok=True)
    vcf = work / f"synthetic_{args.alleles}.vcf"
    if not vcf.exists():
        make_vcf(vcf, seq, txs, args.alleles)

    def read_only():
        with pysam.VariantFile(str(vcf)) as vf:
            return [(r.chrom, r.pos, r.ref, r.alts[0]) for r in vf]

    t_read, alleles = best(read_only, args.repeat)

    def annotate(sequence):
        def run():
            cache = TxCache(sequence)
            n = 0
            for c, p, r, a in alleles:
                n += len(annotate_allele(c, p, r, a, txs, cache))
            return n
        return run

    t_seq, entries = best(annotate(seq), args.repeat)
    t_noseq, _ = best(annotate(None), args.repeat)
    n = len(alleles)
    print(f"{n} alleles over NM_206933.2 and NM_000330.3 ({entries} transcript entries); best of {args.repeat}")
    print(f"  read VCF alone (pysam)          {t_read:8.3f} s   {n / t_read:10.0f} alleles/s")
    print(f"  annotate with reference         {t_seq:8.3f} s   {n / t_seq:10.0f} alleles/s")
    print(f"  annotate without reference      {t_noseq:8.3f} s   {n / t_noseq:10.0f} alleles/s")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
