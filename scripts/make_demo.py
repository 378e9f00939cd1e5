#!/usr/bin/env python3
"""Write the bundled demonstration case (an invented family) into demo_vcfs/.

The Arden family is invented for the demo: no real people, and the variants' HGVS
descriptions, frequencies and scores are made up to exercise the tool. Nothing here may
be used as the expected value of a check. Positions fall inside the real GRCh38 spans of
the genes (MANE v1.5) so the panel filter sees them; reference bases are not checked
against the genome.

    python scripts/make_demo.py            # rewrites demo_vcfs/arden_trio.vcf.gz (+ .tbi), .ped, phenopacket
"""
from __future__ import annotations

import json
import random
from pathlib import Path

import sys

import pysam

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))
OUT = ROOT / "demo_vcfs"

# GRCh38 primary assembly lengths (GRC; also in the VCF headers of common GRCh38 releases).
GRCH38 = {
    "chr1": 248956422, "chr2": 242193529, "chr3": 198295559, "chr4": 190214555, "chr5": 181538259,
    "chr6": 170805979, "chr7": 159345973, "chr8": 145138636, "chr9": 138394717, "chr10": 133797422,
    "chr11": 135086622, "chr12": 133275309, "chr13": 114364328, "chr14": 107043718, "chr15": 101991189,
    "chr16": 90338345, "chr17": 83257441, "chr18": 80373285, "chr19": 58617616, "chr20": 64444167,
    "chr21": 46709983, "chr22": 50818468, "chrX": 156040895, "chrY": 57227415, "chrM": 16569,
}

CSQ_FIELDS = ("Allele|Consequence|IMPACT|SYMBOL|Gene|Feature_type|Feature|BIOTYPE|EXON|INTRON|HGVSc|HGVSp|"
              "cDNA_position|CDS_position|Protein_position|Amino_acids|Codons|Existing_variation|STRAND|"
              "MANE_SELECT|REVEL|SpliceAI_pred_DS_AG|SpliceAI_pred_DS_AL|SpliceAI_pred_DS_DG|"
              "SpliceAI_pred_DS_DL|gnomADe_AF|gnomADg_AF|MAX_AF|CLIN_SIG")

SAMPLES = ("ARDEN-P1", "ARDEN-M", "ARDEN-F")

# Invented findings: (chrom, pos, ref, alt, genotypes P1/M/F, CSQ dict)
# RPE65: NM_000329.3, ENST00000262340.6, minus strand, 533 aa.
TX = {
    "RPE65": ("ENSG00000116745", "ENST00000262340.6", "NM_000329.3", -1, 533),
    "USH2A": ("ENSG00000042781", "ENST00000307340.8", "NM_206933.4", -1, 5202),
    "ABCA4": ("ENSG00000198691", "ENST00000370225.4", "NM_000350.3", -1, 2273),
    "RHO": ("ENSG00000163914", "ENST00000296271.4", "NM_000539.3", 1, 348),
    "CRB1": ("ENSG00000134376", "ENST00000367400.8", "NM_201253.3", 1, 1406),
    "EYS": ("ENSG00000188107", "ENST00000503581.6", "NM_001142800.2", -1, 3165),
    "PRPH2": ("ENSG00000112619", "ENST00000230381.7", "NM_000322.5", -1, 346),
    "RPGR": ("ENSG00000156313", "ENST00000645032.1", "NM_001034853.2", -1, 1152),
}


def csq(allele, gene, consequence, impact, exon="", intron="", c="", p="", prot="", aa="", revel="",
        spliceai=("0.00", "0.00", "0.00", "0.00"), gnomad_e="", gnomad_g="", clin=""):
    gid, enst, nm, strand, length = TX[gene]
    max_af = max([float(x) for x in (gnomad_e, gnomad_g) if x] or [0.0])
    fields = [allele, consequence, impact, gene, gid, "Transcript", enst, "protein_coding", exon, intron,
              f"{enst}:{c}" if c else "", f"ENSP:{p}" if p else "", "", "",
              f"{prot}/{length}" if prot else "", aa, "", "", str(strand), nm, revel, *spliceai,
              gnomad_e, gnomad_g, f"{max_af:g}" if (gnomad_e or gnomad_g) else "", clin]
    return "|".join(x.replace("|", "/") for x in fields)


