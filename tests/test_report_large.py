"""Large results (an unannotated exome gives tens of thousands of findings): the HTML draws only
the leading genes in full, the phenopacket keeps the findings that matter, and result.json,
findings.tsv and findings.vcf.gz stay complete. Each output is re-read by its outside reader:
headless Chromium (Debian `chromium`) for the HTML, the `phenopackets` package (protobuf
schema) for the phenopacket, `json` + `jsonschema` for result.json, the stdlib `csv` reader for
the TSV, pysam/htslib and `bcftools` for the VCF. The inputs are copies of the invented example;
every expected number is counted from the input the test builds, never taken from demo data."""
import csv
import importlib.util
import io
import json
import math
import re
import shutil
import subprocess
from html.parser import HTMLParser
from pathlib import Path

import phenopackets
import pysam
import pysam.bcftools
import pytest
from google.protobuf import json_format
from rich.console import Console

from irdtriage import CAUTION
from irdtriage.report import html as html_out
from irdtriage.report.json_out import COMPACT_FINDINGS, load_result, render_result_json
from irdtriage.report.phenopacket_out import to_phenopacket
from irdtriage.report.terminal import render_terminal
from irdtriage.report.writers import write_outputs

_spec = importlib.util.spec_from_file_location("large_result", Path(__file__).parent / "fixtures" / "large_result.py")
large_result = importlib.util.module_from_spec(_spec)
_spec.loader.exec_module(large_result)

CHROMIUM = shutil.which("chromium")  # Debian's package; the browser checks skip without it
needs_chromium = pytest.mark.skipif(CHROMIUM is None, reason="chromium is not installed (Debian package `chromium`)")


def _dom(tmp_path, text: str) -> str:
    page = tmp_path / "report.html"
    page.write_text(text, encoding="utf-8")
    cmd = [CHROMIUM, "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
           "--disable-background-networking", "--disable-component-update", "--disable-sync",
           f"--user-data-dir={tmp_path / 'chromium-profile'}", "--dump-dom", page.as_uri()]
    return subprocess.run(cmd, capture_output=True, text=True, timeout=120, check=True).stdout


class _Tables(HTMLParser):
    """Sections (by id/class) and the rows of each table, as the browser serialised them."""

    def __init__(self):
        super().__init__()
        self.gene_sections, self.tables, self._row, self._cell, self._in_cell = [], [], None, None, False
        self.section = None

    def handle_starttag(self, tag, attrs):
        a = dict(attrs)
        if tag == "section":
            self.section = a.get("id")
            if a.get("class") == "gene":
                self.gene_sections.append(a.get("id"))
        elif tag == "table":
            self.tables.append({"class": a.get("class"), "section": self.section, "rows": []})
        elif tag == "tr":
            self._row = []
        elif tag in ("td", "th"):
            self._cell, self._in_cell = [], True

    def handle_endtag(self, tag):
        if tag in ("td", "th") and self._in_cell:
            self._row.append(" ".join("".join(self._cell).split()))
            self._in_cell = False
        elif tag == "tr" and self._row is not None:
            self.tables[-1]["rows"].append(self._row)
            self._row = None

    def handle_data(self, data):
        if self._in_cell:
            self._cell.append(data)


def _expected_detail(result):
    by_id = {f["id"]: f for f in result["findings"]}
    return [g for i, g in enumerate(result["genes"])
            if i < html_out.DETAIL_GENES
            or any(by_id[x]["interpretation_status"] in ("CAUSATIVE", "CANDIDATE") for x in g["findings"])]


@needs_chromium
def test_html_many_findings_counts_per_gene_and_class(tmp_path):
    r = large_result.build(400, n_genes=30)  # 1,200 findings
    far = r["genes"][25]["findings"][-1]  # a candidate far down the ranking is drawn in full
    next(f for f in r["findings"] if f["id"] == far)["interpretation_status"] = "CANDIDATE"
    detail = _expected_detail(r)
    assert len(detail) == html_out.DETAIL_GENES + 1
    p = _Tables()
    p.feed(_dom(tmp_path, html_out.render_html(r)))
    assert p.gene_sections == [f"gene-{g['symbol']}" for g in detail]
    crit_tables = [t for t in p.tables if t["class"] == "criteria"]
    assert len(crit_tables) == sum(min(len(g["findings"]), html_out.DETAIL_FINDINGS) for g in detail)
    assert all(len(t["rows"]) == 1 + 28 for t in crit_tables)
    shown = {x for g in detail for x in g["findings"]}
    others = [f for f in r["findings"] if f["id"] not in shown]
    assert len(others) > html_out.OTHER_ROWS_MAX
    (counts,) = [t for t in p.tables if t["class"] == "counts"]
    head, body = counts["rows"][0], counts["rows"][1:]
    assert {row[0] for row in body} == {f["gene"] for f in others}
    assert sum(int(row[-1]) for row in body) == len(others)
    for row in body:  # each class cell equals the count in the input
        for col, cell in zip(head[1:-1], row[1:-1]):
            n = sum(1 for f in others if f["gene"] == row[0] and (f["classification"] or "not classified") == col)
            assert int(cell or 0) == n
    assert len(html_out.render_html(r)) < 3_000_000


