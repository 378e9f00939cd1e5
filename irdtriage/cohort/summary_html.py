"""cohort.html: the batch summary as one self-contained page (inline CSS and SVG, no scripts,
no external assets), caution first. Drawn from ``summary.cohort_data``."""
from __future__ import annotations

from html import escape
from typing import Any

from .. import CAUTION

CSS = """
body{font:14px/1.45 system-ui,sans-serif;margin:1.5em auto;max-width:1100px;padding:0 1em;color:#1d2327}
h1{font-size:1.5em;margin:.2em 0}h2{font-size:1.15em;margin:1.4em 0 .4em;border-bottom:1px solid #ccd3d8}
.caution{border:2px solid #8a5a00;background:#fff7e6;padding:.6em .8em;margin:.8em 0}
table{border-collapse:collapse;margin:.3em 0}td,th{border:1px solid #ccd3d8;padding:.25em .5em;text-align:left;
vertical-align:top}th{background:#eef2f4}.num{text-align:right}.tiles{display:flex;gap:.8em;flex-wrap:wrap}
.tile{border:1px solid #ccd3d8;padding:.5em .9em;min-width:7em}.tile b{display:block;font-size:1.5em}
.failed{color:#9b1c1c}.muted{color:#5b6770}
@media print{.tiles{gap:.3em}body{max-width:none}}
"""


def _e(v: Any) -> str:
    return escape("" if v is None else str(v))


def _table(headers: list[str], rows: list[list[Any]], numeric: set[int] = frozenset()) -> str:
    if not rows:
        return '<p class="muted">none</p>'
    head = "".join(f"<th>{_e(h)}</th>" for h in headers)
    body = "".join("<tr>" + "".join(f'<td class="num">{_e(c)}</td>' if i in numeric else f"<td>{_e(c)}</td>"
                                    for i, c in enumerate(r)) + "</tr>" for r in rows)
    return f"<table><thead><tr>{head}</tr></thead><tbody>{body}</tbody></table>"


def bar_chart(genes: list[dict], limit: int = 25) -> str:
    """Horizontal bars: cases per gene (CAUSATIVE or CANDIDATE finding), the solved part darker."""
    genes = genes[:limit]
    if not genes:
        return '<p class="muted">no gene has a causative or candidate finding in these cases</p>'
    top = max(g["cases"] for g in genes) or 1
    row_h, label_w, bar_w = 22, 90, 560
    height = row_h * len(genes) + 30
    parts = [f'<svg xmlns="http://www.w3.org/2000/svg" width="{label_w + bar_w + 130}" height="{height}" '
             f'role="img" aria-label="cases per gene">']
    for i, g in enumerate(genes):
        y = 10 + i * row_h
        w_all = bar_w * g["cases"] / top
        w_solved = bar_w * g["solved"] / top
        parts.append(f'<text x="{label_w - 6}" y="{y + 14}" text-anchor="end" font-size="12">{_e(g["gene"])}</text>')
        parts.append(f'<rect x="{label_w}" y="{y}" width="{w_all:.1f}" height="{row_h - 6}" fill="#9fc2d6">'
                     f'<title>{_e(g["gene"])}: {g["cases"]} case(s), {g["solved"]} solved</title></rect>')
        if g["solved"]:
            parts.append(f'<rect x="{label_w}" y="{y}" width="{w_solved:.1f}" height="{row_h - 6}" fill="#2f6f8f"/>')
        solved = f" ({g['solved']} solved)" if g["solved"] else ""
        parts.append(f'<text x="{label_w + w_all + 6:.1f}" y="{y + 14}" font-size="12">{g["cases"]}{solved}</text>')
    parts.append(f'<text x="{label_w}" y="{height - 4}" font-size="11" fill="#5b6770">dark: solved by the gene '
                 f'(CAUSATIVE); light: candidate</text></svg>')
    return "".join(parts)


def render_html(data: dict) -> str:
    sc = data["status_counts"]
    y = data["yield"]
    yield_text = f"{100 * y:.0f} %" if y is not None else "n/a"
    b = data["batch"]
    tiles = "".join(f'<div class="tile"><b>{_e(v)}</b>{_e(k)}</div>' for k, v in (
        ("cases", len(data["cases"])), ("SOLVED", sc.get("SOLVED", 0)), ("IN_PROGRESS", sc.get("IN_PROGRESS", 0)),
        ("UNSOLVED", sc.get("UNSOLVED", 0)), ("failed", sc.get("failed", 0)), ("diagnostic yield", yield_text)))
    genes = _table(["gene", "cases", "solved by the gene", "case names"],
                   [[g["gene"], g["cases"], g["solved"], ", ".join(g["case_names"])] for g in data["genes"]], {1, 2})
    alleles = _table(["allele (chrom-pos-ref-alt)", "gene", "HGVS", "classes", "carrier cases",
                      "two copies", "one copy", "cases"],
                     [[a["key"], a["gene"], " ".join(x for x in (a["hgvs_c"], a["hgvs_p"]) if x),
                       ", ".join(a["classes"]), a["carriers"], a["two_copies"], a["one_copy"], ", ".join(a["cases"])]
                      for a in data["recurrent_alleles"]], {4, 5, 6})
    changes = _table(["case", "status before", "status now", "what changed"],
                     [[c["case"], c["old"], c["new"], c["changed"]] for c in data["status_changes"]])
    failed = _table(["case", "manifest line", "error"], [[f["case"], f["line"], f["error"]] for f in data["failed"]])
    cases = _table(["case", "run", "case status", "top gene", "genotype fit", "P/LP findings", "candidate genes",
                    "changed since previous"],
                   [[r["case"], r["run_status"], r["case_status"], r["top_gene"], r["genotype_fit"],
                     r["plp_findings"], r["candidate_genes"], r["changed"] or ("" if not r["error"] else r["error"])]
                    for r in data["cases"]], {5})
    caution = _e(" ".join(CAUTION.split()))
    return f"""<!DOCTYPE html>
<html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width,initial-scale=1">
<title>irdtriage cohort summary</title><style>{CSS}</style></head><body>
<h1>Cohort summary</h1>
<div class="caution" id="caution"><strong>Caution.</strong> {caution} Patient data stayed on this machine.</div>
<p class="muted">Batch started {_e(b.get("started"))}, finished {_e(b.get("finished"))}; engine {_e(b.get("engine"))};
manifest {_e(b.get("manifest"))}; irdtriage {_e((b.get("tool") or {}).get("version"))}.</p>
<h2>Cases by status</h2><div class="tiles">{tiles}</div>
<p class="muted">Diagnostic yield: SOLVED cases among the {data["finished"]} case(s) that finished (failed cases left out).</p>
<h2>Cases per gene</h2>{bar_chart(data["genes"])}
{genes}
<h2>Recurrent alleles (in two or more cases)</h2>{alleles}
<h2>Status changed since the previous run</h2>{changes}
<h2 class="failed">Failed cases</h2>{failed}
<h2>All cases</h2>{cases}
<div class="caution"><strong>Caution.</strong> {caution}</div>
</body></html>
"""
