"""PVS1 for deletions and duplications and the Riggs 2020 points (irdtriage.sv.overlap + classify) on the
panel's real transcript structures, GRCh37.

Sources, named beside each check:
* Abou Tayoun et al., Hum Mutat 2018;39:1517-1524, Figure 1 (deletion branch: full gene deletion
  PVS1; exon deletion out of frame with NMD PVS1; in frame or no NMD: > 10 % of the protein
  PVS1_Strong, else PVS1_Moderate; duplication branch: proven in tandem, out of frame, NMD PVS1;
  presumed in tandem PVS1_Strong; otherwise N/A).
* Riggs et al., Genet Med 2020;22:245-257, Table 1 (copy-number loss): 1A 0, 1B -0.60, 2A 1.00; class
  cut-offs in the table header: Pathogenic >= 0.99, Likely pathogenic 0.90 to 0.98, uncertain 0.89 to
  -0.89, Likely benign -0.90 to -0.98, Benign <= -0.99.
* Exon coordinates: GENCODE-derived canonical transcript table for GRCh37 (spliceai 1.3.1), 0-based
  starts shown +1: ABCA4 (minus strand) exon 6 94,564,350-94,564,547 (198 nt), exon 7
  94,548,908-94,548,997 (90 nt), exon 8 94,546,034-94,546,274 (241 nt), exon 9 94,544,878-94,545,017
  (140 nt), exon 10 94,544,146-94,544,262 (117 nt), exon 11 94,543,246-94,543,443 (198 nt), exon 12
  94,528,668-94,528,873 (206 nt), exon 13 94,528,133-94,528,309 (177 nt); transcript
  94,458,393-94,586,688.  ABCA4 protein 2,273 residues (UniProt P78363), so the CDS is 6,822 nt with
  the stop codon.  PRPF31 chr19:54,618,837-54,635,140 (plus strand); GUCA1A chr6:42,123,174-42,147,794.
"""
from __future__ import annotations

import pytest

from irdtriage.panel import load_panel
from irdtriage.sv.classify import criteria, riggs_class, riggs_points
from irdtriage.sv.overlap import gene_overlap

PANEL = load_panel()
B = "GRCh37"


def _assess(svtype, start, end, gene, tandem=None):
    g = PANEL.genes[gene]
    o = gene_overlap(svtype, start, end, g, B)
    crit = criteria(svtype, tandem, o, g)
    return o, crit["PVS1"], riggs_points(svtype, o, g, crit["PVS1"])


def test_in_frame_single_exon_deletion_of_little_protein_is_moderate():
    # exon 7 only: 90 nt, a multiple of 3; 90 / 6822 = 1.3 % of the coding sequence
    o, pvs1, _ = _assess("DEL", 94548500, 94549500, "ABCA4")
    assert o.exons == (7,) and o.frame == "in frame" and o.coding_nt == 90
    assert pvs1.met and pvs1.strength == "Moderate"


def test_in_frame_multi_exon_deletion_of_over_ten_percent_is_strong():
    # exons 7-11: 90 + 241 + 140 + 117 + 198 = 786 nt = 262 codons, 11.5 % of 6822 nt
    o, pvs1, _ = _assess("DEL", 94543000, 94549500, "ABCA4")
    assert o.exons == (7, 8, 9, 10, 11) and o.coding_nt == 786 and o.frame == "in frame"
    assert pvs1.met and pvs1.strength == "Strong"


def test_out_of_frame_multi_exon_deletion_with_nmd_is_very_strong():
    # exons 6-13: 1367 nt, not a multiple of 3; the shift starts in exon 14 of 50
    o, pvs1, riggs = _assess("DEL", 94527001, 94566000, "ABCA4")
    assert o.exons == tuple(range(6, 14)) and o.coding_nt == 1367
    assert o.frame == "out of frame" and o.nmd is True
    assert pvs1.met and pvs1.strength == "VeryStrong"
    # ABCA4 is recessive, not haploinsufficient: Riggs section 2 does not apply; 1A is 0
    assert riggs["sections"][0]["section"] == "1A" and riggs["total"] == 0.0
    assert riggs["classification"] == "Uncertain significance"


def test_tandem_duplication_called_or_presumed():
    _, called, _ = _assess("DUP", 94527001, 94566000, "ABCA4", tandem=True)
    _, presumed, _ = _assess("DUP", 94527001, 94566000, "ABCA4", tandem=None)
    assert called.met and called.strength == "VeryStrong"
    assert presumed.met and presumed.strength == "Strong"


def test_duplications_that_do_not_disrupt_the_gene_get_no_pvs1():
    _, whole, _ = _assess("DUP", 94450000, 94600000, "ABCA4")
    _, in_frame, _ = _assess("DUP", 94548500, 94549500, "ABCA4")  # exon 7, 90 nt
    _, past_end, _ = _assess("DUP", 94527001, 94600000, "ABCA4")  # reaches beyond the gene's 5' end
    assert whole.met is False and in_frame.met is False and past_end.met is False


