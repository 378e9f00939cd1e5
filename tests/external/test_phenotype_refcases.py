"""Phenotype match and retinal fit on published cases, and the case generator's output.

Source: GA4GH phenopacket-store case records in ../shared/refdata/phenopackets (Monarch
Initiative, BSD-3-Clause): HPO features of each case, its causal gene (folder name) and
variants. The figures in the bounds below were measured with benchmarks/bench_phenopackets.py
(HPO 2025-11-24 in hpo3 1.5.1, 373 candidate genes = genes annotated to Retinal dystrophy
HP:0000556 plus the refdata genes, while the panel module was absent):
RGS9BP 5/5 top-1; RPGRIP1 45/100 top-1, 69/100 top-10; BBS1 12/16 top-10;
retinal fit right in 241/242 cases (IFT140 81/81 "does not fit").
The bounds leave room for a different candidate list or ontology release.
"""
from __future__ import annotations

import sys
from pathlib import Path

import pysam
import pytest

sys.path.insert(0, str(Path(__file__).resolve().parent))
from phenopacket_cases import (  # noqa: E402
    PHENOPACKETS, candidate_genes, consequence_from_hgvs, load_cases, pick_decoys,
    write_case_phenopacket, write_case_vcf,
)

from irdtriage.phenopacket_in import read_phenopacket  # noqa: E402
from irdtriage.phenotype import PhenotypeMatcher, pp4, retinal_fit  # noqa: E402

pytestmark = pytest.mark.skipif(
    not PHENOPACKETS.is_dir(), reason="../shared/refdata/phenopackets (phenopacket-store cases) not present"
)


@pytest.fixture(scope="module")
def cases():
    return load_cases()


@pytest.fixture(scope="module")
def matcher():
    return PhenotypeMatcher(candidate_genes())


def _ranks(matcher, cases, gene):
    out = []
    for c in cases:
        if c.gene != gene:
            continue
        ms = matcher.match(read_phenopacket(c.path, validate_terms=False))
        order = [m.gene for m in sorted(ms.values(), key=lambda m: (-m.score, m.gene))]
        out.append((order.index(gene) + 1, ms[gene], ms))
    return out


def test_rgs9bp_cases_rank_first_by_phenotype(matcher, cases):
    # measured on the full panel: 5/5 in the top 3, calibrated >= 0.99.
    r = _ranks(matcher, cases, "RGS9BP")
    assert len(r) == 5
    assert all(rank <= 3 for rank, _, _ in r)
    assert all(m.calibrated >= 0.99 for _, m, _ in r)
    # RGS9 and RGS9BP carry the same HPO annotations (bradyopsia; hpo3 gene annotations), so
    # the phenotype is not specific to one gene and PP4 must not be met for either of them.
    for _, m, ms in r:
        res = pp4(m, "RGS9BP", ms)
        assert res.met is False
    assert sum("RGS9" in pp4(m, "RGS9BP", ms).reason for _, m, ms in r) >= 3


def test_rpgrip1_and_bbs1_rank_high_by_phenotype(matcher, cases):
    r = _ranks(matcher, cases, "RPGRIP1")
    assert len(r) == 100
    assert sum(rank == 1 for rank, _, _ in r) >= 35  # measured 45
    assert sum(rank <= 10 for rank, _, _ in r) >= 60  # measured 69
    b = _ranks(matcher, cases, "BBS1")
    assert sum(rank <= 10 for rank, _, _ in b) >= 10  # measured 12 of 16


def test_retinal_fit_separates_ift140_presentations(cases):
    # IFT140 cases are skeletal ciliopathy / kidney disease presentations (refdata README).
    right = 0
    ift = [c for c in cases if c.gene == "IFT140"]
    for c in cases:
        fits, _, summary = retinal_fit(read_phenopacket(c.path, validate_terms=False))
        right += fits == c.retinal
        if not c.retinal and not fits:
            assert summary.startswith("does not fit a retinal disease")
    assert len(ift) == 81
    assert right >= 0.95 * len(cases)  # measured 241/242
    assert sum(not retinal_fit(read_phenopacket(c.path, validate_terms=False))[0] for c in ift) >= 78  # measured 81


