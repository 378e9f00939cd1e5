"""Population-frequency criteria BA1, BS1, PM2 (Supporting) and BS2.

Sources beside each check:
* BA1 > 5 % in a continental population: Ghosh et al., Hum Mutat 2018;39:1525-1530.
* PM2 at Supporting: ClinGen SVI recommendation for PM2 (2020; from memory).
* Maximum credible AF: Whiffin et al., Genet Med 2017;19:1151-1158 (HCM worked example:
  prevalence 1/500, maximum allelic contribution 0.02, genetic contribution 1, penetrance 0.5
  -> 4.0e-5; figures from memory; the 4e-5 cut-off for "rare" HCM variants is used by the same
  group, de Marvao et al., JACC 2021;78:1097-1110).
* ABCA4 c.5603A>T p.(Asn1868Ile) is a frequent pathogenic hypomorph (common practice).
"""

import pytest

from irdtriage.acmg.frequency import evaluate_frequency, max_credible_af
from irdtriage.acmg.rules import load_rules
from irdtriage.models import Annotation, Gene, Span, Variant

RULES = load_rules()


def gene(symbol, inheritance=("AR",), mechanisms=("LOF",)):
    return Gene(symbol, "HGNC:0", symbol, "NM_0.1", "ENST0.1", "NP_0.1", "+", Span("1", 1, 2), None,
                inheritance, mechanisms, (), "step")


def pop(af_nfe, an=100000, ac=None, nhomalt=0, overall=None):
    ac = round(af_nfe * an) if ac is None else ac
    return {"source": "population_vcf", "found": True, "af": overall if overall is not None else af_nfe,
            "ac": ac, "an": an, "nhomalt": nhomalt,
            "populations": {"nfe": {"ac": ac, "an": an, "af": af_nfe, "nhomalt": nhomalt,
                                    "faf95": None}}}


def run(symbol, population, inheritance=("AR",), hgvs_c="c.100A>G", hgvs_p="p.(Lys34Glu)"):
    a = Annotation(symbol, "NM_0.1", ("missense_variant",), hgvs_c, hgvs_p)
    res = evaluate_frequency(Variant("1", 100, "A", "G"), a, gene(symbol, inheritance), RULES,
                             {"population": population})
    return {r.code: r for r in res}


def test_whiffin_hcm_worked_example():  # Whiffin 2017, dominant HCM example (figures from memory)
    assert max_credible_af(1 / 500, 0.02, 1.0, 0.5, "dominant") == pytest.approx(4.0e-5)


def test_recessive_form_matches_hardy_weinberg():
    # Derivation check: with one allele making all disease alleles (a = 1), full penetrance and
    # g = 1, the allele frequency must be sqrt(prevalence) (Hardy-Weinberg q^2 = prevalence).
    assert max_credible_af(1e-4, 1.0, 1.0, 1.0, "recessive") == pytest.approx(0.01)
    # halving the allelic share halves maxAF; quartering the genetic share halves it
    assert max_credible_af(1e-4, 0.5, 0.25, 1.0, "recessive") == pytest.approx(0.01 * 0.5 * 0.5)


def test_max_credible_rejects_bad_input():
    with pytest.raises(ValueError):
        max_credible_af(0, 0.1, 1, 1)
    with pytest.raises(ValueError):
        max_credible_af(1e-4, 0.1, 1, 1, "x-linked")


@pytest.mark.parametrize("af,met", [(0.0501, True), (0.05, False), (0.0499, False)])
def test_ba1_boundary(af, met):  # Ghosh 2018: "> 5 %" in a continental population
    r = run("CLN3", pop(af))["BA1"]
    assert r.met is met
    if met:
        assert r.strength == "StandAlone"


def test_ba1_needs_enough_alleles():  # Ghosh 2018 minimum allele number (2,000; from memory)
    p = pop(0.2, an=1000)
    p["af"] = 0.001  # overall frequency low; only a small population is high
    r = run("CLN3", p)["BA1"]
    assert r.met is False


def test_ba1_ignores_founder_population():  # continental populations only (common practice)
    p = pop(0.001)
    p["populations"]["fin"] = {"ac": 8000, "an": 100000, "af": 0.08, "nhomalt": 0, "faf95": None}
    assert run("CLN3", p)["BA1"].met is False


def test_abca4_n1868i_exception():  # common practice: ABCA4 p.(Asn1868Ile) is pathogenic though frequent
    res = run("ABCA4", pop(0.07), hgvs_c="c.5603A>T", hgvs_p="p.(Asn1868Ile)")
    assert res["BA1"].met is False and "exception" in res["BA1"].reason
    assert res["BS1"].met is False
    # one-letter protein spelling also matches the exception
    res = run("ABCA4", pop(0.07), hgvs_c="", hgvs_p="p.N1868I")
    assert res["BA1"].met is False
    # a different ABCA4 variant at the same frequency does get BA1
    assert run("ABCA4", pop(0.07), hgvs_c="c.5882G>A", hgvs_p="p.(Gly1961Glu)")["BA1"].met is True


