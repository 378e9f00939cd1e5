"""Exon region model against the outside tables it is built from (../shared/refdata).

Sources:
* GENCODE-derived canonical transcript tables shipped in PyPI spliceai 1.3.1
  (gene_spans/gencode_canonical_grch38.txt.gz, ..._grch37.txt.gz).
* MANE v1.5 summary (NCBI / EMBL-EBI): MANE Select GRCh38 spans, the coordinate-base check.
"""
import gzip
import importlib.util
from pathlib import Path

import pytest

from irdtriage.panel import load_panel
from irdtriage.regions import CodingRegions, load_exons

ROOT = Path(__file__).resolve().parents[2]
# the table paths come from the gene_tables fixture (tests/external/conftest.py), which skips
# with the reason when ../shared/refdata is absent
pytestmark = pytest.mark.external


def _rows(path):
    """The table read directly (independent of the curation script): NAME -> columns."""
    with gzip.open(path, "rt") as fh:
        return {f[0]: f for f in (line.rstrip("\n").split("\t") for line in fh if not line.startswith("#"))}


def test_every_exon_list_is_the_table_row_plus_one(gene_tables):
    # spliceai 1.3.1 tables: EXON_START 0-based, EXON_END inclusive -> exons.yaml [start + 1, end]
    model = load_exons()
    tables = {"GRCh38": _rows(gene_tables.grch38), "GRCh37": _rows(gene_tables.grch37)}
    assert len(model.genes) >= 490
    for (sym, build), g in model.genes.items():
        f = tables[build][g.table_name]
        starts = [int(x) + 1 for x in f[5].strip(",").split(",")]
        ends = [int(x) for x in f[6].strip(",").split(",")]
        assert g.exons == tuple(sorted(zip(starts, ends))), (sym, build)
        assert g.strand == f[2] and g.chrom == f[1].removeprefix("chr"), (sym, build)


def test_every_panel_gene_in_grch38_table_or_listed_missing(gene_tables):
    panel = load_panel()
    model = load_exons()
    t38 = _rows(gene_tables.grch38)
    missing = sorted(s for (s, b) in model.missing if b == "GRCh38")
    for sym in panel.genes:
        if model.get(sym, "GRCh38") is None:
            assert sym in missing, sym
            assert sym not in t38, sym  # truly absent from the table under its current symbol
    # The spliceai 1.3.1 GRCh38 table has no row for these 9 nuclear panel genes (nor for any row
    # overlapping their MANE spans); they are kept whole by CodingRegions. The tables carry no
    # mitochondrial rows at all: the chrM genes (intronless) are read whole in both builds.
    mito = sorted(s for s in panel.genes if panel.genes[s].grch38.chrom == "MT")
    assert mito == ["MT-ATP6", "MT-ND1", "MT-ND4", "MT-ND5", "MT-ND6", "MT-TL1"]
    assert missing == sorted(["OPN1LW", "RBP3", "KIZ", "USH1G", "CEP250", "ALMS1", "NR2E3", "IKBKG", "PEX11B"] + mito)
    # every nuclear panel gene is in the GRCh37 table
    assert sorted(k[0] for k in model.missing if k[1] == "GRCh37") == mito


def test_mane_ends_flag_matches_mane(gene_tables):
    # MANE v1.5 summary: MANE Select 1-based spans; flag true only where both outer ends agree
    mane = {}
    with gzip.open(gene_tables.mane, "rt") as fh:
        for line in fh:
            f = line.rstrip("\n").split("\t")
            if len(f) > 13 and f[9] == "MANE Select":
                mane[f[3]] = (int(f[11]), int(f[12]))
    model = load_exons()
    for (sym, build), g in model.genes.items():
        if build == "GRCh38" and sym in mane:
            assert g.mane_ends_match == ((g.exons[0][0], g.exons[-1][1]) == mane[sym]), sym


def test_regions_are_a_small_part_of_the_gene_spans():
    # figures for the methods text: padded exons (+ flanks, + whole missing genes) vs whole gene spans
    panel, model = load_panel(), load_exons()
    for build in ("GRCh38", "GRCh37"):
        s = CodingRegions(model, panel, build).summary()
        kept = s["region_bp"] + s["whole_gene_bp"]
        assert 0 < kept < 0.15 * s["panel_span_bp"], (build, s)


def test_script_stops_when_table_starts_look_one_based(tmp_path, gene_tables):
    # the real GRCh38 table with every start moved +1 (as if 1-based): the MANE offset check must refuse it
    spec = importlib.util.spec_from_file_location("curate_exons", ROOT / "scripts" / "curate_exons.py")
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    shifted = tmp_path / "shifted_grch38.txt"
    with gzip.open(gene_tables.grch38, "rt") as fh, open(shifted, "w") as out:
        for line in fh:
            f = line.rstrip("\n").split("\t")
            if not line.startswith("#"):
                f[3] = str(int(f[3]) + 1)
                f[5] = ",".join(str(int(x) + 1) for x in f[5].strip(",").split(",")) + ","
            out.write("\t".join(f) + "\n")
    with pytest.raises(SystemExit) as e:
        mod.main(["--grch38", str(shifted), "--grch37", str(gene_tables.grch37), "--mane", str(gene_tables.mane),
                  "--panel", str(ROOT / "panels" / "genes.yaml"), "--out", str(tmp_path / "x.yaml")])
    assert "coordinate base check failed" in str(e.value)
