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
