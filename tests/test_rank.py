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
            ("Pathogenic", "Likely pathogenic", "Uncertain significance"), (0.0, 0.25, 0.5, 0.75, 1.0),
            (False, True)):
        a, b = trans(ca, cb, "G")
        h = GeneHypothesis(symbol="G", findings=[a, b], genotype_fit=fit,
                           phenotype_match=pheno("G", c, ["HP:0000505"] if conflict else []))
        g = gene("G", ("AD", "AR"))
        assert score_hypothesis(h, g) > best_carrier, (fit, ca, cb, c, conflict)


def test_carrier_below_complete_fit_without_phenotype_and_no_fit_scores_zero():
    # common practice: a carrier state does not explain disease, whatever the phenotype says
    g_ar = gene("CARRIERGENE")
    carrier = hyp(g_ar, [finding("C", 10, [call("KID", (0, 1))], gene="CARRIERGENE")], match=pheno("CARRIERGENE", 1.0))
    vus = finding("V", 10, [call("KID", (1, 1))], cls="Uncertain significance", gene="G")
    h = hyp(gene("G"), [vus])  # homozygous VUS, no phenotype given
    assert h.genotype_fit == "homozygous"
    assert score_hypothesis(h, gene("G")) > score_hypothesis(carrier, g_ar)
    ranked = rank_hypotheses([carrier, h], panel(g_ar, gene("G")))
    assert [x.symbol for x in ranked] == ["G", "CARRIERGENE"]
    # only benign findings: no fit, score 0 even with a perfect phenotype match
    lb = finding("L", 10, [call("KID", (1, 1))], cls="Likely benign", gene="LBG")
    h0 = hyp(gene("LBG"), [lb], match=pheno("LBG", 1.0))
    assert h0.genotype_fit == "no qualifying finding" and score_hypothesis(h0, gene("LBG")) == 0.0
    assert rank_hypotheses([h0, carrier], panel(g_ar, gene("LBG")))[0].symbol == "CARRIERGENE"


def test_phenotype_breaks_near_ties_only():
    # common practice: allele evidence first; the phenotype match orders genes whose genotypes are alike
    g1, g2 = gene("AAA"), gene("BBB", ("AD",))
    strong = hyp(g1, trans(gene_name="AAA"), match=pheno("AAA", 0.0), mother="MUM", father="DAD")
    weak = hyp(g2, [finding("W", 10, [call("KID", (0, 1))], cls="Uncertain significance", gene="BBB")],
               match=pheno("BBB", 1.0))
    assert strong.genotype_fit == "biallelic in trans" and weak.genotype_fit == "heterozygous in a dominant gene"
    assert rank_hypotheses([weak, strong], panel(g1, g2))[0].symbol == "AAA"
    # same fit and classes: the better phenotype match wins
    h1 = hyp(gene("CCC"), trans(gene_name="CCC"), match=pheno("CCC", 0.2), mother="MUM", father="DAD")
    h2 = hyp(gene("DDD"), trans(gene_name="DDD"), match=pheno("DDD", 0.8), mother="MUM", father="DAD")
    assert rank_hypotheses([h1, h2], panel(gene("CCC"), gene("DDD")))[0].symbol == "DDD"
    # the phenotype moves a score by at most PHENOTYPE_SHARE
    from irdtriage.rank import PHENOTYPE_SHARE

    lo = score_hypothesis(hyp(gene("CCC"), trans(gene_name="CCC"), match=pheno("CCC", 0.0, ["HP:0000510"]),
                              mother="MUM", father="DAD"), gene("CCC"))
    hi = score_hypothesis(hyp(gene("CCC"), trans(gene_name="CCC"), match=pheno("CCC", 1.0),
                              mother="MUM", father="DAD"), gene("CCC"))
    assert 0 < hi - lo <= PHENOTYPE_SHARE + 1e-9


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


# ---------------------------------------------------------------------------
# Published cases (GA4GH phenopacket-store, ../shared/refdata/phenopackets; BSD-3-Clause):
# the genotype fit must follow the published allelic states, and the case's gene must rank
# above a decoy carrier allele from another recessive gene.
# ---------------------------------------------------------------------------
import json
from pathlib import Path

from test_genotype import _variants_from_vcf

REFDATA = Path(__file__).resolve().parents[1].parent / "shared" / "refdata" / "phenopackets"
# Inheritance of the case genes as the refdata README describes the collections.
CASE_GENES = {"RPGRIP1": ("AR",), "CLN3": ("AR",), "BBS1": ("AR",), "RGS9BP": ("AR",), "PRPF31": ("AD",),
              "NRL": ("AD", "AR")}
ACMG = {"PATHOGENIC": "Pathogenic", "LIKELY_PATHOGENIC": "Likely pathogenic",
        "UNCERTAIN_SIGNIFICANCE": "Uncertain significance"}
GT = {"heterozygous": "0/1", "homozygous": "1/1"}


def _cases():
    for g in CASE_GENES:
        for p in sorted((REFDATA / g).glob("*.json")):
            yield g, p


