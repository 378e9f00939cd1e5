"""Genotype reasoning: PAR handling, sex check, phase, de novo, genotype fit per gene.

Expected values come from the rules cited beside each check: the GRC pseudoautosomal
region definitions, and Mendelian inheritance (common practice) for phase and de novo.
The builders below make *inputs* (plain models objects, no mocks); other test modules
import them from here.
"""
from __future__ import annotations

import textwrap
from typing import Optional

import pysam
import pytest

from irdtriage.genotype import (assess_gene, de_novo_evidence, in_par, infer_sex, is_de_novo,
                                phase_between)
from irdtriage.models import Annotation, Call, Classification, Finding, Gene, PhenotypeMatch, Span, Variant


def zyg(gt) -> str:
    called = [a for a in gt if a is not None]
    if not called:
        return "no call"
    n = sum(1 for a in called if a == 1)
    if n == 0:
        return "reference"
    if len(gt) == 1:
        return "hemizygous"
    return "homozygous" if n == len(gt) else "heterozygous"


def call(sample: str, gt, phased=False, ps=None, dp=30, gq=60, ad=None) -> Call:
    gt = tuple(gt)
    if ad is None and dp is not None and all(a is not None for a in gt):
        alt = sum(1 for a in gt if a == 1)
        ad = (dp - round(dp * alt / len(gt)), round(dp * alt / len(gt)))
    return Call(sample=sample, gt=gt, phased=phased, phase_set=ps, dp=dp, gq=gq,
                ad_ref=None if ad is None else ad[0], ad_alt=None if ad is None else ad[1], zygosity=zyg(gt))


def finding(fid: str, pos: int, calls: list[Call], cls: Optional[str] = "Pathogenic", gene: str = "ABCA4",
            chrom: str = "chr1", flags=(), ref="C", alt="T") -> Finding:
    v = Variant(chrom=chrom, pos=pos, ref=ref, alt=alt, original_pos=pos, calls={c.sample: c for c in calls})
    klass = None if cls is None else Classification(cls, cls, 0, cls, 0.5, cls)
    return Finding(id=fid, variant=v, gene=gene, annotation=Annotation(gene=gene), quality_flags=tuple(flags),
                   classification=klass)


def gene(symbol: str, inheritance=("AR",), chrom="1") -> Gene:
    return Gene(symbol=symbol, hgnc_id="HGNC:0", name=symbol, refseq_transcript="NM_0.0",
                ensembl_transcript="ENST0.0", refseq_protein="NP_0.0", strand="+",
                grch38=Span(chrom, 1, 10**9), grch37=None, inheritance=tuple(inheritance), mechanisms=("LOF",),
                conditions=("retinal dystrophy",), cascade_step="x")


def pheno(symbol: str, calibrated: float, conflicting=()) -> PhenotypeMatch:
    return PhenotypeMatch(gene=symbol, score=calibrated, calibrated=calibrated,
                          conflicting_terms=list(conflicting))


# ---------------------------------------------------------------------------
# Pseudoautosomal regions
# ---------------------------------------------------------------------------
# GRCh38 PAR1 X:10,001-2,781,479 and PAR2 X:155,701,383-156,030,895: GRC definitions as
# listed by Ensembl ("Pseudoautosomal regions in human"). GRCh37 PAR1 X:60,001-2,699,520:
# GRC, as quoted by UCSC Genome Browser support. GRCh37 PAR2 154,931,044-155,260,560 from memory.
@pytest.mark.parametrize("build, pos, expected", [
    ("GRCh38", 10_000, False), ("GRCh38", 10_001, True), ("GRCh38", 2_781_479, True),
    ("GRCh38", 2_781_480, False), ("GRCh38", 155_701_382, False), ("GRCh38", 155_701_383, True),
    ("GRCh38", 156_030_895, True),
    ("GRCh37", 60_000, False), ("GRCh37", 60_001, True), ("GRCh37", 2_699_520, True),
    ("GRCh37", 2_699_521, False),
])
def test_par_boundaries(build, pos, expected):
    assert in_par("chrX", pos, build) is expected
    assert in_par("X", pos, build) is expected
    assert in_par("chr7", pos, build) is False


