"""Allelic state once the sex is settled: male chrX/chrY, pseudoautosomal and mitochondrial calls.

Expected states follow textbook genetics (common practice): a 46,XY male has one chrX outside
the pseudoautosomal regions (PARs) and one chrY, so a call there without a reference allele is
hemizygous and a heterozygous call is a genotyping or sex problem; PAR calls are diploid;
mitochondrial calls are homoplasmic or heteroplasmic. PAR coordinates: GRC definitions
(GRCh38 PAR1 X:10,001-2,781,479, as listed by Ensembl; GRCh37 PAR1 X:60,001-2,699,520 as quoted
by UCSC). The homoplasmy cut-off 0.95 is the gnomAD mtDNA convention (Laricchia et al., Genome
Res 2022; from memory). Gene coordinates are GRCh38 MANE v1.5 spans as in the bundled panel
(RPGR chrX:38,284,408-38,327,509, MANE Ensembl transcript ENST00000645032.1; RPE65
chr1:68,428,822-68,449,954); the variants are constructed for the test.

VCFs are written to tmp_path and read through pysam (the real reader); the CLI runs in a
subprocess.
"""
from __future__ import annotations

import csv
import json
import os
import subprocess
import sys
from pathlib import Path

import pytest

from irdtriage.pipeline import triage
from vcf_builder import write_csq_vcf

ROOT = Path(__file__).resolve().parents[1]
CSQ = ("Allele|Consequence|IMPACT|SYMBOL|Gene|Feature_type|Feature|BIOTYPE|EXON|INTRON|HGVSc|HGVSp|"
       "Protein_position|gnomADe_AF")
RPGR_MANE = "ENST00000645032.1"


def csq(alt, gene, consequence, exon, c, p, prot, feature=""):
    return "|".join([alt, consequence, "HIGH", gene, "", "Transcript", feature, "protein_coding", exon, "", c, p,
                     prot, ""])


RPGR_STOP = csq("A", "RPGR", "stop_gained", "8/19", "c.900C>T", "p.(Gln300Ter)", "300/1152", RPGR_MANE)
RPE65_MISSENSE = csq("A", "RPE65", "missense_variant", "5/14", "c.400C>T", "p.(Arg134Cys)", "134/533")


def write_vcf(path: Path, samples: list[str], records: list[tuple], index: bool = True) -> str:
    return write_csq_vcf(path, samples, records, CSQ, index=index)


def run_cli(*args: str) -> subprocess.CompletedProcess:
    env = dict(os.environ, NO_COLOR="1", COLUMNS="200", PYTHONPATH=str(ROOT))
    return subprocess.run([sys.executable, "-m", "irdtriage", *args], capture_output=True, text=True,
                          cwd=ROOT, env=env, timeout=600)


# ---------------------------------------------------------------------------
# Male chrX: 1/1 is hemizygous in every output
# ---------------------------------------------------------------------------
def test_male_1_1_chrx_call_is_hemizygous_in_every_output(tmp_path):
    vcf = write_vcf(tmp_path / "m.vcf", ["MAN1"], [("chrX", 38300500, "G", "A", RPGR_STOP, ["1/1:0,31:31:99"])])
    out = tmp_path / "out"
    r = run_cli("triage", vcf, "--sex", "male", "--hpo", "HP:0000510", "--out", str(out),
                "--formats", "json,tsv,phenopacket")
    assert r.returncode == 0, r.stderr
    result = json.loads((out / "result.json").read_text())
    f = result["findings"][0]
    assert f["genotype"] == "1/1" and f["zygosity"] == "hemizygous"
    assert result["genes"][0]["genotype_fit"] == "hemizygous"
    with open(out / "findings.tsv", newline="") as fh:
        rows = list(csv.DictReader((ln for ln in fh if not ln.startswith("#")), delimiter="\t"))
    assert rows[0]["zygosity"] == "hemizygous"
    pp = json.loads(next(out.glob("*.phenopacket.json")).read_text())
    states = [gi["variantInterpretation"]["variationDescriptor"].get("allelicState", {}).get("label")
              for i in pp.get("interpretations", []) for gi in i["diagnosis"]["genomicInterpretations"]]
    assert "hemizygous" in states and "homozygous" not in states  # GENO allelic state in the phenopacket
    assert "homozygous" not in r.stdout.lower()


