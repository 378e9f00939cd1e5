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


def test_packaged_file_regenerates_and_matches_mane(tmp_path, tables, gene_tables):
    s, mane, _ = tables
    out = tmp_path / "transcripts.yaml"
    assert s.main(["--mane", str(gene_tables.mane), "--grch38", str(gene_tables.grch38),
                   "--grch37", str(gene_tables.grch37),
                   "--panel", str(ROOT / "panels" / "genes.yaml"), "--out", str(out)]) == 0
    fresh, packaged = yaml.safe_load(out.read_text()), yaml.safe_load((ROOT / "panels" / "transcripts.yaml").read_text())
    assert fresh["transcripts"] == packaged["transcripts"] and fresh["skipped"] == packaged["skipped"]
    assert fresh["sources"] == packaged["sources"]
    model = load_transcripts(out)
    panel = {g["symbol"]: g for g in yaml.safe_load((ROOT / "panels" / "genes.yaml").read_text())["genes"]}
    assert len(fresh["transcripts"]) + len(fresh["skipped"]) == len(panel)
    for t in fresh["transcripts"]:
        tx = model.get(t["symbol"], "GRCh38")
        m = mane[t["symbol"]]
        assert (tx.chrom, tx.exons[0][0], tx.exons[-1][1], tx.strand) == (m["chrom"], m["start"], m["end"], m["strand"])
        assert tx.strand == panel[t["symbol"]]["strand"]
        if t["grch37"]:
            g37 = model.get(t["symbol"], "GRCh37")
            assert [e - b for b, e in g37.exons] == [e - b for b, e in tx.exons]
