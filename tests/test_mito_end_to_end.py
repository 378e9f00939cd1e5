"""Mitochondrial (chrM) findings through the whole ``irdtriage triage`` command.

Outside sources of the checks:
* Coordinates are m. positions on the revised Cambridge Reference Sequence (rCRS, NC_012920.1;
  Andrews RM et al., Nat Genet 1999;23:147), the chrM of GRCh38 and the MT of GRCh37/b37.
  rCRS gene spans (NCBI RefSeq NC_012920.1 annotation; MT-ND4 from memory): MT-ND1 3307..4262,
  MT-ATP6 8527..9207, MT-ND4 10760..12137, MT-ND6 complement(14149..14673).
* Published allele names: m.11778G>A MT-ND4 p.(Arg340His) (Wallace DC et al., Science
  1988;242:1427; from memory), m.3460G>A MT-ND1 p.(Ala52Thr) (Howell N et al., Am J Hum Genet
  1991; from memory), m.14484T>C MT-ND6 p.(Met64Val) (Johns DR et al., 1992; from memory),
  m.8993T>G MT-ATP6 p.(Leu156Arg) (Holt IJ et al., Am J Hum Genet 1990;46:428; from memory).
* UCSC hg19 chrM is not the rCRS: 16,571 bp (NC_001807) against the rCRS's 16,569 bp (from memory).
* Mitochondrial DNA is inherited from the mother only, and its alleles are homoplasmic or
  heteroplasmic (textbook genetics, common practice). The heteroplasmy levels used to call a
  level a disease level are data in panels/heteroplasmy.yaml, each with its source.
* HPO: HP:0000648 Optic atrophy, HP:0000580 Pigmentary retinopathy (HPO release bundled with hpo3).

The families and reads are invented; the VCFs are written with pysam (bgzipped and indexed) and
read by the real reader; the CLI runs in a subprocess and every output format is read back.
"""
from __future__ import annotations

import csv
import gzip
import json
import os
import subprocess
import sys
from pathlib import Path

import pysam
import pytest

from irdtriage.build import CONTIG_LENGTHS
from irdtriage.errors import InputError
from irdtriage.heteroplasmy import load_thresholds
from irdtriage.panel import load_panel

ROOT = Path(__file__).resolve().parents[1]
CSQ = "Allele|Consequence|IMPACT|SYMBOL|Gene|Feature_type|Feature|BIOTYPE|EXON|INTRON|HGVSc|HGVSp|Protein_position"
HPO = "HP:0000648,HP:0000580"  # optic atrophy, pigmentary retinopathy
RCRS_LENGTH = 16569  # rCRS NC_012920.1 (Andrews et al. 1999)

# (gene, m. position, ref, alt, c., p. three-letter, protein position/length) - published names above;
# protein lengths of the RefSeq proteins (YP_003024026.1 ND1 318, YP_003024035.1 ND4 459,
# YP_003024037.1 ND6 174, YP_003024031.1 ATP6 226 amino acids; from memory).
LHON = [
    ("MT-ND4", 11778, "G", "A", "c.1019G>A", "p.Arg340His", "340/459"),
    ("MT-ND1", 3460, "G", "A", "c.154G>A", "p.Ala52Thr", "52/318"),
    ("MT-ND6", 14484, "T", "C", "c.190A>G", "p.Met64Val", "64/174"),
]
NARP = ("MT-ATP6", 8993, "T", "G", "c.467T>G", "p.Leu156Arg", "156/226")


def csq(gene, c, p, prot, alt, tx=""):
    return "|".join([alt, "missense_variant", "MODERATE", gene, "", "Transcript", tx, "protein_coding", "1/1", "",
                     c, p, prot])


