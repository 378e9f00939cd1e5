"""Engine: all 28 criteria in order, merging of family/phenotype and curated results."""
import pytest

from irdtriage.acmg.combine import combine
from irdtriage.acmg.engine import evaluate
from irdtriage.acmg.rules import load_rules
from irdtriage.curated import load_curated
from irdtriage.errors import InputError
from irdtriage.models import ALL_CODES, Annotation, CriterionResult, Finding, Gene, Span, Variant

RULES = load_rules()
GENE = Gene("RPGRIP1", "HGNC:13436", "RPGRIP1", "NM_020366.4", "ENST", "NP", "+", Span("14", 1, 2), None,
            ("AR",), ("LOF",), (), "cilium")


def finding(term="stop_gained", exon="5/24", p="p.Arg300Ter", evidence=None):
    a = Annotation("RPGRIP1", "NM_020366.4", (term,), "c.898C>T", p, exon, is_mane=True,
                   extra={"Protein_position": "300/1286"})
    return Finding("F1", Variant("14", 20000, "C", "T"), "RPGRIP1", a, evidence=evidence or {})


def test_all_codes_in_order_with_reasons():
    res = evaluate(finding(), GENE, RULES)
    assert [r.code for r in res] == list(ALL_CODES)
    assert all(isinstance(r.reason, str) and len(r.reason.split()) >= 2 for r in res), \
        [r.code for r in res if len(str(r.reason).split()) < 2]
    by = {r.code: r for r in res}
    # stop in exon 5 of 24 of the MANE Select transcript: NMD predicted -> PVS1 Very Strong
    # (Abou Tayoun et al. 2018), and the reason names the exon it used
    assert (by["PVS1"].met, by["PVS1"].strength) == (True, "VeryStrong")
    assert "5/24" in by["PVS1"].reason and "NMD" in by["PVS1"].reason
    assert all((r.met is True) == (r.strength is not None) for r in res)


def test_missing_evidence_is_not_evaluable_not_unmet():
    res = {r.code: r for r in evaluate(finding(), GENE, RULES)}
    for code in ("PM2", "BA1", "BS1", "PS1", "PM5", "PM3", "PP4", "PS3"):
        assert res[code].met is None, code


def test_extra_fills_not_evaluable_only():
    extra = [CriterionResult("PM3", True, "Moderate", "in trans with a pathogenic variant", source="family"),
             CriterionResult("PVS1", False, None, "should not replace an evaluated criterion")]
    res = {r.code: r for r in evaluate(finding(), GENE, RULES, extra=extra)}
    assert res["PM3"].met is True and res["PM3"].source == "family"
    assert res["PVS1"].met is True  # automated result kept


def test_pvs1_pm3_pm2_is_pathogenic():
    # Richards 2015 Table 5 Pathogenic (i)(c): PVS1 + 1 Moderate + 1 Supporting
    ev = {"population": {"source": "info", "found": True, "af": 0.0, "ac": 0, "an": None, "nhomalt": None,
                         "populations": {}, "popmax_af": None}}
    extra = [CriterionResult("PM3", True, "Moderate", "in trans with a pathogenic variant", source="family")]
    c = combine(evaluate(finding(evidence=ev), GENE, RULES, extra=extra))
    assert c.classification == "Pathogenic" and c.rule.startswith("Pathogenic (i)(c)")


def test_curated_overrides_and_records_replaced(tmp_path):
    p = tmp_path / "cur.yaml"
    p.write_text("- variant: chr14-20000-C-T\n  code: PS3\n  strength: Strong\n"
                 "  reason: RNA assay shows loss of function\n  citation: PMID:00000000\n"
                 "- {variant: 14-20000-C-T, code: PP5, strength: Supporting, reason: lab report, citation: LAB-1}\n")
    cur = load_curated(p)
    assert list(cur) == ["14-20000-C-T"]
    res = {r.code: r for r in evaluate(finding(), GENE, RULES, curated=cur["14-20000-C-T"])}
    assert res["PS3"].met and res["PS3"].source == "curated" and "PMID:00000000" in res["PS3"].reason
    assert "replaced" in res["PS3"].evidence
    assert "recommends against" in res["PP5"].reason


def test_curated_tsv_and_errors(tmp_path):
    t = tmp_path / "cur.tsv"
    t.write_text("variant\tcode\tstrength\treason\tcitation\n14-20000-C-T\tBS3\tStrong\tnormal assay\tPMID:1\n"
                 "14-20000-C-T\tPS9\tStrong\tx\ty\n")
    with pytest.raises(InputError) as e:
        load_curated(t)
    assert e.value.line == 3 and "PS9" in e.value.problem
    y = tmp_path / "bad.yaml"
    y.write_text("- variant: 14-20000-C-T\n  code: PS3\n  strength: Strong\n  reason: ok\n  citation: x\n"
                 "- variant: 14:20000\n  code: PS3\n  strength: Strong\n  reason: ok\n  citation: x\n")
    with pytest.raises(InputError) as e:
        load_curated(y)
    assert e.value.line == 6
    z = tmp_path / "sa.yaml"
    z.write_text("- {variant: 1-5-A-G, code: PS3, strength: StandAlone, reason: r, citation: c}\n")
    with pytest.raises(InputError):
        load_curated(z)
    d = tmp_path / "dup.yaml"
    d.write_text("- {variant: 1-5-A-G, code: PS3, strength: Strong, reason: r, citation: c}\n"
                 "- {variant: 1-5-A-G, code: PS3, strength: Moderate, reason: r, citation: c}\n")
    with pytest.raises(InputError) as e:
        load_curated(d)
    assert e.value.line == 2


def test_unknown_extra_code_rejected():
    with pytest.raises(ValueError):
        evaluate(finding(), GENE, RULES, extra=[CriterionResult("XX1", True, "Strong")])
