"""Panel loader, validation errors, gene lists, intervals and the gene locator.

Unit tests over the bundled panel and small broken YAML files written to tmp_path.
Checks of the panel's *content* against outside data live in tests/external/.
"""
from __future__ import annotations

import dataclasses
import hashlib
import importlib.util
import random
import sys
from pathlib import Path

import pytest

from irdtriage.errors import InputError
from irdtriage.models import Panel, Span
from irdtriage.panel import (
    GeneLocator,
    check_panel,
    default_cascade_path,
    default_panel_path,
    intervals,
    load_cascade,
    load_panel,
    merged_regions,
    missing_in_build,
    parse_gene_option,
    read_gene_list,
)

ROOT = Path(__file__).resolve().parents[1]


@pytest.fixture(scope="module")
def panel() -> Panel:
    return load_panel()


# ---------------------------------------------------------------------------
# The bundled panel
# ---------------------------------------------------------------------------
def test_bundled_panel_loads_with_at_least_250_genes(panel):
    assert default_panel_path().name == "genes.yaml" and default_panel_path().is_file()
    assert default_cascade_path().name == "cascade.yaml" and default_cascade_path().is_file()
    assert panel.name == "irdtriage-ird"
    assert panel.version
    assert len(panel.genes) >= 250
    assert check_panel(panel) == []


def test_panel_hash_covers_both_files(panel):
    h = hashlib.sha256(default_panel_path().read_bytes() + default_cascade_path().read_bytes()).hexdigest()
    assert panel.sha256 == h


def test_core_genes_present(panel):
    core = """RHO OPN1LW OPN1MW OPN1SW GNAT1 GNAT2 PDE6A PDE6B PDE6C PDE6G PDE6H CNGA1 CNGB1 CNGA3
    CNGB3 SAG GRK1 RGS9 RGS9BP GUCY2D GUCA1A GUCA1B ABCA4 RPE65 LRAT RDH5 RDH11 RDH12 RLBP1 RBP3
    RBP4 RGR CACNA1F CABP4 NYX GRM6 TRPM1 GPR179 LRIT3 CACNA2D4 KCNV2 CEP290 RPGR RPGRIP1
    RPGRIP1L TULP1 IFT140 IFT172 CC2D2A LCA5 SPATA7 TOPORS RP1 RP2 AHI1 PRPH2 ROM1 PROM1 CDHR1
    EYS CRB1 CRX NRL NR2E3 OTX2 PRPF3 PRPF4 PRPF6 PRPF8 PRPF31 SNRNP200 RP9 BEST1 MERTK IMPDH1
    NMNAT1 USH2A MYO7A BBS1 BBS10 CHM RS1""".split()
    assert [g for g in core if g not in panel.genes] == []


def test_gene_fields_are_typed(panel):
    for g in panel.genes.values():
        assert isinstance(g.grch38, Span) and g.grch38.start <= g.grch38.end
        assert isinstance(g.inheritance, tuple) and g.inheritance
        assert isinstance(g.notes, tuple)
        assert g.cascade_step in panel.cascade


def test_rho_dominant_mechanism_is_not_loss_of_function(panel):
    rho = panel.genes["RHO"]
    assert {"GOF", "DN", "LOF"} <= set(rho.mechanisms)
    assert any("NOT the dominant mechanism" in n for n in rho.notes)


def test_subset_case_insensitive_keeps_file_order(panel):
    sub = load_panel(genes=["rpe65", "ABCA4"])
    assert list(sub.genes) == [s for s in panel.genes if s in ("RPE65", "ABCA4")]
    assert sub.sha256 == panel.sha256
    assert check_panel(sub) == []  # unused steps are fine in a subset


def test_subset_unknown_symbols_listed(panel):
    with pytest.raises(InputError) as e:
        load_panel(genes=["RPE65", "NOTAGENE", "BRCA1"])
    msg = str(e.value)
    assert "NOTAGENE" in msg and "BRCA1" in msg and "genes.yaml" in msg
    assert "\n" not in msg


