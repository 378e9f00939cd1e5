"""Ranking, case call and interpretation statuses.

The ranking properties checked here are trade rules (common practice in diagnostic
genetics): a single heterozygous allele in a recessive gene (a carrier state) does not
explain disease and must rank below complete genotype fits that match the phenotype; an
affected hemizygous male explains X-linked recessive disease where a heterozygous female
is a carrier; a poorer phenotype match lowers a gene; order must not depend on input order.
Status words are the GA4GH Phenopacket ones (SOLVED / IN_PROGRESS / UNSOLVED; CAUSATIVE /
CANDIDATE / CONTRIBUTORY / REJECTED / UNKNOWN_STATUS).
"""
import itertools
import random

import pytest

from irdtriage import CAUTION
from irdtriage.genotype import assess_gene
from irdtriage.models import CASE_STATUSES, INTERPRETATION_STATUSES, GeneHypothesis, Panel
from irdtriage.rank import assign_interpretation_status, case_call, rank_hypotheses, score_hypothesis
from test_genotype import call, finding, gene, pair, pheno, trio_finding


def hyp(g, findings, sex=None, match=None, mother=None, father=None, build="GRCh38"):
    a = assess_gene(g, findings, "KID", sex, mother=mother, father=father, build=build)
    h = GeneHypothesis(symbol=g.symbol, findings=list(findings), genotype_fit=a.fit, phase=a.phase,
                       phenotype_match=match)
    h.assessment = a
    return h


def panel(*genes):
    return Panel(name="t", version="0", sha256="", genes={g.symbol: g for g in genes}, cascade={})


def trans(cls_a="Pathogenic", cls_b="Pathogenic", gene_name="ABCA4"):
    a, b = pair(((0, 1),), ((0, 1),), mum_a=(0, 1), mum_b=(0, 0), dad_a=(0, 0), dad_b=(0, 1), gene=gene_name)
    a.classification.classification, b.classification.classification = cls_a, cls_b
    return a, b


def test_carrier_ranks_below_every_fitting_complete_or_biallelic_fit():
    # carrier at its best: Pathogenic allele, perfect phenotype match
    g_ar = gene("CARRIERGENE")
    carrier = hyp(g_ar, [finding("C", 10, [call("KID", (0, 1))], gene="CARRIERGENE")], match=pheno("CARRIERGENE", 1.0))
    assert carrier.genotype_fit == "single heterozygous in a recessive gene"
    best_carrier = score_hypothesis(carrier, g_ar)
    fits = [f for f in ("biallelic in trans", "biallelic phase unknown", "homozygous", "hemizygous",
                        "heterozygous in a dominant gene", "de novo")]
    for fit, ca, cb, c, conflict in itertools.product(
            fits, ("Pathogenic", "Likely pathogenic", "Uncertain significance"),
            ("Pathogenic", "Likely pathogenic", "Uncertain significance"), (0.5, 0.75, 1.0), (False, True)):
        a, b = trans(ca, cb, "G")
        h = GeneHypothesis(symbol="G", findings=[a, b], genotype_fit=fit,
                           phenotype_match=pheno("G", c, ["HP:0000505"] if conflict else []))
        g = gene("G", ("AD", "AR"))
        assert score_hypothesis(h, g) > best_carrier, (fit, ca, cb, c, conflict)


def test_hemizygous_male_above_heterozygous_female_in_xlr_gene():
    g = gene("RPGR", ("XLR",), "X")
    male = hyp(g, [finding("M", 38_300_000, [call("KID", (1,))], gene="RPGR", chrom="chrX")], "MALE",
               pheno("RPGR", 0.6))
    female = hyp(g, [finding("F", 38_300_000, [call("KID", (0, 1))], gene="RPGR", chrom="chrX")], "FEMALE",
                 pheno("RPGR", 0.6))
    assert male.genotype_fit == "hemizygous" and female.genotype_fit == "single heterozygous in a recessive gene"
    female.symbol = "RPGR-female"  # two people's hypotheses compared on one list
    ranked = rank_hypotheses([female, male], panel(g))
    assert [h.genotype_fit for h in ranked] == ["hemizygous", "single heterozygous in a recessive gene"]
    assert ranked[0].score > ranked[1].score


