"""Combiner checks against the published combining rules and their worked values.

Sources named beside each check:
* Richards et al., Genet Med 2015;17:405-424, Table 5 (rules for combining criteria).
* Tavtigian et al., Genet Med 2018;20:1054-1060, Table "Calculations to test the internal
  consistency of current ACMG/AMP guidelines" (combined odds of pathogenicity and posterior
  at prior 0.10 for each Table 5 rule).
* Tavtigian et al., Hum Mutat 2020;41:1734-1737, Table 3 (point bands).
"""

import pytest

from irdtriage.acmg.combine import (
    bayes_class, combine, odds_of_pathogenicity, point_class, points, posterior, rule_class,
)
from irdtriage.acmg.rulesets import load_combining
from irdtriage.models import CriterionResult

P_SUP = ["PP1", "PP2", "PP3", "PP4", "PP5"]
P_MOD = ["PM1", "PM2", "PM3", "PM4", "PM5", "PM6"]
P_STR = ["PS1", "PS2", "PS3", "PS4"]
B_SUP = ["BP1", "BP2", "BP3", "BP4", "BP5", "BP6", "BP7"]
B_STR = ["BS1", "BS2", "BS3", "BS4"]


# Richards 2015 Table 5 with the SVI 2020 PVS1 + PM2_Supporting rule, named (the default rule set is the
# general ClinGen reading, which nets contradictory evidence)
T5 = load_combining().get("acmg-2015-svi")


def crit(vs=0, s=0, m=0, p=0, bs=0, bp=0, ba=0):
    out = [CriterionResult("PVS1", True, "VeryStrong")] if vs else []
    out += [CriterionResult(c, True, "Strong") for c in P_STR[:s]]
    out += [CriterionResult(c, True, "Moderate") for c in P_MOD[:m]]
    out += [CriterionResult(c, True, "Supporting") for c in P_SUP[:p]]
    out += [CriterionResult(c, True, "Strong") for c in B_STR[:bs]]
    out += [CriterionResult(c, True, "Supporting") for c in B_SUP[:bp]]
    if ba:
        out.append(CriterionResult("BA1", True, "StandAlone"))
    return out


# (counts, expected class, rule label prefix) — Richards 2015 Table 5, every rule.
TABLE5 = [
    (dict(vs=1, s=1), "Pathogenic", "Pathogenic (i)(a)"),
    (dict(vs=1, m=2), "Pathogenic", "Pathogenic (i)(b)"),
    (dict(vs=1, m=1, p=1), "Pathogenic", "Pathogenic (i)(c)"),
    (dict(vs=1, p=2), "Pathogenic", "Pathogenic (i)(d)"),
    (dict(s=2), "Pathogenic", "Pathogenic (ii)"),
    (dict(s=1, m=3), "Pathogenic", "Pathogenic (iii)(a)"),
    (dict(s=1, m=2, p=2), "Pathogenic", "Pathogenic (iii)(b)"),
    (dict(s=1, m=1, p=4), "Pathogenic", "Pathogenic (iii)(c)"),
    (dict(vs=1, m=1), "Likely pathogenic", "Likely pathogenic (i)"),
    (dict(s=1, m=1), "Likely pathogenic", "Likely pathogenic (ii)"),
    (dict(s=1, m=2), "Likely pathogenic", "Likely pathogenic (ii)"),
    (dict(s=1, p=2), "Likely pathogenic", "Likely pathogenic (iii)"),
    (dict(m=3), "Likely pathogenic", "Likely pathogenic (iv)"),
    (dict(m=2, p=2), "Likely pathogenic", "Likely pathogenic (v)"),
    (dict(m=1, p=4), "Likely pathogenic", "Likely pathogenic (vi)"),
    (dict(ba=1), "Benign", "Benign (i)"),
    (dict(bs=2), "Benign", "Benign (ii)"),
    (dict(bs=1, bp=1), "Likely benign", "Likely benign (i)"),
    (dict(bp=2), "Likely benign", "Likely benign (ii)"),
]


@pytest.mark.parametrize("counts,expected,rule", TABLE5)
def test_table5_every_rule(counts, expected, rule):  # Richards 2015 Table 5
    cls, fired = rule_class(crit(**counts), T5)
    assert cls == expected
    assert fired.startswith(rule)