def _x_sites(sample, n, het_every, start=5_000_000, phased=False):
    out = []
    for i in range(n):
        gt = (0, 1) if het_every and i % het_every == 0 else (1, 1)
        out.append(finding(f"x{i}", start + 1000 * i, [call(sample, gt)], chrom="chrX").variant)
    return out


def test_infer_sex_female_male_and_mismatch():
    # common practice: a 46,XY male has no true heterozygous sites on chrX outside the PARs
    female = _x_sites("P", 30, het_every=2)  # half heterozygous
    male = _x_sites("P", 30, het_every=0)
    r = infer_sex(female, "P", build="GRCh38")
    assert r.sex == "FEMALE" and r.n_sites == 30 and abs(r.het_fraction - 0.5) < 1e-9 and not r.warning
    r = infer_sex(male, "P", stated="FEMALE", build="GRCh38")
    assert r.sex == "MALE" and "stated sex FEMALE" in r.warning


def test_infer_sex_ignores_par_and_needs_enough_sites():
    # heterozygous calls inside PAR1 are normal in males (GRC PAR1, GRCh38 X:10,001-2,781,479)
    par_hets = [finding(f"p{i}", 100_000 + i * 1000, [call("P", (0, 1))], chrom="X").variant for i in range(40)]
    male = _x_sites("P", 20, het_every=0) + par_hets
    r = infer_sex(male, "P", build="GRCh38")
    assert r.sex == "MALE" and r.n_sites == 20
    few = _x_sites("P", 4, het_every=2)
    r = infer_sex(few, "P")
    assert r.sex is None and r.n_sites == 4
    # haploid GT on chrX counts as a non-heterozygous call
    hap = [finding(f"h{i}", 9_000_000 + i, [call("P", (1,))], chrom="X").variant for i in range(12)]
    assert infer_sex(hap, "P").sex == "MALE"


# ---------------------------------------------------------------------------
# Phase (Mendelian rules: common practice)
# ---------------------------------------------------------------------------
def pair(kid_a, kid_b, mum_a=None, mum_b=None, dad_a=None, dad_b=None, **kw):
    ca = [call("KID", *kid_a)] + ([call("MUM", mum_a)] if mum_a else []) + ([call("DAD", dad_a)] if dad_a else [])
    cb = [call("KID", *kid_b)] + ([call("MUM", mum_b)] if mum_b else []) + ([call("DAD", dad_b)] if dad_b else [])
    return finding("A", 1000, ca, **kw), finding("B", 2000, cb, **kw)


def test_phase_from_phased_genotypes_same_phase_set():
    a, b = pair(((0, 1), True, 555), ((1, 0), True, 555))
    assert phase_between(a, b, "KID").phase == "trans"
    a, b = pair(((0, 1), True, 555), ((0, 1), True, 555))
    assert phase_between(a, b, "KID").phase == "cis"
    a, b = pair(((0, 1), True, 555), ((1, 0), True, 777))  # different phase sets: not comparable
    assert phase_between(a, b, "KID").phase == "unknown"


def test_phase_from_parents():
    a, b = pair(((0, 1),), ((0, 1),), mum_a=(0, 1), mum_b=(0, 0), dad_a=(0, 0), dad_b=(0, 1))
    r = phase_between(a, b, "KID", "MUM", "DAD")
    assert r.phase == "trans" and "mother" in r.how
    a, b = pair(((0, 1),), ((0, 1),), mum_a=(0, 1), mum_b=(0, 1), dad_a=(0, 0), dad_b=(0, 0))
    assert phase_between(a, b, "KID", "MUM", "DAD").phase == "cis"
    # one allele absent from both parents: apparently de novo, phase cannot be told
    a, b = pair(((0, 1),), ((0, 1),), mum_a=(0, 1), mum_b=(0, 0), dad_a=(0, 0), dad_b=(0, 0))
    r = phase_between(a, b, "KID", "MUM", "DAD")
    assert r.phase == "unknown" and "de novo" in r.how


