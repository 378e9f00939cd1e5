"""HTML report rendered by a real headless Chromium (Debian `chromium`): the DOM text has the
expected sections and the caution, nothing is fetched from outside the file, hostile strings
stay text, and the screenshot is not blank (PNG decoded with zlib/struct per the PNG spec,
W3C/ISO 15948)."""
import json
import re
import shutil
import struct
import subprocess
import zlib
from html.parser import HTMLParser
from pathlib import Path

import pytest

from irdtriage import CAUTION
from irdtriage.models import ALL_CODES
from irdtriage.report.html import render_html

FIXTURE = Path(__file__).parent / "fixtures" / "result_example.json"
CHROMIUM = shutil.which("chromium")  # Debian's package; the browser checks skip without it
needs_chromium = pytest.mark.skipif(CHROMIUM is None, reason="chromium is not installed (Debian package `chromium`)")


def _chromium(tmp_path, page: Path, *args: str) -> subprocess.CompletedProcess:
    cmd = [CHROMIUM, "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
           "--disable-background-networking", "--disable-component-update", "--disable-sync",
           f"--user-data-dir={tmp_path / 'chromium-profile'}", *args, page.as_uri()]
    return subprocess.run(cmd, capture_output=True, text=True, timeout=120, check=True)


class _Text(HTMLParser):
    def __init__(self):
        super().__init__()
        self.parts, self.tags, self._skip = [], [], 0

    def handle_starttag(self, tag, attrs):
        self.tags.append((tag, dict(attrs)))
        if tag in ("style", "title"):
            self._skip += 1

    def handle_endtag(self, tag):
        if tag in ("style", "title") and self._skip:
            self._skip -= 1

    def handle_data(self, data):
        if not self._skip:
            self.parts.append(data)

    @property
    def text(self):
        return " ".join(" ".join(self.parts).split())


def _dom(tmp_path, result) -> _Text:
    page = tmp_path / "report.html"
    page.write_text(render_html(result), encoding="utf-8")
    p = _Text()
    p.feed(_chromium(tmp_path, page, "--dump-dom").stdout)
    return p


@needs_chromium
def test_sections_and_caution_in_rendered_dom(tmp_path):
    dom = _dom(tmp_path, json.loads(FIXTURE.read_text()))
    text = dom.text
    for heading in ("Case call", "Gene hypotheses, ranked", "Where the top genes act in light detection",
                    "Gene hypotheses in detail", "What the gene does", "What a defect breaks", "Phenotype given",
                    "Next steps", "Methods and limitations", "Cautions", "All 28 criteria"):
        assert heading in text, heading
    assert text.count(" ".join(CAUTION.split())) >= 2  # top and bottom
    assert text.index("IN_PROGRESS") < text.index("GENEA") < text.index("GENEB")
    # every criterion code shown for each of the three findings
    cells = re.findall(r"\b(?:PVS1|P[SMP]\d|BA1|B[SP]\d)\b", text)
    for code in ALL_CODES:
        assert cells.count(code) >= 3, code
    # self-contained: no script, no external resource of any kind
    for tag, attrs in dom.tags:
        assert tag not in ("script", "link", "img", "iframe", "object"), tag
        for k, v in attrs.items():
            if k in ("src", "href") and v:
                assert v.startswith("#"), (tag, k, v)
    svgs = [a for t, a in dom.tags if t == "svg"]
    assert len(svgs) >= 3 and all(a.get("role") == "img" and a.get("aria-labelledby") for a in svgs)


@needs_chromium
def test_hostile_sample_id_stays_text(tmp_path):
    r = json.loads(FIXTURE.read_text())
    evil = '<script>document.title="pwned"</script><img src=x onerror=alert(1)>"&'
    r["sample"]["id"] = evil
    r["findings"][0]["hgvs_c"] = "c.1A>G</td><b>"
    dom = _dom(tmp_path, r)
    plain = _dom(tmp_path, json.loads(FIXTURE.read_text()))
    assert sorted(t for t, _ in dom.tags) == sorted(t for t, _ in plain.tags)  # no element injected
    assert not any(t in ("script", "img") for t, _ in dom.tags)
    assert evil in dom.text and "c.1A>G</td><b>" in dom.text


def _png_pixels(path: Path):
    """Minimal PNG decoder (8-bit RGB/RGBA, non-interlaced) following the PNG spec's filter types."""
    data = path.read_bytes()
    assert data[:8] == b"\x89PNG\r\n\x1a\n"
    pos, idat, w = 8, b"", None
    while pos < len(data):
        n, kind = struct.unpack(">I4s", data[pos:pos + 8])
        body = data[pos + 8:pos + 8 + n]
        if kind == b"IHDR":
            w, h, depth, ctype, _, _, interlace = struct.unpack(">IIBBBBB", body)
            assert depth == 8 and ctype in (2, 6) and interlace == 0
            bpp = 3 if ctype == 2 else 4
        elif kind == b"IDAT":
            idat += body
        pos += 12 + n
    raw = zlib.decompress(idat)
    stride = w * bpp
    prev = bytearray(stride)
    rows = []
    for y in range(h):
        f = raw[y * (stride + 1)]
        cur = bytearray(raw[y * (stride + 1) + 1:(y + 1) * (stride + 1)])
        for i in range(stride):
            a = cur[i - bpp] if i >= bpp else 0
            b = prev[i]
            c = prev[i - bpp] if i >= bpp else 0
            if f == 1:
                cur[i] = (cur[i] + a) & 255
            elif f == 2:
                cur[i] = (cur[i] + b) & 255
            elif f == 3:
                cur[i] = (cur[i] + ((a + b) >> 1)) & 255
            elif f == 4:
                p = a + b - c
                pa, pb, pc = abs(p - a), abs(p - b), abs(p - c)
                cur[i] = (cur[i] + (a if pa <= pb and pa <= pc else b if pb <= pc else c)) & 255
        rows.append(bytes(cur))
        prev = cur
    return w, h, bpp, rows


