"""Exon region model (irdtriage.regions) on the committed panels/exons.yaml.

Exon coordinates checked here are single facts of the GENCODE-derived canonical transcript
tables shipped in the PyPI package spliceai 1.3.1 (gene_spans/gencode_canonical_grch38.txt.gz,
rows RHO and RPE65; EXON_START is 0-based, so each start below is the table value + 1), as
cited in panels/exons.yaml's sources.  Gene spans are the MANE v1.5 Select spans of
panels/genes.yaml.  The 20 bp splice-region padding is common practice.
"""
from pathlib import Path

import pytest

from irdtriage.errors import InputError
from irdtriage.panel import load_panel
from irdtriage.regions import DEFAULT_PADDING, CodingRegions, load_exons


@pytest.fixture(scope="module")
def model():
    return load_exons()


@pytest.fixture(scope="module")
def panel():
    return load_panel()


@pytest.fixture(scope="module")
def r38(model, panel):
    return CodingRegions(model, panel, "GRCh38")


def test_default_padding_is_20():
    assert DEFAULT_PADDING == 20  # splice region +-1..20 into the intron: common practice


def test_rho_structure_from_table(model):
    # spliceai 1.3.1 GRCh38 table, row RHO: chr3 +, EXON_START 129528639,129530875,129532250,129532532,129533607
    # EXON_END 129529094,129531044,129532416,129532772,129535169
    rho = model.get("RHO", "GRCh38")
    assert rho.chrom == "3" and rho.strand == "+"
    assert rho.exons == ((129528640, 129529094), (129530876, 129531044), (129532251, 129532416),
                         (129532533, 129532772), (129533608, 129535169))
    assert rho.mane_ends_match is False  # MANE v1.5 RHO: 129528639-129535344


def test_rpe65_minus_strand_structure(model):
    # spliceai 1.3.1 GRCh38 table, row RPE65: chr1 -, 14 exons, TX 68428821-68449959 (0-based start)
    rpe = model.get("RPE65", "GRCh38")
    assert rpe.chrom == "1" and rpe.strand == "-" and len(rpe.exons) == 14
    assert rpe.exons[0] == (68428822, 68429927) and rpe.exons[-1] == (68449895, 68449959)
    assert rpe.exons[1:3] == ((68431065, 68431176), (68431282, 68431376))


def test_rho_exon_boundaries_with_padding(r38):
    # intron 1 of RHO: 129529095..129530875 (table row RHO)
    assert r38.contains("RHO", "3", 129529094)            # last base of exon 1
    assert r38.contains("RHO", "3", 129529094 + 20)       # +20 into the intron
    assert not r38.contains("RHO", "3", 129529094 + 21)   # +21: outside
    assert r38.contains("RHO", "3", 129530876 - 20)       # -20 before exon 2
    assert not r38.contains("RHO", "3", 129530876 - 21)
    assert not r38.contains("RHO", "3", 129530000)        # deep intronic


def test_rho_span_beyond_canonical_transcript_is_kept(r38):
    # MANE v1.5 ends RHO at 129535344; the table transcript ends at 129535169: the rest is kept whole
    assert r38.contains("RHO", "3", 129535300)
    assert r38.contains("RHO", "3", 129535344)
    assert not r38.contains("RHO", "3", 129535345)
    assert "RHO" in r38.flank_genes


def test_rpe65_minus_strand_intron(r38):
    # RPE65 intron between exons [68431065, 68431176] and [68431282, 68431376] (table row RPE65)
    assert r38.contains("RPE65", "1", 68431176 + 20)
    assert not r38.contains("RPE65", "1", 68431176 + 21)
    assert not r38.contains("RPE65", "1", 68431229)
    assert not r38.contains("RPE65", "1", 68431282 - 21)
    assert r38.contains("RPE65", "1", 68431282 - 20)


def test_range_overlap_and_chrom_naming(r38):
    # a deletion from deep intron into the padded region overlaps it
    assert r38.contains("RPE65", "chr1", 68431200, 68431270)
    assert not r38.contains("RPE65", "chr1", 68431200, 68431250)
    assert r38.contains("RPE65", "chr1", 68431100) and r38.contains("RPE65", "1", 68431100)  # exon 2 (ascending)
    assert not r38.contains("RPE65", "chr1", 68431000)  # intron between the two lowest exons
    assert not r38.contains("RPE65", "2", 68431100)       # wrong chromosome
    assert not r38.contains("RPE65", "1", 1)               # before the first interval


