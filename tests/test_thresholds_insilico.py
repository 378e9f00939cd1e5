"""PP3, BP4 and BP7 tested at each calibrated threshold: equal to, just below and just above.

Sources (expected values typed from them, never read from panels/criteria.yaml):

* REVEL: Pejaver et al., Am J Hum Genet 2022;109:2163-2177, Table 2 (verified against the
  table as published): PP3 Supporting [0.644, 0.773), Moderate [0.773, 0.932), Strong >= 0.932;
  BP4 Supporting (0.183, 0.290], Moderate (0.016, 0.183], Strong (0.003, 0.016],
  Very Strong <= 0.003 ("[" / "]" include the end value, "(" / ")" exclude it).  The project
  caps benign computational evidence at Strong (from memory of the ClinGen recommendation).
* SpliceAI: Walker et al., Am J Hum Genet 2023;110:1046-1067 (ClinGen SVI Splicing Subgroup):
  maximum delta score >= 0.2 supports PP3, <= 0.1 supports BP4 / BP7 (verified: the thresholds
  as quoted from the paper in a public issue thread); BP7 for intronic variants at or beyond
  +7 / -21 (from memory; also stated in a ClinGen expert-panel specification update citing it).
"""
from __future__ import annotations

import pytest

from irdtriage.acmg.insilico import evaluate_insilico
from irdtriage.acmg.rules import load_rules
from irdtriage.models import Annotation

RULES = load_rules()
EPS = 1e-7


def run(consequence, revel=None, spliceai=None, hgvs_c="c.100A>G"):
    a = Annotation("USH2A", "NM_0.1", (consequence,), hgvs_c, "")
    return {r.code: r for r in evaluate_insilico(a, RULES, {"revel": revel, "spliceai_max": spliceai})}


# --- REVEL, PP3 (Pejaver 2022 Table 2) --------------------------------------------------
@pytest.mark.parametrize("score,strength", [
    (0.644 - EPS, None), (0.644, "Supporting"), (0.644 + EPS, "Supporting"),
    (0.773 - EPS, "Supporting"), (0.773, "Moderate"), (0.773 + EPS, "Moderate"),
    (0.932 - EPS, "Moderate"), (0.932, "Strong"), (0.932 + EPS, "Strong"), (1.0, "Strong"),
])
def test_revel_pp3_bands(score, strength):
    r = run("missense_variant", revel=score)["PP3"]
    assert r.met is (strength is not None)
    assert r.strength == strength


# --- REVEL, BP4 (Pejaver 2022 Table 2) --------------------------------------------------
@pytest.mark.parametrize("score,strength", [
    (0.290 + EPS, None), (0.290, "Supporting"), (0.290 - EPS, "Supporting"),
    (0.183 + EPS, "Supporting"), (0.183, "Moderate"), (0.183 - EPS, "Moderate"),
    (0.016 + EPS, "Moderate"), (0.016, "Strong"), (0.016 - EPS, "Strong"),
    (0.003, "Strong"), (0.0, "Strong"),  # Very Strong interval, capped at Strong
])
def test_revel_bp4_bands(score, strength):
    r = run("missense_variant", revel=score)["BP4"]
    assert r.met is (strength is not None)
    assert r.strength == strength


@pytest.mark.parametrize("score", [0.29 + 0.01, 0.5, 0.644 - 0.01])
def test_revel_between_bands_is_neither(score):
    r = run("missense_variant", revel=score)
    assert r["PP3"].met is False and r["BP4"].met is False


# --- SpliceAI with a missense variant (Walker 2023) --------------------------------------
@pytest.mark.parametrize("sai,met", [(0.2 - EPS, False), (0.2, True), (0.2 + EPS, True)])
def test_spliceai_pp3_for_missense_with_neutral_revel(sai, met):
    r = run("missense_variant", revel=0.5, spliceai=sai)["PP3"]
    assert r.met is met
    if met:
        assert r.strength == "Supporting"


@pytest.mark.parametrize("sai,met", [(0.1 - EPS, True), (0.1, True), (0.1 + EPS, False)])
def test_missense_bp4_needs_spliceai_at_most_point_one(sai, met):
    # REVEL 0.1 is in the Moderate benign interval; BP4 also needs no predicted splice impact.
    r = run("missense_variant", revel=0.1, spliceai=sai)["BP4"]
    assert r.met is met
    assert r.strength == ("Moderate" if met else None)


# --- SpliceAI with synonymous and intronic variants (Walker 2023) -------------------------
@pytest.mark.parametrize("sai,bp7", [(0.1 - EPS, True), (0.1, True), (0.1 + EPS, False)])
def test_synonymous_bp7_at_point_one(sai, bp7):
    r = run("synonymous_variant", spliceai=sai)
    assert r["BP7"].met is bp7
    assert r["PP3"].met is False


@pytest.mark.parametrize("sai,met", [(0.2 - EPS, False), (0.2, True)])
def test_synonymous_pp3_at_point_two(sai, met):
    r = run("synonymous_variant", spliceai=sai)
    assert r["PP3"].met is met
    assert r["BP7"].met is False


@pytest.mark.parametrize("hgvs_c,bp7", [
    ("c.100+6A>G", False), ("c.100+7A>G", True), ("c.100+8A>G", True),
    ("c.101-20A>G", False), ("c.101-21A>G", True), ("c.101-22A>G", True),
])
def test_intronic_bp7_from_plus7_and_minus21(hgvs_c, bp7):
    r = run("intron_variant", spliceai=0.05, hgvs_c=hgvs_c)
    assert r["BP7"].met is bp7, r["BP7"].reason


def test_null_variant_gets_no_computational_criterion():  # Walker 2023 / Pejaver 2022: no double count
    r = run("stop_gained", revel=0.99, spliceai=0.9)
    assert r["PP3"].met is False and r["BP4"].met is False
