"""Self-consistency of the generated panel files: each committed file must be exactly what its
curation script makes from the outside tables in ../shared/refdata. This catches hand edits and
stale files; it is not a check against an outside expectation (the script and the file are both
the project's own), so it lives outside tests/external.

Tables (read-only; skipped with the reason when absent): MANE v1.5 summary and the
GENCODE-derived canonical transcript tables (see ../shared/refdata/README.md).
"""
from __future__ import annotations

import importlib.util
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
REFDATA = ROOT.parent / "shared" / "refdata"
MANE = REFDATA / "mane" / "MANE.GRCh38.v1.5.summary.txt.gz"
GRCH37 = REFDATA / "gene_spans" / "gencode_canonical_grch37.txt.gz"
GRCH38 = REFDATA / "gene_spans" / "gencode_canonical_grch38.txt.gz"

pytestmark = [
    pytest.mark.external,
    pytest.mark.skipif(not (MANE.is_file() and GRCH37.is_file() and GRCH38.is_file()),
                       reason="../shared/refdata (MANE v1.5 summary, GENCODE-derived span tables) not present"),
]


def test_genes_yaml_is_regenerated_from_seed(tmp_path):
    out = tmp_path / "genes.yaml"
    cmd = [sys.executable, str(ROOT / "scripts" / "curate_panel.py"), "--mane", str(MANE), "--grch37", str(GRCH37),
           "--grch38-table", str(GRCH38), "--seed", "panels/curation/seed.yaml", "--out", str(out)]
    r = subprocess.run(cmd, cwd=ROOT, capture_output=True, text=True)
    assert r.returncode == 0, r.stderr
    assert out.read_text() == (ROOT / "panels" / "genes.yaml").read_text(), \
        "panels/genes.yaml is stale or hand-edited: re-run scripts/curate_panel.py"


def test_exons_yaml_is_regenerated_from_tables(tmp_path):
    spec = importlib.util.spec_from_file_location("curate_exons", ROOT / "scripts" / "curate_exons.py")
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    out = tmp_path / "exons.yaml"
    assert mod.main(["--grch38", str(GRCH38), "--grch37", str(GRCH37), "--mane", str(MANE),
                     "--panel", str(ROOT / "panels" / "genes.yaml"), "--out", str(out)]) == 0
    assert out.read_text() == (ROOT / "panels" / "exons.yaml").read_text(), \
        "panels/exons.yaml is stale: re-run scripts/curate_exons.py"