FINDINGS = [
    # The answer of the demo: two RPE65 alleles in trans (one from each parent).
    ("chr1", 68438250, "T", "TA", ("0/1", "0/1", "0/0"),
     csq("A", "RPE65", "frameshift_variant", "HIGH", exon="10/14", c="c.1067dup", p="p.(Asn356LysfsTer9)",
         prot="356", aa="N/KX")),
    ("chr1", 68439010, "C", "T", ("0/1", "0/0", "0/1"),
     csq("T", "RPE65", "missense_variant", "MODERATE", exon="9/14", c="c.916G>A", p="p.(Gly306Arg)",
         prot="306", aa="G/R", revel="0.951", spliceai=("0.00", "0.01", "0.02", "0.00"))),
    # Carrier findings that do not explain the case.
    ("chr1", 215900100, "C", "A", ("0/1", "0/1", "0/0"),
     csq("A", "USH2A", "stop_gained", "HIGH", exon="35/72", c="c.6937G>T", p="p.(Gly2313Ter)", prot="2313",
         aa="G/*", gnomad_e="0.00002", gnomad_g="0.00001")),
    ("chr1", 94008260, "G", "A", ("0/1", "0/0", "0/1"),
     csq("A", "ABCA4", "missense_variant", "MODERATE", exon="14/50", c="c.1961C>T", p="p.(Ala654Val)",
         prot="654", aa="A/V", revel="0.412", spliceai=("0.00", "0.00", "0.03", "0.00"),
         gnomad_e="0.0004", gnomad_g="0.0003")),
    # Common, benign-looking variation in panel genes.
    ("chr3", 129530950, "C", "T", ("0/1", "0/1", "0/0"),
     csq("T", "RHO", "synonymous_variant", "LOW", exon="2/5", c="c.348C>T", p="p.(Ala116=)", prot="116",
         aa="A", spliceai=("0.00", "0.00", "0.01", "0.00"), gnomad_e="0.018", gnomad_g="0.021")),
    ("chr1", 197300000, "A", "G", ("1/1", "0/1", "0/1"),
     csq("G", "CRB1", "intron_variant", "MODIFIER", intron="2/11", c="c.614-3120A>G",
         gnomad_e="", gnomad_g="0.32")),
    # A low-depth call: counted and flagged, not silently dropped.
    ("chr6", 64000000, "G", "C", ("0/1", "0/0", "0/0"),
     csq("C", "EYS", "missense_variant", "MODERATE", exon="26/43", c="c.5245C>G", p="p.(Leu1749Val)",
         prot="1749", aa="L/V", revel="0.18")),
]


def fmt_call(gt: str, rng: random.Random, depth=None) -> str:
    dp = depth if depth is not None else rng.randint(28, 60)
    if gt == "0/1":
        alt = int(round(dp * rng.uniform(0.4, 0.6)))
        ad = (dp - alt, alt)
    elif gt == "1/1":
        ad = (rng.randint(0, 1), dp)
    else:
        ad = (dp, 0)
    gq = 99 if dp >= 20 else max(3, dp * 3)
    return f"{gt}:{ad[0]},{ad[1]}:{sum(ad)}:{gq}"


def child_gt(m: str, f: str, rng: random.Random) -> str:
    a = rng.choice(m.split("/"))
    b = rng.choice(f.split("/"))
    return "/".join(sorted((a, b)))