def test_padding_is_configurable(model, panel):
    r0 = CodingRegions(model, panel, "GRCh38", padding=0)
    r5 = CodingRegions(model, panel, "GRCh38", padding=5)
    assert r0.contains("RPE65", "1", 68431176) and not r0.contains("RPE65", "1", 68431177)
    assert r5.contains("RPE65", "1", 68431181) and not r5.contains("RPE65", "1", 68431182)
    assert r0.region_bp() < r5.region_bp()
    with pytest.raises(ValueError):
        CodingRegions(model, panel, "GRCh38", padding=-1)


def test_grch37_coordinates(model, panel):
    # spliceai 1.3.1 GRCh37 table, row RHO: exon 1 EXON_START 129247482, EXON_END 129247937
    r37 = CodingRegions(model, panel, "hg19")
    assert model.get("RHO", "GRCh37").exons[0] == (129247483, 129247937)
    assert r37.contains("RHO", "3", 129247937 + 20) and not r37.contains("RHO", "3", 129247937 + 21)


def test_missing_gene_kept_whole(model, panel, r38):
    # NR2E3 has no row in the spliceai 1.3.1 GRCh38 table (listed under 'missing' in exons.yaml)
    assert model.get("NR2E3", "GRCh38") is None and ("NR2E3", "GRCh38") in model.missing
    assert "NR2E3" in r38.missing
    assert r38.contains("NR2E3", "15", 71814000)
    assert r38.intervals("NR2E3") == []
    assert "NR2E3" in r38.describe() and "kept whole" in r38.describe()
    r37 = CodingRegions(model, panel, "GRCh37")
    assert "NR2E3" not in r37.missing  # the GRCh37 table has it


def test_panel_subset_and_summary(model):
    sub = load_panel(genes=["RHO", "NR2E3"])
    r = CodingRegions(model, sub, "GRCh38")
    s = r.summary()
    assert s["genes_with_exons"] == 1 and s["genes_kept_whole"] == ["NR2E3"]
    # RHO: padded exons merged plus the flank to the MANE end; NR2E3 whole span (MANE v1.5 71810554-71818253)
    assert s["region_bp"] == sum(e - s0 + 1 for s0, e in r.intervals("RHO"))
    assert s["whole_gene_bp"] == 71818253 - 71810554 + 1
    assert s["panel_span_bp"] == (129535344 - 129528639 + 1) + s["whole_gene_bp"]
    assert s["region_bp"] < 129535344 - 129528639 + 1


def _write(tmp_path: Path, text: str) -> Path:
    p = tmp_path / "exons.yaml"
    p.write_text(text)
    return p


GOOD = """name: t
version: "1"
genes:
  - symbol: RHO
    mane_ends_match: false
    grch38: {chrom: '3', strand: '+', exons: [[10, 20], [30, 40]]}
    grch37: null
missing:
  - {symbol: RHO, build: GRCh37, reason: not in the table}
"""


def test_loader_accepts_minimal_file(tmp_path):
    m = load_exons(_write(tmp_path, GOOD))
    assert m.get("RHO", "GRCh38").exons == ((10, 20), (30, 40))
    assert m.missing == {("RHO", "GRCh37"): "not in the table"}


@pytest.mark.parametrize("old,new,line,words", [
    ("[[10, 20], [30, 40]]", "[[10, 20], [15, 40]]", 6, "overlaps"),
    ("[[10, 20], [30, 40]]", "[[20, 10]]", 6, "1-based"),
    ("strand: '+'", "strand: '*'", 6, "strand"),
    ("chrom: '3'", "chrom: '99'", 6, "chromosome"),
    ("    grch37: null\n", "    grch37: null\n    colour: red\n", 8, "unknown key"),
    ("build: GRCh37", "build: hg18", 9, "build"),
    ("mane_ends_match: false", "mane_ends_match: maybe", 5, "mane_ends_match"),
    ("missing:\n  - {symbol: RHO, build: GRCh37, reason: not in the table}\n", "", 1, "missing"),
])
def test_loader_errors_name_file_and_line(tmp_path, old, new, line, words):
    assert old in GOOD
    p = _write(tmp_path, GOOD.replace(old, new))
    with pytest.raises(InputError) as e:
        load_exons(p)
    assert e.value.path == str(p) and e.value.line == line and words in e.value.problem


def test_loader_yaml_syntax_and_missing_file(tmp_path):
    with pytest.raises(InputError) as e:
        load_exons(_write(tmp_path, "name: [unclosed\n"))
    assert e.value.line is not None
    with pytest.raises(InputError):
        load_exons(tmp_path / "nope.yaml")
