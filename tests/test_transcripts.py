"""Transcript exon model (irdtriage.transcripts) and its use by PVS1.

Sources beside each check:
* 50-nt rule: Abou Tayoun et al., Hum Mutat 2018;39:1517-1524 - a premature stop in the last
  exon or in the 3'-most 50 nt of the penultimate exon is not predicted to trigger NMD.
* The packaged panels/transcripts.yaml exons are copied from the GENCODE-derived canonical
  tables (PyPI spliceai 1.3.1) for genes whose transcript ends equal the MANE v1.5 Select span;
  tests/external/test_transcripts_refdata.py re-derives the file from those tables.
  MKKS on the minus strand (MANE v1.5: chr20 10,401,009-10,434,222, "-"), 6 exons in that table.
* Positions and distances below are hand-computed from those exon coordinates (arithmetic).
"""
import pytest

from irdtriage.acmg.engine import evaluate
from irdtriage.acmg.pvs1 import evaluate_pvs1
from irdtriage.acmg.rules import load_rules
from irdtriage.errors import InputError
from irdtriage.models import Annotation, Finding, Gene, Span, Variant
from irdtriage.transcripts import Transcript, load_transcripts, locate, locate_in, nmd_predicted

RULES = load_rules()
MODEL = load_transcripts()
# transcript order for MKKS (- strand): exon 1 = [10434108, 10434222] ... exon 6 = [10401009, 10405687]
MKKS = MODEL.get("MKKS", "GRCh38")


def test_packaged_model_loads_and_is_mane_bounded():
    assert MKKS is not None and MKKS.strand == "-" and MKKS.exon_count == 6
    assert (MKKS.exons[0][0], MKKS.exons[-1][1]) == (10401009, 10434222)  # MANE v1.5 MKKS span
    assert MKKS.refseq == "NM_170784.3"


def test_locate_minus_strand_orientation():
    first = locate("MKKS", "GRCh38", 10434222)  # 5'-most base of the transcript
    assert first.exon_number == 1 and first.in_exon and first.nt_to_exon_end == 115  # 10434222-10434108+1
    last = locate("MKKS", "GRCh38", 10401009)
    assert last.exon_number == 6 and last.distance_to_last_junction_nt is None
    # penultimate exon (5) is [10407616, 10407726]; its 3' end on the minus strand is 10407616
    assert locate("MKKS", "GRCh38", 10407616).distance_to_last_junction_nt == 1
    assert locate("MKKS", "GRCh38", 10407726).distance_to_last_junction_nt == 111
    # exon 4 [10408628, 10408803]: distance adds the whole penultimate exon (111 nt)
    assert locate("MKKS", "GRCh38", 10408628).distance_to_last_junction_nt == 1 + 111
    intr = locate("MKKS", "GRCh38", 10407000)  # between exons 6 and 5 in transcript order
    assert (intr.in_exon, intr.intron_number, intr.exon_number) == (False, 5, None)
    assert locate("MKKS", "GRCh38", 10400000) is None and locate("MKKS", "GRCh37", 10401009) is not None
    assert locate("NOSUCHGENE", "GRCh38", 1) is None


def test_fifty_nt_rule_boundary():  # Abou Tayoun 2018: last 50 nt of the penultimate exon escape NMD
    tx = Transcript("T", "GRCh38", "1", "+", ((100, 199), (300, 499), (600, 800)))
    # penultimate exon 2 ends at 499; a stop needs > 50 nt (+2 nt codon slack) before the junction
    assert nmd_predicted(locate_in(tx, 499 - 52), "stop")[0] is True     # 53 nt -> 51 after slack
    assert nmd_predicted(locate_in(tx, 499 - 51), "stop")[0] is False    # 52 nt -> 50
    assert nmd_predicted(locate_in(tx, 700), "stop")[0] is False          # last exon
    assert nmd_predicted(locate_in(tx, 150), "stop")[0] is True           # exon 1: 50 + 200 nt
    assert nmd_predicted(locate_in(tx, 250), "stop")[0] is None           # intronic: no stop position
    # frameshift: new stop downstream; fsTer20 moves it ~60 nt 3'
    assert nmd_predicted(locate_in(tx, 380), "frameshift", 20)[0] is True    # 120 - 60 - 2 = 58 > 50
    assert nmd_predicted(locate_in(tx, 400), "frameshift", 20)[0] is False   # 100 - 62 = 38
    # unknown new stop: penultimate exon not claimed, earlier exon claimed by the exon rule
    assert nmd_predicted(locate_in(tx, 300), "frameshift")[0] is None
    ok, why = nmd_predicted(locate_in(tx, 150), "frameshift")
    assert ok is True and "unknown distance" in why