@needs_chromium
def test_screenshot_is_not_blank(tmp_path):
    page = tmp_path / "report.html"
    page.write_text(render_html(json.loads(FIXTURE.read_text())), encoding="utf-8")
    png = tmp_path / "shot.png"
    # small window keeps the pure-Python decoder quick; scripts/screenshot_report.py makes the full-size one
    _chromium(tmp_path, page, f"--screenshot={png}", "--window-size=500,700", "--hide-scrollbars")
    w, h, bpp, rows = _png_pixels(png)
    assert (w, h) == (500, 700)
    grey = [sum(row[i:i + 3]) / 3 for row in rows[::3] for i in range(0, len(row), bpp * 3)]
    mean = sum(grey) / len(grey)
    var = sum((g - mean) ** 2 for g in grey) / len(grey)
    dark = sum(g < 100 for g in grey) / len(grey)
    assert var > 200, var  # a blank page has variance ~0
    assert 0.005 < dark < 0.5, dark  # some dark text, mostly light paper


def test_render_is_pure_and_escapes_without_browser():
    r = json.loads(FIXTURE.read_text())
    r["sample"]["id"] = "<x>&"
    out = render_html(r)
    assert "<x>" not in out and "&lt;x&gt;&amp;" in out
    assert out == render_html(r)


@needs_chromium
def test_prints_on_a4(tmp_path):
    # source: ISO 216 A4 = 210 x 297 mm = 595.28 x 841.89 PostScript points
    page = tmp_path / "report.html"
    page.write_text(render_html(json.loads(FIXTURE.read_text())), encoding="utf-8")
    pdf = tmp_path / "r.pdf"
    _chromium(tmp_path, page, f"--print-to-pdf={pdf}", "--no-pdf-header-footer")
    boxes = re.findall(rb"/MediaBox \[0 0 ([\d.]+) ([\d.]+)\]", pdf.read_bytes())
    assert boxes
    for w, h in boxes:
        assert abs(float(w) - 595.28) < 1.5 and abs(float(h) - 841.89) < 1.5


def _text_of(result) -> str:
    # stdlib HTML parser (html.parser) as the reader: the visible text of the page
    p = _Text()
    p.feed(render_html(result))
    return p.text


def test_gene_notes_lose_provenance_markers_in_prose():
    r = json.loads(FIXTURE.read_text())
    r["genes"][0]["notes"] = [
        "Recurrent founder allele p.(Tyr51Cys) (from memory).",
        "Dominant disease by misfolding (class II variants such as p.(Pro23His); from memory).",
        "GRCh37 span widened from the GENCODE canonical transcript (1-2) to cover the MANE Select transcript.",
    ]
    r["genes"][0]["next_steps"] = ["Look for the deep-intronic second allele (from memory)."]
    text = _text_of(r)
    assert "from memory" not in text
    assert "Recurrent founder allele p.(Tyr51Cys)." in text
    assert "(class II variants such as p.(Pro23His))" in text
    assert "GRCh37 span widened" not in text  # a curation note, not reader prose
    assert "Look for the deep-intronic second allele." in text
    assert r["genes"][0]["notes"][0].endswith("(from memory).")  # the data keeps its provenance


def test_genotype_fit_key_is_shown_in_plain_words():
    r = json.loads(FIXTURE.read_text())
    r["genes"][0]["genotype_fit"] = "biallelic phase unknown"
    text = _text_of(r)
    assert "two alleles, phase not determined" in text
    assert "biallelic phase unknown" not in text


@pytest.mark.parametrize("zygosity, short, full", [
    ("hemizygous", "hemi", "hemizygous"),
    ("homoplasmic", "homoplasmic", "homoplasmic (mtDNA)"),
    ("heteroplasmic", "heteroplasmic", "heteroplasmic (mtDNA)"),
    ("haploid call", "haploid (review)", "one-allele call where two copies are expected (review)"),
])
def test_every_zygosity_has_a_label(zygosity, short, full):
    from irdtriage.report import html as html_mod

    r = json.loads(FIXTURE.read_text())
    f = r["findings"][0]
    f["zygosity"] = zygosity
    mito = zygosity in ("homoplasmic", "heteroplasmic")
    if mito:
        f["allele_balance"] = 0.48  # the mtDNA labels carry the level read from the allele balance
    assert f"<td>{short}{' 48 %' if mito else ''}</td>" in html_mod._compact_rows([f])
    assert f"{full}{', 48 % of reads' if mito else ''} (" in _text_of(r)  # finding facts: "<label> (GT)"
