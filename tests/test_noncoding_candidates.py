"""Candidate non-coding alleles and listed recurrent non-coding alleles, end to end.

Rules under test (DEVELOPERS.md "Reporting filter", irdtriage/noncoding.py, irdtriage/rank.py
invariant 4): a rare intronic allele more than 50 nt into the intron with no splice prediction
is counted, not reported, unless it would complete a recessive genotype (homozygous, or the
second allele beside a Pathogenic/Likely pathogenic partner) in a gene whose phenotype fits or
with no phenotype given; then it is reported as a candidate non-coding allele, ranked below
coding explanations and above genes with nothing, and the case is never SOLVED on it. A
listed recurrent allele is always reported, with its source.

Variants (GRCh38, HGVS on the MANE Select transcripts of the bundled panel):
- RPGRIP1 NM_020366.4:c.1468-263G>C (chr14:21320996 G>C) and c.3618-1_3621del
  (chr14:21348166 TTTTAG>T): the two alleles of a published case, PMID 30072743
  ("Contribution of noncoding pathogenic variants to RPGRIP1-mediated inherited retinal
  degeneration"), as recorded in GA4GH phenopacket-store (individual 949-1907). The deep-intronic
  one is not on the bundled list, so without a splice score it is exactly the allele the
  reporting filter used to drop.
- CEP290 NM_025114.4:c.2991+1655A>G: den Hollander et al., Am J Hum Genet 2006;79:556-561 (16 of
  76 unrelated LCA patients). The record's position is a stand-in inside the CEP290 span
  (GRCh38 chr12:88,049,016-88,142,088, MANE v1.5); recognition is by the annotation's HGVS c.
- MERTK (AR; GRCh38 chr2:111,898,607-112,029,561, MANE v1.5) missense alleles and a CNGB3 (AR;
  chr8:86,574,179-86,743,634) missense allele: constructed for the ranking check, asserted only
  for their genotype logic.
"""
from __future__ import annotations

import csv
import io
import json
import os
import subprocess
import sys
from pathlib import Path

import pysam
import pytest

from irdtriage.pipeline import triage

ROOT = Path(__file__).resolve().parents[1]
CSQ = ("Allele|Consequence|IMPACT|SYMBOL|Gene|Feature_type|Feature|BIOTYPE|EXON|INTRON|HGVSc|HGVSp|"
       "Protein_position|gnomADe_AF")
CONTIGS = {"chr2": 242193529, "chr8": 145138636, "chr12": 133275309, "chr14": 107043718}

# (chrom, pos, ref, alt, gene, consequence, transcript, exon, intron, hgvs_c, hgvs_p, protein_position)
RPGRIP1_DEEP = ("chr14", 21320996, "G", "C", "RPGRIP1", "intron_variant", "NM_020366.4", "", "11/23",
                "c.1468-263G>C", "", "")
RPGRIP1_SPLICE = ("chr14", 21348166, "TTTTAG", "T", "RPGRIP1", "splice_acceptor_variant&coding_sequence_variant",
                  "NM_020366.4", "", "22/23", "c.3618-1_3621del", "p.?", "")
CEP290_DEEP = ("chr12", 88100000, "T", "C", "CEP290", "intron_variant", "NM_025114.4", "", "26/53",
               "c.2991+1655A>G", "", "")
MERTK_A = ("chr2", 111990000, "C", "T", "MERTK", "missense_variant", "NM_006343.3", "10/19", "",
           "c.1400C>T", "p.(Ala467Val)", "467/999")
MERTK_B = ("chr2", 112000000, "G", "A", "MERTK", "missense_variant", "NM_006343.3", "14/19", "",
           "c.2000G>A", "p.(Arg667His)", "667/999")
CNGB3_A = ("chr8", 86600000, "C", "T", "CNGB3", "missense_variant", "NM_019098.5", "10/18", "",
           "c.1000G>A", "p.(Gly334Ser)", "334/809")

HOM, HET = "1/1:0,30:30:99", "0/1:15,15:30:99"
# RPGRIP1 phenotype terms from the published case (phenopacket-store, PMID 30072743): nystagmus,
# reduced visual acuity; plus the gene's condition, Leber congenital amaurosis (HP:0000639,
# HP:0007663 in the case; HP:0000510 rod-cone dystrophy)
RPGRIP1_HPO = "HP:0000639,HP:0007663,HP:0000510"