def _mkks_gene():
    return Gene("MKKS", "HGNC:7108", "MKKS", "NM_170784.3", "", "", "-", Span("20", 10401009, 10434222), None,
                ("AR",), ("LOF",), (), "x")


def test_pvs1_uses_model_when_exon_not_annotated():  # decision tree with NMD from the model
    # 10408700 is c.1089 (residue 363) on the panel structure
    a = Annotation("MKKS", "NM_170784.3", ("stop_gained",), "c.1089C>T", "p.(Arg363Ter)", exon="", is_mane=True)
    v = Variant("chr20", 10408700, "G", "A")
    r = evaluate_pvs1(a, _mkks_gene(), RULES, v, "GRCh38")
    assert (r.met, r.strength) == (True, "VeryStrong") and "panel structure" in r.reason
    assert r.evidence["transcript_model"]["exon_number"] == 4
    # without a build the model is not used: conservative Moderate, reason says why
    r0 = evaluate_pvs1(a, _mkks_gene(), RULES, v, None)
    assert r0.strength == "Moderate" and "genome build not known" in r0.reason


def test_pvs1_last_exon_share_from_protein_position():  # Abou Tayoun 2018: > 10 % removed -> Strong
    a = Annotation("MKKS", "NM_170784.3", ("stop_gained",), "c.1500C>T", "p.(Arg500Ter)", is_mane=True,
                   extra={"Protein_position": "500/570"})
    r = evaluate_pvs1(a, _mkks_gene(), RULES, Variant("20", 10402000, "G", "A"), "GRCh38")
    assert r.evidence["nmd_predicted"] is False and "last exon" in r.reason
    assert r.strength == "Strong" and r.evidence["removed_fraction"] == pytest.approx(71 / 570, abs=1e-4)
    a.extra["Protein_position"] = "560/570"
    assert evaluate_pvs1(a, _mkks_gene(), RULES, Variant("20", 10402000, "G", "A"), "GRCh38").strength == "Moderate"


def test_pvs1_model_ignored_when_annotation_disagrees():
    a = Annotation("MKKS", "NM_170784.3", ("stop_gained",), "c.100C>T", "p.(Arg34Ter)", exon="2/9", is_mane=True)
    r = evaluate_pvs1(a, _mkks_gene(), RULES, Variant("20", 10408700, "G", "A"), "GRCh38")
    assert r.evidence["transcript_model"] is None and "disagrees" in r.evidence["transcript_model_note"]
    assert r.strength == "VeryStrong" and "exon 2/9" in r.reason  # the annotation's own exon rule


def test_engine_takes_build_from_evidence():
    a = Annotation("MKKS", "NM_170784.3", ("frameshift_variant",), "c.1088del", "p.(Gly363AlafsTer5)",
                   is_mane=True)
    f = Finding("F1", Variant("20", 10408700, "GC", "G"), "MKKS", a,
                evidence={"population": None, "build": "GRCh38"})
    crit = {c.code: c for c in evaluate(f, _mkks_gene(), RULES)}
    assert crit["PVS1"].strength == "VeryStrong" and "fsTer5" in crit["PVS1"].reason
    assert len(crit) == 28


def test_loader_errors_name_the_line(tmp_path):
    good = (tmp_path / "ok.yaml")
    text = ("name: t\nversion: '1'\ntranscripts:\n- symbol: X\n  strand: '+'\n  mane_boundaries_match: true\n"
            "  grch38:\n    chrom: '1'\n    exons:\n    - [10, 20]\n    - [30, 40]\n")
    good.write_text(text)
    assert load_transcripts(good).get("X", "GRCh38").exon_count == 2
    bad = tmp_path / "bad.yaml"
    bad.write_text(text.replace("- [30, 40]", "- [15, 40]"))
    with pytest.raises(InputError) as e:
        load_transcripts(bad)
    assert e.value.line == 11 and "overlaps" in e.value.problem
    bad.write_text(text.replace("mane_boundaries_match: true", "mane_boundaries_match: maybe"))
    with pytest.raises(InputError) as e:
        load_transcripts(bad)
    assert e.value.line == 6 and "true or false" in e.value.problem
    # ends that differ from MANE must say by how much, and a CDS must hold cds_length exonic nt
    bad.write_text(text.replace("mane_boundaries_match: true", "mane_boundaries_match: false"))
    with pytest.raises(InputError) as e:
        load_transcripts(bad)
    assert "mane_end_offsets_nt" in e.value.problem
    bad.write_text(text.replace("  grch38:\n", "  protein_length: 2\n  cds_length: 9\n  grch38:\n")
                   .replace("    chrom: '1'\n", "    chrom: '1'\n    cds_start: 15\n    cds_end: 33\n"))
    with pytest.raises(InputError) as e:  # 15..20 + 30..33 = 10 exonic nt, not 9
        load_transcripts(bad)
    assert "found 10" in e.value.problem and e.value.line is not None


