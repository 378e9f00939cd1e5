"""cohort.tsv and cohort.html, checked by construction against the cases' own result.json files:
the counts per status, the cases per gene and the carriers of an allele planted in several
cases must be what the per-case results say. The page is opened in a real headless Chromium
(Debian `chromium`) when installed; that check skips with the reason otherwise."""
from __future__ import annotations

import csv
import json
import shutil
import subprocess
from html.parser import HTMLParser

import pytest

from cohort_cases import KINDS, RPE65_STOP, make_cohort
from irdtriage.cohort.manifest import read_manifest
from irdtriage.cohort.runner import local_engine, run_batch
from irdtriage.cohort.summary import cohort_data, write_summary

CHROMIUM = shutil.which("chromium")
CASES = 6  # KINDS cycled: RPE65_STOP is planted in cases 1 (two copies), 2 (one copy) and 6 (two copies)


@pytest.fixture(scope="module")
def batch_dir(tmp_path_factory):
    folder = tmp_path_factory.mktemp("summary")
    manifest = make_cohort(folder, CASES, extra_rows=["BROKEN\tvcfs/none.vcf.gz\t\t\t"])
    out = folder / "out"
    batch = run_batch(read_manifest(manifest), {"out": str(out), "formats": ["json"]}, local_engine(1))
    write_summary(out, batch)
    return out, batch


def results(out):
    return {p.parent.name: json.loads(p.read_text()) for p in sorted(out.glob("C*/result.json"))}


def test_numbers_agree_with_the_case_results(batch_dir):
    out, batch = batch_dir
    data = cohort_data(out, batch)
    res = results(out)
    assert len(res) == CASES
    statuses = [r["case"]["status"] for r in res.values()]
    for s in ("SOLVED", "IN_PROGRESS", "UNSOLVED"):
        assert data["status_counts"][s] == statuses.count(s)
    assert data["status_counts"]["failed"] == 1 and data["failed"][0]["case"] == "BROKEN"
    assert data["yield"] == statuses.count("SOLVED") / CASES
    per_gene = {}
    for name, r in res.items():
        for f in r["findings"]:
            if f["interpretation_status"] in ("CAUSATIVE", "CANDIDATE"):
                per_gene.setdefault(f["gene"], set()).add(name)
    assert {g["gene"]: g["cases"] for g in data["genes"]} == {g: len(c) for g, c in per_gene.items()}
    # the planted allele: carriers by construction (KINDS 0 homozygous, KINDS 1 heterozygous)
    chrom, pos, ref, alt, _ = RPE65_STOP
    key = f"{chrom[3:]}-{pos}-{ref}-{alt}"
    planted = [i for i in range(CASES) if any(rec[0] == RPE65_STOP for rec in KINDS[i % len(KINDS)][0])]
    two = [i for i in planted if dict((r[0][1], r[1]) for r in KINDS[i % len(KINDS)][0])[pos].startswith("1/1")]
    rec = {a["key"]: a for a in data["recurrent_alleles"]}[key]
    assert rec["carriers"] == len(planted) == 3
    assert (rec["two_copies"], rec["one_copy"]) == (len(two), len(planted) - len(two))
    assert rec["cases"] == [f"C{i + 1:04d}" for i in planted]


def test_tsv_has_one_row_per_case_with_the_caution(batch_dir):
    out, batch = batch_dir
    rows = list(csv.DictReader((out / "cohort.tsv").open(), delimiter="\t"))
    assert [r["case"] for r in rows] == [f"C{i:04d}" for i in range(1, CASES + 1)] + ["BROKEN"]
    assert all("qualified clinical scientist" in r["caution"] for r in rows)
    assert rows[-1]["run_status"] == "failed" and "VCF file not found" in rows[-1]["error"]
    res = results(out)
    assert all(r["case_status"] == res[r["case"]]["case"]["status"] for r in rows[:-1])


