"""A published case whose second allele is deep intronic: RPGRIP1 c.1468-263G>C.

Source: GA4GH phenopacket-store (Monarch Initiative, BSD-3-Clause; commit in
../shared/refdata/phenopackets/SOURCE_COMMIT), case PMID_30072743_individual_949_1907
("Contribution of noncoding pathogenic variants to RPGRIP1-mediated inherited retinal
degeneration", PMID 30072743): heterozygous NM_020366.4:c.3618-1_3621del and heterozygous
NM_020366.4:c.1468-263G>C, progress status SOLVED by the authors. The case becomes a real
GRCh38 VCF (its vcfRecords, genotypes from the published allelic states, two heterozygous decoy
alleles from other recessive genes) and its phenopacket without the interpretations block
(``phenopacket_cases.write_case_vcf`` / ``write_case_phenopacket``).

Expected from the publication: both RPGRIP1 alleles make a biallelic genotype. Expected from the
reporting-filter rule (DEVELOPERS.md): the deep-intronic allele has no splice score in the VCF.
With no phenotype given it is reported as a candidate non-coding allele beside the published
partner and the case is not called SOLVED on it (the authors' RNA evidence is not in a VCF).
With the case's own phenotype the gene's match carries conflicting hallmark terms (the record
excludes, among others, macular atrophy and bull's eye maculopathy), so the phenotype does not
fit and the allele stays counted, but a warning names it: no silent drop either way.
"""
from __future__ import annotations

import sys
from pathlib import Path

import pytest

sys.path.insert(0, str(Path(__file__).resolve().parent))
from phenopacket_cases import PHENOPACKETS, load_cases, pick_decoys, write_case_phenopacket, write_case_vcf  # noqa: E402

CASE_FILE = "PMID_30072743_individual_949_1907.json"
pytestmark = pytest.mark.skipif(not (PHENOPACKETS / "RPGRIP1" / CASE_FILE).is_file(),
                                reason=f"../shared/refdata/phenopackets/RPGRIP1/{CASE_FILE} (phenopacket-store) not present")


def _case(tmp_path):
    cases = load_cases()
    case = next(c for c in cases if c.path.name == CASE_FILE)
    vcf = write_case_vcf(case, tmp_path / f"{case.sample}.vcf", pick_decoys(case, cases))
    return case, str(vcf)


def test_published_deep_intronic_second_allele_is_kept_as_a_candidate(tmp_path):
    from irdtriage.pipeline import triage

    case, vcf = _case(tmp_path)
    res = triage(vcf, sample=case.sample, sex=case.sex)  # genotype only: phenotype fit unknown

    # values typed from the published case record
    by_c = {f["hgvs_c"]: f for f in res["findings"] if f["gene"] == "RPGRIP1"}
    assert set(by_c) == {"c.1468-263G>C", "c.3618-1_3621del"}, sorted(by_c)
    deep, null = by_c["c.1468-263G>C"], by_c["c.3618-1_3621del"]
    assert deep["noncoding_candidate"] is True and deep["noncoding"]["phenotype_fit"] == "unknown"
    assert deep["noncoding"]["partners"] == [null["id"]]
    assert res["counts"]["noncoding_not_reported"] == 0
    top = res["genes"][0]
    assert top["symbol"] == "RPGRIP1" and top["genotype_fit"] == "biallelic phase unknown"
    assert res["case"]["status"] == "IN_PROGRESS"
    assert any("c.1468-263G>C" in s and "splice study" in s for s in res["case"]["next_steps"])


def test_published_case_with_its_own_phenotype_names_the_held_back_allele(tmp_path):
    from irdtriage.pipeline import triage

    case, vcf = _case(tmp_path)
    pp = write_case_phenopacket(case, tmp_path / f"{case.sample}.json")
    res = triage(vcf, sample=case.sample, phenopacket=str(pp))
    assert res["counts"]["noncoding_not_reported"] == 1
    assert any("RPGRIP1 c.1468-263G>C" in w and "counted, not reported" in w for w in res["warnings"])
    assert res["case"]["status"] != "SOLVED"
