"""Case inputs that must agree with each other: stated sex (--sex, PED, phenopacket), the
phenopacket's subject, and curated evidence entries.

Formats: PED six columns (sex 1 male, 2 female; common practice); GA4GH Phenopacket v2
(``subject.id``, ``subject.sex`` MALE/FEMALE, parsed by the ``phenopackets`` package). The
chrX heterozygosity rule (a 46,XY male has no true heterozygous calls outside the PARs) is
common practice. VCFs are written to tmp_path and read through pysam; the CLI runs in a
subprocess.
"""
from __future__ import annotations

import json

import pytest

from irdtriage.errors import InputError
from irdtriage.pipeline import triage
from test_sex_and_zygosity import RPGR_STOP, RPE65_MISSENSE, run_cli, write_vcf


def _phenopacket(tmp_path, subject, sex="FEMALE", name="case.json"):
    p = tmp_path / name
    p.write_text(json.dumps({
        "id": "case-1",
        "subject": {"id": subject, "sex": sex},
        "phenotypicFeatures": [{"type": {"id": "HP:0000510"}}],
    }, indent=2) + "\n")
    return p


def _trio(tmp_path):
    vcf = write_vcf(tmp_path / "trio.vcf", ["KID", "MUM", "DAD"], [
        ("chr1", 68444600, "G", "A", RPE65_MISSENSE, ["0/1:15,15:30:99", "0/1:15,15:30:99", "0/0:30,0:30:99"]),
    ])
    ped = tmp_path / "f.ped"
    ped.write_text("F KID DAD MUM 1 2\nF MUM 0 0 2 1\nF DAD 0 0 1 1\n")
    return vcf, ped


# ---------------------------------------------------------------------------
# Stated sexes
# ---------------------------------------------------------------------------
def test_ped_and_phenopacket_stating_different_sexes_stop_the_run(tmp_path):
    vcf, ped = _trio(tmp_path)
    pp = _phenopacket(tmp_path, "KID", sex="FEMALE")  # the PED says KID is male (sex code 1)
    with pytest.raises(InputError) as e:
        triage(vcf, sample="KID", ped=str(ped), phenopacket=str(pp))
    assert "--sex" in e.value.problem and "female" in e.value.problem and "male" in e.value.problem
    assert e.value.path == str(pp)
    # an explicit --sex decides, and the override is recorded
    r = triage(vcf, sample="KID", ped=str(ped), phenopacket=str(pp), sex="male")
    assert r["sample"]["sex"] == "MALE"
    assert any("--sex male overrides the phenopacket" in w for w in r["warnings"])
    # agreeing sources: no error, no override warning
    pp_ok = _phenopacket(tmp_path, "KID", sex="MALE", name="ok.json")
    r = triage(vcf, sample="KID", ped=str(ped), phenopacket=str(pp_ok))
    assert r["sample"]["sex"] == "MALE" and not any("overrides" in w for w in r["warnings"])


def test_sex_conflict_through_the_cli_is_one_line(tmp_path):
    vcf, ped = _trio(tmp_path)
    pp = _phenopacket(tmp_path, "KID", sex="FEMALE")
    out = tmp_path / "out"
    r = run_cli("triage", vcf, "--sample", "KID", "--ped", str(ped), "--phenopacket", str(pp), "--out", str(out))
    assert r.returncode == 2
    lines = [ln for ln in r.stderr.splitlines() if ln.strip()]
    assert len(lines) == 1 and str(pp) in lines[0] and "--sex" in lines[0]
    assert not out.exists() or not any(out.iterdir())


def test_stated_sex_against_chrx_heterozygosity_is_a_result_warning(tmp_path):
    # 12 chrX sites outside the PARs inside RPGR, half of them heterozygous: a female pattern.
    recs = []
    for i in range(12):
        gt = "0/1:15,15:30:99" if i % 2 else "1/1:0,30:30:99"
        recs.append(("chrX", 38_290_000 + 100 * i, "G", "A", RPGR_STOP.replace("c.900C>T", f"c.{900 + i}C>T"),
                     [gt]))
    vcf = write_vcf(tmp_path / "x.vcf", ["P1"], recs)
    r = triage(vcf, sex="male")
    assert any("stated sex MALE but chrX heterozygosity suggests FEMALE" in w for w in r["warnings"])


