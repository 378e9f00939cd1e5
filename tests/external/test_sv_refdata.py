"""Exon overlap and reading frame of structural events against outside exon tables (../shared/refdata).

Sources:
* GENCODE-derived canonical transcript table for GRCh37 (PyPI spliceai 1.3.1,
  gene_spans/gencode_canonical_grch37.txt.gz; EXON_START 0-based, EXON_END inclusive): the exon
  coordinates typed into tests/test_sv_pipeline.py and tests/test_sv_classify.py are re-read here.
* NCBI RefSeqGene NG_009497.1 GFF3 (USH2A, transcript NM_206933.2, exon and CDS rows; GRCh38 chr1
  position = 216,428,397 - NG position, per ../shared/refdata/README.md).  The coding nucleotides of
  the deleted exons come from the record's CDS rows, so the expected frame is the record's, not the
  product's.
Frame rule: Abou Tayoun et al., Hum Mutat 2018;39:1517-1524 (an exon deletion keeps the frame when its
coding nucleotides are a multiple of 3).
"""
from __future__ import annotations

import gzip
from pathlib import Path

import pytest

from irdtriage.panel import load_panel
from irdtriage.sv.overlap import gene_overlap

pytestmark = pytest.mark.external
REFDATA = Path(__file__).resolve().parents[3] / "shared" / "refdata"
GRCH37 = REFDATA / "gene_spans" / "gencode_canonical_grch37.txt.gz"
USH2A_GFF = REFDATA / "refseqgene" / "NG_009497.1.gff3"
USH2A_ANCHOR = 216_428_397


def _table_exons(symbol: str) -> tuple[str, list[tuple[int, int]]]:
    """(strand, exons in transcript order, 1-based inclusive) from the GRCh37 table."""
    if not GRCH37.is_file():
        pytest.skip("../shared/refdata/gene_spans/gencode_canonical_grch37.txt.gz not present (outside data)")
    with gzip.open(GRCH37, "rt") as fh:
        for line in fh:
            f = line.rstrip("\n").split("\t")
            if f[0] == symbol:
                starts = [int(x) + 1 for x in f[5].strip(",").split(",")]
                ends = [int(x) for x in f[6].strip(",").split(",")]
                ex = list(zip(starts, ends))
                return f[2], ex if f[2] == "+" else ex[::-1]
    pytest.fail(f"{symbol} not in the GRCh37 table")


def test_typed_abca4_exons_match_the_table():
    strand, ex = _table_exons("ABCA4")
    assert strand == "-" and len(ex) == 50
    assert ex[4] == (94568571, 94568698) and ex[5] == (94564350, 94564547)
    assert ex[6] == (94548908, 94548997) and ex[10] == (94543246, 94543443)
    assert ex[12] == (94528133, 94528309) and ex[13] == (94526093, 94526315)
    assert [e - s + 1 for s, e in ex[5:13]] == [198, 90, 241, 140, 117, 198, 206, 177]


@pytest.mark.parametrize("symbol,span", [
    ("ABCA4", (94458393, 94586688)), ("RPE65", (68894505, 68915642)), ("RS1", (18658030, 18690229)),
    ("PRPF31", (54618837, 54635140)), ("GUCA1A", (42123174, 42147794)),
])
def test_typed_transcript_spans_match_the_table(symbol, span):
    _, ex = _table_exons(symbol)
    assert (min(s for s, _ in ex), max(e for _, e in ex)) == span


def test_every_abca4_exon_pair_deletion_names_the_table_exons():
    """A deletion from the middle of intron k-1 to the middle of intron m names exons k..m (GRCh37)."""
    _, ex = _table_exons("ABCA4")
    gene = load_panel().genes["ABCA4"]
    for k, m in ((2, 2), (6, 13), (20, 22), (30, 45), (48, 49)):
        # minus strand: exon m is the lowest coordinate of the deleted block
        lo = (ex[m][1] + ex[m - 1][0]) // 2  # inside intron m
        hi = (ex[k - 1][1] + ex[k - 2][0]) // 2  # inside intron k-1
        o = gene_overlap("DEL", lo, hi, gene, "GRCh37")
        assert o.exons == tuple(range(k, m + 1)), (k, m, o.words)
        assert o.extent == "exons"


def _ush2a_rows():
    if not USH2A_GFF.is_file():
        pytest.skip("../shared/refdata/refseqgene/NG_009497.1.gff3 not present (outside data)")
    exons, cds = [], []
    for line in USH2A_GFF.read_text().splitlines():
        f = line.split("\t")
        if len(f) < 9 or "NM_206933.2" not in f[8] and "NP_" not in f[8]:
            continue
        if f[2] == "exon" and "NM_206933.2" in f[8]:
            exons.append((int(f[3]), int(f[4])))
        elif f[2] == "CDS":
            cds.append((int(f[3]), int(f[4])))
    return sorted(exons), sorted(cds)


@pytest.mark.parametrize("k,m", [(13, 13), (22, 24), (40, 43), (50, 60)])
def test_ush2a_exon_deletion_frame_follows_the_refseqgene_cds(k, m):
    exons, cds = _ush2a_rows()
    assert len(exons) == 72
    block = exons[k - 1:m]  # NG coordinates, gene orientation (exon 1 first)
    coding = sum(max(0, min(e, ce) - max(s, cs) + 1) for s, e in block for cs, ce in cds)
    expected = "in frame" if coding % 3 == 0 else "out of frame"
    # middle of the flanking introns, then to GRCh38 (minus strand: higher NG = lower chr1 position)
    ng_lo = (exons[k - 2][1] + exons[k - 1][0]) // 2
    ng_hi = (exons[m - 1][1] + exons[m][0]) // 2
    start, end = USH2A_ANCHOR - ng_hi, USH2A_ANCHOR - ng_lo
    o = gene_overlap("DEL", start, end, load_panel().genes["USH2A"], "GRCh38")
    assert o.exons == tuple(range(k, m + 1)), o.words
    assert o.coding_nt == coding and o.frame == expected, (o.coding_nt, coding, o.words)


MANE = REFDATA / "mane" / "MANE.GRCh38.v1.5.summary.txt.gz"


def test_grch38_chromosome_accessions_match_the_mane_summary():
    # MANE v1.5 summary, column GRCh38_chr: the RefSeq accession of each gene's GRCh38 chromosome.
    # The phenopacket's VRS sequence ids (panels/structural.yaml chromosome_accessions) must agree.
    from irdtriage.sv.settings import load_settings

    if not MANE.is_file():
        pytest.skip("../shared/refdata/mane/MANE.GRCh38.v1.5.summary.txt.gz not present (outside data)")
    ours = load_settings()["chromosome_accessions"]["GRCh38"]
    seen = set()
    with gzip.open(MANE, "rt") as fh:
        head = fh.readline().lstrip("#").rstrip("\n").split("\t")
        col = head.index("GRCh38_chr")
        for line in fh:
            acc = line.rstrip("\n").split("\t")[col]
            if acc.startswith("NC_0000"):
                seen.add(acc)
    number = {acc: str(int(acc[3:9])) for acc in seen}
    by_chrom = {("X" if n == "23" else "Y" if n == "24" else n): acc for acc, n in number.items()}
    assert len(by_chrom) == len(seen)  # one version per chromosome in MANE
    assert {c: ours[c] for c in by_chrom} == by_chrom