def test_generated_vcf_and_phenopacket(cases, tmp_path):
    # Every case with GRCh38 records becomes a VCF that htslib reads: the case's records with
    # genotypes from allelicState, plus two heterozygous decoys from other recessive genes.
    checked = 0
    for c in cases:
        if not c.complete:
            continue
        decoys = pick_decoys(c, cases)
        assert len(decoys) == 2 and all(d.gene != c.gene for d in decoys)
        vcf = write_case_vcf(c, tmp_path / f"{c.sample}.vcf", decoys)
        with pysam.VariantFile(str(vcf)) as fh:
            assert fh.header.contigs["chr1"].length == 248956422  # GRCh38 chr1 (standards.md)
            recs = list(fh)
            contigs = list(fh.header.contigs)
        keys = [(r.chrom, r.pos) for r in recs]
        assert keys == sorted(keys, key=lambda k: (contigs.index(k[0]), k[1]))
        by_pos = {(r.chrom, r.pos, r.ref, r.alts[0]): r for r in recs}
        for v in c.variants:
            r = by_pos[(v.chrom, v.pos, v.ref, v.alt)]
            gt = r.samples[0]["GT"]
            assert gt == {"heterozygous": (0, 1), "homozygous": (1, 1), "hemizygous": (1,)}[v.allelic_state]
            assert r.info["CSQ"][0].split("|")[3] == v.gene
        for d in decoys:
            assert by_pos[(d.chrom, d.pos, d.ref, d.alt)].samples[0]["GT"] == (0, 1)
        checked += 1
    assert checked >= 220
    c = next(x for x in cases if x.complete)
    pp = write_case_phenopacket(c, tmp_path / "case.json")
    assert "interpretations" not in pp.read_text()
    prof = read_phenopacket(pp)
    assert prof.subject_id == c.sample and prof.present


def test_expected_fit_from_allelic_states(cases):
    # phenopacket-store allelic states + inheritance of the case's OMIM disease (hpo3).
    fits = {c.expected_fit for c in cases if c.gene == "PRPF31"}
    assert fits == {"heterozygous in a dominant gene"}  # PRPF31: dominant RP (refdata README)
    assert all(c.expected_fit == "homozygous" for c in cases for v in c.variants if v.allelic_state == "homozygous")
    assert {c.retinal for c in cases if c.gene == "IFT140"} == {False}


@pytest.mark.parametrize(
    "c,p,so",
    [  # HGVS syntax (den Dunnen et al., Hum Mutat 2016;37:564-569) -> Sequence Ontology term
        ("NM_020366.4:c.358C>T", "NP_065099.3:p.(Gln120Ter)", "stop_gained"),
        ("NM_207391.3:c.277_278del", "NP_997274.2:p.(Met93AlafsTer206)", "frameshift_variant"),
        ("NM_020366.4:c.3748+1C>A", "NP_065099.3:p.?", "splice_donor_variant"),
        ("NM_020366.4:c.1468-2A>G", "", "splice_acceptor_variant"),
        ("NM_024649.5:c.1110+3G>A", "", "splice_region_variant"),
        ("NM_020366.4:c.1468-263G>C", "", "intron_variant"),
        ("NM_001354768.3:c.479T>C", "NP_001341697.1:p.(Leu160Pro)", "missense_variant"),
        ("NM_000000.1:c.1A>G", "NP_000000.1:p.(Met1?)", "start_lost"),
        ("NM_000000.1:c.30C>T", "NP_000000.1:p.(Leu10=)", "synonymous_variant"),
        ("NM_000000.1:c.30_32del", "NP_000000.1:p.(Leu10del)", "inframe_deletion"),
        ("NM_020366.4:c.2710+374_2895+78del", "", "exon_loss_variant"),
    ],
)
def test_consequence_from_hgvs(c, p, so):
    assert consequence_from_hgvs(c, p) == so