def write_vcf(path: Path, samples: list[str], records: list[tuple], contigs: dict[str, int],
              reference: str = "GRCh38") -> str:
    """records: (chrom, pos, ref, alt, csq, [(gt, ad_ref, ad_alt) per sample])."""
    header = pysam.VariantHeader()
    header.add_line("##reference=" + reference)
    for name, length in contigs.items():
        header.contigs.add(name, length=length)
    header.add_line(f'##INFO=<ID=CSQ,Number=.,Type=String,Description="Consequence annotations. Format: {CSQ}">')
    header.add_line('##FORMAT=<ID=GT,Number=1,Type=String,Description="Genotype">')
    header.add_line('##FORMAT=<ID=AD,Number=R,Type=Integer,Description="Allelic depths">')
    header.add_line('##FORMAT=<ID=DP,Number=1,Type=Integer,Description="Depth">')
    header.add_line('##FORMAT=<ID=GQ,Number=1,Type=Integer,Description="Genotype quality">')
    for s in samples:
        header.add_sample(s)
    out = str(path) + ".gz"
    with pysam.VariantFile(out, "wz", header=header) as vf:
        for chrom, pos, ref, alt, ann, calls in records:
            rec = vf.new_record(contig=chrom, start=pos - 1, alleles=(ref, alt), qual=500, filter="PASS",
                                info={"CSQ": (ann,)})
            for s, (gt, ad_ref, ad_alt) in zip(samples, calls):
                rec.samples[s]["GT"] = gt
                rec.samples[s]["AD"] = (ad_ref, ad_alt)
                rec.samples[s]["DP"] = ad_ref + ad_alt
                rec.samples[s]["GQ"] = 99
            vf.write(rec)
    pysam.tabix_index(out, preset="vcf", force=True)
    return out


def grch38_contigs(mt_name: str = "chrM", mt_length: int = RCRS_LENGTH, chr_prefix: bool = True) -> dict[str, int]:
    pre = "chr" if chr_prefix else ""
    c = {pre + k: v["GRCh38"] for k, v in CONTIG_LENGTHS.items()}
    c[mt_name] = mt_length
    return c


def grch37_contigs(mt_name: str = "MT", mt_length: int = RCRS_LENGTH, chr_prefix: bool = False) -> dict[str, int]:
    pre = "chr" if chr_prefix else ""
    c = {pre + k: v["GRCh37"] for k, v in CONTIG_LENGTHS.items()}
    c[mt_name] = mt_length
    return c


def run_cli(*args: str) -> subprocess.CompletedProcess:
    env = dict(os.environ, NO_COLOR="1", COLUMNS="200", PYTHONPATH=str(ROOT))
    return subprocess.run([sys.executable, "-m", "irdtriage", *args], capture_output=True, text=True,
                          cwd=ROOT, env=env, timeout=600)


def outputs(out: Path) -> dict:
    result = json.loads((out / "result.json").read_text())
    with open(out / "findings.tsv", newline="") as fh:
        rows = list(csv.DictReader((ln for ln in fh if not ln.startswith("#")), delimiter="\t"))
    with gzip.open(out / "findings.vcf.gz", "rt") as fh:
        vcf_lines = [ln for ln in fh if not ln.startswith("#")]
    pp = json.loads(next(out.glob("*.phenopacket.json")).read_text())
    return {"result": result, "tsv": rows, "vcf": vcf_lines, "html": (out / "report.html").read_text(), "pp": pp}


def pp_descriptors(pp: dict) -> list[dict]:
    return [gi["variantInterpretation"]["variationDescriptor"] for i in pp.get("interpretations", [])
            for gi in i["diagnosis"]["genomicInterpretations"] if "variantInterpretation" in gi]


def gene_row(result: dict, symbol: str) -> dict:
    return next(g for g in result["genes"] if g["symbol"] == symbol)