def test_pm2_supporting_absent_dominant():  # SVI 2020: PM2 at Supporting
    p = {"source": "population_vcf", "found": False, "af": 0.0, "ac": 0, "an": None, "nhomalt": None,
         "populations": {}}
    r = run("PRPF31", p, inheritance=("AD",))["PM2"]
    assert (r.met, r.strength) == (True, "Supporting")
    assert run("PRPF31", pop(0.00001), inheritance=("AD",))["PM2"].met is False


def test_pm2_recessive_default_and_hl_spec():
    assert run("CLN3", pop(0.00005))["PM2"].met is True   # <= 1e-4 for recessive genes (common practice)
    assert run("CLN3", pop(0.0002))["PM2"].met is False
    # USH2A: ClinGen Hearing Loss VCEP, Oza et al., Hum Mutat 2018;39:1593-1613, recessive
    # PM2_Supporting at <= 0.007 % (0.00007; figure from memory of the paper's table)
    assert run("USH2A", pop(0.00007))["PM2"].met is True
    assert run("USH2A", pop(0.00008))["PM2"].met is False


def test_hl_spec_ba1_bs1_for_usher_genes():
    # Oza et al., Hum Mutat 2018;39:1593-1613 (ClinGen Hearing Loss VCEP, recessive genes):
    # BA1 at filtering AF >= 0.5 %, BS1 at >= 0.3 % (figures from memory of the paper's table)
    big = pop(0.006, an=200000)
    big["populations"]["nfe"]["faf95"] = 0.0055
    res = run("MYO7A", big)
    assert res["BA1"].met is True
    mid = pop(0.004, an=200000)
    mid["populations"]["nfe"]["faf95"] = 0.0035
    res = run("MYO7A", mid)
    assert res["BA1"].met is False and res["BS1"].met is True and res["BS1"].strength == "Strong"


def test_bs1_uses_filtering_af_against_max_credible():
    # Whiffin et al. 2017 recessive maximum credible AF, q = a * sqrt(prevalence * g / penetrance),
    # with Stargardt disease figures: prevalence 1 in 10,000 (Blacharski 1988, from memory),
    # nearly all cases ABCA4 (g = 1), largest single allele about 10 % of disease alleles
    # (a = 0.1, from memory), full penetrance: 0.1 * sqrt(1e-4) = 0.001, worked by hand.
    p = pop(0.0015)
    p["populations"]["nfe"]["faf95"] = 0.0012
    r = run("ABCA4", p, hgvs_c="c.1A>G", hgvs_p="p.(Met1?)")["BS1"]
    assert r.met is True and r.evidence["threshold"] == pytest.approx(0.001)
    p["populations"]["nfe"]["faf95"] = 0.0009  # observed AF above, but the conservative bound is below
    assert run("ABCA4", p, hgvs_c="c.1A>G", hgvs_p="p.(Met1?)")["BS1"].met is False


def test_bs1_falls_back_to_panel_default():
    # A gene without its own figures. Outside bounds for any generous default:
    # * known pathogenic recessive retinal alleles reach about 0.1 % in gnomAD (e.g. USH2A
    #   c.2299del; from memory), so BS1 must not be met at 0.1 %;
    # * all inherited retinal disease together affects about 1 in 3,000 people (Hartong, Berson
    #   and Dryja, Lancet 2006;368:1795-1809; from memory), so no recessive allele can be
    #   more frequent than sqrt(1/3000) = 0.0183 (Hardy-Weinberg, worked by hand): BS1 must be met
    #   for a filtering AF above that.
    low = run("CLN3", pop(0.001))["BS1"]
    assert low.met is False and "panel-wide default" in low.reason
    high = run("CLN3", pop(0.025, an=200000))["BS1"]
    assert high.met is True and high.strength == "Strong" and "panel-wide default" in high.reason


def test_bs1_not_evaluable_without_any_threshold(tmp_path):
    import yaml
    from irdtriage.acmg.rules import default_path

    data = yaml.safe_load(open(default_path()))
    data.pop("default_max_credible")
    p = tmp_path / "rules.yaml"
    p.write_text(yaml.safe_dump(data))
    rules = load_rules(p)
    a = Annotation("CLN3", "NM_0.1", ("missense_variant",), "c.100A>G", "p.(Lys34Glu)")
    res = {r.code: r for r in evaluate_frequency(Variant("1", 100, "A", "G"), a, gene("CLN3"), rules,
                                                 {"population": pop(0.001)})}
    assert res["BS1"].met is None and "max_credible" in res["BS1"].reason


def test_bs2_homozygotes():
    assert run("RPGRIP1", pop(0.004, nhomalt=3))["BS2"].met is True
    assert run("RPGRIP1", pop(0.004, nhomalt=1))["BS2"].met is False
    assert run("CLN3", pop(0.004, nhomalt=9))["BS2"].met is False  # not curated fully penetrant


def test_no_population_data_is_not_evaluable():
    res = run("CLN3", None)
    assert all(res[c].met is None for c in ("BA1", "BS1", "PM2", "BS2"))