# One criterion short of each rule: boundaries (Richards 2015 Table 5 read literally).
BELOW = [
    dict(vs=1),  # PVS1 alone
    dict(vs=1, p=1),
    dict(s=1),
    dict(s=1, p=1),
    dict(m=2),
    dict(m=2, p=1),
    dict(m=1, p=3),
    dict(p=5),  # supporting only never reaches LP under Table 5
    dict(bs=1),  # one strong benign alone
    dict(bp=1),
]


@pytest.mark.parametrize("counts", BELOW)
def test_table5_boundaries_are_uncertain(counts):  # Richards 2015 Table 5
    cls, fired = rule_class(crit(**counts), T5)
    assert cls == "Uncertain significance"
    assert fired.startswith("Uncertain significance (i)")


def test_strong_plus_four_moderate_is_pathogenic_not_likely():  # Table 5 P(iii)(a) ">=3 Moderate"
    assert rule_class(crit(s=1, m=4), T5)[0] == "Pathogenic"


@pytest.mark.parametrize("counts", [dict(vs=1, s=1, bp=1), dict(m=3, bs=1), dict(p=1, bp=2)])
def test_conflict_is_uncertain(counts):  # Richards 2015 Table 5, Uncertain significance (ii)
    cls, fired = rule_class(crit(**counts), T5)
    assert cls == "Uncertain significance"
    assert "contradictory" in fired


def test_downgraded_pvs1_counts_as_applied_strength():  # Richards 2015 Table 5 + strengths as applied
    c = [CriterionResult("PVS1", True, "Strong"), CriterionResult("PM2", True, "Supporting")]
    # Strong + Supporting is not a Table 5 rule (needs >=2 Supporting for LP(iii)).
    assert rule_class(c, T5)[0] == "Uncertain significance"
    c.append(CriterionResult("PP3", True, "Supporting"))
    assert rule_class(c, T5)[0] == "Likely pathogenic"


def test_not_met_and_not_evaluable_are_ignored():
    c = crit(s=2) + [CriterionResult("BS1", False, None), CriterionResult("BP4", None, None)]
    assert combine(c, T5).classification == "Pathogenic"


def test_invalid_strength_rejected():
    with pytest.raises(ValueError):
        combine([CriterionResult("PS3", True, "StandAlone")], T5)
    with pytest.raises(ValueError):
        combine([CriterionResult("PS3", True, None)], T5)


# Tavtigian 2018, table of combined odds (OP) and posteriors at prior 0.10 for Table 5 rules.
# Tavtigian 2018, table of combined odds (OP) and posteriors at prior 0.10 for Table 5 rules,
# compared at the precision the paper prints them (OP decimals, posterior decimals).
TAVTIGIAN_2018 = [
    (dict(vs=1, s=1), 6548, 0, 0.999, 3),   # Path (ia)
    (dict(vs=1, m=2), 6548, 0, 0.999, 3),   # Path (ib)
    (dict(vs=1, m=1, p=1), 3148, 0, 0.997, 3),  # Path (ic)
    (dict(vs=1, p=2), 1514, 0, 0.994, 3),   # Path (id)
    (dict(s=1, m=3), 1514, 0, 0.994, 3),    # Path (iiia)
    (dict(s=1, m=2, p=2), 1514, 0, 0.994, 3),  # Path (iiib)
    (dict(s=1, m=1, p=4), 1514, 0, 0.994, 3),  # Path (iiic)
    (dict(s=1, m=1), 81, 0, 0.900, 3),      # Likely Path (ii)
    (dict(s=1, p=2), 81, 0, 0.900, 3),      # Likely Path (iii)
    (dict(m=3), 81, 0, 0.900, 3),           # Likely Path (iv)
    (dict(m=2, p=2), 81, 0, 0.900, 3),      # Likely Path (v)
    (dict(m=1, p=4), 81, 0, 0.900, 3),      # Likely Path (vi)
    (dict(bs=1, bp=1), 0.03, 2, 0.0028, 4),  # Likely Benign (i)
    (dict(bp=2), 0.23, 2, 0.025, 3),        # Likely Benign (ii)
    (dict(bs=2), 0.0028, 4, 0.00032, 5),    # Benign (ii)
]