def test_subset_from_option_string(tmp_path):
    f = tmp_path / "genes.txt"
    f.write_text("# my list\nRPE65\nabca4, CRB1   # comment\n\n")
    assert read_gene_list(f) == ["RPE65", "abca4", "CRB1"]
    assert parse_gene_option(f"USH2A,@{f}") == ["USH2A", "RPE65", "abca4", "CRB1"]
    full = load_panel()
    want = [s for s in full.genes if s in {"ABCA4", "RPE65", "CRB1"}]
    assert list(load_panel(genes=parse_gene_option(f"@{f}")).genes) == want
    bad = tmp_path / "bad.txt"
    bad.write_text("RPE65\nnot/a/gene\n")
    with pytest.raises(InputError) as e:
        read_gene_list(bad)
    assert str(e.value).startswith(f"{bad}:2: ")
    with pytest.raises(InputError, match="not found"):
        read_gene_list(tmp_path / "missing.txt")


# ---------------------------------------------------------------------------
# Validation errors: one line naming file and line
# ---------------------------------------------------------------------------
CASCADE = """version: "1"
steps:
  - id: photon_capture
    title: "photon capture"
    kind: chain
    order: 1
    text: "Light is caught."
    breaks: "Night blindness."
  - id: visual_cycle_step
    title: "isomerase"
    kind: visual_cycle
    order: null
    text: "Retinal is re-armed."
    breaks: "No pigment."
"""

PANEL = """name: test-panel
version: "0.1"
genes:
  - symbol: RHO
    hgnc_id: "HGNC:10012"
    name: "rhodopsin"
    refseq_transcript: "NM_000539.3"
    ensembl_transcript: "ENST00000296271.4"
    refseq_protein: "NP_000530.1"
    strand: "+"
    grch38: {chrom: "3", start: 129528639, end: 129535344}
    grch37: {chrom: "3", start: 129247482, end: 129254187}
    inheritance: [AD, AR]
    mechanisms: [GOF, DN, LOF]
    conditions: ["retinitis pigmentosa"]
    cascade_step: photon_capture
    syndromic: false
    notes: []
    hpo_justification: ""
  - symbol: RPE65
    hgnc_id: "HGNC:10294"
    name: "retinoid isomerohydrolase RPE65"
    refseq_transcript: "NM_000329.3"
    ensembl_transcript: "ENST00000262340.6"
    refseq_protein: "NP_000320.1"
    strand: "-"
    grch38: {chrom: "1", start: 68428822, end: 68449954}
    grch37: null
    inheritance: [AR]
    mechanisms: [LOF]
    conditions: ["Leber congenital amaurosis 2"]
    cascade_step: visual_cycle_step
"""


def _write(tmp_path: Path, panel_text: str = PANEL, cascade_text: str = CASCADE) -> tuple[Path, Path]:
    p = tmp_path / "genes.yaml"
    c = tmp_path / "cascade.yaml"
    p.write_text(panel_text)
    c.write_text(cascade_text)
    return p, c


def _line_of(text: str, needle: str, nth: int = 1) -> int:
    seen = 0
    for i, line in enumerate(text.splitlines(), start=1):
        if needle in line:
            seen += 1
            if seen == nth:
                return i
    raise AssertionError(f"{needle!r} not in text")


def _error(tmp_path, panel_text=PANEL, cascade_text=CASCADE) -> tuple[InputError, Path, Path]:
    p, c = _write(tmp_path, panel_text, cascade_text)
    with pytest.raises(InputError) as e:
        load_panel(p, c)
    return e.value, p, c


def test_minimal_panel_loads(tmp_path):
    p, c = _write(tmp_path)
    panel = load_panel(p, c)
    assert list(panel.genes) == ["RHO", "RPE65"]
    assert panel.genes["RPE65"].grch37 is None and panel.genes["RPE65"].syndromic is False
    assert panel.source == str(p)
    # a cascade.yaml next to the panel is picked up without cascade_path
    assert load_panel(p).cascade.keys() == {"photon_capture", "visual_cycle_step"}
    assert missing_in_build(panel, "GRCh37") == ["RPE65"]


