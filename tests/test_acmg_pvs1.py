"""PVS1 outcomes along the ClinGen SVI decision tree.

Source: Abou Tayoun et al., Hum Mutat 2018;39:1517-1524 (PVS1 decision tree, Figure 1):
nonsense/frameshift with NMD predicted -> PVS1 (Very Strong); NMD not predicted (last exon,
or last 50 nt of the penultimate exon) -> PVS1_Strong when the truncated region is critical
or > 10 % of the protein is removed, else PVS1_Moderate; initiation codon -> PVS1_Moderate
at most; canonical splice without a known outcome -> conservative branch.  The ">10 % of the
protein" rule is quoted in Walker et al., Am J Hum Genet 2023 (Table 1).  Loss of function
must be a disease mechanism of the gene (Richards 2015, PVS1 definition).
"""
import pytest

from irdtriage.acmg.pvs1 import evaluate_pvs1
from irdtriage.acmg.rules import load_rules
from irdtriage.models import Annotation, Gene, Span

RULES = load_rules()


def gene(symbol="RPGRIP1", inheritance=("AR",), mechanisms=("LOF",)):
    return Gene(symbol, "HGNC:0", symbol, "NM_0.1", "ENST0.1", "NP_0.1", "+", Span("14", 1, 2), None,
                inheritance, mechanisms, (), "step")


def ann(term, exon="", p="", ppos="", mane=True, c="c.100C>T"):
    extra = {"Protein_position": ppos} if ppos else {}
    return Annotation("RPGRIP1", "NM_0.1", (term,), c, p, exon, is_mane=mane, extra=extra)


def test_nmd_predicted_is_very_strong():  # SVI tree: NMD predicted, relevant transcript -> PVS1
    r = evaluate_pvs1(ann("stop_gained", "5/24", "p.Arg300Ter", "300/1286"), gene(), RULES)
    assert (r.met, r.strength) == (True, "VeryStrong")
    assert "exon 5/24" in r.reason


def test_frameshift_nmd_predicted():
    r = evaluate_pvs1(ann("frameshift_variant", "3/24", "p.Gly100AlafsTer5", "100/1286"), gene(), RULES)
    assert (r.met, r.strength) == (True, "VeryStrong")


def test_not_mane_is_strong():  # SVI tree: exon relevance in the biologically relevant transcript
    r = evaluate_pvs1(ann("stop_gained", "5/24", "p.Arg300Ter", "300/1286", mane=False), gene(), RULES)
    assert r.strength == "Strong"


def test_last_exon_more_than_10_percent_is_strong():  # SVI tree: NMD escape, >10 % removed -> Strong
    r = evaluate_pvs1(ann("stop_gained", "24/24", "p.Arg1100Ter", "1100/1286"), gene(), RULES)
    assert (r.met, r.strength) == (True, "Strong")
    assert r.evidence["nmd_predicted"] is False


@pytest.mark.parametrize("pos,strength", [
    (1157, "Strong"),    # removes 130/1286 = 10.1 %
    (1158, "Strong"),    # removes 129/1286 = 10.03 % -> still > 10 %
    (1159, "Moderate"),  # removes 128/1286 = 9.95 %
])
def test_ten_percent_boundary(pos, strength):  # SVI tree: "> 10 % of protein"
    r = evaluate_pvs1(ann("stop_gained", "24/24", f"p.Arg{pos}Ter", f"{pos}/1286"), gene(), RULES)
    assert r.strength == strength


def test_exactly_ten_percent_is_moderate():  # "> 10 %" is strict
    r = evaluate_pvs1(ann("stop_gained", "10/10", "p.Arg901Ter", "901/1000"), gene(), RULES)
    assert r.evidence["removed_fraction"] == pytest.approx(0.10)
    assert r.strength == "Moderate"


def test_last_exon_small_truncation_is_moderate():  # SVI tree: NMD escape, <=10 %, not critical
    r = evaluate_pvs1(ann("stop_gained", "24/24", "p.Arg1280Ter", "1280/1286"), gene(), RULES)
    assert (r.met, r.strength) == (True, "Moderate")


def test_penultimate_exon_is_treated_conservatively():  # 50-nt rule needs exon end: conservative
    r = evaluate_pvs1(ann("stop_gained", "23/24", "p.Arg1200Ter", "1200/1286"), gene(), RULES)
    assert r.strength == "Moderate"
    assert "penultimate" in r.reason and r.evidence["nmd_predicted"] is None


def test_exon_unknown_uses_conservative_branch():
    r = evaluate_pvs1(ann("stop_gained", "", "p.Arg300Ter", "300/1286"), gene(), RULES)
    assert (r.met, r.strength) == (True, "Strong")
    assert "exon number not annotated" in r.reason


def test_exon_and_length_unknown_is_moderate():
    r = evaluate_pvs1(ann("frameshift_variant", "", "p.Gly100fs"), gene(), RULES)
    assert (r.met, r.strength) == (True, "Moderate")


def test_canonical_splice_conservative():  # SVI tree splice branch without transcript model
    r = evaluate_pvs1(ann("splice_donor_variant", c="c.100+1G>A"), gene(), RULES)
    assert (r.met, r.strength) == (True, "Moderate")
    assert "conservative" in r.reason


def test_start_lost_moderate():  # SVI tree: initiation codon -> PVS1_Moderate at most
    r = evaluate_pvs1(ann("start_lost", p="p.Met1?"), gene(), RULES)
    assert (r.met, r.strength) == (True, "Moderate")


def test_whole_transcript_deletion():
    r = evaluate_pvs1(ann("transcript_ablation"), gene(), RULES)
    assert r.strength == "VeryStrong"


def test_gof_only_gene_not_applied():  # Richards 2015: PVS1 needs LOF as a known mechanism
    r = evaluate_pvs1(ann("stop_gained", "5/24", "p.Arg300Ter"), gene(inheritance=("AD",), mechanisms=("GOF",)),
                      RULES)
    assert r.met is False and "not an established" in r.reason


def test_mixed_mechanism_gene_applied_with_note():  # RHO: AR loss of function, AD gain of function
    g = gene("RHO", inheritance=("AD", "AR"), mechanisms=("LOF", "GOF", "DN"))
    r = evaluate_pvs1(ann("stop_gained", "2/5", "p.Gln64Ter", "64/348"), g, RULES)
    assert r.met and "recessive mechanism" in r.reason


def test_missense_not_null():
    r = evaluate_pvs1(ann("missense_variant", "2/5", "p.Lys296Glu"), gene(), RULES)
    assert r.met is False