def test_phase_missing_or_low_depth_parent_is_unknown():
    a, b = pair(((0, 1),), ((0, 1),), mum_a=(0, 1), mum_b=(None, None), dad_a=(0, 0), dad_b=(0, 1))
    assert phase_between(a, b, "KID", "MUM", "DAD").phase == "unknown"
    # a low-depth reference call in the father cannot show he lacks allele A
    a, b = pair(((0, 1),), ((0, 1),), mum_a=(0, 1), mum_b=(0, 0), dad_a=(0, 0), dad_b=(0, 1))
    a.variant.calls["DAD"] = call("DAD", (0, 0), dp=3, gq=6)
    b.variant.calls["MUM"] = call("MUM", (0, 0), dp=3, gq=6)
    assert phase_between(a, b, "KID", "MUM", "DAD").phase == "unknown"
    # only the mother tested: informative but not conclusive
    a, b = pair(((0, 1),), ((0, 1),), mum_a=(0, 1), mum_b=(0, 0))
    r = phase_between(a, b, "KID", "MUM", None)
    assert r.phase == "unknown" and "test the other parent" in r.how


# ---------------------------------------------------------------------------
# De novo (common practice: both parents confidently homozygous reference)
# ---------------------------------------------------------------------------
def trio_finding(kid=(0, 1), mum=(0, 0), dad=(0, 0), mum_kw=None, dad_kw=None, chrom="chr1", pos=5_000_000):
    calls = [call("KID", kid)]
    if mum is not None:
        calls.append(call("MUM", mum, **(mum_kw or {})))
    if dad is not None:
        calls.append(call("DAD", dad, **(dad_kw or {})))
    return finding("D", pos, calls, chrom=chrom)


def test_de_novo_rules():
    assert is_de_novo(trio_finding(), "KID", "MUM", "DAD") is True
    assert is_de_novo(trio_finding(mum=(0, 1)), "KID", "MUM", "DAD") is False
    # reference call but alternate reads present in a parent: not de novo
    f = trio_finding(dad_kw={"ad": (27, 3)})
    v, why = de_novo_evidence(f, "KID", "MUM", "DAD")
    assert v is False and "alternate read" in why
    # low depth in a parent: undecidable
    assert is_de_novo(trio_finding(mum_kw={"dp": 6, "gq": 15}), "KID", "MUM", "DAD") is None
    # parent not sequenced / missing genotype: undecidable
    assert is_de_novo(trio_finding(dad=None), "KID", "MUM", None) is None
    assert is_de_novo(trio_finding(dad=(None, None)), "KID", "MUM", "DAD") is None
    # proband does not carry it
    assert is_de_novo(trio_finding(kid=(0, 0)), "KID", "MUM", "DAD") is False


def test_de_novo_on_x_in_a_son_needs_only_the_mother():
    # common practice: a son's chrX (outside the PARs) comes from his mother
    f = trio_finding(kid=(1,), dad=None, chrom="chrX", pos=38_300_000)
    assert is_de_novo(f, "KID", "MUM", None, proband_sex="MALE", build="GRCh38") is True
    assert is_de_novo(f, "KID", "MUM", None, proband_sex="FEMALE", build="GRCh38") is None


# ---------------------------------------------------------------------------
# Genotype fit
# ---------------------------------------------------------------------------
def test_compound_het_in_trans_by_parents():
    a, b = pair(((0, 1),), ((0, 1),), mum_a=(0, 1), mum_b=(0, 0), dad_a=(0, 0), dad_b=(0, 1))
    r = assess_gene(gene("ABCA4"), [a, b], "KID", "FEMALE", mother="MUM", father="DAD")
    assert r.fit == "biallelic in trans" and r.phase == "in trans (parents)"
    assert sorted(r.qualifying_ids) == ["A", "B"] and r.strong_alleles == 2


def test_compound_het_phase_unknown_with_vus_and_cis_excluded():
    a, b = pair(((0, 1),), ((0, 1),))
    b.classification.classification = "Uncertain significance"
    r = assess_gene(gene("ABCA4"), [a, b], "KID", None)
    assert r.fit == "biallelic phase unknown" and r.candidate_alleles == 1
    a, b = pair(((0, 1),), ((0, 1),), mum_a=(0, 1), mum_b=(0, 1), dad_a=(0, 0), dad_b=(0, 0))
    r = assess_gene(gene("ABCA4"), [a, b], "KID", None, mother="MUM", father="DAD")
    assert r.fit == "single heterozygous in a recessive gene" and r.phase == "in cis"


