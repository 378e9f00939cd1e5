"""scripts/curate_transcripts.py on small synthetic inputs (no reference data needed): the choice
between candidate CDSs by a published protein length, genes missing from the GRCh38 canonical
table, and a GRCh37 transcript on the other strand than GRCh38 (the case of RBP3 and PEX11B, whose
regions are oriented differently in the two builds), and GRCh37 exons by splice-boundary anchoring
on a GRCh37 table transcript whose exons differ (scripts/grch37_anchoring.py).

Expected values are hand-computed from the synthetic coordinates (arithmetic); c. numbering follows
HGVS (c.1 = A of the start codon, in transcript orientation; den Dunnen et al., Hum Mutat
2016;37:564-569).  The CDS rules are the script's own (docstring of refdata_tables.derive_cds).
"""
from __future__ import annotations

import importlib.util
from pathlib import Path

import pytest
import yaml

from irdtriage.transcripts import c_number, load_transcripts

ROOT = Path(__file__).resolve().parents[1]


def _script():
    spec = importlib.util.spec_from_file_location("curate_transcripts", ROOT / "scripts" / "curate_transcripts.py")
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    return mod


S = _script()

# GRCh38: plus strand, exons 100-200 and 300-400 (MANE Select span 100-400); CDS 150..350 =
# 51 + 51 = 102 nt = 33 codons + stop.  GENCODE rows: CDS parts, start codon 150-152, stop 348-350,
# 5' UTR 100-149, 3' UTR 351-400.
MANE = {"GENEX": {"chrom": "10", "start": 100, "end": 400, "strand": "+", "refseq": "NM_1.1", "ensembl": "ENST1.1",
                  "refseq_protein": "NP_1.1"}}
ROWS = {"GENEX": {"chrom": "10", "strand": "+", "cds": {(150, 200), (300, 350)}, "starts": {(150, 152)},
                  "stops": {(348, 350)}, "utr5": {(100, 149)}, "utr3": {(351, 400)}, "other_places": set()}}
GENCODE = {"GENEX": [{"start": 100, "end": 400, "strand": "+", "exons": [[100, 200], [300, 400]]},
                     {"start": 100, "end": 390, "strand": "+", "exons": [[100, 200], [300, 390]]}]}
PANEL = [{"symbol": "GENEX", "strand": "+"}]


def _t37(strand, exons0):
    """A GRCh37 canonical-table row (0-based starts, inclusive ends, as the table stores)."""
    return {"GENEX": {"chrom": "10", "strand": strand, "tx_start0": exons0[0][0], "tx_end": exons0[-1][1],
                      "exons": exons0, "line": 1}}


def test_gene_missing_from_grch38_table_takes_the_mane_span_transcript_and_a_flipped_grch37(tmp_path):
    # GRCh37 on the minus strand: exons 1000-1100 and 1200-1300 (101 nt each), so in transcript
    # order (5' = 1200-1300) the lengths are 101, 101 as on GRCh38.  CDS offsets 51 and 152 ->
    # GRCh37 1300 - 51 + 1 = 1250 (c.1) and 1100 - (152 - 101) + 1 = 1050 (stop codon's last base).
    kept, skipped = S.curate(MANE, {}, _t37("-", [(999, 1100), (1199, 1300)]), PANEL, ROWS, {}, GENCODE)
    assert skipped == []
    (e,) = kept
    assert e["grch38"] == {"chrom": "10", "cds_start": 150, "cds_end": 350, "exons": [[100, 200], [300, 400]]}
    assert e["mane_boundaries_match"] is True and e["protein_length"] == 33
    assert "not in the GENCODE-derived GRCh38 canonical table" in e["structure_note"]
    assert e["grch37"] == {"chrom": "10", "strand": "-", "cds_start": 1050, "cds_end": 1250,
                           "exons": [[1000, 1100], [1200, 1300]]}
    assert "on the - strand where GRCh38 is +" in e["grch37_note"]
    # the irdtriage loader reads it per build: c.1 and the stop codon's last base on GRCh37
    doc = {"name": "t", "version": "1", "transcripts": kept}
    p = tmp_path / "t.yaml"
    p.write_text(yaml.safe_dump(doc, sort_keys=False))
    g37 = load_transcripts(p).get("GENEX", "GRCh37")
    assert g37.strand == "-" and c_number(g37, 1250) == 1 and c_number(g37, 1050) == 102