@pytest.mark.parametrize(
    "old,new,needle,nth,words",
    [
        # missing key -> line of the gene block
        ('    strand: "-"\n', "", "- symbol: RPE65", 1, "missing key strand"),
        # unknown key -> line of that key
        ("    syndromic: false\n", "    syndromic: false\n    colour: red\n", "colour: red", 1, "unknown key 'colour'"),
        # bad inheritance value
        ("    inheritance: [AR]\n", "    inheritance: [recessive]\n", "inheritance: [recessive]", 1,
         "inheritance value 'recessive'"),
        # bad mechanism value
        ("    mechanisms: [LOF]\n", "    mechanisms: [LoF]\n", "mechanisms: [LoF]", 1, "mechanisms value 'LoF'"),
        # span start > end
        ("start: 68428822, end: 68449954", "start: 68449954, end: 68428822", "grch38: {chrom: \"1\"", 1,
         "start 68449954 is after end 68428822"),
        # unknown cascade step
        ("    cascade_step: visual_cycle_step\n", "    cascade_step: isomerase\n", "cascade_step: isomerase", 1,
         "cascade_step 'isomerase' is not a step"),
        # bad HGNC ID
        ('hgnc_id: "HGNC:10294"', 'hgnc_id: "10294"', 'hgnc_id: "10294"', 1, "hgnc_id '10294' is not well-formed"),
        # bad transcript
        ('refseq_transcript: "NM_000329.3"', 'refseq_transcript: "NM_000329"', 'refseq_transcript: "NM_000329"', 1,
         "refseq_transcript 'NM_000329' is not well-formed"),
        # bad chromosome
        ('{chrom: "1", start', '{chrom: "chr99", start', 'chrom: "chr99"', 1, "chromosome 'chr99'"),
        # duplicate symbol -> line of the second one
        ("  - symbol: RPE65\n", "  - symbol: RHO\n", "- symbol: RHO", 2, "duplicate gene symbol RHO"),
        # duplicate key inside a gene
        ("    syndromic: false\n", "    syndromic: false\n    syndromic: true\n", "syndromic: true", 1,
         "duplicate key 'syndromic'"),
        # empty inheritance
        ("    inheritance: [AR]\n", "    inheritance: []\n", "inheritance: []", 1, "'inheritance' must not be empty"),
        # strand
        ('    strand: "-"\n', '    strand: "minus"\n', 'strand: "minus"', 1, 'strand must be'),
        # version written as a number
        ('version: "0.1"\n', "version: 0.1\n", "version: 0.1", 1, "quoted string"),
        # YAML syntax error
        ('    conditions: ["Leber congenital amaurosis 2"]\n', '    conditions: ["Leber congenital amaurosis 2"\n',
         "cascade_step: visual_cycle_step", 1, "YAML syntax error"),
    ],
)
def test_panel_validation_errors_name_file_and_line(tmp_path, old, new, needle, nth, words):
    assert old in PANEL
    text = PANEL.replace(old, new, 1) if words != "duplicate gene symbol RHO" else PANEL.replace(old, new)
    err, p, _c = _error(tmp_path, text)
    msg = str(err)
    assert "\n" not in msg
    assert err.path == str(p)
    assert words in msg, msg
    if words != "YAML syntax error":
        assert err.line == _line_of(text, needle, nth), msg
        assert msg.startswith(f"{p}:{err.line}: ")
    else:
        assert err.line is not None and msg.startswith(f"{p}:{err.line}: ")


def test_top_level_problems(tmp_path):
    err, p, _ = _error(tmp_path, PANEL.replace("name: test-panel\n", ""))
    assert "missing key name" in str(err)
    err, p, _ = _error(tmp_path, PANEL.replace("genes:\n", "extra: 1\ngenes:\n"))
    assert "unknown key 'extra'" in str(err) and err.line == 3
    err, p, _ = _error(tmp_path, "- just\n- a list\n")
    assert "must be a mapping" in str(err)
    err, p, _ = _error(tmp_path, PANEL.replace("genes:\n", "gene_count: 3\ngenes:\n"))
    assert "gene_count says 3 but the file lists 2" in str(err) and err.line == 3
    with pytest.raises(InputError, match="file not found"):
        load_panel(tmp_path / "nope.yaml", tmp_path / "cascade.yaml")


