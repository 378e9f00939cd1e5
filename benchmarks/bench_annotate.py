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

Usage: python benchmarks/bench_annotate.py [--alleles 20000] [--repeat 3] [--workdir /tmp/irdtriage-bench-annotate]
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


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--alleles", type=int, default=20000)
    ap.add_argument("--repeat", type=int, default=3)
    ap.add_argument("--workdir", default="/tmp/irdtriage-bench-annotate")
    args = ap.parse_args()
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