# --- coding: entries (validated at load; each problem names file and line) -------------------
CODING_OK = """name: t
version: '1'
transcripts: []
coding:
- symbol: GENEX
  transcript: NM_1.1
  protein: NP_1.1
  mane_refseq: NM_1.2
  mane_protein: NP_1.1
  same_protein_as_mane: true
  protein_length: 3
  cds_length: 12
  strand: +
  exon_count: 2
  grch38:
    chrom: '1'
    cds_start: 105
    cds_end: 205
    exons:
    - [100, 110]
    - [200, 220]
  source: {name: test record, file: x.xml}
"""


def test_coding_entry_loads(tmp_path):
    p = tmp_path / "t.yaml"
    p.write_text(CODING_OK)
    c = load_transcripts(p).coding_for("GENEX")
    # CDS 105..110 (6 nt) + 200..205 (6 nt) = 12 nt = 3 codons + stop
    assert c.protein_length == 3 and c.exons == ((100, 110), (200, 220))


@pytest.mark.parametrize("old,new,problem", [
    ("cds_length: 12", "cds_length: 13", "3 x (protein_length + 1)"),
    ("cds_end: 205", "cds_end: 206", "hold 13 nt"),
    ("cds_start: 105", "cds_start: 150", "CDS ends must lie in exons"),
    ("same_protein_as_mane: true", "same_protein_as_mane: maybe", "true or false"),
    ("  source: {name: test record, file: x.xml}\n", "", "missing 'source'"),
])
def test_coding_entry_problems_name_the_line(tmp_path, old, new, problem):
    p = tmp_path / "t.yaml"
    p.write_text(CODING_OK.replace(old, new))
    with pytest.raises(InputError) as e:
        load_transcripts(p)
    assert problem in str(e.value) and e.value.line is not None


# --- Mitochondrial genes: structure from the rCRS (NC_012920.1) -------------------------------
# Spans, protein lengths and residues checked against the NC_012920.1 feature table and its
# translations (a copy found with the code-search tool; NCBI RefSeq rCRS, Andrews et al., Nat Genet
# 1999;23:147): MT-ND1 3307..4262 318 aa, MT-ATP6 8527..9207 226 aa, MT-ND4 10760..12137 459 aa,
# MT-ND6 complement(14149..14673) 174 aa; MT-ND5 12337..14148 603 aa (from memory). MT-ND1 and MT-ND4
# end in an incomplete stop codon completed by polyadenylation (Ojala et al., Nature 1981; from memory).
# Published alleles: m.3460G>A p.Ala52Thr, m.8993T>G p.Leu156Arg, m.11778G>A p.Arg340His,
# m.14484T>C p.Met64Val (Howell 1991, Holt 1990, Wallace 1988, Johns 1992; from memory), residues
# verified against those translations.
@pytest.mark.parametrize("gene,length,stop_nt,pos,c,res", [
    ("MT-ND1", 318, 2, 3460, "154", 52),
    ("MT-ATP6", 226, 3, 8993, "467", 156),
    ("MT-ND4", 459, 1, 11778, "1019", 340),
    ("MT-ND6", 174, 3, 14484, "190", 64),
    ("MT-ND5", 603, 3, None, None, None),
])
def test_mitochondrial_structure_from_rcrs(gene, length, stop_nt, pos, c, res):
    from irdtriage.transcripts import hgvs_c_position, residue
    for build in ("GRCh38", "GRCh37"):  # the rCRS is GRCh38 chrM and GRCh37 (b37) MT
        tx = MODEL.get(gene, build)
        assert tx is not None and tx.chrom == "MT" and tx.exon_count == 1 and tx.refseq == "NC_012920.1"
        assert tx.protein_length == length
        assert (tx.cds_end - tx.cds_start + 1) == 3 * length + stop_nt
        if pos is not None:
            assert hgvs_c_position(tx, pos) == c and residue(tx, pos) == res