@pytest.mark.parametrize(
    "old,new,needle,words",
    [
        ("    kind: visual_cycle\n", "    kind: cycle\n", "kind: cycle", "kind 'cycle' is not one of"),
        ("    order: 1\n", "    order: null\n", "order: null", "needs a positive integer 'order'"),
        ("    order: null\n", "    order: 2\n", "order: 2", "only chain steps carry an 'order'"),
        ("  - id: visual_cycle_step\n", "  - id: photon_capture\n", "- id: photon_capture", "duplicate cascade step id"),
        ('    breaks: "No pigment."\n', "", "- id: visual_cycle_step", "missing key breaks"),
        ("  - id: visual_cycle_step\n", "  - id: Visual-Cycle\n", "- id: Visual-Cycle", "lower_snake_case"),
    ],
)
def test_cascade_validation_errors_name_file_and_line(tmp_path, old, new, needle, words):
    assert old in CASCADE
    text = CASCADE.replace(old, new, 1)
    err, _p, c = _error(tmp_path, PANEL.replace("visual_cycle_step", "photon_capture"), text)
    msg = str(err)
    assert words in msg, msg
    assert err.path == str(c)
    nth = 2 if words == "duplicate cascade step id" else 1
    assert err.line == _line_of(text, needle, nth), msg
    assert msg.startswith(f"{c}:{err.line}: ")


def test_load_cascade_alone():
    import yaml

    from irdtriage.panel import default_cascade_path

    version, steps, data = load_cascade()
    raw = default_cascade_path().read_bytes()
    doc = yaml.safe_load(raw)  # the file read by PyYAML, independently of the loader
    assert data == raw
    assert version == doc["version"]
    assert list(steps) == [s["id"] for s in doc["steps"]]
    assert list(steps)[0] == "photon_capture"


# ---------------------------------------------------------------------------
# check_panel
# ---------------------------------------------------------------------------
def test_check_panel_finds_inconsistencies(tmp_path):
    p, c = _write(tmp_path)
    base = load_panel(p, c)
    rho = base.genes["RHO"]
    rpe65 = base.genes["RPE65"]
    bad_genes = {
        "RHO": dataclasses.replace(rho, inheritance=("XLR",)),
        "RPE65": dataclasses.replace(rpe65, mechanisms=("DN",), cascade_step="nowhere"),
    }
    extra_step = dataclasses.replace(base.cascade["visual_cycle_step"], id="orphan_module", kind="module")
    bad = dataclasses.replace(base, genes=bad_genes, cascade={**base.cascade, "orphan_module": extra_step})
    problems = check_panel(bad)
    text = "\n".join(problems)
    assert "RHO: X-linked inheritance but GRCh38 span is on chromosome 3" in text
    assert "RPE65: cascade_step 'nowhere'" in text
    assert "RPE65: no GRCh37 span" in text
    assert "RPE65: recessive-only gene without loss of function" in text
    assert "cascade step 'orphan_module' (module) has no panel gene" in text
    assert check_panel(bad, require_every_step=False) != problems


# ---------------------------------------------------------------------------
# Intervals and locator
# ---------------------------------------------------------------------------
def test_intervals_sorted_padded_and_bare(panel):
    iv = intervals(panel, "GRCh38", padding=100)
    assert len(iv) == len(panel.genes)
    order = {c: i for i, c in enumerate([str(i) for i in range(1, 23)] + ["X", "Y", "MT"])}
    keys = [(order[c], s, e, n) for c, s, e, n in iv]
    assert keys == sorted(keys)
    rho = next(t for t in iv if t[3] == "RHO")
    g = panel.genes["RHO"].grch38
    assert rho == ("3", g.start - 100, g.end + 100, "RHO")
    assert all(not c.startswith("chr") for c, *_ in iv)
    assert intervals(panel, "hg19", 0)[0][1] >= 1
    with pytest.raises(InputError, match="unknown genome build"):
        intervals(panel, "hg17")


def test_merged_regions_cover_every_interval(panel):
    regions = merged_regions(panel, "GRCh38", 50)
    for chrom, s, e, _sym in intervals(panel, "GRCh38", 50):
        assert any(c == chrom and rs <= s and e <= re_ for c, rs, re_ in regions)
    assert len(regions) <= len(panel.genes)


def test_gene_locator_matches_brute_force(panel):
    for build in ("GRCh38", "GRCh37"):
        loc = GeneLocator(panel, build, padding=50)
        iv = intervals(panel, build, 50)
        rng = random.Random(7)
        probes = []
        for chrom, s, e, _sym in iv:
            probes += [(chrom, s - 1), (chrom, s), (chrom, e), (chrom, e + 1), (chrom, rng.randint(s, e))]
        probes += [("X", rng.randint(1, 156_000_000)) for _ in range(200)]
        for chrom, pos in probes:
            want = sorted({sym for c, s, e, sym in iv if c == chrom and s <= pos <= e})
            assert sorted(loc.genes_at(chrom, pos)) == want, (build, chrom, pos)
            assert sorted(loc.genes_at("chr" + chrom, pos)) == want