def rec(chrom, pos, ref, alt, gene, consequence, tx, exon, intron, c, p, prot, call, af=""):
    csq = "|".join([alt if len(alt) == len(ref) else (alt[1:] or "-"), consequence, "MODIFIER", gene, "",
                    "Transcript", tx, "protein_coding", exon, intron, f"{tx}:{c}", p, prot, af])
    return (chrom, pos, ref, alt, csq, call)


def write_vcf(path: Path, records: list[tuple], sample: str = "P1") -> str:
    lines = ["##fileformat=VCFv4.2", "##reference=GRCh38"]
    lines += [f"##contig=<ID={c},length={n}>" for c, n in CONTIGS.items()]
    lines += [
        '##FILTER=<ID=PASS,Description="All filters passed">',
        f'##INFO=<ID=CSQ,Number=.,Type=String,Description="Consequence annotations. Format: {CSQ}">',
        '##FORMAT=<ID=GT,Number=1,Type=String,Description="Genotype">',
        '##FORMAT=<ID=AD,Number=R,Type=Integer,Description="Allelic depths">',
        '##FORMAT=<ID=DP,Number=1,Type=Integer,Description="Depth">',
        '##FORMAT=<ID=GQ,Number=1,Type=Integer,Description="Genotype quality">',
        f"#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\tFORMAT\t{sample}",
    ]
    order = list(CONTIGS)
    for chrom, pos, ref, alt, csq, call in sorted(records, key=lambda r: (order.index(r[0]), r[1])):
        lines.append("\t".join([chrom, str(pos), ".", ref, alt, "500", "PASS", f"CSQ={csq}", "GT:AD:DP:GQ", call]))
    plain = path.with_suffix("")
    plain.write_text("\n".join(lines) + "\n")
    pysam.tabix_index(str(plain), preset="vcf", force=True)
    return str(plain) + ".gz"


def by_hgvs(result: dict, c: str) -> dict:
    hits = [f for f in result["findings"] if f["hgvs_c"].endswith(c)]
    assert len(hits) == 1, [f["hgvs_c"] for f in result["findings"]]
    return hits[0]


def gene(result: dict, symbol: str) -> dict:
    return next(g for g in result["genes"] if g["symbol"] == symbol)


def run_cli(*args: str) -> subprocess.CompletedProcess:
    env = dict(os.environ, NO_COLOR="1", COLUMNS="100", PYTHONPATH=str(ROOT))
    return subprocess.run([sys.executable, "-m", "irdtriage", *args], capture_output=True, text=True,
                          cwd=ROOT, env=env, timeout=600)


# (a) -------------------------------------------------------------------------------------------
def test_homozygous_deep_intronic_allele_is_a_candidate_in_every_output(tmp_path):
    """Homozygous deep-intronic RPGRIP1 allele (AR gene), fitting phenotype: reported as a
    candidate non-coding allele, case IN_PROGRESS, next step in result.json, findings.tsv,
    report.html and the terminal (real CLI subprocess)."""
    vcf = write_vcf(tmp_path / "hom.vcf", [rec(*RPGRIP1_DEEP, HOM)])
    out = tmp_path / "out"
    r = run_cli("triage", vcf, "--hpo", RPGRIP1_HPO, "--out", str(out))
    assert r.returncode == 0, r.stderr
    res = json.loads((out / "result.json").read_text())
    f = by_hgvs(res, "c.1468-263G>C")
    assert f["noncoding_candidate"] is True
    assert f["noncoding"]["kind"] == "candidate" and f["noncoding"]["completes"] == "homozygous"
    assert f["noncoding"]["phenotype_fit"] == "fits"
    assert f["interpretation_status"] == "CANDIDATE"
    assert res["case"]["status"] == "IN_PROGRESS"  # never SOLVED on a candidate non-coding allele
    assert "non-coding" in res["case"]["summary"]
    step = "RNA or minigene splice study of RPGRIP1 c.1468-263G>C; test parents for segregation"
    assert f["noncoding"]["next_step"].startswith(step)
    assert any(s.startswith(step) for s in res["case"]["next_steps"])
    assert res["counts"]["noncoding_not_reported"] == 0 and res["counts"]["noncoding_candidates_reported"] == 1
    g = gene(res, "RPGRIP1")
    assert g["genotype_fit"] == "homozygous"

    rows = list(csv.DictReader(io.StringIO((out / "findings.tsv").read_text(encoding="utf-8")), delimiter="\t"))
    row = next(x for x in rows if x["hgvs_c"].endswith("c.1468-263G>C"))
    assert row["noncoding_candidate"] == "yes" and row["noncoding_next_step"].startswith(step)
    # the new columns sit just before the caution, which stays the last column of every row
    cols = list(rows[0])
    i = cols.index("noncoding_candidate")
    assert cols[i:i + 3] == ["noncoding_candidate", "noncoding_reason", "noncoding_next_step"] and cols[-1] == "caution"

    from html import unescape  # the report escapes ">" in HGVS; compare the text a reader sees

    html = unescape(" ".join((out / "report.html").read_text(encoding="utf-8").split()))
    assert "Candidate non-coding allele" in html and step in html

    terminal = " ".join(r.stdout.split())
    assert "candidate non-coding allele:" in terminal and step in terminal

    import jsonschema

    schema = json.loads((ROOT / "irdtriage" / "schema" / "result.schema.json").read_text())
    jsonschema.validate(res, schema)