def test_relatives_zygosity_follows_their_ped_sex(tmp_path):
    # A father's chrX call is hemizygous whatever the caller wrote; the mother's stays diploid.
    vcf = write_vcf(tmp_path / "t.vcf", ["KID", "MUM", "DAD", "BRO"], [
        ("chrX", 38300500, "G", "A", RPGR_STOP,
         ["1/1:0,31:31:99", "0/1:15,15:30:99", "0/0:30,0:30:99", "1:0,29:29:99"]),
    ])
    ped = tmp_path / "f.ped"
    ped.write_text("F KID DAD MUM 1 2\nF MUM 0 0 2 1\nF DAD 0 0 1 1\nF BRO DAD MUM 1 2\n")
    r = triage(vcf, sample="KID", ped=str(ped), hpo="HP:0000510")
    f = r["findings"][0]
    assert f["zygosity"] == "hemizygous"
    assert f["family"]["MUM"]["zygosity"] == "heterozygous"
    assert f["family"]["DAD"]["zygosity"] == "reference"
    assert r["genes"][0]["genotype_fit"] == "hemizygous"


# ---------------------------------------------------------------------------
# Male chrX heterozygous: kept heterozygous, warned, never hemizygous, no BP5 against others
# ---------------------------------------------------------------------------
def test_male_heterozygous_x_call_is_not_hemizygous_and_does_not_drive_bp5(tmp_path):
    vcf = write_vcf(tmp_path / "m.vcf", ["MAN1"], [
        ("chr1", 68444600, "G", "A", RPE65_MISSENSE, ["1/1:0,30:30:99"]),
        ("chrX", 38300500, "G", "A", RPGR_STOP, ["0/1:15,16:31:99"]),
    ])
    r = triage(vcf, sex="male", hpo="HP:0000510,HP:0000662")
    by_gene = {f["gene"]: f for f in r["findings"]}
    rpgr, rpe65 = by_gene["RPGR"], by_gene["RPE65"]
    assert rpgr["zygosity"] == "heterozygous" and rpgr["genotype"] == "0/1"
    fits = {g["symbol"]: g["genotype_fit"] for g in r["genes"]}
    assert fits["RPGR"] != "hemizygous"
    # Richards 2015 BP5 needs an alternate molecular basis; a doubtful male 0/1 call is none
    bp5 = next(c for c in rpe65["criteria"] if c["code"] == "BP5")
    assert bp5["met"] is False
    warned = [w for w in r["warnings"] if "heterozygous call(s) in a male" in w]
    assert len(warned) == 1 and rpgr["id"] in warned[0] and "X-38300500-G-A" in warned[0]


def test_male_heterozygous_x_warning_reaches_the_terminal_and_tsv_run(tmp_path):
    vcf = write_vcf(tmp_path / "m.vcf", ["MAN1"], [("chrX", 38300500, "G", "A", RPGR_STOP, ["0/1:15,16:31:99"])])
    out = tmp_path / "out"
    r = run_cli("triage", vcf, "--sex", "male", "--out", str(out), "--formats", "json,html")
    assert r.returncode == 0, r.stderr
    assert "heterozygous call(s) in a male" in " ".join(r.stdout.split())
    assert "heterozygous call(s) in a male" in (out / "report.html").read_text()


# ---------------------------------------------------------------------------
# Female chrX haploid call, chrY, chrM
# ---------------------------------------------------------------------------
def test_female_haploid_chrx_call_is_a_haploid_call_not_hemizygous(tmp_path):
    vcf = write_vcf(tmp_path / "f.vcf", ["WOMAN1"], [("chrX", 38300500, "G", "A", RPGR_STOP, ["1:0,30:30:99"])])
    r = triage(vcf, sex="female", hpo="HP:0000510")
    f = r["findings"][0]
    assert f["zygosity"] == "haploid call"
    assert r["genes"][0]["genotype_fit"] not in ("hemizygous", "homozygous")