def test_grch37_with_other_exon_lengths_is_refused_with_the_difference():
    # GRCh37 5' exon 1201-1300 is 100 nt, GRCh38's 101 nt: no GRCh37 structure, and the note says where
    kept, _ = S.curate(MANE, {}, _t37("-", [(999, 1100), (1200, 1300)]), PANEL, ROWS, {}, GENCODE)
    (e,) = kept
    assert e["grch37"] is None
    assert "on the other strand than GRCh38 (+)" in e["grch37_note"] and "exon 1 100 vs 101 nt" in e["grch37_note"]
    kept, _ = S.curate(MANE, {}, _t37("+", [(999, 1100)]), PANEL, ROWS, {}, GENCODE)
    assert "has 1 exons, the GRCh38 structure 2; splice-boundary anchoring on it refused:" in kept[0]["grch37_note"]


def test_no_single_mane_span_exon_set_is_skipped_with_the_reason():
    two = {"GENEX": GENCODE["GENEX"] + [{"start": 100, "end": 400, "strand": "+",
                                          "exons": [[100, 200], [250, 260], [300, 400]]}]}
    kept, skipped = S.curate(MANE, {}, {}, PANEL, ROWS, {}, two)
    assert kept == [] and "2 GENCODE transcripts share the MANE Select span and strand" in skipped[0]["reason"]
    assert "(2, 3 exons)" in skipped[0]["reason"]


# Two start codons (150 and 159) in one exon 100-400, one stop (348-350), no 5' UTR rows: both
# candidates tie (3' UTR row only).  Lengths: 150..350 = 201 nt -> 66 residues; 159..350 = 192 nt -> 63.
TIED = {"chrom": "10", "strand": "+", "cds": {(150, 350), (159, 350)}, "starts": {(150, 152), (159, 161)},
        "stops": {(348, 350)}, "utr5": set(), "utr3": {(351, 400)}}


def test_published_length_breaks_a_tie_only_when_exactly_one_candidate_has_it():
    cds, why = S.derive_cds([[100, 400]], "+", TIED, (100, 400))
    assert cds is None and "protein lengths 66, 63" in why
    cds, why = S.derive_cds([[100, 400]], "+", TIED, (100, 400), published_length=63)
    assert (cds["cds_start"], cds["protein_length"]) == (159, 63) and "published length" in cds["length_tie_break"]
    cds, why = S.derive_cds([[100, 400]], "+", TIED, (100, 400), published_length=64)
    assert cds is None and "the published length 64 matches none of them" in why


def test_listed_gene_whose_derived_length_differs_is_skipped():
    lengths = {"GENEX": {"symbol": "GENEX", "mane_protein": "NP_1.1", "length_aa": 34, "source": "a page",
                         "from_memory": False, "tie_to_mane_protein": "t", "note": None}}
    kept, skipped = S.curate(MANE, {}, {}, PANEL, ROWS, {}, GENCODE, lengths)
    assert kept == [] and "differs from the published length 34" in skipped[0]["reason"]
    lengths["GENEX"]["length_aa"] = 33
    kept, _ = S.curate(MANE, {}, {}, PANEL, ROWS, {}, GENCODE, lengths)
    assert kept[0]["protein_length_check"]["published_length_aa"] == 33


GOOD = """name: t
version: '1'
proteins:
- symbol: GENEX
  mane_protein: NP_1.1
  length_aa: 33
  source: a page
  from_memory: false
  tie_to_mane_protein: same accession
"""