def main() -> None:
    rng = random.Random(20261202)
    OUT.mkdir(exist_ok=True)
    header = ["##fileformat=VCFv4.2", "##reference=GRCh38",
              "##source=invented demonstration data for irdtriage (the Arden family is not real)"]
    header += [f"##contig=<ID={c},length={n},assembly=GRCh38>" for c, n in GRCH38.items()]
    header += [
        '##FILTER=<ID=PASS,Description="All filters passed">',
        '##FILTER=<ID=LowQual,Description="Low variant quality">',
        '##INFO=<ID=AC,Number=A,Type=Integer,Description="Allele count in genotypes">',
        '##INFO=<ID=AN,Number=1,Type=Integer,Description="Total number of alleles in called genotypes">',
        '##INFO=<ID=DP,Number=1,Type=Integer,Description="Combined depth across samples">',
        '##INFO=<ID=MQ,Number=1,Type=Float,Description="RMS mapping quality">',
        f'##INFO=<ID=CSQ,Number=.,Type=String,Description="Consequence annotations (invented for the demo). Format: {CSQ_FIELDS}">',
        '##FORMAT=<ID=GT,Number=1,Type=String,Description="Genotype">',
        '##FORMAT=<ID=AD,Number=R,Type=Integer,Description="Allelic depths for the ref and alt alleles">',
        '##FORMAT=<ID=DP,Number=1,Type=Integer,Description="Read depth">',
        '##FORMAT=<ID=GQ,Number=1,Type=Integer,Description="Genotype quality">',
        "#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\tFORMAT\t" + "\t".join(SAMPLES),
    ]
    records = []
    for chrom, pos, ref, alt, gts, ann in FINDINGS:
        depth = 5 if chrom == "chr6" and pos == 64000000 else None
        calls = [fmt_call(g, rng, depth) for g in gts]
        ac = sum(g.count("1") for g in gts)
        info = f"AC={ac};AN=6;DP={sum(int(c.split(':')[2]) for c in calls)};MQ=60.00;CSQ={ann}"
        records.append((chrom, pos, ".", ref, alt, "612.4", "PASS", info, calls))

    # A multi-allelic site in PRPH2: the proband carries the first ALT, the father the second.
    pr = ["0/1:16,14,0:30:99", "0/0:30,0,0:30:99", "1/2:0,14,15:29:99"]
    ann = ",".join([
        csq("G", "PRPH2", "intron_variant", "MODIFIER", intron="1/2", c="c.582-1234T>C", gnomad_g="0.0041"),
        csq("T", "PRPH2", "intron_variant", "MODIFIER", intron="1/2", c="c.582-1234T>A", gnomad_g="0.0002"),
    ])
    records.append(("chr6", 42710000, ".", "A", "G,T", "388.1", "PASS", f"AC=1,1;AN=6;DP=89;MQ=60.00;CSQ={ann}", pr))

    # Common heterozygous sites in RPGR (chrX): a female proband carries both alleles.
    for i, pos in enumerate((38290011, 38300123, 38312555)):
        g = ("0/1", "0/1", "0/0") if i != 1 else ("0/1", "0/0", "1")
        calls = [fmt_call(x, rng) if x != "1" else f"1:0,{rng.randint(20, 30)}:25:99" for x in g]
        ann = csq("T" if i % 2 else "G", "RPGR", "intron_variant", "MODIFIER", intron=f"{i + 3}/18",
                  c=f"c.{400 + i * 100}+{150 + i}A>{'T' if i % 2 else 'G'}", gnomad_g=f"{0.21 + i * 0.05:.2f}")
        records.append(("chrX", pos, ".", "A", "T" if i % 2 else "G", "250.0", "PASS",
                        f"AC=2;AN=5;DP=90;MQ=60.00;CSQ={ann}", calls))

    # Background: thousands of ordinary calls outside the panel genes, as any exome has.
    from irdtriage.panel import GeneLocator, load_panel

    locator = GeneLocator(load_panel(), "GRCh38", 1000)
    chroms = [c for c in GRCH38 if c not in ("chrY", "chrM")]
    for _ in range(4000):
        chrom = rng.choice(chroms)
        pos = rng.randint(1_000_000, GRCH38[chrom] - 1_000_000)
        if locator.genes_at(chrom, pos):
            continue
        ref = rng.choice("ACGT")
        alt = rng.choice([b for b in "ACGT" if b != ref])
        m, f = rng.choice(["0/1", "0/0", "1/1", "0/1"]), rng.choice(["0/1", "0/0", "0/1", "1/1"])
        c = child_gt(m, f, rng)
        if chrom == "chrX":
            f = "1" if "1" in f else "0"
            c = "/".join(sorted((rng.choice(m.split("/")), f)))
        gts = (c, m, f)
        if all(g.replace("/", "") in ("00", "0") for g in gts):
            continue
        calls = [fmt_call(g, rng) if len(g) == 3 else f"{g}:{'0,25' if g == '1' else '25,0'}:25:99" for g in gts]
        qual = f"{rng.uniform(30, 900):.1f}"
        flt = "PASS" if float(qual) > 50 else "LowQual"
        ac = sum(g.count("1") for g in gts)
        records.append((chrom, pos, ".", ref, alt, qual, flt, f"AC={ac};AN={sum(len(g.split('/')) for g in gts)};DP=100;MQ=60.00", calls))

    order = {c: i for i, c in enumerate(GRCH38)}
    records.sort(key=lambda r: (order[r[0]], r[1]))
    seen = set()
    lines = list(header)
    for chrom, pos, vid, ref, alt, qual, flt, info, calls in records:
        if (chrom, pos) in seen:
            continue
        seen.add((chrom, pos))
        lines.append("\t".join([chrom, str(pos), vid, ref, alt, qual, flt, info, "GT:AD:DP:GQ", *calls]))
    plain = OUT / "arden_trio.vcf"
    plain.write_text("\n".join(lines) + "\n", encoding="utf-8")
    pysam.tabix_index(str(plain), preset="vcf", force=True)  # writes arden_trio.vcf.gz + .tbi, removes plain

    (OUT / "arden_trio.ped").write_text(
        "# Arden family (invented for the demo)\n"
        "ARDEN\tARDEN-P1\tARDEN-F\tARDEN-M\t2\t2\n"
        "ARDEN\tARDEN-M\t0\t0\t2\t1\n"
        "ARDEN\tARDEN-F\t0\t0\t1\t1\n", encoding="utf-8")

    features = [
        ("HP:0000662", "Nyctalopia"), ("HP:0000639", "Nystagmus"), ("HP:0000510", "Rod-cone dystrophy"),
        ("HP:0007675", "Progressive night blindness"), ("HP:0000512", "Abnormal electroretinogram"),
        ("HP:0000505", "Visual impairment"),
    ]
    packet = {
        "id": "arden-p1-demo",
        "subject": {"id": "ARDEN-P1", "sex": "FEMALE",
                    "timeAtLastEncounter": {"age": {"iso8601duration": "P6Y"}}},
        "phenotypicFeatures": [{"type": {"id": i, "label": l}} for i, l in features]
        + [{"type": {"id": "HP:0000365", "label": "Hearing impairment"}, "excluded": True}],
        "metaData": {
            "created": "2026-12-02T00:00:00Z", "createdBy": "irdtriage demo (invented)",
            "resources": [{"id": "hp", "name": "human phenotype ontology",
                           "url": "http://purl.obolibrary.org/obo/hp.owl", "version": "2025-11-24",
                           "namespacePrefix": "HP", "iriPrefix": "http://purl.obolibrary.org/obo/HP_"}],
            "phenopacketSchemaVersion": "2.0",
        },
    }
    (OUT / "arden_p1.phenopacket.json").write_text(json.dumps(packet, indent=2) + "\n", encoding="utf-8")
    print(f"wrote {len(lines) - len(header)} records to {OUT / 'arden_trio.vcf.gz'}")


if __name__ == "__main__":
    main()