@pytest.mark.parametrize("counts,op,op_dp,post,post_dp", TAVTIGIAN_2018)
def test_tavtigian_2018_worked_values(counts, op, op_dp, post, post_dp):
    got_op = odds_of_pathogenicity(crit(**counts))
    # within one unit of the last printed digit (the paper truncates some values, e.g. 0.0028)
    assert abs(got_op - op) < 10 ** -op_dp
    assert abs(posterior(got_op) - post) < 10 ** -post_dp


def test_tavtigian_2018_inconsistent_rules():
    # Tavtigian 2018 abstract: one LP rule is mathematically Pathogenic (PVS1 + 1 Moderate)
    # and one Pathogenic rule is actually LP (>= 2 Strong).
    assert bayes_class(posterior(odds_of_pathogenicity(crit(vs=1, m=1)))) == "Pathogenic"
    assert bayes_class(posterior(odds_of_pathogenicity(crit(s=2)))) == "Likely pathogenic"


def test_posterior_formula_and_prior():  # Tavtigian 2018 equation, prior 0.10
    assert posterior(1.0) == pytest.approx(0.10)
    assert posterior(350.0) == pytest.approx(35.0 / 35.9)


@pytest.mark.parametrize("post,cls", [
    (0.9901, "Pathogenic"), (0.99, "Likely pathogenic"), (0.90, "Likely pathogenic"),
    (0.89, "Uncertain significance"), (0.10, "Uncertain significance"),
    (0.0999, "Likely benign"), (0.001, "Likely benign"), (0.00099, "Benign"),
])
def test_bayes_bands(post, cls):  # Tavtigian 2018 posterior thresholds
    assert bayes_class(post) == cls


@pytest.mark.parametrize("pts,cls", [
    (10, "Pathogenic"), (9, "Likely pathogenic"), (6, "Likely pathogenic"),
    (5, "Uncertain significance"), (0, "Uncertain significance"), (-1, "Likely benign"),
    (-6, "Likely benign"), (-7, "Benign"),
])
def test_point_bands(pts, cls):  # Tavtigian 2020 Table 3
    assert point_class(pts) == cls


def _build(total):
    """Distinct criteria whose strengths add up to `total` points (greedy)."""
    if total >= 0:
        pools = [("VeryStrong", 8, ["PVS1"]), ("Strong", 4, P_STR), ("Moderate", 2, P_MOD),
                 ("Supporting", 1, P_SUP)]
    else:
        pools = [("Strong", 4, B_STR), ("Supporting", 1, B_SUP)]
    left, out = abs(total), []
    for strength, value, codes in pools:
        for code in codes:
            if left >= value:
                out.append(CriterionResult(code, True, strength))
                left -= value
    assert left == 0
    return out


@pytest.mark.parametrize("total", range(-23, 30))
def test_points_and_posterior_agree_on_every_sum(total):
    # Tavtigian 2020: points are proportional to log(odds) and recapitulate the 2018 posterior
    # (Table 3 bands equal the 2018 posterior bands for every point sum).
    c = _build(total)
    assert points(c) == total
    assert bayes_class(posterior(odds_of_pathogenicity(c))) == point_class(total)


def test_points_values():  # Tavtigian 2020: Supporting 1, Moderate 2, Strong 4, Very Strong 8
    assert points(crit(vs=1)) == 8
    assert points(crit(s=1)) == 4
    assert points(crit(m=1)) == 2
    assert points(crit(p=1)) == 1
    assert points(crit(bs=1, bp=1)) == -5


def test_ba1_stand_alone_everywhere():  # Richards 2015 Table 5 Benign (i); Ghosh 2018
    r = combine(crit(ba=1, vs=1, m=1), T5)
    assert (r.classification, r.point_class, r.bayes_class) == ("Benign",) * 3
    assert r.points == 10
    assert "BA1" in r.note


def test_agreement_has_no_note():
    r = combine(crit(vs=1, s=1), T5)
    assert r.classification == r.point_class == r.bayes_class == "Pathogenic"
    assert r.note == ""
    assert r.rule.startswith("Pathogenic (i)(a)")