def test_homozygous_possible_deletion_rules():
    # Mendelian (common practice): an apparently homozygous allele carried by one parent only,
    # with the other parent reference, means the other allele is missing (deletion) or UPD.
    f = trio_finding(kid=(1, 1), mum=(0, 1), dad=(0, 0))
    r = assess_gene(gene("ABCA4"), [f], "KID", None, mother="MUM", father="DAD")
    assert r.fit == "homozygous" and r.possible_deletion
    f = trio_finding(kid=(1, 1), mum=(0, 1), dad=(0, 1))
    r = assess_gene(gene("ABCA4"), [f], "KID", None, mother="MUM", father="DAD")
    assert r.fit == "homozygous" and not r.possible_deletion
    # singleton: no heterozygous call nearby -> cannot exclude; one nearby -> not suggested
    f = finding("H", 100, [call("KID", (1, 1))])
    assert assess_gene(gene("ABCA4"), [f], "KID", None).possible_deletion
    near = finding("n", 200, [call("KID", (0, 1))], cls="Benign").variant
    assert not assess_gene(gene("ABCA4"), [f], "KID", None, context=[near]).possible_deletion


def test_x_linked_male_hemizygous_and_female_carrier():
    # Mendelian genetics (common practice): a 46,XY male has one chrX outside the PARs, so a call
    # without a reference allele (1/1 or haploid 1) is hemizygous; a heterozygous 0/1 call there
    # is a genotyping or sex problem and is never counted as hemizygous.
    for gt in ((1, 1), (1,)):
        f = finding("R", 38_300_000, [call("KID", gt)], gene="RPGR", chrom="chrX")
        r = assess_gene(gene("RPGR", ("XLR",), "X"), [f], "KID", "MALE", build="GRCh38")
        assert r.fit == "hemizygous" and r.qualifying_ids == ["R"] and r.strong_alleles == 1
    for ad in ((2, 28), (15, 15)):
        f = finding("R", 38_300_000, [call("KID", (0, 1), ad=ad)], gene="RPGR", chrom="chrX")
        r = assess_gene(gene("RPGR", ("XLR",), "X"), [f], "KID", "MALE", build="GRCh38")
        assert r.fit != "hemizygous" and r.fit == "no qualifying finding"
        assert any("R is called 0/1 in a male" in n and "not counted as hemizygous" in n for n in r.notes)
    f2 = finding("R", 38_300_000, [call("KID", (0, 1), ad=(15, 15))], gene="RPGR", chrom="chrX")
    r = assess_gene(gene("RPGR", ("XLR",), "X"), [f2], "KID", "FEMALE", build="GRCh38")
    assert r.fit == "single heterozygous in a recessive gene" and r.manifesting_carrier_possible


def test_male_heterozygous_x_call_does_not_hide_a_hemizygous_one():
    # Two calls in one X-linked gene of a male: the 0/1 one is set aside, the 1/1 one is the fit.
    het = finding("H", 38_290_000, [call("KID", (0, 1))], gene="RPGR", chrom="chrX")
    hemi = finding("M", 38_300_000, [call("KID", (1, 1))], gene="RPGR", chrom="chrX",
                   cls="Uncertain significance")
    r = assess_gene(gene("RPGR", ("XLR",), "X"), [het, hemi], "KID", "MALE", build="GRCh38")
    assert r.fit == "hemizygous" and r.qualifying_ids == ["M"] and r.candidate_alleles == 1


def _xgene(symbol, inheritance):
    from dataclasses import replace

    g = gene(symbol, inheritance, "X")
    return replace(g, grch38=Span("X", 1, 156_030_895))