def test_gene_and_allele_tables_agree_with_the_case_results(batch_dir):
    # Checked against the per-case result.json files and, for the allele, the planted carriers.
    out, batch = batch_dir
    res = results(out)
    genes = list(csv.DictReader((out / "cohort_genes.tsv").open(), delimiter="\t"))
    assert list(genes[0]) == ["gene", "cases", "solved", "case_names", "caution"]
    want: dict[str, tuple[set, set]] = {}
    for name, r in res.items():
        for f in r["findings"]:
            if f["interpretation_status"] in ("CAUSATIVE", "CANDIDATE"):
                c, s = want.setdefault(f["gene"], (set(), set()))
                c.add(name)
                if f["interpretation_status"] == "CAUSATIVE":
                    s.add(name)
    assert {g["gene"]: (int(g["cases"]), int(g["solved"]), g["case_names"]) for g in genes} == {
        g: (len(c), len(s), ",".join(sorted(c))) for g, (c, s) in want.items()}
    assert all("qualified clinical scientist" in g["caution"] for g in genes)
    alleles = list(csv.DictReader((out / "cohort_alleles.tsv").open(), delimiter="\t"))
    assert list(alleles[0])[-1] == "caution"
    chrom, pos, ref, alt, _ = RPE65_STOP
    row = {a["allele"]: a for a in alleles}[f"{chrom[3:]}-{pos}-{ref}-{alt}"]
    planted = [i for i in range(CASES) if any(rec[0] == RPE65_STOP for rec in KINDS[i % len(KINDS)][0])]
    assert int(row["carriers"]) == len(planted) == 3 and row["gene"] == "RPE65"
    assert int(row["two_copies"]) + int(row["one_copy"]) == 3
    assert row["cases"] == ",".join(f"C{i + 1:04d}" for i in planted)
    assert all(int(a["carriers"]) >= 2 for a in alleles)


def test_html_is_self_contained(batch_dir):
    out, batch = batch_dir
    html = (out / "cohort.html").read_text()
    assert "<svg" in html and "Decision support only" in html
    assert "http://" not in html.replace('xmlns="http://www.w3.org/2000/svg"', "") and "https://" not in html
    assert "<script" not in html and "<link" not in html


class _Text(HTMLParser):
    def __init__(self):
        super().__init__()
        self.text, self.rects = [], 0

    def handle_starttag(self, tag, attrs):
        if tag == "rect":
            self.rects += 1

    def handle_data(self, data):
        if data.strip():
            self.text.append(data.strip())


@pytest.mark.browser
@pytest.mark.skipif(CHROMIUM is None, reason="chromium is not installed (Debian package `chromium`)")
def test_chromium_renders_the_page(batch_dir, tmp_path):
    out, batch = batch_dir
    page = out / "cohort.html"
    cmd = [CHROMIUM, "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
           "--disable-background-networking", "--disable-component-update", "--disable-sync",
           f"--user-data-dir={tmp_path / 'profile'}"]
    dom = subprocess.run(cmd + ["--dump-dom", page.as_uri()], capture_output=True, text=True, timeout=120,
                         check=True).stdout
    p = _Text()
    p.feed(dom)
    text = " ".join(p.text)
    assert "Cohort summary" in text and "Decision support only" in text and "BROKEN" in text
    data = cohort_data(out, batch)
    assert p.rects >= len(data["genes"]) > 0  # one bar (or two) per gene
    png = tmp_path / "shot.png"
    subprocess.run(cmd + [f"--screenshot={png}", "--window-size=500,700", "--hide-scrollbars", page.as_uri()],
                   capture_output=True, timeout=120, check=True)
    from test_report_html import _png_pixels  # the suite's pure-Python PNG decoder

    w, h, bpp, rows = _png_pixels(png)
    grey = [sum(row[i:i + 3]) / 3 for row in rows[::3] for i in range(0, len(row), bpp * 3)]
    mean = sum(grey) / len(grey)
    assert sum((g - mean) ** 2 for g in grey) / len(grey) > 200  # a blank page has variance ~0