def test_disagreement_note_for_pvs1_plus_moderate():
    # Tavtigian 2018: LP (i) is mathematically Pathogenic (10 points, posterior 0.994).
    r = combine(crit(vs=1, m=1), T5)
    assert r.classification == "Likely pathogenic"
    assert r.point_class == "Pathogenic" and r.points == 10
    assert r.bayes_class == "Pathogenic"
    assert "rule table gives Likely pathogenic" in r.note


def test_conflict_points_can_net_out():
    # PVS1 + PS3 + BP4: Table 5 Uncertain (ii); points 8 + 4 - 1 = 11 -> Pathogenic.
    r = combine(crit(vs=1, s=1, bp=1), T5)
    assert r.classification == "Uncertain significance"
    assert r.points == 11 and r.point_class == "Pathogenic"
    assert r.note


def test_empty_is_uncertain():
    r = combine([], T5)
    assert (r.classification, r.points, r.point_class, r.bayes_class) == (
        "Uncertain significance", 0, "Uncertain significance", "Uncertain significance")
    assert r.posterior == pytest.approx(0.10)


# ClinGen SVI Recommendation for Absence/Rarity (PM2), version 1.0 (approved September 2020):
# PM2 is applied at Supporting and the combining rules gain "PVS1 AND PM2_Supporting ->
# Likely pathogenic" (rule verified as transcribed in ClinGen expert-panel combining tables:
# "The addition of the rule 'PVS1 AND PM2_Supporting' is the only modification made from the
# original ACMG/AMP published guidelines for combining criteria"; the SVI PDF itself was not
# read).  Tavtigian 2020 Table 3: 8 + 1 = 9 points is Likely pathogenic; Tavtigian 2018 formula
# gives posterior 350**(9/8) * 0.1 / ((350**(9/8) - 1) * 0.1 + 1) = 0.988.
def test_svi_pvs1_pm2_supporting_is_likely_pathogenic():
    c = [CriterionResult("PVS1", True, "VeryStrong"), CriterionResult("PM2", True, "Supporting")]
    res = combine(c, T5)
    assert res.rule_class == "Likely pathogenic"
    assert "SVI 2020 amendment" in res.rule and "PM2_Supporting" in res.rule
    assert res.points == 9 and res.point_class == "Likely pathogenic"
    assert round(res.posterior, 3) == 0.988 and res.bayes_class == "Likely pathogenic"
    assert res.note == ""  # all three methods agree


def test_svi_amendment_is_narrow():
    # Richards 2015 Table 5 alone: PVS1 + one supporting criterion other than PM2 is no rule.
    assert rule_class([CriterionResult("PVS1", True, "VeryStrong"),
                       CriterionResult("PP3", True, "Supporting")], T5)[0] == "Uncertain significance"
    # PVS1 lowered to Strong + PM2_Supporting: not the amendment's case (Strong + 1 Supporting).
    assert rule_class([CriterionResult("PVS1", True, "Strong"),
                       CriterionResult("PM2", True, "Supporting")], T5)[0] == "Uncertain significance"
    # PM2 at Moderate with PVS1 is Table 5 LP (i) already; the amendment does not relabel it.
    assert rule_class([CriterionResult("PVS1", True, "VeryStrong"),
                       CriterionResult("PM2", True, "Moderate")], T5)[1].startswith("Likely pathogenic (i)")
    # PVS1 + PM2_Supporting + another supporting: Table 5 Pathogenic (i)(d) wins.
    assert rule_class([CriterionResult("PVS1", True, "VeryStrong"), CriterionResult("PM2", True, "Supporting"),
                       CriterionResult("PP3", True, "Supporting")], T5)[0] == "Pathogenic"
    # Conflicting benign evidence still makes it Uncertain (Table 5 VUS (ii)).
    assert rule_class([CriterionResult("PVS1", True, "VeryStrong"), CriterionResult("PM2", True, "Supporting"),
                       CriterionResult("BP4", True, "Supporting")], T5)[0] == "Uncertain significance"


# --- rule sets (panels/combining.yaml) --------------------------------------------------------

SETS = load_combining().rule_sets


def C(code, strength):
    return CriterionResult(code, True, strength)