@pytest.mark.parametrize("old,new,problem", [
    ("mane_protein: NP_1.1", "mane_protein: NP_9.1", "line 4: GENEX: mane_protein NP_9.1 is not the MANE Select"),
    ("length_aa: 33", "length_aa: null", "line 4: GENEX: a null length_aa needs a note"),
    ("length_aa: 33", "length_aa: -3", "positive integer or null"),
    ("from_memory: false", "from_memory: maybe", "from_memory must be true or false"),
    ("  tie_to_mane_protein: same accession\n", "", "each entry needs"),
])
def test_protein_length_file_problems_stop_with_file_and_line(tmp_path, old, new, problem):
    p = tmp_path / "lengths.yaml"
    p.write_text(GOOD)
    assert S.read_protein_lengths(p, MANE)["GENEX"]["length_aa"] == 33
    p.write_text(GOOD.replace(old, new))
    with pytest.raises(SystemExit) as e:
        S.read_protein_lengths(p, MANE)
    assert str(p) in str(e.value) and problem in str(e.value)


# --- GRCh37 by splice-boundary anchoring (scripts/grch37_anchoring.py) ----------------------
# Synthetic three-exon structure on GRCh38 (+): exons 100-200, 300-400, 500-600 (101 nt each);
# CDS 150..551 = 51 + 101 + 52 = 204 nt.  Expected GRCh37 values are arithmetic on these numbers.
EX38 = [[100, 200], [300, 400], [500, 600]]
CDS38 = {"cds_start": 150, "cds_end": 551}


def test_anchoring_same_orientation_with_two_offsets():
    # GRCh37 table (+): a longer first exon (5' UTR 1080-1099 more), an extra exon 1250-1260 in
    # intron 1, exons 1300-1400 (d = +1000) and 1503-1603 (d = +1003: 3 nt more in intron 2).  The
    # change of d next to the last exon is allowed because its 3' end falls on the table's 3' end.
    table = [[1080, 1200], [1250, 1260], [1300, 1400], [1503, 1603]]
    r, why = S.anchor(EX38, "+", CDS38, table, "+", "10", 204)
    assert why == ""
    assert r["block"] == {"chrom": "10", "cds_start": 1150, "cds_end": 1554,
                          "exons": [[1100, 1200], [1300, 1400], [1503, 1603]]}
    note = r["note"]
    assert "d = +1000 for exons 1-2, d = +1003 for exon 3" in note and "all 4 internal splice boundaries" in note
    assert "5' UTR start (1100) and 3' UTR end (1603) are transcript ends" in note
    assert "table exon boundaries in introns of the structure (unused): 1250, 1260" in note


def test_anchoring_refuses_a_value_change_beside_an_exon_anchored_at_one_end_only():
    # as above but the table's 3' end (1610) differs from the carried one (1603): the last exon is
    # anchored at its acceptor only, so it must share exon 2's d, which puts that acceptor on 1500
    table = [[1080, 1200], [1300, 1400], [1503, 1610]]
    r, why = S.anchor(EX38, "+", CDS38, table, "+", "10", 204)
    assert r is None
    assert "exon 3 is a terminal exon anchored at its splice boundary only" in why
    assert "5' (acceptor) boundary falls on GRCh37 1500, no table boundary of that kind" in why


def test_anchoring_flipped_orientation():
    # region inverted on GRCh37: GRCh37 = 2000 - GRCh38, transcript on the minus strand there.
    # Table (-): exons 1400-1500, 1600-1700, 1800-1930 (5' exon 30 nt longer).  Exon 1 (GRCh38
    # 100-200) -> 1800-1900, CDS 150..551 -> 1449..1850.
    table = [[1400, 1500], [1600, 1700], [1800, 1930]]
    r, why = S.anchor(EX38, "+", CDS38, table, "-", "10", 204)
    assert why == ""
    assert r["block"] == {"chrom": "10", "strand": "-", "cds_start": 1449, "cds_end": 1850,
                          "exons": [[1400, 1500], [1600, 1700], [1800, 1900]]}
    assert "c = 2000 for exons 1-3" in r["note"] and "region inverted between the builds" in r["note"]


