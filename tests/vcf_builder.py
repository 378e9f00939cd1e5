"""Writing small CSQ-annotated GRCh38 VCFs for the tests (bgzipped and tabix-indexed by pysam).

One place for the header every pipeline test needs, so each test states only its records.
"""
from __future__ import annotations

from pathlib import Path
from typing import Iterable, Optional

import pysam

# GRCh38 primary assembly lengths (GRC GRCh38; chr1 248,956,422 as in the project's standards list)
GRCH38_CONTIGS = {
    "chr1": 248956422, "chr2": 242193529, "chr3": 198295559, "chr4": 190214555, "chr5": 181538259,
    "chr6": 170805979, "chr7": 159345973, "chr8": 145138636, "chr9": 138394717, "chr10": 133797422,
    "chr11": 135086622, "chr12": 133275309, "chr13": 114364328, "chr14": 107043718, "chr15": 101991189,
    "chr16": 90338345, "chr17": 83257441, "chr18": 80373285, "chr19": 58617616, "chr20": 64444167,
    "chr21": 46709983, "chr22": 50818468, "chrX": 156040895, "chrY": 57227415, "chrM": 16569,
}


def write_csq_vcf(path: Path, samples: list[str], records: Iterable[tuple], csq_format: str,
                  contigs: Optional[dict[str, int]] = None, index: bool = True) -> str:
    """Write ``records`` (chrom, pos, ref, alt, csq-or-empty, [GT:AD:DP:GQ per sample]) under a
    header declaring ``csq_format``; returns the path of the bgzipped, indexed file (or of the
    plain file when ``index`` is false)."""
    lines = ["##fileformat=VCFv4.2", "##reference=GRCh38"]
    lines += [f"##contig=<ID={c},length={n}>" for c, n in (contigs or GRCH38_CONTIGS).items()]
    lines += [
        '##FILTER=<ID=PASS,Description="All filters passed">',
        f'##INFO=<ID=CSQ,Number=.,Type=String,Description="Consequence annotations. Format: {csq_format}">',
        '##FORMAT=<ID=GT,Number=1,Type=String,Description="Genotype">',
        '##FORMAT=<ID=AD,Number=R,Type=Integer,Description="Allelic depths">',
        '##FORMAT=<ID=DP,Number=1,Type=Integer,Description="Depth">',
        '##FORMAT=<ID=GQ,Number=1,Type=Integer,Description="Genotype quality">',
        "#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\tFORMAT\t" + "\t".join(samples),
    ]
    for chrom, pos, ref, alt, ann, calls in records:
        info = f"CSQ={ann}" if ann else "."
        lines.append("\t".join([chrom, str(pos), ".", ref, alt, "500", "PASS", info, "GT:AD:DP:GQ", *calls]))
    plain = Path(path).with_suffix("") if str(path).endswith(".gz") else Path(path)
    plain.write_text("\n".join(lines) + "\n")
    if not index:
        return str(plain)
    pysam.tabix_index(str(plain), preset="vcf", force=True)
    return str(plain) + ".gz"