def test_gene_locator_ranges_and_names(panel):
    loc = GeneLocator(panel, "GRCh38", padding=0)
    lw, mw = panel.genes["OPN1LW"].grch38, panel.genes["OPN1MW"].grch38
    assert loc.genes_at("chrX", lw.start, mw.end) == ["OPN1LW", "OPN1MW"]
    rho = panel.genes["RHO"].grch38
    assert loc.genes_at("3", rho.start - 10, rho.start) == ["RHO"]
    assert loc.genes_at("3", rho.start - 10, rho.start - 1) == []
    assert loc.genes_at("chrUn_random", 5) == []
    assert ("3", rho.end) in loc and ("3", rho.end + 1) not in loc
    assert loc.genes_at("chrM", 100) == []


# ---------------------------------------------------------------------------
# The curation script's pure helpers (small hand-made tables)
# ---------------------------------------------------------------------------
def _curate_module():
    spec = importlib.util.spec_from_file_location("curate_panel", ROOT / "scripts" / "curate_panel.py")
    mod = importlib.util.module_from_spec(spec)
    sys.modules["curate_panel"] = mod
    spec.loader.exec_module(mod)
    return mod


def test_curate_refseq_chrom_and_structure():
    cp = _curate_module()
    assert cp.refseq_chrom("NC_000001.11") == "1"
    assert cp.refseq_chrom("NC_000023.11") == "X"
    assert cp.refseq_chrom("NC_000024.10") == "Y"
    assert cp.refseq_chrom("NC_012920.1") == "MT"
    assert cp.refseq_chrom("NT_187633.1") is None
    a = {"strand": "+", "tx_start0": 100, "tx_end": 500, "exon_starts0": [100, 300], "exon_ends": [200, 500]}
    b = {"strand": "+", "tx_start0": 1100, "tx_end": 1500, "exon_starts0": [1100, 1300], "exon_ends": [1200, 1500]}
    assert cp.same_structure(a, b)
    assert not cp.same_structure(a, {**b, "exon_starts0": [1100, 1301]})


def test_curate_grch37_span_rules():
    cp = _curate_module()
    mane = {"chrom": "3", "start": 1000, "end": 2000, "strand": "+"}
    t37 = {"G": {"chrom": "3", "strand": "+", "tx_start0": 10_099, "tx_end": 11_000,
                 "exon_starts0": [10_099], "exon_ends": [11_000]}}
    # no GRCh38 table: canonical span, 0-based start converted to 1-based
    span, notes = cp.grch37_span("G", ["G"], mane, t37, None)
    assert span == {"chrom": "3", "start": 10_100, "end": 11_000}
    # identical canonical transcript in GRCh38 at 1100-2000 (1-based): offset +9000 places MANE at 10000-11000
    t38 = {"G": {"chrom": "3", "strand": "+", "tx_start0": 1099, "tx_end": 2000,
                 "exon_starts0": [1099], "exon_ends": [2000]}}
    span, notes = cp.grch37_span("G", ["G"], mane, t37, t38)
    assert span == {"chrom": "3", "start": 10_000, "end": 11_000}
    assert any("widened" in n for n in notes)
    # previous symbol and missing gene
    span, notes = cp.grch37_span("NEW", ["NEW", "G"], mane, t37, None)
    assert span["start"] == 10_100 and any("previous symbol" in n for n in notes)
    span, notes = cp.grch37_span("H", ["H"], mane, t37, None)
    assert span is None and "not available" in notes[0]