# ---------------------------------------------------------------------------
# Phenopacket subject
# ---------------------------------------------------------------------------
@pytest.mark.parametrize("subject", ["MUM", "DAD"])
def test_phenopacket_of_another_sample_is_an_input_error(tmp_path, subject):
    vcf, ped = _trio(tmp_path)
    pp = _phenopacket(tmp_path, subject, sex="MALE" if subject == "DAD" else "FEMALE")
    with pytest.raises(InputError) as e:
        triage(vcf, sample="KID", ped=str(ped), phenopacket=str(pp), sex="male")
    assert e.value.path == str(pp) and e.value.line == 4  # the line with "id": "<subject>"
    assert subject in e.value.problem and "KID" in e.value.problem


def test_phenopacket_subject_in_ped_only_is_an_input_error(tmp_path):
    vcf = write_vcf(tmp_path / "s.vcf", ["KID"], [("chr1", 68444600, "G", "A", RPE65_MISSENSE, ["0/1:15,15:30:99"])])
    ped = tmp_path / "f.ped"
    ped.write_text("F KID DAD MUM 1 2\nF MUM 0 0 2 1\nF DAD 0 0 1 1\n")
    pp = _phenopacket(tmp_path, "MUM")
    with pytest.raises(InputError) as e:
        triage(vcf, sample="KID", ped=str(ped), phenopacket=str(pp), sex="male")
    assert "PED file" in e.value.problem


def test_phenopacket_subject_matching_nobody_is_a_warning(tmp_path):
    vcf, ped = _trio(tmp_path)
    pp = _phenopacket(tmp_path, "LAB-2024-0173", sex="MALE")
    r = triage(vcf, sample="KID", ped=str(ped), phenopacket=str(pp))
    w = [x for x in r["warnings"] if "LAB-2024-0173" in x]
    assert len(w) == 1 and "KID" in w[0]
    # the same subject id as the sample: no warning
    pp2 = _phenopacket(tmp_path, "KID", sex="MALE", name="same.json")
    r = triage(vcf, sample="KID", ped=str(ped), phenopacket=str(pp2))
    assert not any("subject" in x for x in r["warnings"])


# ---------------------------------------------------------------------------
# Curated evidence that matches no finding
# ---------------------------------------------------------------------------
def test_curated_entries_matching_no_finding_are_named_in_the_warnings(tmp_path):
    vcf = write_vcf(tmp_path / "s.vcf", ["P1"], [("chr1", 68444600, "G", "A", RPE65_MISSENSE, ["1/1:0,30:30:99"])])
    cur = tmp_path / "cur.yaml"
    cur.write_text(
        "- {variant: 1-68444600-G-A, code: PS3, strength: Strong, reason: assay, citation: 'PMID:1'}\n"
        "- {variant: chr1-68444601-G-T, code: PS3, strength: Strong, reason: assay, citation: 'PMID:2'}\n"
        "- {variant: X-38300500-G-A, code: PM1, strength: Moderate, reason: domain, citation: 'PMID:3'}\n")
    r = triage(vcf, sex="female", curated_path=str(cur))
    f = r["findings"][0]
    assert any(c["code"] == "PS3" and c["met"] and c["source"] == "curated" for c in f["criteria"])
    w = [x for x in r["warnings"] if "curated evidence" in x]
    assert len(w) == 1
    assert "2 curated evidence entries" in w[0] and str(cur) in w[0]
    assert "PS3 for 1-68444601-G-T (line 2)" in w[0] and "PM1 for X-38300500-G-A (line 3)" in w[0]
    assert "1-68444600-G-A" not in w[0]