def test_anchoring_refuses_an_unmatched_internal_boundary_with_the_reason():
    # the table's exon 2 starts 20 nt later (1320): MANE's acceptor 300 has no GRCh37 match
    table = [[1100, 1200], [1320, 1400], [1500, 1600]]
    r, why = S.anchor(EX38, "+", CDS38, table, "+", "10", 204)
    assert r is None
    assert why.startswith("exon 2 (GRCh38 300-400, 101 nt): with the neighbouring exons' offset d = 1000 its "
                          "5' (acceptor) boundary falls on GRCh37 1300, no table boundary of that kind; its 3' "
                          "(donor) boundary falls on GRCh37 1400, a table boundary of that kind")


def test_anchoring_refuses_a_cds_end_outside_the_anchored_part_of_its_exon():
    # the table's first exon is 1170-1200: the carried start codon (1150) lies 5' of it, so the
    # stretch 1150-1200 between it and the anchored donor is not one GRCh37 table exon
    table = [[1170, 1200], [1300, 1400], [1500, 1600]]
    r, why = S.anchor(EX38, "+", CDS38, table, "+", "10", 204)
    assert r is None and "start codon end lies in exon 1" in why and "GRCh37 1150-1200" in why
    # a single-exon structure has nothing to anchor
    r, why = S.anchor([[100, 600]], "+", CDS38, table, "+", "10", 402)
    assert r is None and "single-exon" in why


def test_anchoring_refuses_a_table_gap_inside_the_cds():
    # GENCODE's GRCh37 placement splits exon 2 at 1350/1352 (a gap inside the coding sequence)
    table = [[1100, 1200], [1300, 1350], [1352, 1400], [1500, 1600]]
    r, why = S.anchor(EX38, "+", CDS38, table, "+", "10", 204)
    assert r is None and "interrupted inside the CDS of carried exon 2" in why and "1350, 1352" in why
    # the same gap in the 3' UTR (exon 3 after the stop codon at 551) is allowed and said in the note
    table = [[1100, 1200], [1300, 1400], [1500, 1570], [1572, 1600]]
    r, why = S.anchor(EX38, "+", CDS38, table, "+", "10", 204)
    assert why == "" and "in UTR only" in r["note"] and "1570, 1572" in r["note"]


def test_curate_anchors_grch37_when_the_table_exon_lengths_differ(tmp_path):
    # GRCh37 table (-) with a 5' exon 1200-1320 (121 nt, GRCh38's is 101): lengths differ, so the
    # structure is anchored with c = 1400 (donor 200 -> 1200, acceptor 300 -> 1100); the 5' UTR
    # start is carried to 1300.  CDS 150..350 -> 1050..1250, as in the flipped test above.
    kept, _ = S.curate(MANE, {}, _t37("-", [(999, 1100), (1199, 1320)]), PANEL, ROWS, {}, GENCODE)
    (e,) = kept
    assert e["grch37"] == {"chrom": "10", "strand": "-", "cds_start": 1050, "cds_end": 1250,
                           "exons": [[1000, 1100], [1200, 1300]]}
    assert e["grch37_note"].startswith("GRCh37 exons by splice-boundary anchoring")
    assert "c = 1400 for exons 1-2" in e["grch37_note"] and "table transcript's own ends: 1320, 1000" in e["grch37_note"]
    doc = {"name": "t", "version": "1", "transcripts": kept}
    p = tmp_path / "t.yaml"
    p.write_text(yaml.safe_dump(doc, sort_keys=False))
    g37 = load_transcripts(p).get("GENEX", "GRCh37")
    assert g37.strand == "-" and c_number(g37, 1250) == 1 and c_number(g37, 1050) == 102