def test_curate_reads_only_mane_select(tmp_path):
    cp = _curate_module()
    f = tmp_path / "mane.txt"
    head = ("#NCBI_GeneID\tEnsembl_Gene\tHGNC_ID\tsymbol\tname\tRefSeq_nuc\tRefSeq_prot\tEnsembl_nuc\t"
            "Ensembl_prot\tMANE_status\tGRCh38_chr\tchr_start\tchr_end\tchr_strand\n")
    rows = [
        "GeneID:1\tENSG1\tHGNC:1\tAAA\ta gene\tNM_1.1\tNP_1.1\tENST00000000001.1\tENSP1\tMANE Select\tNC_000023.11\t5\t50\t-",
        "GeneID:1\tENSG1\tHGNC:1\tAAA\ta gene\tNM_2.1\tNP_2.1\tENST00000000002.1\tENSP2\tMANE Plus Clinical\tNC_000023.11\t5\t60\t-",
        "GeneID:2\tENSG2\tHGNC:2\tBBB\tb gene\tNM_3.1\tNP_3.1\tENST00000000003.1\tENSP3\tMANE Select\tNT_187633.1\t5\t60\t+",
    ]
    f.write_text(head + "\n".join(rows) + "\n")
    mane = cp.read_mane(f)
    assert list(mane) == ["AAA"]
    assert mane["AAA"]["refseq_transcript"] == "NM_1.1" and mane["AAA"]["chrom"] == "X"


# ---------------------------------------------------------------------------
# Hand-given chrM coordinates and evidence fields in the curation script
# ---------------------------------------------------------------------------
def test_curate_hand_coordinates_only_on_the_rcrs():
    # rCRS NC_012920.1 is 16,569 bp (Andrews et al. 1999, Nat Genet 23:147; from memory);
    # MT-ND6 is complement(14149..14673) in the NCBI RefSeq NC_012920.1 feature table.
    mod = _curate_module()
    block = {"hgnc_id": "HGNC:7462", "name": "ND6", "refseq_transcript": "NC_012920.1",
             "refseq_protein": "YP_003024037.1", "ensembl_transcript": "ENST00000361681.2",
             "strand": "-", "start": 14149, "end": 14673, "source": "NC_012920.1 feature table"}
    (row, span37, notes), why = mod.hand_coordinates("MT-ND6", block)
    assert why == "" and row["chrom"] == "MT" and (row["start"], row["end"]) == (14149, 14673)
    assert span37 == {"chrom": "MT", "start": 14149, "end": 14673}
    assert "NC_012920.1 feature table" in notes[0]
    for bad, words in ((dict(block, refseq_transcript="NM_000001.1"), "rCRS"),
                       (dict(block, end=16570), "16569"),
                       (dict(block, source=" "), "source"),
                       ({k: v for k, v in block.items() if k != "strand"}, "missing")):
        hit, why = mod.hand_coordinates("MT-ND6", bad)
        assert hit is None and words in why


def test_curate_evidence_fields_checked():
    mod = _curate_module()
    ok = {"evidence_level": "limited", "evidence_source": ["OMIM:613617"], "evidence_date": "2026-12-02"}
    assert mod.evidence_problems("G", ok) == []
    assert "evidence_level" in mod.evidence_problems("G", dict(ok, evidence_level="strong"))[0]
    assert "evidence_source" in mod.evidence_problems("G", dict(ok, evidence_source=[]))[0]
    assert "evidence_date" in mod.evidence_problems("G", dict(ok, evidence_date="2026-12"))[0]


def test_panel_evidence_level_validated_with_line(tmp_path):
    text = PANEL.replace("    cascade_step: photon_capture\n",
                         "    cascade_step: photon_capture\n    evidence_level: strong\n    evidence_source: [x]\n", 1)
    err, p, _c = _error(tmp_path, text)
    assert "evidence_level 'strong'" in str(err) and err.line == _line_of(text, "evidence_level")


# ---------------------------------------------------------------------------
# Mechanism per inheritance mode (modes:) and MANE Plus Clinical transcripts
# ---------------------------------------------------------------------------
_RHO_MODES = ("    mechanisms: [GOF, DN, LOF]\n"
              "    modes:\n"
              "      AD: {mechanisms: [GOF, DN], alleles: [missense, inframe], retinal: true}\n"
              "      AR: {mechanisms: [LOF], alleles: [null_variant, missense], retinal: true}\n")


def test_panel_modes_load(tmp_path):
    text = PANEL.replace("    mechanisms: [GOF, DN, LOF]\n", _RHO_MODES, 1)
    p, c = _write(tmp_path, text)
    rho = load_panel(p, c).genes["RHO"]
    modes = {m.mode: m for m in rho.modes}
    assert modes["AD"].mechanisms == ("GOF", "DN") and [a.cls for a in modes["AD"].alleles] == ["missense", "inframe"]
    assert modes["AR"].conditions == rho.conditions  # no conditions given: the gene's