@pytest.mark.skipif(not REFDATA.is_dir(), reason="../shared/refdata/phenopackets not present on this machine")
def test_published_cases_genotype_fit_and_rank(tmp_path):
    from irdtriage.models import Annotation, Classification, Finding

    checked = skipped = 0
    decoy_rec = ("chr16", 28478000, "C", "T")  # a heterozygous allele placed in CLN3 as a decoy carrier
    for gsym, path in _cases():
        pp = json.loads(path.read_text())
        records, classes = [], []
        for interp in pp.get("interpretations", []):
            for gi in interp.get("diagnosis", {}).get("genomicInterpretations", []):
                vi = gi.get("variantInterpretation", {})
                vd = vi.get("variationDescriptor", {})
                rec, state = vd.get("vcfRecord"), vd.get("allelicState", {}).get("label")
                cls = ACMG.get(vi.get("acmgPathogenicityClassification"))
                if not rec or state not in GT or cls is None or vd.get("geneContext", {}).get("symbol") != gsym:
                    records = None
                    break
                records.append((rec["chrom"], rec["pos"], rec["ref"], rec["alt"], GT[state]))
                classes.append(cls)
            if records is None:
                break
        if not records or len({r[:4] for r in records}) != len(records):
            skipped += 1
            continue
        decoy_gene = "BBS1" if gsym == "CLN3" else "CLN3"
        lines = ["##fileformat=VCFv4.2", "##FORMAT=<ID=GT,Number=1,Type=String,Description=\"Genotype\">"]
        lines += [f"##contig=<ID={c}>" for c in sorted({r[0] for r in records} | {decoy_rec[0]})]
        lines.append("#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\tFORMAT\tKID")
        body = [f"{c}\t{p}\t.\t{r}\t{a}\t50\tPASS\t.\tGT\t{gt}" for c, p, r, a, gt in records]
        body.append(f"{decoy_rec[0]}\t{decoy_rec[1]}\t.\t{decoy_rec[2]}\t{decoy_rec[3]}\t50\tPASS\t.\tGT\t0/1")
        vcf = tmp_path / f"{path.stem}.vcf"
        vcf.write_text("\n".join(lines + body) + "\n")
        variants = _variants_from_vcf(vcf)  # real GT parsing through pysam
        case_f, decoy_f = [], []
        for i, v in enumerate(variants):
            is_decoy = (v.chrom, v.pos) == decoy_rec[:2]
            cls = "Pathogenic" if is_decoy else classes[[(r[0], r[1]) for r in records].index((v.chrom, v.pos))]
            f = Finding(id=f"F{i}", variant=v, gene=decoy_gene if is_decoy else gsym,
                        annotation=Annotation(gene=gsym), classification=Classification(cls, cls, 0, cls, 0.5, cls))
            (decoy_f if is_decoy else case_f).append(f)
        n_hom = sum(1 for r in records if r[4] == "1/1")
        n_het = len(records) - n_hom
        inh = CASE_GENES[gsym]
        if n_hom:
            expected = "homozygous"
        elif n_het >= 2 and "AR" in inh:
            expected = "biallelic phase unknown"
        elif "AD" in inh:
            expected = "heterozygous in a dominant gene"
        else:
            expected = "single heterozygous in a recessive gene"
        h_case = hyp(gene(gsym, inh), case_f)
        assert h_case.genotype_fit == expected, (path.name, records)
        h_decoy = hyp(gene(decoy_gene), decoy_f)
        assert h_decoy.genotype_fit == "single heterozygous in a recessive gene"
        ranked = rank_hypotheses([h_decoy, h_case], panel(gene(gsym, inh), gene(decoy_gene)))
        if expected != "single heterozygous in a recessive gene":
            assert ranked[0].symbol == gsym, path.name
        checked += 1
    assert checked >= 100, (checked, skipped)


# ---------------------------------------------------------------------------
# Alleles whose consequence and population frequency are both unknown (unannotated VCF)
# cannot be an explanation: population data and the predicted consequence are the first
# evidence ACMG/AMP 2015 (Richards et al.) weighs, and without both the allele may be a
# common benign one. The case is at best IN_PROGRESS and the allele stays UNKNOWN_STATUS.
# ---------------------------------------------------------------------------
def _frequency_criteria(met):
    from irdtriage.models import CriterionResult

    return [CriterionResult(code, met, "Supporting" if met and code == "PM2" else None, "test")
            for code in ("BA1", "BS1", "BS2", "PM2")]


def test_unannotated_allele_without_frequency_is_not_an_explanation():
    g = gene("RPE65")
    f = finding("H", 10, [call("KID", (1, 1))], cls="Pathogenic", gene="RPE65")  # no consequence annotation
    f.criteria = _frequency_criteria(None)  # no population data either
    h = hyp(g, [f], match=pheno("RPE65", 0.9))
    assert h.genotype_fit == "homozygous"
    ranked = rank_hypotheses([h], panel(g))
    cc = case_call(ranked, True)
    assert cc.status == "IN_PROGRESS" and "Candidate explanation" not in cc.summary
    assert cc.next_steps[0].startswith("Annotate the VCF")
    assert assign_interpretation_status(ranked, cc) == {"H": "UNKNOWN_STATUS"}
    # the same allele with its frequency known (PM2 met) is assessable again: SOLVED
    f.criteria = _frequency_criteria(False)[:3] + _frequency_criteria(True)[3:]
    ranked = rank_hypotheses([h], panel(g))
    cc = case_call(ranked, True)
    assert cc.status == "SOLVED"
    assert assign_interpretation_status(ranked, cc) == {"H": "CAUSATIVE"}
