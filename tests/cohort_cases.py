"""Synthetic cohorts for the batch tests and benchmarks/bench_cohort.py: small single-sample,
bgzipped and indexed VCFs written with pysam, a manifest naming them, and HPO terms.

The cases are made up for testing the mechanics (same outputs whatever runs them, planted changes
found); they are no clinical truth. Gene coordinates are GRCh38 MANE v1.5 spans as in the bundled
panel and tests/test_pipeline_scenarios.py (RPE65 chr1:68,428,822-68,449,954; PRPF31
chr19:54,115,754-54,131,713; RPGR chrX:38,284,408-38,327,509).
"""
from __future__ import annotations

from pathlib import Path

import pysam

CSQ = ("Allele|Consequence|IMPACT|SYMBOL|Gene|Feature_type|Feature|BIOTYPE|EXON|INTRON|HGVSc|HGVSp|"
       "Protein_position|gnomADe_AF")
HPO = "HP:0000510,HP:0000662"  # rod-cone dystrophy, nyctalopia (the same number of terms for every case)


def csq(alt, gene, consequence, exon, c, p, prot, af=""):
    return "|".join([alt, consequence, "HIGH", gene, "", "Transcript", "", "protein_coding", exon, "", c, p,
                     prot, af])


RPE65_STOP = ("chr1", 68444600, "G", "T", csq("T", "RPE65", "stop_gained", "5/14", "c.400C>T", "p.(Gln134Ter)",
                                                 "134/533"))
RPE65_FS = ("chr1", 68438100, "C", "A", csq("A", "RPE65", "frameshift_variant", "10/14", "c.1000del",
                                              "p.(Leu334Ter)", "334/533"))
RPE65_MISSENSE = ("chr1", 68440000, "A", "G", csq("G", "RPE65", "missense_variant", "8/14", "c.800T>C",
                                                   "p.(Leu267Pro)", "267/533", "0.00002"))
RPGR_STOP = ("chrX", 38300500, "G", "A", csq("A", "RPGR", "stop_gained", "8/19", "c.900C>T", "p.(Gln300Ter)",
                                              "300/1152"))
PRPF31_FS = ("chr19", 54120000, "C", "CT", csq("T", "PRPF31", "frameshift_variant", "7/14", "c.600dup",
                                               "p.(Lys201Ter)", "201/499"))

HET, HOM, HEMI = "0/1:15,15:30:99", "1/1:0,30:30:99", "1:0,31:31:99"

#: (records with genotype, sex) per kind of case; cycled through by make_cohort
KINDS = [
    ([(RPE65_STOP, HOM)], "female"),  # homozygous null in a recessive gene
    ([(RPE65_STOP, HET), (RPE65_FS, HET)], "male"),  # two nulls, phase unknown
    ([(RPGR_STOP, HEMI)], "male"),  # hemizygous in a male
    ([(RPE65_MISSENSE, HET)], "female"),  # one rare missense allele
    ([(PRPF31_FS, HET)], "female"),  # heterozygous null in a dominant gene
]


def write_vcf(path: Path, sample: str, records: list[tuple], male: bool = False) -> str:
    lines = [
        "##fileformat=VCFv4.2",
        "##reference=GRCh38",
        "##contig=<ID=chr1,length=248956422>",
        "##contig=<ID=chr19,length=58617616>",
        "##contig=<ID=chrX,length=156040895>",
        '##FILTER=<ID=PASS,Description="All filters passed">',
        f'##INFO=<ID=CSQ,Number=.,Type=String,Description="Consequence annotations. Format: {CSQ}">',
        '##FORMAT=<ID=GT,Number=1,Type=String,Description="Genotype">',
        '##FORMAT=<ID=AD,Number=R,Type=Integer,Description="Allelic depths">',
        '##FORMAT=<ID=DP,Number=1,Type=Integer,Description="Depth">',
        '##FORMAT=<ID=GQ,Number=1,Type=Integer,Description="Genotype quality">',
        "#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\tFORMAT\t" + sample,
    ]
    order = {"chr1": 1, "chr19": 19, "chrX": 23}
    for (chrom, pos, ref, alt, ann), call in sorted(records, key=lambda r: (order[r[0][0]], r[0][1])):
        lines.append("\t".join([chrom, str(pos), ".", ref, alt, "500", "PASS", f"CSQ={ann}", "GT:AD:DP:GQ", call]))
    plain = Path(str(path).removesuffix(".gz"))
    plain.write_text("\n".join(lines) + "\n")
    pysam.tabix_index(str(plain), preset="vcf", force=True)
    return str(plain) + ".gz"


def make_cohort(folder: Path, n: int, extra_rows: list[str] = ()) -> Path:
    """Write ``n`` cases (VCFs under folder/vcfs/, relative paths in the manifest) and the manifest."""
    folder = Path(folder)
    (folder / "vcfs").mkdir(parents=True, exist_ok=True)
    rows = ["case\tvcf\tsample\thpo\tsex"]
    for i in range(n):
        records, sex = KINDS[i % len(KINDS)]
        name = f"C{i + 1:04d}"
        write_vcf(folder / "vcfs" / f"{name}.vcf", name, records)
        rows.append(f"{name}\tvcfs/{name}.vcf.gz\t{name}\t{HPO}\t{sex}")
    rows.extend(extra_rows)
    manifest = folder / "manifest.tsv"
    manifest.write_text("\n".join(rows) + "\n")
    return manifest
