"""findings.tsv read back with pandas and the csv module (general-purpose readers)."""
import csv
import io
import json
from pathlib import Path

import pandas as pd

from irdtriage import CAUTION
from irdtriage.report.tsv import COLUMNS, render_tsv, write_tsv

FIXTURE = Path(__file__).parent / "fixtures" / "result_example.json"


def test_tsv_reads_back(tmp_path):
    r = json.loads(FIXTURE.read_text())
    r["findings"][0]["hgvs_p"] = 'p.(Arg34Ter)\t"quoted"\nnext'
    path = write_tsv(r, tmp_path / "findings.tsv")
    lines = path.read_text().splitlines()
    assert lines[0].startswith("# irdtriage ") and " ".join(CAUTION.split()) in lines[0]
    df = pd.read_csv(path, sep="\t", comment=None, skiprows=1, dtype=str, keep_default_na=False)
    assert tuple(df.columns) == COLUMNS
    assert len(df) == len(r["findings"])
    assert list(df["finding_id"]) == ["F1", "F2", "F3"]
    assert df.loc[0, "met_criteria"] == "PVS1;PM2(Sup)"
    assert df.loc[1, "original_alts"] == "C;G"
    assert df.loc[0, "hgvs_p"] == 'p.(Arg34Ter) "quoted" next'
    rows = list(csv.DictReader(io.StringIO("\n".join(lines[1:])), delimiter="\t"))
    assert rows[2]["genotype_fit"] == "single heterozygous in a recessive gene"


def test_empty_result_has_header_only():
    r = json.loads(FIXTURE.read_text())
    r["findings"], r["genes"] = [], []
    lines = render_tsv(r).splitlines()
    assert len(lines) == 2 and lines[1].split("\t") == list(COLUMNS)