def test_whole_gene_deletion_of_a_haploinsufficient_gene_scores_riggs_2a():
    o, pvs1, riggs = _assess("DEL", 54610000, 54640000, "PRPF31")
    assert o.extent == "whole gene" and pvs1.met and pvs1.strength == "VeryStrong"
    by = {s["section"]: s["points"] for s in riggs["sections"]}
    assert by["1A"] == 0.0 and by["2A"] == 1.00
    assert riggs["total"] == 1.0 and riggs["classification"] == "Pathogenic"


def test_no_pvs1_where_loss_of_function_is_not_the_mechanism():
    # GUCA1A: dominant gain of function in the panel (no retinal LOF mode)
    _, pvs1, _ = _assess("DEL", 42120000, 42150000, "GUCA1A")
    assert pvs1.met is False and "not applied" in pvs1.reason


@pytest.mark.parametrize("total,cls", [
    (1.0, "Pathogenic"), (0.99, "Pathogenic"), (0.98, "Likely pathogenic"), (0.90, "Likely pathogenic"),
    (0.89, "Uncertain significance"), (0.0, "Uncertain significance"), (-0.89, "Uncertain significance"),
    (-0.90, "Likely benign"), (-0.98, "Likely benign"), (-0.99, "Benign"), (-1.2, "Benign"),
])
def test_riggs_class_cut_offs(total, cls):
    assert riggs_class(total) == cls


# ---------------------------------------------------------------------------------------------
# Riggs et al. 2020 sections 3-5.  Table 1 (loss) section 3: 3A 0-24 genes 0, 3B 25-34 genes 0.45,
# 3C 35+ genes 0.90; Table 2 (gain): 3A 0-34 genes 0, 3B 35-49 genes 0.45, 3C 50+ genes 0.90.
# Section 4 of both tables: "skip to section 5" when section 2 scored an established
# haploinsufficient (loss) / triplosensitive (gain) gene.  Section 5 suggested points: 5B -0.30
# (inherited from an apparently unaffected parent, specific phenotype), 5C -0.15 (nonspecific),
# 5D = 4F-4H (3-4 segregations 0.15, 5-6 0.30, 7+ 0.45), 5E = 4I (-0.45 per family), 5F 0.
# Table 2, 2I: PVS1 0.90, PVS1_Strong 0.45, N/A 0 (no Moderate/Supporting categories for gains).
from irdtriage.models import Call  # noqa: E402


def _section(riggs, prefix):
    return [s for s in riggs["sections"] if s["section"].startswith(prefix)]


@pytest.mark.parametrize("count,code,points", [(1, "3A", 0.0), (24, "3A", 0.0), (25, "3B", 0.45), (34, "3B", 0.45),
                                               (35, "3C", 0.90)])
def test_section_3_bands_for_losses(count, code, points):
    g = PANEL.genes["ABCA4"]
    o = gene_overlap("DEL", 94527001, 94566000, g, B)
    riggs = riggs_points("DEL", o, g, criteria("DEL", None, o, g)["PVS1"], gene_count=count)
    (s3,) = _section(riggs, "3")
    assert (s3["section"], s3["points"]) == (code, points)


@pytest.mark.parametrize("count,code", [(34, "3A"), (35, "3B"), (49, "3B"), (50, "3C")])
def test_section_3_bands_for_gains(count, code):
    g = PANEL.genes["ABCA4"]
    o = gene_overlap("DUP", 94527001, 94566000, g, B)
    riggs = riggs_points("DUP", o, g, criteria("DUP", None, o, g)["PVS1"], gene_count=count)
    assert _section(riggs, "3")[0]["section"] == code


def test_section_4_skipped_after_an_established_hi_gene_else_not_evaluable():
    _, _, prpf31 = _assess("DEL", 54610000, 54640000, "PRPF31")
    _, _, abca4 = _assess("DEL", 94527001, 94566000, "ABCA4")
    assert "skipped" in _section(prpf31, "4")[0]["reason"]
    assert "not evaluable without case literature" in _section(abca4, "4")[0]["reason"]


def _call(sample, gt, zyg):
    return Call(sample, gt, zygosity=zyg)


def _family(gene, calls, affected, specific=True):
    from irdtriage.sv.classify import riggs_family

    g = PANEL.genes[gene]
    start, end = (54610000, 54640000) if gene == "PRPF31" else (94527001, 94566000)
    o = gene_overlap("DEL", start, end, g, B)
    riggs = riggs_points("DEL", o, g, criteria("DEL", None, o, g)["PVS1"])
    return riggs_family(riggs, g, calls, "KID", "MUM", "DAD", affected, specific)