@pytest.mark.parametrize("old,new,words", [
    ("AD: {mechanisms: [GOF, DN]", "XD: {mechanisms: [GOF, DN]", "unknown mode 'XD'"),
    ("AD: {mechanisms: [GOF, DN]", "AD: {mechanisms: [GOF, HI]", "mechanisms value 'HI'"),
    ("alleles: [missense, inframe]", "alleles: [missense, nonsense]", "unknown allele class 'nonsense'"),
    ("alleles: [missense, inframe]", "alleles: [null]", "write null_variant"),
    ("alleles: [missense, inframe]", "alleles: [{class: missense, exon: [3]}]", "allele rule needs 'class'"),
    ("retinal: true}\n      AR", "retinal: yes please}\n      AR", "'retinal' must be true or false"),
    ("      AR: {mechanisms: [LOF], alleles: [null_variant, missense], retinal: true}\n", "",
     "give one entry per inheritance mode"),
])
def test_panel_mode_errors_name_file_and_line(tmp_path, old, new, words):
    text = PANEL.replace("    mechanisms: [GOF, DN, LOF]\n", _RHO_MODES, 1)
    assert old in text
    text = text.replace(old, new, 1)
    err, p, _c = _error(tmp_path, text)
    assert words in str(err), str(err)
    assert err.path == str(p) or str(p) in str(err)
    assert err.line is not None and err.line >= _line_of(text, "modes:")


def test_default_modes_keep_the_gene_level_rule():
    # Mendelian reasoning (common practice) with the ClinGen SVI PVS1 tree's first question (Abou
    # Tayoun et al. 2018): in a gene with a recessive mode and a GOF/DN mechanism, heterozygous loss of
    # function is the carrier state, so the dominant mode takes only GOF/DN and no null allele;
    # a dominant-only haploinsufficient gene (PRPF31 style) accepts nulls.
    from irdtriage.mechanism import default_modes
    mixed = default_modes(("AD", "AR"), ("GOF", "DN", "LOF"))
    assert mixed["AD"]["mechanisms"] == ["GOF", "DN"] and "null_variant" not in mixed["AD"]["alleles"]
    assert mixed["AR"]["mechanisms"] == ["LOF"] and "null_variant" in mixed["AR"]["alleles"]
    hi = default_modes(("AD",), ("LOF",))
    assert hi["AD"]["mechanisms"] == ["LOF"] and "null_variant" in hi["AD"]["alleles"]


@pytest.mark.parametrize("symbol,refseq,ensembl", [
    # MANE v1.5 summary rows with MANE_status "MANE Plus Clinical" (typed in from the file)
    ("REEP6", "NM_001329556.3", "ENST00000395479.10"),
    ("USH1C", "NM_005709.4", "ENST00000318024.9"),
    ("PCDH15", "NM_033056.4", "ENST00000320301.11"),
    ("HK1", "NM_001358263.1", "ENST00000643399.2"),
    ("RAB28", "NM_004249.4", "ENST00000288723.9"),
    ("VPS13B", "NM_017890.5", "ENST00000358544.7"),
    ("ERCC6", "NM_001277058.2", "ENST00000447839.7"),
])
def test_bundled_panel_carries_mane_plus_clinical(panel, symbol, refseq, ensembl):
    assert (refseq, ensembl) in panel.genes[symbol].plus_clinical


def test_bundled_panel_mode_curation(panel):
    # Hand-curated modes, each checked against its source in tests/test_mechanism_modes.py; here the
    # shape: TOPORS haploinsufficient (ClinGen Retina GCEP 2023), ELOVL4 recessive mode not retinal
    # (from memory), OFD1 X-linked dominant oral-facial-digital syndrome not retinal (from memory).
    modes = {s: {m.mode: m for m in panel.genes[s].modes} for s in ("TOPORS", "ELOVL4", "OFD1", "CRX")}
    assert "LOF" in modes["TOPORS"]["AD"].mechanisms
    assert modes["ELOVL4"]["AR"].retinal is False and modes["ELOVL4"]["AD"].retinal is True
    assert modes["OFD1"]["XLD"].retinal is False and modes["OFD1"]["XLR"].retinal is True
    assert [a.cls for a in modes["CRX"]["AD"].alleles if a.cls == "truncation_escaping_nmd"]
    assert check_panel(panel) == []