MITO_Y_VCF = [
    # chrM: all reads alternate -> homoplasmic; 40 % alternate under a 1/1 GT -> heteroplasmic (0.4);
    # 0/1 -> heteroplasmic; haploid 1 with 498/500 alternate reads -> homoplasmic
    ("chrM", 3460, "G", "A", "", ["1/1:0,500:500:99", "1/1:0,480:480:99"]),
    ("chrM", 11778, "G", "A", "", ["1/1:300,200:500:99", "0/1:250,250:500:99"]),
    ("chrM", 14484, "T", "C", "", ["1:2,498:500:99", "0:500,0:500:99"]),
    # chrY and chrX outside the PARs, and chrX inside PAR1
    ("chrY", 2_900_000, "C", "T", "", ["1:0,20:20:99", "1/1:0,20:20:99"]),
    ("chrX", 38_300_500, "G", "A", "", ["1/1:0,31:31:99", "1/1:0,31:31:99"]),
    ("chrX", 1_500_000, "G", "A", "", ["1:0,30:30:99", "0/1:15,15:30:99"]),
    ("chr1", 68_444_600, "G", "A", "", ["1:0,30:30:99", "1/1:0,30:30:99"]),
]


def _read(path):
    from test_genotype import _variants_from_vcf

    return _variants_from_vcf(path)


def test_allelic_states_of_a_real_vcf_through_pysam(tmp_path):
    from irdtriage.genotype import allelic_state, settle_zygosity

    vcf = write_vcf(tmp_path / "my.vcf", ["MAN", "WOMAN"], MITO_Y_VCF, index=False)
    variants = _read(vcf)
    before_autosome = {s: c.zygosity for s, c in variants[-1].calls.items()}
    changed = settle_zygosity(variants, {"MAN": "MALE", "WOMAN": "FEMALE"}, "GRCh38")
    states = [(v.chrom, v.pos, {s: c.zygosity for s, c in v.calls.items()}) for v in variants]
    assert states[0][2] == {"MAN": "homoplasmic", "WOMAN": "homoplasmic"}
    assert states[1][2] == {"MAN": "heteroplasmic", "WOMAN": "heteroplasmic"}
    assert states[2][2] == {"MAN": "homoplasmic", "WOMAN": "reference"}
    assert states[3][2]["MAN"] == "hemizygous"  # chrY in a male
    assert states[4][2] == {"MAN": "hemizygous", "WOMAN": "homozygous"}
    assert states[5][2] == {"MAN": "haploid call", "WOMAN": "heterozygous"}  # PAR1: two copies expected
    assert {s: c.zygosity for s, c in variants[-1].calls.items()} == before_autosome  # autosomes: intake's label
    assert changed >= 6
    # the fraction behind a heteroplasmic call is the AD share of alternate reads
    mt = variants[1]
    st = allelic_state(mt.calls["MAN"], mt.chrom, mt.pos, "MALE", "GRCh38")
    assert st.zygosity == "heteroplasmic" and st.fraction == pytest.approx(0.4)


def test_unknown_sex_leaves_sex_chromosome_labels_alone(tmp_path):
    from irdtriage.genotype import settle_zygosity

    vcf = write_vcf(tmp_path / "u.vcf", ["MAN", "WOMAN"], MITO_Y_VCF, index=False)
    variants = _read(vcf)
    before = [(v.pos, {s: c.zygosity for s, c in v.calls.items()}) for v in variants if v.chrom != "chrM"]
    settle_zygosity(variants, {"MAN": None, "WOMAN": None}, "GRCh38")
    after = [(v.pos, {s: c.zygosity for s, c in v.calls.items()}) for v in variants if v.chrom != "chrM"]
    assert after == before
    assert variants[1].calls["WOMAN"].zygosity == "heteroplasmic"  # chrM does not depend on sex


def test_grch37_par_boundary_for_a_male(tmp_path):
    # X:2,750,000 lies in PAR1 on GRCh38 (ends 2,781,479) but not on GRCh37 (ends 2,699,520).
    from irdtriage.genotype import allelic_state
    from irdtriage.models import Call

    c = Call(sample="MAN", gt=(1, 1), zygosity="homozygous")
    assert allelic_state(c, "X", 2_750_000, "MALE", "GRCh38").zygosity == "homozygous"
    assert allelic_state(c, "X", 2_750_000, "MALE", "GRCh37").zygosity == "hemizygous"