# (b) -------------------------------------------------------------------------------------------
def test_heterozygous_deep_intronic_beside_a_null_allele_is_reported_with_its_partner(tmp_path):
    """The published RPGRIP1 genotype (PMID 30072743): c.1468-263G>C beside c.3618-1_3621del."""
    vcf = write_vcf(tmp_path / "het2.vcf", [rec(*RPGRIP1_DEEP, HET), rec(*RPGRIP1_SPLICE, HET)])
    res = triage(vcf, hpo=RPGRIP1_HPO)
    deep, partner = by_hgvs(res, "c.1468-263G>C"), by_hgvs(res, "c.3618-1_3621del")
    assert deep["noncoding_candidate"] is True and partner["noncoding_candidate"] is False
    assert deep["noncoding"]["completes"] == "second allele"
    assert deep["noncoding"]["partners"] == [partner["id"]]
    assert "c.3618-1_3621del" in deep["noncoding"]["reason"]
    g = gene(res, "RPGRIP1")
    assert g["genotype_fit"] == "biallelic phase unknown"
    assert set(g["findings"]) == {deep["id"], partner["id"]}
    assert res["case"]["status"] == "IN_PROGRESS"


# (c) -------------------------------------------------------------------------------------------
def test_lone_heterozygous_deep_intronic_allele_stays_filtered(tmp_path):
    vcf = write_vcf(tmp_path / "het1.vcf", [rec(*RPGRIP1_DEEP, HET)])
    res = triage(vcf, hpo=RPGRIP1_HPO)
    assert res["findings"] == []
    assert res["counts"]["noncoding_not_reported"] == 1
    assert res["counts"]["noncoding_candidates_reported"] == 0
    assert res["case"]["status"] == "UNSOLVED"


def test_homozygous_deep_intronic_with_a_poorly_fitting_phenotype_stays_filtered(tmp_path):
    # HP:0001250 Seizure: a non-retinal presentation, so no gene's phenotype fits
    vcf = write_vcf(tmp_path / "nofit.vcf", [rec(*RPGRIP1_DEEP, HOM)])
    res = triage(vcf, hpo="HP:0001250")
    assert res["findings"] == [] and res["counts"]["noncoding_not_reported"] == 1
    # ... but not silently: a warning names the allele that would complete the genotype
    assert any("RPGRIP1 c.1468-263G>C" in w and "counted, not reported" in w for w in res["warnings"])


def test_no_phenotype_given_keeps_the_candidate_and_says_the_fit_is_unknown(tmp_path):
    vcf = write_vcf(tmp_path / "nopheno.vcf", [rec(*RPGRIP1_DEEP, HOM)])
    res = triage(vcf)
    f = by_hgvs(res, "c.1468-263G>C")
    assert f["noncoding"]["phenotype_fit"] == "unknown" and "unknown" in f["noncoding"]["reason"]
    assert res["case"]["status"] == "IN_PROGRESS"