def test_x_linked_dominant_in_male_and_female():
    # X-linked dominant (common practice): one allele is sufficient in either sex; in a male the
    # allele is hemizygous, in a female heterozygous. De novo in a female needs both parents
    # reference; in a son only the mother (his chrX comes from her).
    xld = _xgene("XLDGENE", ("XLD",))
    male = trio_finding(kid=(1,), mum=(0, 0), dad=None, chrom="chrX", pos=38_300_000)
    r = assess_gene(xld, [male], "KID", "MALE", mother="MUM", father=None, build="GRCh38")
    assert r.fit == "hemizygous" and r.mode == "XLD" and r.qualifying_ids == ["D"]
    assert r.de_novo_ids == ["D"]  # mother confidently reference: de novo without the father
    assert any("one allele is sufficient" in n for n in r.notes)
    inherited = trio_finding(kid=(1, 1), mum=(0, 1), dad=(0, 0), chrom="chrX", pos=38_300_000)
    r = assess_gene(xld, [inherited], "KID", "MALE", mother="MUM", father="DAD", build="GRCh38")
    assert r.fit == "hemizygous" and r.de_novo_ids == []
    female = trio_finding(kid=(0, 1), mum=(0, 0), dad=(0, 0), chrom="chrX", pos=38_300_000)
    r = assess_gene(xld, [female], "KID", "FEMALE", mother="MUM", father="DAD", build="GRCh38")
    assert r.fit == "de novo" and r.mode == "XLD"
    from_father = trio_finding(kid=(0, 1), mum=(0, 0), dad=(1,), chrom="chrX", pos=38_300_000)
    r = assess_gene(xld, [from_father], "KID", "FEMALE", mother="MUM", father="DAD", build="GRCh38")
    assert r.fit == "heterozygous in a dominant gene"
    # a male's 0/1 call in an XLD gene is not a complete fit either
    het = trio_finding(kid=(0, 1), mum=(0, 0), dad=None, chrom="chrX", pos=38_300_000)
    assert assess_gene(xld, [het], "KID", "MALE", mother="MUM", build="GRCh38").fit == "no qualifying finding"


def test_pseudoautosomal_calls_in_a_male_are_diploid():
    # GRC PAR1 (GRCh38 X:10,001-2,781,479): two copies in a male, so no hemizygosity there.
    xlr = _xgene("PARGENE", ("XLR",))
    one = finding("P", 1_500_000, [call("KID", (0, 1))], gene="PARGENE", chrom="chrX")
    r = assess_gene(xlr, [one], "KID", "MALE", build="GRCh38")
    assert r.fit == "single heterozygous in a recessive gene" and r.fit != "hemizygous"
    assert any("pseudoautosomal" in n for n in r.notes)
    hom = finding("Q", 1_600_000, [call("KID", (1, 1))], gene="PARGENE", chrom="chrX")
    assert assess_gene(xlr, [hom], "KID", "MALE", build="GRCh38").fit == "homozygous"
    a, b = pair(((0, 1),), ((0, 1),), mum_a=(0, 1), mum_b=(0, 0), dad_a=(0, 0), dad_b=(0, 1),
                chrom="chrX", gene="PARGENE")
    a.variant.pos, b.variant.pos = 1_500_000, 1_600_000
    r = assess_gene(xlr, [a, b], "KID", "MALE", mother="MUM", father="DAD", build="GRCh38")
    assert r.fit == "biallelic in trans"
    # GRCh37 PAR1 ends at 2,699,520 (UCSC/GRC), GRCh38 at 2,781,479: 2,750,000 is PAR only in GRCh38
    edge = finding("E", 2_750_000, [call("KID", (0, 1))], gene="PARGENE", chrom="chrX")
    assert assess_gene(xlr, [edge], "KID", "MALE", build="GRCh38").fit == "single heterozygous in a recessive gene"
    assert assess_gene(xlr, [edge], "KID", "MALE", build="GRCh37").fit == "no qualifying finding"


def test_haploid_calls_where_two_copies_are_expected_are_never_homozygous():
    # A one-allele GT on an autosome, or on chrX of a female, is one allele (a caller or copy-number
    # question), never a homozygous genotype (common practice).
    auto = finding("A", 1000, [call("KID", (1,))])
    r = assess_gene(gene("ABCA4"), [auto], "KID", "FEMALE")
    assert r.fit == "single heterozygous in a recessive gene"
    assert any("haploid call" in n for n in r.notes)
    xf = finding("X", 38_300_000, [call("KID", (1,))], gene="RPGR", chrom="chrX")
    r = assess_gene(gene("RPGR", ("XLR",), "X"), [xf], "KID", "FEMALE", build="GRCh38")
    assert r.fit == "single heterozygous in a recessive gene" and any("haploid call" in n for n in r.notes)


