"""PP3 / BP4 / BP7 thresholds.

* REVEL intervals: Pejaver et al., Am J Hum Genet 2022;109:2163-2177, Table 2
  (PP3 Supporting [0.644, 0.773), Moderate [0.773, 0.932), Strong >= 0.932;
  BP4 Supporting (0.183, 0.290], Moderate (0.016, 0.183], Strong <= 0.016 here, the Very Strong
  interval <= 0.003 being capped at Strong).
* SpliceAI: Walker et al., Am J Hum Genet 2023;110:1046-1067 (>= 0.2 PP3, <= 0.1 BP4/BP7).
* PP3 + PM1 at most Strong: Pejaver et al. 2022 recommendations.
"""
import pytest

from irdtriage.acmg.engine import evaluate
from irdtriage.acmg.insilico import evaluate_insilico
from irdtriage.acmg.rules import load_rules
from irdtriage.models import Annotation, Finding, Gene, Span, Variant

RULES = load_rules()


def ann(term="missense_variant", c="c.886A>G", p="p.Lys296Glu", gene="RHO", ppos="296/348"):
    return Annotation(gene, "NM_000539.3", (term,), c, p, "4/5", is_mane=True,
                      extra={"Protein_position": ppos} if ppos else {})


def crit(a, **ev):
    return {r.code: r for r in evaluate_insilico(a, RULES, ev)}


@pytest.mark.parametrize("revel,pp3", [
    (0.643, None), (0.644, "Supporting"), (0.772, "Supporting"), (0.773, "Moderate"),
    (0.931, "Moderate"), (0.932, "Strong"), (0.999, "Strong"),
])
def test_revel_pp3(revel, pp3):  # Pejaver 2022 Table 2, REVEL row
    r = crit(ann(), revel=revel)["PP3"]
    assert (r.strength if r.met else None) == pp3


@pytest.mark.parametrize("revel,bp4", [
    (0.291, None), (0.290, "Supporting"), (0.184, "Supporting"), (0.183, "Moderate"),
    (0.017, "Moderate"), (0.016, "Strong"), (0.003, "Strong"), (0.0, "Strong"),
])
def test_revel_bp4(revel, bp4):  # Pejaver 2022 Table 2, REVEL row (Very Strong capped at Strong)
    r = crit(ann(), revel=revel)["BP4"]
    assert (r.strength if r.met else None) == bp4


def test_indeterminate_revel_gives_neither():  # Pejaver 2022: (0.290, 0.644) is no evidence
    res = crit(ann(), revel=0.5)
    assert res["PP3"].met is False and res["BP4"].met is False


@pytest.mark.parametrize("ds,pp3,bp7", [(0.2, True, False), (0.19, False, False), (0.1, False, True),
                                        (0.0, False, True), (0.11, False, False)])
def test_spliceai_synonymous(ds, pp3, bp7):  # Walker 2023: >= 0.2 PP3, <= 0.1 BP7
    res = crit(ann("synonymous_variant", "c.888G>A", "p.Lys296="), spliceai_max=ds)
    assert res["PP3"].met is pp3
    assert res["BP7"].met is bp7
    if bp7:
        assert res["BP4"].met is False  # not counted twice


def test_deep_intronic_bp7_and_near_intronic_bp4():  # Walker 2023 (+7/-21 positions from memory)
    deep = crit(ann("intron_variant", "c.100+30A>G", "", ppos=""), spliceai_max=0.01)
    assert deep["BP7"].met is True
    near = crit(ann("intron_variant", "c.100+4A>G", "", ppos=""), spliceai_max=0.01)
    assert near["BP7"].met is False and near["BP4"].met is True


def test_missense_bp4_requires_no_splice_effect():  # Walker 2023 with Pejaver 2022
    res = crit(ann(), revel=0.1, spliceai_max=0.5)
    assert res["BP4"].met is False
    assert res["PP3"].met is True and res["PP3"].strength == "Supporting"


def test_missing_scores_not_evaluable():
    res = crit(ann())
    assert res["PP3"].met is None and res["BP4"].met is None


def test_null_variant_no_pp3():
    res = crit(ann("stop_gained", "c.1A>T", "p.Lys2Ter"), revel=0.99, spliceai_max=0.9)
    assert res["PP3"].met is False


def test_pp3_pm1_cap():  # Pejaver 2022: PP3 + PM1 no more than Strong
    g = Gene("RHO", "HGNC:10012", "rhodopsin", "NM_000539.3", "ENST", "NP", "+", Span("3", 1, 2), None,
             ("AD", "AR"), ("LOF", "GOF", "DN"), (), "step")
    f = Finding("F1", Variant("3", 129532000, "A", "G"), "RHO", ann(), evidence={"revel": 0.95, "population": None})
    res = {r.code: r for r in evaluate(f, g, RULES)}
    assert res["PM1"].met and res["PM1"].strength == "Moderate"  # RHO Lys296 curated (from memory)
    assert res["PP3"].met and res["PP3"].strength == "Moderate"
    assert res["PP3"].evidence["capped_from"] == "Strong"
    # outside the hotspot PP3 keeps Strong
    f2 = Finding("F2", Variant("3", 1, "A", "G"), "RHO", ann(p="p.Pro23His", ppos="23/348"),
                 evidence={"revel": 0.95, "population": None})
    res2 = {r.code: r for r in evaluate(f2, g, RULES)}
    assert res2["PM1"].met is False and res2["PP3"].strength == "Strong"