@pytest.mark.parametrize("second", ["PM3", "PS2", "PS3"])
def test_very_strong_second_criterion_counts_as_strong(second):
    # Richards 2015 Table 5 Pathogenic (i)(a): 1 Very Strong and >= 1 Strong; a criterion applied at
    # Very Strong is at least Strong (PVS1 + PM3_VeryStrong + PP4_Moderate was wrongly LP before).
    c = [C("PVS1", "VeryStrong"), C(second, "VeryStrong"), C("PP4", "Moderate")]
    cls, rule = rule_class(c, T5)
    assert cls == "Pathogenic" and rule.startswith("Pathogenic (i)(a)")
    # and with only a Very Strong non-PVS1 criterion plus a Moderate: Table 5 LP (i)
    assert rule_class([C(second, "VeryStrong"), C("PM2", "Moderate")], T5)[0] == "Likely pathogenic"


def test_two_very_strong_alone_is_pathogenic():  # Table 5 P (ii) >= 2 Strong, each Very Strong fills one
    assert rule_class([C("PVS1", "VeryStrong"), C("PS2", "VeryStrong")], T5)[0] == "Pathogenic"


def test_higher_strength_fills_lower_places_only_once():
    # 1 Strong + 1 Supporting: the Strong criterion cannot fill both the Strong and a Supporting
    # place of LP (iii) (1 Strong and >= 2 Supporting).
    assert rule_class([C("PS3", "Strong"), C("PP3", "Supporting")], T5)[0] == "Uncertain significance"
    # 2 Strong + 1 Supporting is Pathogenic (ii) in any case.
    assert rule_class([C("PS3", "Strong"), C("PS4", "Strong"), C("PP3", "Supporting")], T5)[0] == "Pathogenic"


@pytest.mark.parametrize("code", ["BS1", "BS2", "BP4"])
def test_stand_alone_benign_codes(code):  # benign criteria a specification grades Stand Alone act as BA1
    r = combine([C(code, "StandAlone"), C("PM2", "Supporting")], T5)
    assert (r.classification, r.point_class, r.bayes_class) == ("Benign",) * 3
    assert r.points == 1 and code in r.note


def test_general_set_nets_conflicts_on_points():
    rs = SETS["clingen-svi-general"]
    # PVS1 + PS3 + BP4: 8 + 4 - 1 = 11 points, Pathogenic (Tavtigian 2020 Table 3)
    r = combine(crit(vs=1, s=1, bp=1), rs)
    assert (r.classification, r.points, r.rule_set) == ("Pathogenic", 11, "clingen-svi-general")
    assert "netted" in r.rule
    # PM2_Supporting + BP4 + BP7: 1 - 2 = -1 points, Likely benign
    c = [C("PM2", "Supporting"), C("BP4", "Supporting"), C("BP7", "Supporting")]
    assert combine(c, rs).classification == "Likely benign"
    # 0 points stays Uncertain significance
    assert combine([C("PM2", "Supporting"), C("BP4", "Supporting")], rs).classification == "Uncertain significance"


def test_general_set_single_strong_benign():
    rs = SETS["clingen-svi-general"]
    assert rule_class([C("BS1", "Strong")], rs)[0] == "Likely benign"  # -4 points: Likely benign (Tavtigian 2020)
    assert rule_class([C("BS1", "Strong")], SETS["acmg-2015-svi"])[0] == "Uncertain significance"  # Table 5
    assert rule_class([C("BS1", "Strong"), C("BS2", "Strong")], rs)[0] == "Benign"  # Table 5 B (ii) still wins


@pytest.mark.parametrize("counts,pts_cls,bayes_cls", [
    (dict(s=2), "Likely pathogenic", "Likely pathogenic"),  # 8 points; posterior 0.975 (Tavtigian 2018)
    (dict(vs=1, m=1), "Pathogenic", "Pathogenic"),  # 10 points; posterior 0.994
    (dict(bp=1), "Likely benign", "Likely benign"),  # -1 point; posterior 0.051
])
def test_points_and_bayes_rule_sets(counts, pts_cls, bayes_cls):
    assert combine(crit(**counts), SETS["tavtigian-2020-points"]).classification == pts_cls
    assert combine(crit(**counts), SETS["tavtigian-2018-bayes"]).classification == bayes_cls