# ---------------------------------------------------------------------------
# The panel's rCRS spans place the published alleles on the published codons
# ---------------------------------------------------------------------------
@pytest.mark.parametrize("gene,pos,ref,alt,c,p,prot", LHON + [NARP])
def test_panel_rcrs_spans_put_published_alleles_on_their_codons(gene, pos, ref, alt, c, p, prot):
    g = load_panel().genes[gene]
    assert g.grch38.chrom == "MT" and g.grch37.chrom == "MT"
    assert (g.grch38.start, g.grch38.end) == (g.grch37.start, g.grch37.end)  # both builds are the rCRS
    offset = (pos - g.grch38.start + 1) if g.strand == "+" else (g.grch38.end - pos + 1)
    assert f"c.{offset}" in c  # published c. position (rCRS span above)
    assert (offset - 1) // 3 + 1 == int(prot.split("/")[0])  # published codon
    # protein length: whole codons of the span less a complete stop codon; MT-ND1 and MT-ND4 end in
    # an incomplete stop (T or TA) completed by polyadenylation (Ojala D et al., Nature 1981;290:470;
    # from memory), so there every whole codon is a sense codon
    n = g.grch38.end - g.grch38.start + 1
    assert (n // 3 if n % 3 else n // 3 - 1) == int(prot.split("/")[1])


# ---------------------------------------------------------------------------
# Homoplasmic LHON alleles: every output, mitochondrial fit
# ---------------------------------------------------------------------------
@pytest.mark.parametrize("gene,pos,ref,alt,c,p,prot", LHON)
def test_homoplasmic_lhon_allele_in_every_output(tmp_path, gene, pos, ref, alt, c, p, prot):
    vcf = write_vcf(tmp_path / "lhon.vcf", ["SON1"], [
        ("chrM", pos, ref, alt, csq(gene, c, p, prot, alt), [((1, 1), 2, 498)])], grch38_contigs())
    out = tmp_path / "out"
    r = run_cli("triage", vcf, "--sex", "male", "--hpo", HPO, "--out", str(out))
    assert r.returncode == 0, r.stderr
    o = outputs(out)
    res = o["result"]
    f = next(x for x in res["findings"] if x["gene"] == gene)
    assert f["pos"] == pos and f["zygosity"] == "homoplasmic" and f["allele_balance"] == pytest.approx(0.996)
    g = gene_row(res, gene)
    assert g["inheritance"] == ["MT"]
    # mitochondrial (maternal) inheritance, one allele: never a recessive or dominant fit
    assert g["genotype_fit"] == "mitochondrial homoplasmic", g
    assert res["genes"][0]["symbol"] == gene
    term = " ".join(r.stdout.split())
    assert "mitochondrial (maternal), homoplasmic" in term
    assert "homoplasmic 100 %" in term  # 498 of 500 reads
    assert "recessive" not in term.split("Gene hypotheses")[1].split("Light-response")[0]
    assert "dominant gene" not in term
    # cascade: ganglion cells and their mitochondrial energy supply
    step = g["cascade_step"]
    assert step["id"] == "ganglion_cells" and "mitochondrial" in (step["text"] + step["breaks"])
    assert "maternally inherited" in step["breaks"]
    row = next(x for x in o["tsv"] if x["gene"] == gene)
    assert row["zygosity"] == "homoplasmic" and float(row["allele_balance"]) == pytest.approx(0.996)
    assert row["genotype_fit"] == "mitochondrial (maternal), homoplasmic"
    vline = next(ln for ln in o["vcf"] if f"IRDT_GENE={gene}" in ln)
    assert "IRDT_ZYG=homoplasmic" in vline and "IRDT_HPL=0.996" in vline and "IRDT_FIT=mitochondrial%20homoplasmic" in vline
    assert "homoplasmic (mtDNA), 100 % of reads" in o["html"] and "mitochondrial (maternal), homoplasmic" in o["html"]
    vd = next(d for d in pp_descriptors(o["pp"]) if d["vcfRecord"]["pos"] == pos)
    # GENO:0000602 homoplasmic (Genotype Ontology)
    assert vd["allelicState"] == {"id": "GENO:0000602", "label": "homoplasmic"}
    assert vd["vcfRecord"]["info"] == "AF=0.996"


# ---------------------------------------------------------------------------
# Heteroplasmic NARP allele m.8993T>G: a disease level and a low level, male and female
# ---------------------------------------------------------------------------
def narp_evidence(tmp_path: Path) -> str:
    """Published evidence a curator would enter for m.8993T>G (ACMG/AMP codes, Richards 2015)."""
    p = tmp_path / "curated.yaml"
    p.write_text(
        "- {variant: MT-8993-T-G, code: PS3, strength: Strong, reason: 'reduced ATP synthesis in cells carrying "
        "the allele', citation: 'Tatuch Y, Robinson BH, Biochem Biophys Res Commun 1993;192:124-128 (from memory)'}\n"
        "- {variant: MT-8993-T-G, code: PS4, strength: Moderate, reason: 'found in unrelated NARP and Leigh "
        "syndrome families', citation: 'Holt IJ et al., Am J Hum Genet 1990;46:428-433; Tatuch Y et al., Am J Hum "
        "Genet 1992;50:852-858 (from memory)'}\n")
    return str(p)


@pytest.mark.parametrize("sex,ad_ref,ad_alt,level,fit", [
    ("male", 140, 360, 72, "mitochondrial heteroplasmic"),
    ("female", 140, 360, 72, "mitochondrial heteroplasmic"),
    ("female", 400, 100, 20, "mitochondrial heteroplasmy below disease level"),
    ("male", 400, 100, 20, "mitochondrial heteroplasmy below disease level"),
])
def test_heteroplasmic_narp_allele_in_every_output(tmp_path, sex, ad_ref, ad_alt, level, fit):
    gene, pos, ref, alt, c, p, prot = NARP
    vcf = write_vcf(tmp_path / "narp.vcf", ["P1"], [
        ("chrM", pos, ref, alt, csq(gene, c, p, prot, alt), [((0, 1), ad_ref, ad_alt)])], grch38_contigs())
    out = tmp_path / "out"
    r = run_cli("triage", vcf, "--sex", sex, "--hpo", HPO, "--out", str(out), "--curated", narp_evidence(tmp_path))
    assert r.returncode == 0, r.stderr
    o = outputs(out)
    res = o["result"]
    f = next(x for x in res["findings"] if x["gene"] == gene)
    assert f["zygosity"] == "heteroplasmic" and f["allele_balance"] == pytest.approx(level / 100)
    assert f["classification"] == "Likely pathogenic"  # PS3 + PS4_Moderate (+ PM2_Supporting): Richards 2015 LP (i)
    g = gene_row(res, gene)
    assert g["genotype_fit"] == fit
    text = " ".join(g["next_steps"] + g.get("notes", []))
    assert f"heteroplasmic at {level} %" in " ".join(r.stdout.split()) or f"heteroplasmic at {level} %" in text
    term = " ".join(r.stdout.split())
    assert f"heteroplasmic {level} %" in term
    assert "homozygous" not in term and "heterozygous" not in term.split("Gene hypotheses")[1].split("Light-response")[0]
    if level < 70:  # below the NARP level of panels/heteroplasmy.yaml (Holt 1990; Tatuch 1992)
        assert res["case"]["status"] != "SOLVED"
        assert "below the usual disease level" in term and "another tissue" in term
    else:
        assert res["genes"][0]["symbol"] == gene and res["case"]["status"] == "SOLVED"
    assert g["cascade_step"]["id"] == "metabolism" and "MT-ATP6" in g["cascade_step"]["breaks"]
    row = next(x for x in o["tsv"] if x["gene"] == gene)
    assert row["zygosity"] == "heteroplasmic" and float(row["allele_balance"]) == pytest.approx(level / 100)
    vline = next(ln for ln in o["vcf"] if f"IRDT_GENE={gene}" in ln)
    assert "IRDT_ZYG=heteroplasmic" in vline and f"IRDT_HPL={level / 100:g}" in vline
    assert f"heteroplasmic (mtDNA), {level} % of reads" in o["html"]
    vd = next(d for d in pp_descriptors(o["pp"]) if d["vcfRecord"]["pos"] == pos)
    assert vd["allelicState"] == {"id": "GENO:0000603", "label": "heteroplasmic"}  # GENO heteroplasmic
    assert vd["vcfRecord"]["info"] == f"AF={level / 100:.3f}"


def test_mother_carrying_the_allele_is_named_as_maternal_transmission(tmp_path):
    gene, pos, ref, alt, c, p, prot = NARP
    vcf = write_vcf(tmp_path / "trio.vcf", ["KID", "MUM", "DAD"], [
        ("chrM", pos, ref, alt, csq(gene, c, p, prot, alt),
         [((0, 1), 100, 400), ((0, 1), 250, 250), ((0,), 500, 0)])], grch38_contigs())
    ped = tmp_path / "f.ped"
    ped.write_text("F KID DAD MUM 2 2\nF MUM 0 0 2 1\nF DAD 0 0 1 1\n")
    out = tmp_path / "out"
    r = run_cli("triage", vcf, "--sample", "KID", "--ped", str(ped), "--hpo", HPO, "--out", str(out),
                "--formats", "json")
    assert r.returncode == 0, r.stderr
    res = json.loads((out / "result.json").read_text())
    g = gene_row(res, gene)
    assert g["genotype_fit"] == "mitochondrial heteroplasmic"
    joined = " ".join(g["next_steps"] + g.get("notes", []))
    assert "also carried by the mother (50 % of reads): maternal transmission" in joined


# ---------------------------------------------------------------------------
# chrM naming (chrM, MT, M) and both builds; hg19's chrM is refused with a warning
# ---------------------------------------------------------------------------
@pytest.mark.parametrize("build,mt_name,prefix", [
    ("GRCh38", "chrM", True), ("GRCh38", "MT", False), ("GRCh38", "M", False),
    ("GRCh37", "MT", False),  # b37 names MT and uses the rCRS
])
def test_chrm_names_and_builds(tmp_path, build, mt_name, prefix):
    gene, pos, ref, alt, c, p, prot = LHON[0]
    contigs = grch38_contigs(mt_name, chr_prefix=prefix) if build == "GRCh38" else grch37_contigs(mt_name)
    vcf = write_vcf(tmp_path / "n.vcf", ["P1"], [
        (mt_name, pos, ref, alt, csq(gene, c, p, prot, alt), [((1,), 0, 400)])], contigs,
        reference=build if build == "GRCh38" else "b37")
    out = tmp_path / "out"
    r = run_cli("triage", vcf, "--sex", "female", "--hpo", HPO, "--out", str(out), "--formats", "json,tsv")
    assert r.returncode == 0, r.stderr
    res = json.loads((out / "result.json").read_text())
    assert res["genome_build"] == build
    f = next(x for x in res["findings"] if x["gene"] == gene)
    assert f["pos"] == pos and f["chrom"] == mt_name and f["zygosity"] == "homoplasmic"
    assert gene_row(res, gene)["genotype_fit"] == "mitochondrial homoplasmic"
    assert not any("rCRS" in w for w in res["warnings"])


@pytest.mark.parametrize("mt_name", ["chrM", "M"])
def test_hg19_chrm_is_not_read_as_rcrs(tmp_path, mt_name):
    # UCSC hg19: chr-prefixed GRCh37 nuclear contigs and chrM of 16,571 bp (NC_001807), not the rCRS
    gene, pos, ref, alt, c, p, prot = LHON[0]
    vcf = write_vcf(tmp_path / "hg19.vcf", ["P1"], [
        (mt_name, pos, ref, alt, csq(gene, c, p, prot, alt), [((1,), 0, 400)])],
        grch37_contigs(mt_name, mt_length=16571, chr_prefix=True), reference="hg19")
    out = tmp_path / "out"
    r = run_cli("triage", vcf, "--sex", "male", "--hpo", HPO, "--out", str(out), "--formats", "json")
    assert r.returncode == 0, r.stderr
    res = json.loads((out / "result.json").read_text())
    assert res["genome_build"] == "GRCh37"
    assert not [x for x in res["findings"] if x["gene"] == gene]  # no silently misplaced finding
    warned = [w for w in res["warnings"] if "16,571" in w and "rCRS" in w]
    assert len(warned) == 1 and "NOT read" in warned[0] and mt_name in warned[0]
    assert "16,571" in " ".join(r.stdout.split())


# ---------------------------------------------------------------------------
# The thresholds file is validated
# ---------------------------------------------------------------------------
def test_bundled_thresholds_hold_the_published_alleles_with_sources():
    t = load_thresholds()
    assert t.homoplasmic_min_fraction == 0.95  # gnomAD mtDNA convention (Laricchia et al. 2022)
    narp = t.alleles[("MT-ATP6", 8993, "T", "G")]
    assert "Holt" in narp[2] and 0.6 <= narp[0] <= 0.9  # NARP at about 70-90 % (Tatuch 1992, from memory)
    assert "Wallace" in t.alleles[("MT-ND4", 11778, "G", "A")][2]


def test_bad_threshold_is_a_clear_error(tmp_path):
    bad = tmp_path / "h.yaml"
    bad.write_text("homoplasmic_min_fraction: 95\nhomoplasmic_source: x\ndefault_disease_min_fraction: 0.6\n"
                   "default_source: y\nalleles: []\n")
    with pytest.raises(InputError) as e:
        load_thresholds(bad)
    assert "homoplasmic_min_fraction" in str(e.value) and str(bad) in str(e.value)