@needs_chromium
def test_html_few_other_findings_one_row_each(tmp_path):
    r = large_result.build(40, n_genes=30)  # 120 findings, 20 genes beyond the top 10
    detail = _expected_detail(r)
    shown = {x for g in detail for x in g["findings"]}
    others = [f for f in r["findings"] if f["id"] not in shown]
    assert 0 < len(others) <= html_out.OTHER_ROWS_MAX
    dom = _dom(tmp_path, html_out.render_html(r))
    p = _Tables()
    p.feed(dom)
    (table,) = [t for t in p.tables if t["class"] == "compact" and t["section"] == "other-findings"]
    assert [row[0] for row in table["rows"][1:]] == [f["id"] for f in others]
    assert "irdtriage explain" in " ".join(dom.split())


def test_phenopacket_keeps_findings_that_matter():
    r = large_result.build(2000, n_genes=30)  # 6,000 findings, nearly all REJECTED
    for f in r["findings"][100:110]:
        f["interpretation_status"] = "UNKNOWN_STATUS"  # below LP: left out
    r["findings"][200]["interpretation_status"] = "CONTRIBUTORY"
    pp = to_phenopacket(r)
    json_format.ParseDict(pp, phenopackets.Phenopacket())  # official protobuf schema
    gis = pp["interpretations"][-1]["diagnosis"]["genomicInterpretations"]
    got = {gi["variantInterpretation"]["variationDescriptor"]["id"] for gi in gis}
    want = {f"irdtriage-{f['id']}" for f in r["findings"]
            if f["interpretation_status"] in ("CAUSATIVE", "CANDIDATE", "CONTRIBUTORY")
            or f["classification"] in ("Pathogenic", "Likely pathogenic")}
    assert got == want and len(gis) == len(want)
    assert len(want) < 20 < len(r["findings"])


def test_result_json_large_is_same_value_and_valid(tmp_path):
    r = large_result.build(500, n_genes=30)
    assert len(r["findings"]) > COMPACT_FINDINGS
    text = render_result_json(r)
    back = json.loads(text)
    assert back == r and list(back) == list(r)
    lines = text.splitlines()
    assert sum(1 for line in lines if line.startswith('    {"id":')) == len(r["findings"])  # one line each
    assert lines[1] == '  "schema_version": "1.0",'  # indent 2 kept
    path = tmp_path / "result.json"
    path.write_text(text, encoding="utf-8")
    load_result(path)  # jsonschema validation
    r["findings"][5]["posterior"] = math.nan  # not JSON: refused, not written as NaN
    with pytest.raises(ValueError):
        render_result_json(r)


def test_tsv_and_vcf_stay_complete(tmp_path):
    r = large_result.build(700, n_genes=30)
    out = write_outputs(r, tmp_path, formats=["tsv", "vcf"])
    rows = list(csv.reader(io.StringIO(out["tsv"].read_text(encoding="utf-8")), delimiter="\t"))
    assert rows[0][0] == "finding_id" and rows[0][-1] == "caution"  # header first (no comment line)
    assert [row[0] for row in rows[1:]] == [f["id"] for f in r["findings"]]
    with pysam.VariantFile(str(out["vcf"])) as vf:
        ids = [rec.info["IRDT_ID"] for rec in vf]
    assert sorted(ids) == sorted(f["id"] for f in r["findings"])
    # bcftools as bundled with pysam (no system binary needed) reads every record back
    body = pysam.bcftools.view("-H", str(out["vcf"]))
    assert len(body.splitlines()) == len(r["findings"])


def test_streamed_outputs_all_or_nothing(tmp_path):
    r = large_result.build(500, n_genes=30)
    r["findings"][-1]["points"] = math.inf  # result.json cannot encode it
    (tmp_path / "findings.tsv").write_text("previous")
    with pytest.raises(ValueError):
        write_outputs(r, tmp_path)
    assert sorted(p.name for p in tmp_path.iterdir()) == ["findings.tsv"]
    assert (tmp_path / "findings.tsv").read_text() == "previous"


def test_phenotype_rank_shown_when_given_and_quiet_terminal():
    r = large_result.build(1, n_genes=3)
    r["genes"][0]["phenotype_match"].update(rank=3, genes_ranked=41)
    page = html_out.render_html(r)
    assert "rank 3 of 41 panel genes" in page
    r2 = large_result.build(1, n_genes=3)
    assert not re.search(r"rank \d+ (of|among)", html_out.render_html(r2))  # absent: nothing shown
    buf = io.StringIO()
    render_terminal(r, Console(file=buf, width=80, color_system=None), quiet=True)
    lines = buf.getvalue().splitlines()
    # case line (maybe wrapped), top gene line (maybe wrapped), caution
    (gi,) = [i for i, line in enumerate(lines) if line.split()[:2] == ["1", r["genes"][0]["symbol"]]]
    (ci,) = [i for i, line in enumerate(lines) if line.startswith("CAUTION")]
    assert gi < ci and "(rank 3 of 41)" in " ".join(" ".join(lines[gi:ci]).split())
    assert " ".join(" ".join(lines[ci:]).split()) == "CAUTION: " + " ".join(CAUTION.split())
    assert all(len(line) <= 80 for line in lines)