def test_common_deep_intronic_allele_is_not_a_candidate(tmp_path):
    # gnomAD AF 0.2 meets BA1 (> 0.05; Richards et al. 2015, ClinGen SVI BA1 2018): counted as common
    vcf = write_vcf(tmp_path / "common.vcf", [rec(*RPGRIP1_DEEP, HOM, af="0.2")])
    res = triage(vcf, hpo=RPGRIP1_HPO)
    assert res["findings"] == [] and res["counts"]["common_not_reported"] == 1


# (d) -------------------------------------------------------------------------------------------
def test_listed_recurrent_allele_is_always_reported_with_its_source(tmp_path):
    """CEP290 c.2991+1655A>G, heterozygous and alone: den Hollander et al., Am J Hum Genet
    2006;79:556-561. Before this change it was counted as noncoding_not_reported."""
    vcf = write_vcf(tmp_path / "cep.vcf", [rec(*CEP290_DEEP, HET)])
    res = triage(vcf, hpo="HP:0000639,HP:0000510")
    f = by_hgvs(res, "c.2991+1655A>G")
    assert f["noncoding"]["kind"] == "listed" and f["noncoding_candidate"] is False
    assert "den Hollander" in f["noncoding"]["source"] and "den Hollander" in f["noncoding"]["reason"]
    assert res["counts"]["noncoding_not_reported"] == 0 and res["counts"]["noncoding_listed_reported"] == 1


def test_listed_allele_is_a_partner_for_a_candidate_non_coding_allele(tmp_path):
    """A second, unlisted rare deep-intronic CEP290 allele beside c.2991+1655A>G is a candidate
    non-coding allele whose partner is the listed one (constructed second allele)."""
    other = ("chr12", 88120000, "A", "G", "CEP290", "intron_variant", "NM_025114.4", "", "10/53",
             "c.1065+2000T>C", "", "")
    vcf = write_vcf(tmp_path / "cep2.vcf", [rec(*CEP290_DEEP, HET), rec(*other, HET)])
    res = triage(vcf)  # no phenotype: fit unknown, still kept
    listed, cand = by_hgvs(res, "c.2991+1655A>G"), by_hgvs(res, "c.1065+2000T>C")
    assert cand["noncoding_candidate"] is True and cand["noncoding"]["partners"] == [listed["id"]]
    assert gene(res, "CEP290")["genotype_fit"] == "biallelic phase unknown"
    assert res["case"]["status"] == "IN_PROGRESS"


def test_listed_allele_not_on_the_mane_transcript_is_not_recognised(tmp_path):
    # the same c. text on another transcript names another position: not the listed allele
    alt_tx = CEP290_DEEP[:6] + ("NM_001999999.1",) + CEP290_DEEP[7:]
    vcf = write_vcf(tmp_path / "cep3.vcf", [rec(*alt_tx, HET)])
    res = triage(vcf)
    assert res["findings"] == [] and res["counts"]["noncoding_not_reported"] == 1


# (e) -------------------------------------------------------------------------------------------
def test_ranking_coding_explanation_then_noncoding_candidate_then_nothing(tmp_path):
    """MERTK: two missense VUS, phase unknown (the weakest coding biallelic explanation);
    RPGRIP1: homozygous candidate non-coding allele with the best phenotype fit; CNGB3: one
    missense VUS (a carrier state). Order required by rank.py invariant 4: MERTK, RPGRIP1, CNGB3."""
    vcf = write_vcf(tmp_path / "rank.vcf", [
        rec(*MERTK_A, HET), rec(*MERTK_B, HET), rec(*RPGRIP1_DEEP, HOM), rec(*CNGB3_A, HET)])
    res = triage(vcf, hpo=RPGRIP1_HPO)
    order = [g["symbol"] for g in res["genes"]]
    fits = {g["symbol"]: g["genotype_fit"] for g in res["genes"]}
    assert fits == {"MERTK": "biallelic phase unknown", "RPGRIP1": "homozygous",
                    "CNGB3": "single heterozygous in a recessive gene"}, fits
    assert order == ["MERTK", "RPGRIP1", "CNGB3"], [(g["symbol"], g["score"]) for g in res["genes"]]
    assert gene(res, "MERTK")["score"] > gene(res, "RPGRIP1")["score"] > gene(res, "CNGB3")["score"] > 0
    assert "non-coding" in gene(res, "RPGRIP1")["reason"]