def test_phase_when_one_parent_carries_both_alleles_and_the_other_one():
    # Mendelian (common practice): mother 0/1 at A and B, father 0/1 at A only. The child got A
    # from the father and B from the mother (trans) OR both from the mother's cis haplotype and
    # the father's reference allele: both are possible, so phase is not resolved.
    a, b = pair(((0, 1),), ((0, 1),), mum_a=(0, 1), mum_b=(0, 1), dad_a=(0, 1), dad_b=(0, 0))
    r = phase_between(a, b, "KID", "MUM", "DAD")
    assert r.phase == "unknown"
    a, b = pair(((0, 1),), ((0, 1),), mum_a=(0, 1), mum_b=(0, 0), dad_a=(0, 1), dad_b=(0, 1))
    assert phase_between(a, b, "KID", "MUM", "DAD").phase == "unknown"
    # father carries both, mother neither: in cis
    a, b = pair(((0, 1),), ((0, 1),), mum_a=(0, 0), mum_b=(0, 0), dad_a=(0, 1), dad_b=(0, 1))
    r = phase_between(a, b, "KID", "MUM", "DAD")
    assert r.phase == "cis" and "father carries both" in r.how
    r = assess_gene(gene("ABCA4"), [a, b], "KID", "FEMALE", mother="MUM", father="DAD")
    assert r.fit == "single heterozygous in a recessive gene" and r.phase == "in cis"


def test_de_novo_on_x_in_a_daughter_needs_both_parents():
    # common practice: a daughter has one chrX from each parent
    f = trio_finding(kid=(0, 1), mum=(0, 0), dad=(0, 0), chrom="chrX", pos=38_300_000)
    assert is_de_novo(f, "KID", "MUM", "DAD", proband_sex="FEMALE", build="GRCh38") is True
    f = trio_finding(kid=(0, 1), mum=(0, 0), dad=(1,), chrom="chrX", pos=38_300_000)
    assert is_de_novo(f, "KID", "MUM", "DAD", proband_sex="FEMALE", build="GRCh38") is False
    # a son: the father's chrX call does not matter, the mother's does
    f = trio_finding(kid=(1,), mum=(0, 0), dad=(1,), chrom="chrX", pos=38_300_000)
    assert is_de_novo(f, "KID", "MUM", "DAD", proband_sex="MALE", build="GRCh38") is True
    f = trio_finding(kid=(1,), mum=(0, 1), dad=(0,), chrom="chrX", pos=38_300_000)
    assert is_de_novo(f, "KID", "MUM", "DAD", proband_sex="MALE", build="GRCh38") is False
    # inside PAR1 a son has a paternal copy too: both parents are needed
    f = trio_finding(kid=(0, 1), mum=(0, 0), dad=None, chrom="chrX", pos=1_500_000)
    assert is_de_novo(f, "KID", "MUM", None, proband_sex="MALE", build="GRCh38") is None


def test_dominant_and_de_novo_and_multi_mode_choice():
    f = trio_finding()
    r = assess_gene(gene("PRPF31", ("AD",)), [f], "KID", None, mother="MUM", father="DAD")
    assert r.fit == "de novo" and r.de_novo_ids == ["D"]
    f = trio_finding(mum=(0, 1))
    assert assess_gene(gene("PRPF31", ("AD",)), [f], "KID", None, mother="MUM", father="DAD").fit == \
        "heterozygous in a dominant gene"
    # AD+AR gene: one allele -> dominant fit; two alleles in trans -> recessive fit, with a note why
    single = finding("S", 10, [call("KID", (0, 1))])
    r = assess_gene(gene("RHO", ("AD", "AR")), [single], "KID", None)
    assert r.fit == "heterozygous in a dominant gene" and r.mode == "AD"
    assert any("several inheritance modes" in n for n in r.notes)
    a, b = pair(((0, 1),), ((0, 1),), mum_a=(0, 1), mum_b=(0, 0), dad_a=(0, 0), dad_b=(0, 1))
    r = assess_gene(gene("RHO", ("AD", "AR")), [a, b], "KID", None, mother="MUM", father="DAD")
    assert r.fit == "biallelic in trans" and r.mode == "AR"


def test_quality_failures_and_benign_do_not_qualify():
    a, b = pair(((0, 1),), ((0, 1),))
    b.quality_flags = ("depth 4 < 10",)
    r = assess_gene(gene("ABCA4"), [a, b], "KID", None)
    assert r.fit == "single heterozygous in a recessive gene" and r.excluded_ids == ["B"]
    assert any("B not counted" in n for n in r.notes)
    a.classification.classification = "Likely benign"
    assert assess_gene(gene("ABCA4"), [a], "KID", None).fit == "no qualifying finding"


