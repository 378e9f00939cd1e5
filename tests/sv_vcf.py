"""Writing small real VCFs with symbolic structural records for the irdtriage.sv tests (read back by
pysam through the real intake).  Only the file layout lives here; every test names its own source."""
from __future__ import annotations

from pathlib import Path
from typing import Sequence

CSQ_FIELDS = ("Allele|Consequence|IMPACT|SYMBOL|Gene|Feature_type|Feature|BIOTYPE|EXON|INTRON|HGVSc|HGVSp|"
              "Protein_position|gnomADe_AF")

HEADER = [
    "##fileformat=VCFv4.3",
    # GRCh37 contig lengths (Genome Reference Consortium GRCh37 assembly report)
    "##reference=GRCh37",
    "##contig=<ID=chr1,length=249250621>",
    "##contig=<ID=chr19,length=59128983>",
    "##contig=<ID=chrX,length=155270560>",
    '##FILTER=<ID=PASS,Description="All filters passed">',
    f'##INFO=<ID=CSQ,Number=.,Type=String,Description="Consequence annotations. Format: {CSQ_FIELDS}">',
    # VCF 4.3 section 3 (reserved structural-variant INFO keys) and 1.4.5 (symbolic ALT definitions)
    '##INFO=<ID=END,Number=1,Type=Integer,Description="End position of the variant described in this record">',
    '##INFO=<ID=SVLEN,Number=.,Type=Integer,Description="Difference in length between REF and ALT alleles">',
    '##INFO=<ID=SVTYPE,Number=1,Type=String,Description="Type of structural variant">',
    '##INFO=<ID=CIPOS,Number=2,Type=Integer,Description="Confidence interval around POS">',
    '##INFO=<ID=CIEND,Number=2,Type=Integer,Description="Confidence interval around END">',
    '##ALT=<ID=DEL,Description="Deletion">',
    '##ALT=<ID=DUP,Description="Duplication">',
    '##ALT=<ID=DUP:TANDEM,Description="Tandem duplication">',
    '##ALT=<ID=INV,Description="Inversion">',
    '##ALT=<ID=INS,Description="Insertion of novel sequence">',
    '##ALT=<ID=CNV,Description="Copy number variable region">',
    '##FORMAT=<ID=GT,Number=1,Type=String,Description="Genotype">',
    '##FORMAT=<ID=AD,Number=R,Type=Integer,Description="Allelic depths">',
    '##FORMAT=<ID=DP,Number=1,Type=Integer,Description="Read depth">',
    '##FORMAT=<ID=GQ,Number=1,Type=Integer,Description="Genotype quality">',
    '##FORMAT=<ID=CN,Number=1,Type=Integer,Description="Copy number genotype for imprecise events">',
]


def sv_record(chrom: str, pos: int, alt: str, info: str, calls: Sequence[str], ref: str = "N",
              fmt: str = "GT:AD:DP:GQ:CN") -> tuple:
    return (chrom, pos, ref, alt, info, fmt, list(calls))


def small_record(chrom: str, pos: int, ref: str, alt: str, csq: str, calls: Sequence[str]) -> tuple:
    return (chrom, pos, ref, alt, f"CSQ={csq}", "GT:AD:DP:GQ:CN", list(calls))


def csq(alt: str, gene: str, consequence: str, exon: str, c: str, p: str, prot: str, af: str = "",
        feature: str = "") -> str:
    return "|".join([alt, consequence, "HIGH", gene, "", "Transcript", feature, "protein_coding", exon, "", c, p, prot,
                     af])


def write_vcf(path: Path, samples: Sequence[str], records: Sequence[tuple]) -> str:
    lines = list(HEADER) + ["#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\tFORMAT\t" + "\t".join(samples)]
    order = {"chr1": 1, "chr19": 19, "chrX": 23}
    for chrom, pos, ref, alt, info, fmt, calls in sorted(records, key=lambda r: (order[r[0]], r[1])):
        lines.append("\t".join([chrom, str(pos), ".", ref, alt, "500", "PASS", info, fmt, *calls]))
    path.write_text("\n".join(lines) + "\n")
    return str(path)


def write_ped(path: Path, child: str, mother: str, father: str, child_sex: int = 2) -> str:
    path.write_text(f"FAM\t{child}\t{father}\t{mother}\t{child_sex}\t2\nFAM\t{father}\t0\t0\t1\t1\n"
                    f"FAM\t{mother}\t0\t0\t2\t1\n")
    return str(path)
