"""findings.tsv read back with pandas and the csv module (general-purpose readers): the first
line is the header row, so a spreadsheet or ``pandas.read_csv`` opens it as a table."""
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
    text = path.read_text()
    assert not text.startswith("#")  # a leading comment line made spreadsheets take it as the header
    # pandas with its defaults: the first row is the header
    df = pd.read_csv(path, sep="\t", dtype=str, keep_default_na=False)
    assert tuple(df.columns) == COLUMNS
    assert len(df) == len(r["findings"])
    assert list(df["finding_id"]) == ["F1", "F2", "F3"]
    assert df.loc[0, "met_criteria"] == "PVS1;PM2(Sup)"
    assert df.loc[1, "original_alts"] == "C;G"
    assert df.loc[0, "hgvs_p"] == 'p.(Arg34Ter) "quoted" next'
    assert set(df["caution"]) == {" ".join(CAUTION.split())}
    rows = list(csv.DictReader(io.StringIO(text), delimiter="\t"))
    assert len(rows) == 3 and list(rows[0]) == list(COLUMNS)
    # reader label in genotype_fit, the result key beside it
    assert rows[2]["genotype_fit"] == "one allele only in a recessive gene"
    assert rows[2]["genotype_fit_id"] == "single heterozygous in a recessive gene"


def test_cascade_step_shows_the_step_title_and_keeps_the_id():
    # before, the column held the internal key ("vc_isomerase") instead of the step's label
    r = json.loads(FIXTURE.read_text())
    r["genes"][0]["cascade_step"] = {"id": "vc_isomerase", "title": "visual cycle: RPE65 isomerohydrolase",
                                     "kind": "visual_cycle", "order": None}
    df = pd.read_csv(io.StringIO(render_tsv(r)), sep="\t", dtype=str, keep_default_na=False)
    assert df.loc[0, "cascade_step"] == "visual cycle: RPE65 isomerohydrolase"
    assert df.loc[0, "cascade_step_id"] == "vc_isomerase"


def test_biallelic_phase_unknown_is_shown_in_plain_words():
    r = json.loads(FIXTURE.read_text())
    r["genes"][0]["genotype_fit"] = "biallelic phase unknown"
    df = pd.read_csv(io.StringIO(render_tsv(r)), sep="\t", dtype=str, keep_default_na=False)
    assert df.loc[0, "genotype_fit"] == "two alleles, phase not determined"
    assert df.loc[0, "genotype_fit_id"] == "biallelic phase unknown"


def test_every_zygosity_and_allele_depths_survive():
    r = json.loads(FIXTURE.read_text())
    zs = ["homoplasmic", "heteroplasmic", "haploid call"]
    for f, z in zip(r["findings"], zs):
        f["zygosity"] = z
    r["findings"][0]["ad"] = [3, 40]
    r["findings"][1]["ad"] = [None, 12]
    df = pd.read_csv(io.StringIO(render_tsv(r)), sep="\t", dtype=str, keep_default_na=False)
    assert list(df["zygosity"]) == zs
    assert list(df["ad"]) == ["3;40", ".;12", ""]


def test_empty_result_has_header_only():
    r = json.loads(FIXTURE.read_text())
    r["findings"], r["genes"] = [], []
    lines = render_tsv(r).splitlines()
    assert len(lines) == 1 and lines[0].split("\t") == list(COLUMNS)