# ---------------------------------------------------------------------------
# A real trio VCF read through pysam/htslib (real GT / PS encodings)
# ---------------------------------------------------------------------------
TRIO_VCF = textwrap.dedent("""\
    ##fileformat=VCFv4.2
    ##contig=<ID=chr1,length=248956422>
    ##contig=<ID=chrX,length=156040895>
    ##FORMAT=<ID=GT,Number=1,Type=String,Description="Genotype">
    ##FORMAT=<ID=PS,Number=1,Type=Integer,Description="Phase set">
    ##FORMAT=<ID=DP,Number=1,Type=Integer,Description="Depth">
    ##FORMAT=<ID=GQ,Number=1,Type=Integer,Description="Genotype quality">
    ##FORMAT=<ID=AD,Number=R,Type=Integer,Description="Allele depths">
    #CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\tFORMAT\tKID\tMUM\tDAD
    chr1\t94000100\t.\tC\tT\t99\tPASS\t.\tGT:PS:DP:GQ:AD\t0|1:94000100:35:99:18,17\t0/1:.:30:99:15,15\t0/0:.:32:99:32,0
    chr1\t94000500\t.\tG\tA\t99\tPASS\t.\tGT:PS:DP:GQ:AD\t1|0:94000100:40:99:21,19\t0/0:.:31:99:31,0\t0/1:.:29:99:14,15
    chr1\t94000900\t.\tA\tG\t99\tPASS\t.\tGT:PS:DP:GQ:AD\t0/1:.:33:99:16,17\t./.:.:.:.:.\t0/0:.:8:12:8,0
    chrX\t38300000\t.\tT\tC\t99\tPASS\t.\tGT:DP:GQ:AD\t1:25:99:0,25\t0/1:30:99:14,16\t0:28:99:28,0
    """)


def _variants_from_vcf(path):
    """Build models.Variant/Call from pysam records (biallelic sites only, as in this file)."""
    from irdtriage.models import Call, Variant

    out = []
    with pysam.VariantFile(str(path)) as vf:
        for rec in vf:
            calls = {}
            for s in rec.samples:
                sd = rec.samples[s]
                gt = tuple(sd.get("GT"))
                ad = sd.get("AD") if "AD" in rec.format else None
                ps = sd.get("PS") if "PS" in rec.format else None
                calls[s] = Call(sample=s, gt=gt, phased=bool(sd.phased) and len(gt) > 1, phase_set=ps,
                                dp=sd.get("DP"), gq=sd.get("GQ"),
                                ad_ref=None if ad is None or ad[0] is None else ad[0],
                                ad_alt=None if ad is None or len(ad) < 2 else ad[1], zygosity=zyg(gt))
            out.append(Variant(chrom=rec.chrom, pos=rec.pos, ref=rec.ref, alt=rec.alts[0], original_pos=rec.pos,
                               calls=calls))
    return out


def test_real_trio_vcf_through_pysam(tmp_path):
    p = tmp_path / "trio.vcf"
    p.write_text(TRIO_VCF)
    vs = _variants_from_vcf(p)
    from irdtriage.models import Annotation, Classification, Finding

    fs = [Finding(id=f"F{i}", variant=v, gene="ABCA4", annotation=Annotation(gene="ABCA4"),
                  classification=Classification("Pathogenic", "Pathogenic", 10, "Pathogenic", 0.99, "Pathogenic"))
          for i, v in enumerate(vs, 1)]
    kid = fs[0].variant.calls["KID"]
    assert kid.phased and kid.phase_set == 94000100 and kid.gt == (0, 1)
    assert fs[1].variant.calls["MUM"].phase_set is None  # "." in PS
    assert fs[2].variant.calls["MUM"].gt == (None, None)
    assert fs[3].variant.calls["KID"].gt == (1,)  # haploid GT
    # read-backed phase (same PS, 0|1 vs 1|0) and parents agree: in trans
    r = phase_between(fs[0], fs[1], "KID", "MUM", "DAD")
    assert r.phase == "trans" and "phase set" in r.how
    r = phase_between(fs[0], fs[1], "KID")
    assert r.phase == "trans"
    # F3: mother no call, father reference with DP 8 (< 10): undecidable
    assert is_de_novo(fs[2], "KID", "MUM", "DAD") is None
    # F2 inherited from the father
    assert is_de_novo(fs[1], "KID", "MUM", "DAD") is False
    # chrX haploid call in a son, mother heterozygous: hemizygous, inherited
    g = gene("RPGR", ("XLR",), "X")
    r = assess_gene(g, [fs[3]], "KID", "MALE", mother="MUM", father="DAD", build="GRCh38")
    assert r.fit == "hemizygous"
    assert is_de_novo(fs[3], "KID", "MUM", "DAD", proband_sex="MALE", build="GRCh38") is False
    ab = assess_gene(gene("ABCA4"), fs[:3], "KID", None, mother="MUM", father="DAD")
    assert ab.fit == "biallelic in trans"


