"""The whole pipeline on published cases: rank of the case gene and genotype fit.

Source: GA4GH phenopacket-store case records in ../shared/refdata/phenopackets (Monarch
Initiative, BSD-3-Clause; commit in phenopackets/SOURCE_COMMIT). Each case becomes a real
GRCh38 VCF (``write_case_vcf``: the case's published ``vcfRecord``s with genotypes from their
published ``allelicState``, plus two heterozygous decoy alleles taken from cases of other,
recessive-only genes) and its phenopacket with the ``interpretations`` block removed. The
expected values are the published ones: the causal gene (the folder the case is filed under)
and the genotype implied by the published allelic states and the inheritance HPO annotates to
the case's OMIM disease (``RefCase.expected_fit``). IFT140 cases in this store present
outside the retina (skeletal ciliopathy, kidney disease; ../shared/refdata/README.md), so
the pipeline must say the phenotype does not fit a retinal disease and must not call them
SOLVED.

A fixed subset keeps the run short: the first three cases with VCF records for every causal
allele, by sorted file name, per gene. The full set is measured by
benchmarks/bench_phenopackets.py.
"""
from __future__ import annotations

import sys
from pathlib import Path

import pytest

sys.path.insert(0, str(Path(__file__).resolve().parent))
from phenopacket_cases import (  # noqa: E402
    NON_RETINAL_GENES, PHENOPACKETS, load_cases, pick_decoys, write_case_phenopacket, write_case_vcf,
)

pytestmark = pytest.mark.skipif(
    not PHENOPACKETS.is_dir(), reason="../shared/refdata/phenopackets (phenopacket-store cases) not present"
)

RETINAL_GENES = ("BBS1", "CLN3", "NRL", "PRPF31", "RGS9BP", "RPGRIP1")
PER_GENE = 3


@pytest.fixture(scope="module")
def all_cases():
    return load_cases()


@pytest.fixture(scope="module")
def matcher():
    from irdtriage.panel import load_panel
    from irdtriage.phenotype import PhenotypeMatcher

    return PhenotypeMatcher(load_panel().genes.keys())  # loaded once for the module


def subset(all_cases, gene):
    picked = [c for c in sorted((c for c in all_cases if c.gene == gene), key=lambda c: c.path.name)
              if c.complete][:PER_GENE]
    assert len(picked) == PER_GENE, f"fewer than {PER_GENE} complete {gene} cases in the reference set"
    return picked


def run_case(case, all_cases, matcher, tmp_path):
    from irdtriage.pipeline import triage

    decoys = pick_decoys(case, all_cases)
    assert decoys and all(d.gene != case.gene for d in decoys)
    vcf = write_case_vcf(case, tmp_path / f"{case.sample}.vcf", decoys)
    pp = write_case_phenopacket(case, tmp_path / f"{case.sample}.json")
    return triage(str(vcf), sample=case.sample, phenopacket=str(pp), phenotype_matcher=matcher), decoys


@pytest.mark.parametrize("gene", RETINAL_GENES)
def test_case_gene_ranks_first_with_the_published_genotype(gene, all_cases, matcher, tmp_path):
    for case in subset(all_cases, gene):
        res, decoys = run_case(case, all_cases, matcher, tmp_path)
        genes = res["genes"]
        where = f"{case.path.name} (phenopacket-store)"
        assert genes[0]["symbol"] == gene, (where, [(g["symbol"], g["genotype_fit"], g["score"]) for g in genes])
        assert genes[0]["genotype_fit"] == case.expected_fit, (where, genes[0]["genotype_fit"])
        # the decoys are single heterozygous alleles in recessive genes: carriers, ranked below
        for g in genes[1:]:
            if g["symbol"] in {d.gene for d in decoys}:
                assert g["genotype_fit"] in ("single heterozygous in a recessive gene", "no qualifying finding"), \
                    (where, g["symbol"], g["genotype_fit"])
                assert g["score"] < genes[0]["score"]
        assert res["phenotype"]["retinal_fit"]["fits"] is True, where
        assert res["case"]["status"] in ("SOLVED", "IN_PROGRESS"), where


@pytest.mark.parametrize("gene", sorted(NON_RETINAL_GENES))
def test_non_retinal_cases_are_reported_as_not_fitting_a_retinal_disease(gene, all_cases, matcher, tmp_path):
    for case in subset(all_cases, gene):
        res, _ = run_case(case, all_cases, matcher, tmp_path)
        where = f"{case.path.name} (phenopacket-store)"
        assert res["phenotype"]["retinal_fit"]["fits"] is False, where
        assert res["case"]["status"] != "SOLVED", where
        assert any("does not look like a retinal disease" in s for s in res["case"]["next_steps"]), where
