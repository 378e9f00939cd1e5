"""The NCBI RefSeqGene and LRG records under ../shared/refdata/refseqgene (see its README): paths,
the skip when they are absent, and the USH2A record placed on GRCh38, shared by the annotation
tests. USH2A lies on the GRCh38 minus strand: chr1 position = 216,428,397 - NG_009497.1 position
(refdata README; checked there at 43 of 43 expert-panel substitutions)."""
from __future__ import annotations

import gzip
from pathlib import Path

import pytest

from irdtriage.annotate.providers import Placement, RegionSequence, read_gff

REFDATA = Path(__file__).resolve().parents[1].parent / "shared" / "refdata"
RSG = REFDATA / "refseqgene"
LRG = RSG / "LRG_702.xml"
NG_FASTA, NG_GFF = RSG / "NG_009497.1.fasta.gz", RSG / "NG_009497.1.gff3"
NG_ANCHOR = 216428397
USH2A_TX = "NM_206933.2"


def need(*paths: Path) -> None:
    """Skip the test, naming the files, when outside reference data is absent."""
    missing = [str(p) for p in paths if not p.exists()]
    if missing:
        pytest.skip(f"outside reference data not present: {', '.join(missing)}")


def ng_sequence() -> str:
    """NG_009497.1 in gene orientation, as written in the FASTA."""
    need(NG_FASTA)
    with gzip.open(NG_FASTA, "rt") as fh:
        return "".join(line.strip() for line in fh if not line.startswith(">"))


def load_ush2a():
    """(region sequence on GRCh38 chr1, the record's NM_206933.2 transcript set, NG sequence)."""
    need(NG_FASTA, NG_GFF)
    ng = ng_sequence()
    region = RegionSequence.from_gene_orientation("1", ng, NG_ANCHOR, "-")
    txs = read_gff(str(NG_GFF), {"NG_009497.1": Placement("1", NG_ANCHOR, "-")}, keep=[USH2A_TX])
    return region, txs, ng