def _mech_gene(symbol, inheritance, mechanisms):
    from dataclasses import replace

    return replace(gene(symbol, inheritance), mechanisms=tuple(mechanisms))


def test_benign_findings_never_make_a_fit_even_when_listed_as_qualifying():
    # Common practice: Benign / Likely benign alleles never explain disease, whatever the zygosity.
    every = ("Pathogenic", "Likely pathogenic", "Uncertain significance", "Likely benign", "Benign")
    for cls in ("Benign", "Likely benign"):
        hom = finding("H", 10, [call("KID", (1, 1))], cls=cls)
        r = assess_gene(gene("ABCA4"), [hom], "KID", None, qualifying=every)
        assert r.fit == "no qualifying finding" and not r.qualifying_ids
        assert any("never make up a genotype fit" in n for n in r.notes)
        hemi = finding("X", 38_300_000, [call("KID", (1,))], cls=cls, gene="RPGR", chrom="chrX")
        assert assess_gene(gene("RPGR", ("XLR",), "X"), [hemi], "KID", "MALE", qualifying=every).fit == \
            "no qualifying finding"
        # a benign allele cannot be the second allele of a biallelic fit either
        a, b = pair(((0, 1),), ((0, 1),))
        b.classification.classification = cls
        r = assess_gene(gene("ABCA4"), [a, b], "KID", None, qualifying=every)
        assert r.fit == "single heterozygous in a recessive gene" and r.qualifying_ids == ["A"]


def test_dominant_fit_follows_the_disease_mechanism():
    # Mechanism check: loss of function must be a disease mechanism of the gene for a null allele
    # (ClinGen SVI PVS1 decision tree, Abou Tayoun et al., Hum Mutat 2018;39:1517-1524, first step);
    # in a gene whose recessive disease is loss of function, heterozygous loss of function is the
    # carrier state, so its dominant disease acts otherwise (Mendelian reasoning, common practice).
    null = finding("N", 10, [call("KID", (0, 1))])
    null.annotation.consequence = ("frameshift_variant",)
    missense = finding("M", 20, [call("KID", (0, 1))])
    missense.annotation.consequence = ("missense_variant",)
    nrl_like = _mech_gene("NRL", ("AD", "AR"), ("GOF", "LOF"))
    r = assess_gene(nrl_like, [null], "KID", None)
    assert r.fit == "single heterozygous in a recessive gene" and r.mode == "AR"
    assert any("not counted for AD" in n for n in r.notes)
    assert assess_gene(nrl_like, [missense], "KID", None).fit == "heterozygous in a dominant gene"
    # a null and a missense allele together: the recessive biallelic fit, as published for NRL cases
    assert assess_gene(nrl_like, [null, missense], "KID", None).fit == "biallelic phase unknown"
    # haploinsufficient dominant gene (LOF only): a heterozygous null allele is a complete fit
    prpf31_like = _mech_gene("PRPF31", ("AD",), ("LOF",))
    r = assess_gene(prpf31_like, [null], "KID", None)
    assert r.fit == "heterozygous in a dominant gene" and r.qualifying_ids == ["N"]
    assert assess_gene(prpf31_like, [missense], "KID", None).fit == "heterozygous in a dominant gene"
    # dominant gene acting by gain of function only: a null allele does not fit
    gof_only = _mech_gene("GOFGENE", ("AD",), ("GOF",))
    assert assess_gene(gof_only, [null], "KID", None).fit == "no qualifying finding"
    assert assess_gene(gof_only, [missense], "KID", None).fit == "heterozygous in a dominant gene"