def test_phenotype_mismatch_lowers_rank_and_order_is_deterministic():
    g1, g2 = gene("AAA"), gene("BBB")
    h1 = hyp(g1, trans(gene_name="AAA"), match=pheno("AAA", 0.1), mother="MUM", father="DAD")
    h2 = hyp(g2, trans(gene_name="BBB"), match=pheno("BBB", 0.9), mother="MUM", father="DAD")
    ranked = rank_hypotheses([h1, h2], panel(g1, g2))
    assert [h.symbol for h in ranked] == ["BBB", "AAA"] and [h.rank for h in ranked] == [1, 2]
    # a hallmark the person explicitly lacks lowers the gene too
    h2.phenotype_match = pheno("BBB", 0.9, ["HP:0000510"])
    h1.phenotype_match = pheno("BBB", 0.9)
    assert rank_hypotheses([h2, h1], panel(g1, g2))[0].symbol == "AAA"
    # equal scores: ties broken by symbol, whatever the input order
    hs = [hyp(gene(s), trans(gene_name=s), match=pheno(s, 0.7), mother="MUM", father="DAD") for s in "QWERTY"]
    orders = set()
    for seed in range(5):
        random.Random(seed).shuffle(hs)
        orders.add(tuple(h.symbol for h in rank_hypotheses(hs, panel(*(gene(s) for s in "QWERTY")))))
    assert orders == {tuple(sorted("QWERTY"))}
    assert all(h.reason for h in hs)


def test_case_solved_with_gene_therapy_note_and_statuses():
    g = gene("RPE65")
    a, b = trans("Pathogenic", "Likely pathogenic", "RPE65")
    h = hyp(g, [a, b], match=pheno("RPE65", 0.8), mother="MUM", father="DAD")
    benign = finding("X", 30, [call("KID", (0, 1))], cls="Benign", gene="RPE65")
    h.findings.append(benign)
    ranked = rank_hypotheses([h], panel(g))
    cc = case_call(ranked, True)
    assert cc.status == "SOLVED" and cc.status in CASE_STATUSES and cc.caution == CAUTION
    assert any("voretigene neparvovec" in s for s in cc.next_steps)
    assert any("orthogonal" in s for s in cc.next_steps)
    st = assign_interpretation_status(ranked, cc)
    assert st == {"A": "CAUSATIVE", "B": "CAUSATIVE", "X": "REJECTED"}
    assert a.interpretation_status == "CAUSATIVE" and set(st.values()) <= set(INTERPRETATION_STATUSES)
    # the same genotype when the phenotype is judged non-retinal is not SOLVED
    cc = case_call(ranked, False)
    assert cc.status == "IN_PROGRESS"
    assert assign_interpretation_status(ranked, cc)["A"] == "CANDIDATE"


def test_case_in_progress_phase_unknown_and_single_hit():
    g = gene("ABCA4")
    a, b = pair(((0, 1),), ((0, 1),))
    h = hyp(g, [a, b], match=pheno("ABCA4", 0.9))
    cc = case_call(rank_hypotheses([h], panel(g)), True)
    assert cc.status == "IN_PROGRESS" and "phase" in cc.summary
    assert any("Test both parents" in s for s in cc.next_steps)
    single = hyp(g, [finding("S", 10, [call("KID", (0, 1))])], match=pheno("ABCA4", 0.9))
    ranked = rank_hypotheses([single], panel(g))
    cc = case_call(ranked, True)
    assert cc.status == "IN_PROGRESS"
    assert any("second ABCA4 allele" in s for s in cc.next_steps)
    assert assign_interpretation_status(ranked, cc) == {"S": "CANDIDATE"}


def test_case_unsolved_and_carrier_of_ill_fitting_gene_rejected():
    g1, g2 = gene("ABCA4"), gene("USH2A")
    carrier = hyp(g2, [finding("U", 10, [call("KID", (0, 1))], gene="USH2A")], match=pheno("USH2A", 0.1))
    lb = hyp(g1, [finding("L", 10, [call("KID", (0, 1))], cls="Likely benign")], match=pheno("ABCA4", 0.9))
    ranked = rank_hypotheses([carrier, lb], panel(g1, g2))
    cc = case_call(ranked, True)
    assert cc.status == "UNSOLVED"
    assert any("RPGR ORF15" in s for s in cc.next_steps)
    assert any("family planning" in s for s in cc.next_steps)
    assert assign_interpretation_status(ranked, cc) == {"U": "REJECTED", "L": "REJECTED"}


def test_dominant_de_novo_vus_is_candidate():
    g = gene("PRPF31", ("AD",))
    f = trio_finding()
    f.classification.classification = "Uncertain significance"
    h = hyp(g, [f], match=pheno("PRPF31", 0.7), mother="MUM", father="DAD")
    assert h.genotype_fit == "de novo"
    ranked = rank_hypotheses([h], panel(g))
    cc = case_call(ranked, True)
    assert cc.status == "IN_PROGRESS" and "uncertain significance" in cc.summary
    assert any("parentage is not confirmed" in s for s in cc.next_steps)
    assert assign_interpretation_status(ranked, cc) == {"D": "CANDIDATE"}