def test_section_5_loss_of_an_hi_gene_from_an_unaffected_parent():
    calls = {"KID": _call("KID", (0, 1), "heterozygous"), "MUM": _call("MUM", (0, 1), "heterozygous"),
             "DAD": _call("DAD", (0, 0), "homozygous reference")}
    riggs = _family("PRPF31", calls, {"KID": True, "MUM": False, "DAD": False})
    (s5,) = _section(riggs, "5")
    assert (s5["section"], s5["points"]) == ("5B", -0.30)
    # 2A 1.00 + 5B -0.30 = 0.70: uncertain significance (Table 1 header cut-offs)
    assert riggs["total"] == 0.7 and riggs["classification"] == "Uncertain significance"
    riggs = _family("PRPF31", calls, {"KID": True, "MUM": False, "DAD": False}, specific=False)
    assert _section(riggs, "5")[0]["points"] == -0.15  # 5C


def test_section_5_carrier_parent_of_a_recessive_gene_is_not_penalised():
    calls = {"KID": _call("KID", (0, 1), "heterozygous"), "MUM": _call("MUM", (0, 1), "heterozygous"),
             "DAD": _call("DAD", (0, 0), "homozygous reference")}
    riggs = _family("ABCA4", calls, {"KID": True, "MUM": False, "DAD": False})
    (s5,) = _section(riggs, "5")
    assert s5["section"] == "5B" and s5["points"] == 0.0 and "recessive" in s5["reason"]


def test_section_5_de_novo_segregation_and_no_information():
    kid = _call("KID", (0, 1), "heterozygous")
    ref = lambda s: _call(s, (0, 0), "homozygous reference")  # noqa: E731
    het = lambda s: _call(s, (0, 1), "heterozygous")  # noqa: E731
    de_novo = _family("PRPF31", {"KID": kid, "MUM": ref("MUM"), "DAD": ref("DAD")}, {})
    assert [s["section"] for s in _section(de_novo, "5")] == ["5A"]
    assert _section(de_novo, "5")[0]["points"] == 0.0  # 4A-4D need reported cases
    # affected father and three affected relatives carry it: 4 segregations -> 4F 0.15
    calls = {"KID": kid, "MUM": ref("MUM"), "DAD": het("DAD"), "S1": het("S1"), "S2": het("S2"), "S3": het("S3")}
    seg = _family("PRPF31", calls, {"DAD": True, "S1": True, "S2": True, "S3": True, "MUM": False})
    (s5d,) = [s for s in _section(seg, "5") if s["section"] == "5D"]
    assert s5d["points"] == 0.15
    # an affected sibling without it: 4I -0.45
    nonseg = _family("PRPF31", {"KID": kid, "SIB": ref("SIB")}, {"SIB": True})
    assert [(s["section"], s["points"]) for s in _section(nonseg, "5")] == [("5E", -0.45)]
    alone = _family("PRPF31", {"KID": kid}, {})
    assert [(s["section"], s["points"]) for s in _section(alone, "5")] == [("5F", 0.0)]


def test_gain_2i_has_no_moderate_points():
    # ABCA4 exon 7 duplicated in frame: PVS1 not met; the table's 2I values for Moderate are 0
    from irdtriage.sv.settings import load_settings

    t = load_settings()["riggs"]["gain"]["2I"]
    assert (t["VeryStrong"], t["Strong"], t["Moderate"], t["Supporting"]) == (0.90, 0.45, 0.0, 0.0)


# ---------------------------------------------------------------------------------------------
# Breakpoints of rearrangements (PVS1 as a reasoned call, see irdtriage.sv.classify.pvs1_breakend)
def test_breakpoint_in_an_abca4_intron_disrupts_the_gene():
    from irdtriage.sv.classify import pvs1_breakend
    from irdtriage.sv.overlap import breakend_overlap

    g = PANEL.genes["ABCA4"]
    # intron 13 lies between exon 14 (ends 94,526,315) and exon 13 (starts 94,528,133), minus strand;
    # exons 14-50 lie 3' of it: c.1938 onwards of 6,822 nt, 71.6 % of the coding sequence
    o = breakend_overlap(94527500, g, B, "translocation junction with chr19:1000000")
    assert o.extent == "breakpoint" and o.introns == (13,) and o.in_cds
    assert abs(o.protein_fraction - (6822 - 1937) / 6822) < 0.001
    assert "breakpoint within intron 13 of ABCA4" in o.words
    p = pvs1_breakend(o, g)
    assert p.met and p.strength == "Strong" and "reasoned call" in p.reason
    # GUCA1A: loss of function is not its retinal mechanism in the panel
    o2 = breakend_overlap(42140000, PANEL.genes["GUCA1A"], B, "inversion junction")
    assert pvs1_breakend(o2, PANEL.genes["GUCA1A"]).met is False