def test_mitochondrial_trna_has_exon_only():
    tx = MODEL.get("MT-TL1", "GRCh38")  # tRNA-Leu(UUR) 3230..3304 (NC_012920.1): no protein
    assert tx.exons == ((3230, 3304),) and not tx.has_cds


def test_stop_codon_nt_is_validated(tmp_path):
    import yaml as _yaml
    from pathlib import Path
    doc = _yaml.safe_load((Path(__file__).resolve().parents[1] / "panels" / "transcripts.yaml").read_text())
    nd4 = next(t for t in doc["transcripts"] if t["symbol"] == "MT-ND4")
    nd4["stop_codon_nt"] = 3  # 1378 nt is not 3 x 459 + 3
    bad = tmp_path / "t.yaml"
    bad.write_text(_yaml.safe_dump(doc, sort_keys=False))
    with pytest.raises(InputError) as e:
        load_transcripts(bad)
    assert "MT-ND4" in str(e.value) and "cds_length" in str(e.value)


# --- A region whose orientation differs between the builds (per-build strand) ----------------
# RBP3 and PEX11B lie in such regions: the GENCODE-derived GRCh37 table has RBP3 on the minus strand
# where MANE Select (GRCh38) has it on the plus strand, and PEX11B the reverse.  A gene's structure on
# each build is read 5' to 3' on that build's own strand.  Expected c. numbers follow HGVS (c.1 is
# the A of the start codon, counted in transcript orientation; den Dunnen et al., Hum Mutat
# 2016;37:564-569); the positions are hand-computed from the synthetic exons below.
FLIPPED = """name: t
version: '1'
transcripts:
- symbol: GENEX
  strand: +
  mane_boundaries_match: true
  protein_length: 33
  cds_length: 102
  grch38:
    chrom: '10'
    cds_start: 150
    cds_end: 350
    exons:
    - [100, 200]
    - [300, 400]
  grch37:
    chrom: '10'
    strand: '-'
    cds_start: 1050
    cds_end: 1250
    exons:
    - [1000, 1100]
    - [1200, 1300]
"""


def test_per_build_strand(tmp_path):
    from irdtriage.transcripts import c_number, hgvs_c_position
    p = tmp_path / "t.yaml"
    p.write_text(FLIPPED)
    m = load_transcripts(p)
    g38, g37 = m.get("GENEX", "GRCh38"), m.get("GENEX", "GRCh37")
    assert (g38.strand, g37.strand) == ("+", "-")
    # GRCh38 (+): c.1 = 150, last exon-1 coding base c.51 = 200, c.52 = 300, stop ends at c.102 = 350
    assert (c_number(g38, 150), c_number(g38, 200), c_number(g38, 300), c_number(g38, 350)) == (1, 51, 52, 102)
    # GRCh37 (-): exon 1 is [1200, 1300]; c.1 = 1250, c.51 = 1200, c.52 = 1100, c.102 = 1050
    assert locate_in(g37, 1300).exon_number == 1 and locate_in(g37, 1000).exon_number == 2
    assert [c_number(g37, p) for p in (1250, 1200, 1100, 1050)] == [1, 51, 52, 102]
    assert hgvs_c_position(g37, 1199) == "51+1" and hgvs_c_position(g37, 1101) == "52-1"
    assert hgvs_c_position(g37, 1260) == "-10" and hgvs_c_position(g37, 1040) == "*10"
    # the same exon lengths in transcript order on both builds
    assert [e - s for s, e in g38.ordered()] == [e - s for s, e in g37.ordered()]


@pytest.mark.parametrize("old,new,problem,line", [
    ("    strand: '-'\n", "    strand: x\n", "grch37 strand must be + or -", 18),
    ("  grch38:\n    chrom: '10'\n", "  grch38:\n    chrom: '10'\n    strand: '-'\n", "grch38 strand must be the gene's strand", 11),
    ("  cds_length: 102\n", "  cds_length: 102\n  protein_length_check: {published_length_aa: 34, source: s, "
                            "from_memory: false}\n", "protein_length_check", 9),
    ("  cds_length: 102\n", "  cds_length: 102\n  protein_length_check: {published_length_aa: 33, source: s}\n",
     "from_memory", 9),
])
def test_per_build_strand_and_length_check_validated(tmp_path, old, new, problem, line):
    p = tmp_path / "t.yaml"
    assert old in FLIPPED
    p.write_text(FLIPPED.replace(old, new))
    with pytest.raises(InputError) as e:
        load_transcripts(p)
    assert problem in e.value.problem and e.value.line == line, (e.value.problem, e.value.line)
