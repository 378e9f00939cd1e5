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


# --- Protein length and exon structure from the panel when the annotation lacks them ----------
# RS1 (X-linked retinoschisis), MANE Select NM_000330.4 / NP_000321.1, minus strand.  Exons on
# GRCh38 from LRG_702 (transcript NM_000330.3, the same protein NP_000321.1, 224 residues), placed
# by that record's GRCh38 mapping: exon 1 chrX:18672017-18672103, 2 :18657640-18657665,
# 3 :18656653-18656758, 4 :18647191-18647332, 5 :18644430-18644625, 6 (last) :18639688-18642156.
# Expected outcomes: Abou Tayoun et al. 2018, Figure 1 (NMD predicted -> PVS1; NMD escape with
# > 10 % of the protein removed -> PVS1_Strong, else PVS1_Moderate); 50-nt rule from the same paper.
from irdtriage.models import Variant  # noqa: E402


def _rs1():
    return Gene("RS1", "HGNC:10457", "retinoschisin 1", "NM_000330.4", "ENST00000379984.4", "NP_000321.1", "-",
                Span("X", 18639688, 18672108), None, ("XLR",), ("LOF",), (), "step")


def _rs1_stop(pos_text, transcript="NM_000330.4", mane=True):
    # the usual CSQ form: Protein_position without "/length", no EXON field
    return Annotation("RS1", transcript, ("stop_gained",), "c.?", "p.(Trp?Ter)", "", is_mane=mane,
                      extra={"Protein_position": pos_text})


def test_mid_gene_stop_without_length_or_exon_is_very_strong():  # Figure 1: NMD predicted -> PVS1
    # 18656700 is c.137 (residue 46) on the panel structure; an annotated residue far from it would
    # mean another transcript (tests/test_pvs1_structure.py)
    r = evaluate_pvs1(_rs1_stop("46"), _rs1(), RULES, Variant("X", 18656700, "C", "T"), "GRCh38")
    assert (r.met, r.strength) == (True, "VeryStrong")
    assert r.evidence["transcript_model"]["exon_number"] == 3
    assert r.evidence["nmd_predicted"] is True


@pytest.mark.parametrize("residue,strength", [
    ("200", "Strong"),    # last exon, removes 25/224 = 11.2 % > 10 %
    ("210", "Moderate"),  # last exon, removes 15/224 = 6.7 %
])
def test_last_exon_share_uses_panel_protein_length(residue, strength):
    r = evaluate_pvs1(_rs1_stop(residue), _rs1(), RULES, Variant("X", 18641900, "C", "T"), "GRCh38")
    assert r.evidence["nmd_predicted"] is False
    assert r.evidence["protein_length"] == 224  # LRG_702 translation p1
    assert "LRG_702" in r.evidence["protein_length_source"]
    assert r.strength == strength


@pytest.mark.parametrize("offset,residue,nmd,strength", [
    # with the CDS known the stop codon's own 3' base is measured (no codon slack needed):
    (52, "157", True, "VeryStrong"),  # c.470; codon 157 ends at c.471 = 18644481, 52 nt before the junction
    (48, "158", False, "Strong"),     # c.474 ends codon 158, 49 nt (<= 50): escapes NMD; 67/224 = 30 % removed
])
def test_penultimate_exon_last_50_nt(offset, residue, nmd, strength):
    # exon 5's 3' end (transcript orientation) is its lowest coordinate, 18644430, on the minus strand
    r = evaluate_pvs1(_rs1_stop(residue), _rs1(), RULES, Variant("X", 18644430 + offset, "C", "T"), "GRCh38")
    assert r.evidence["transcript_model"]["exon_number"] == 5
    assert r.evidence["nmd_predicted"] is nmd
    assert r.strength == strength


def test_panel_length_not_used_for_another_transcript():
    r = evaluate_pvs1(_rs1_stop("200", transcript="NM_999999.1", mane=False), _rs1(), RULES,
                      Variant("X", 18641900, "C", "T"), "GRCh38")
    assert r.evidence["protein_length"] is None and r.strength == "Moderate"
    assert "neither MANE Select" in r.evidence["protein_length_note"]


def test_annotated_length_wins_over_panel():
    r = evaluate_pvs1(_rs1_stop("200/210"), _rs1(), RULES, Variant("X", 18641900, "C", "T"), "GRCh38")
    assert r.evidence["protein_length"] == 210 and r.evidence["protein_length_source"] == "Protein_position"
    assert r.strength == "Moderate"  # 11/210 = 5.2 % removed (with the panel's 224 it would be 11.2 %)
