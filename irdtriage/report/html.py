"""Self-contained HTML case report (inline CSS and SVG; no script, font, image or link to
fetch), printable on A4. Every string from the result is escaped with html.escape.

Size: a person reads the top of a case, and an unannotated exome gives tens of thousands
of findings, so only the gene hypotheses that matter are drawn in full (gene section with
the cascade text, protein sketch and the 28-criterion table of each finding): the first
``DETAIL_GENES`` genes by rank plus any gene holding a CAUSATIVE or CANDIDATE finding; within
such a gene at most ``DETAIL_FINDINGS`` findings get a full table (most relevant first), the
rest a compact row. Every other finding is listed compactly (gene, HGVS / position,
zygosity, class, met criteria), or, above ``OTHER_ROWS_MAX`` of them, counted per gene and
class. The report says so where it happens; the full criterion tables of every finding are
in result.json and ``irdtriage explain``.
"""
from __future__ import annotations

import html as _html
from typing import Iterable, Optional

from irdtriage import __version__

from . import svg
from .common import (
    CLASS_SHORT,
    cautions,
    structural_facts,
    criteria_compact,
    findings_by_id,
    fmt,
    gene_findings,
    genotype_fit_label,
    input_limits,
    phenotype_rank,
    prose_notes,
    strip_provenance,
    zygosity_label,
)

DETAIL_GENES = 10
DETAIL_GENES_MAX = 25
DETAIL_FINDINGS = 20
OTHER_ROWS_MAX = 500
FINDING_IDS_SHOWN = 6
KEY_STATUSES = ("CAUSATIVE", "CANDIDATE")
STATUS_ORDER = {"CAUSATIVE": 0, "CANDIDATE": 1, "CONTRIBUTORY": 2, "UNKNOWN_STATUS": 3, "REJECTED": 4}
CLASS_RANK = {"Pathogenic": 0, "Likely pathogenic": 1, "Uncertain significance": 2, "Likely benign": 3, "Benign": 4}

CLASS_ORDER = ("Benign", "Likely benign", "Uncertain significance", "Likely pathogenic", "Pathogenic")

METHODS = [
    "Criteria are the 28 ACMG/AMP evidence codes of Richards et al., Genet Med 2015;17:405-424, "
    "with the combining rules of its Table 5.",
    "Each met criterion is also scored on the point scale of Tavtigian et al., Hum Mutat 2020;41:1734-1737, "
    "and the Bayesian framework of Tavtigian et al., Genet Med 2018;20:1054-1060 gives a posterior "
    "probability; where the methods disagree the report says so beside the finding.",
    "Strength changes follow the published refinements of the ClinGen Sequence Variant Interpretation "
    "working group where the rule set names them (for example PVS1 decision steps, PM2 at Supporting, "
    "PP3/BP4 calibrated score ranges, PM3 by points).",
    "Genotype fit is reasoned from zygosity, phase (phased genotypes or parental genotypes) and the "
    "gene's curated inheritance; phenotype match compares the HPO terms given with the gene's HPO annotations.",
]
LIMITS = [
    "Not automated: functional studies (PS3/BS3), case-level and segregation evidence beyond the VCF "
    "family (PS4, PP1, BS4), reputable-source assertions (PP5/BP6, retired by ClinGen), and any "
    "evidence a reviewer supplies; these show as not evaluable unless given.",
    "Small variants and copy-number or structural records (VCF symbolic alleles, or explicit alleles of 50 bp "
    "or more) in the panel genes are assessed; repeat variants, breakends, deep-intronic and regulatory "
    "effects, mosaicism and variants outside the panel are not. Copy-number and structural calls need "
    "confirmation by an orthogonal method (MLPA, chromosomal microarray or long-read sequencing).",
    "Population data, in-silico scores and annotation come from the inputs named under Run details; "
    "their versions limit what this report can know.",
    "Phenotype match depends on the HPO terms supplied; missing or imprecise terms lower it.",
]

CSS = """
:root{--ink:#22313f;--muted:#5f6b76;--paper:#fffdf8;--line:#d5dbe1;--ochre:#9a5b0f;--ochre-soft:#f6e3c4;
--teal:#2f6f73;--teal-soft:#e4efee;--slate:#eef1f4}
*{box-sizing:border-box}
html{background:var(--paper);color:var(--ink)}
body{font:15px/1.45 system-ui,-apple-system,"Segoe UI",Roboto,"Helvetica Neue",Arial,sans-serif;margin:0 auto;
max-width:1100px;padding:18px 28px 40px}
h1{font-size:24px;margin:8px 0 2px;letter-spacing:.2px}
h2{font-size:19px;color:var(--teal);border-bottom:2px solid var(--teal);padding-bottom:3px;margin:30px 0 10px}
h3{font-size:17px;margin:22px 0 6px}
h4{font-size:15px;margin:16px 0 6px;color:var(--teal)}
.sub{color:var(--muted);margin:0 0 10px}
.caution{border:2px solid var(--ochre);background:var(--ochre-soft);padding:10px 14px;border-radius:8px;margin:12px 0;
font-weight:600}
.caution b{letter-spacing:.5px}.caution p{margin:0}
.caution ul{margin:6px 0 0;font-weight:400;font-size:14px}
dl.meta{display:grid;grid-template-columns:max-content 1fr max-content 1fr;gap:2px 14px;margin:8px 0;font-size:13.5px}
dl.meta dt{color:var(--muted)}dl.meta dd{margin:0}
dl.run{grid-template-columns:max-content 1fr}dl.run dd{word-break:break-all}
.call{display:flex;gap:16px;align-items:center;border:1px solid var(--line);border-radius:10px;padding:12px 16px;background:#fff}
.status{font-weight:800;letter-spacing:1px;padding:6px 12px;border-radius:6px;border:2px solid var(--ink);white-space:nowrap}
.status.SOLVED{background:var(--ink);color:#fff}
.status.IN_PROGRESS{background:repeating-linear-gradient(135deg,#fff 0 6px,var(--slate) 6px 12px)}
table{border-collapse:collapse;width:100%;font-size:13.5px;margin:6px 0}
th,td{border-bottom:1px solid var(--line);padding:4px 7px;text-align:left;vertical-align:top}
th{background:var(--slate);font-weight:650}
td.num{text-align:right;font-variant-numeric:tabular-nums}
.scale{display:inline-flex;border:1px solid var(--ink);border-radius:4px;overflow:hidden;font-size:11px;vertical-align:middle}
.scale span{padding:1px 5px;border-left:1px solid var(--line);color:var(--muted)}
.scale span:first-child{border-left:0}
.scale span.on{background:var(--ink);color:#fff;font-weight:700}
.cls{font-weight:700;margin-left:6px}
td .cls{display:block;margin-left:0}
table.counts{width:auto;min-width:60%}table.tally{width:auto;min-width:40%}table.counts th+th{text-align:right}
section.gene{border-left:4px solid var(--teal);padding-left:14px;margin-top:18px}
.explain{display:grid;grid-template-columns:1fr 1fr;gap:12px}
.explain div{background:var(--teal-soft);border-radius:8px;padding:8px 12px}
.explain div.breaks{background:var(--ochre-soft)}
.explain b{display:block;font-size:12px;text-transform:uppercase;letter-spacing:.6px;color:var(--muted)}
tr.met td{background:#fbf1df}
tr.met td.state{font-weight:700;color:var(--ochre)}
tr.ne td.state{font-style:italic;color:var(--muted)}
tr.notmet td{color:var(--muted)}
.crit{font-family:ui-monospace,"DejaVu Sans Mono",Menlo,monospace;font-size:12.5px}
figure{margin:8px 0 14px}figcaption{font-size:12.5px;color:var(--muted)}
.muted{color:var(--muted)}.small{font-size:12px}
ul{margin:4px 0 8px;padding-left:22px}
footer{margin-top:28px;font-size:12px;color:var(--muted);border-top:1px solid var(--line);padding-top:8px}
@page{size:A4;margin:14mm 12mm}
@media print{
 html{background:#fff}body{max-width:none;padding:0;font-size:10pt}
 h2{break-after:avoid}h3,h4{break-after:avoid}
 tr,figure,.call,.caution,.explain{break-inside:avoid}
 section.gene{break-before:auto}
 .status.IN_PROGRESS{background:#fff}
 *{-webkit-print-color-adjust:exact;print-color-adjust:exact}
}
"""


def e(s: object) -> str:
    return _html.escape("" if s is None else str(s), quote=True)


def _class_scale(cls: Optional[str]) -> str:
    cells = "".join(f'<span class="{"on" if c == cls else ""}" title="{e(c)}">{CLASS_SHORT[c]}</span>' for c in CLASS_ORDER)
    return f'<span class="scale" aria-hidden="true">{cells}</span><span class="cls">{e(cls or "not classified")}</span>'


def _caution_box(result: dict) -> str:
    """One box: the clinical caution first, the result's further cautions as a list under it."""
    cs = cautions(result)
    more = "".join(f"<li>{e(c)}</li>" for c in cs[1:])
    return (f'<div class="caution" role="note"><p><b>CAUTION</b> — {e(cs[0])}</p>'
            + (f"<ul>{more}</ul>" if more else "") + "</div>")


def _combining_text(rules: dict) -> str:
    """The combining rule sets the findings used: name, version and short content hash of each."""
    comb = rules.get("combining") or {}
    used = comb.get("rule_sets") or []
    if not used and comb.get("default"):
        d = comb["default"]
        return f"{fmt(d.get('name'))} {fmt(d.get('version'))} sha256:{(d.get('sha256') or '')[:12]} (default; no finding classified)"
    return "; ".join(f"{fmt(u.get('name'))} {fmt(u.get('version'))} sha256:{(u.get('sha256') or '')[:12]}" for u in used) or "—"


def _meta(result: dict) -> str:
    s = result.get("sample") or {}
    p = result.get("panel") or {}
    r = result.get("rules") or {}
    run = result.get("run") or {}
    sex = fmt(s.get("sex"))
    if s.get("sex_source"):
        sex += f" ({s['sex_source']}"
        sex += f"; inferred {s['inferred_sex']})" if s.get("inferred_sex") else ")"
    items = [
        ("Sample", s.get("id")), ("Sex", sex),
        ("Affected", {True: "yes", False: "no"}.get(s.get("affected"), "unknown")),
        ("Parents", f"mother {fmt(s.get('mother'))}, father {fmt(s.get('father'))}"),
        ("Genome build", result.get("genome_build")),
        ("Panel", f"{fmt(p.get('name'))} {fmt(p.get('version'))} ({fmt(p.get('genes'))} genes)"),
        ("Criteria", f"{fmt(r.get('name'))} {fmt(r.get('version'))}"),
        ("Combining rule sets", _combining_text(r)),
        ("Run started", run.get("started")),
    ]
    return ('<dl class="meta">' + "".join(f"<dt>{e(k)}</dt><dd>{e(fmt(v))}</dd>" for k, v in items) + "</dl>"
            '<p class="muted small">File checksums, input paths and the command line: see '
            '<a href="#run">Run details</a> at the end.</p>')


def _run_details(result: dict) -> str:
    p = result.get("panel") or {}
    r = result.get("rules") or {}
    t = result.get("tool") or {}
    run = result.get("run") or {}
    items = [
        ("Tool", f"{fmt(t.get('name'))} {fmt(t.get('version'))}"),
        ("Panel sha256", p.get("sha256")), ("Criteria sha256", r.get("sha256")),
        ("Combining rules file sha256", (r.get("combining") or {}).get("sha256")),
        ("Command", run.get("command")),
    ]
    for inp in run.get("inputs") or []:
        items.append((f"Input ({inp.get('role')})", f"{fmt(inp.get('path'))} sha256:{fmt(inp.get('sha256'))}"))
    from ..evidence.describe import source_items  # "none given" rather than nothing

    items.extend(source_items(result.get("evidence_sources")))
    return ('<section id="run"><h2>Run details</h2><dl class="meta run">'
            + "".join(f"<dt>{e(k)}</dt><dd>{e(fmt(v))}</dd>" for k, v in items) + "</dl></section>")


def _genes_table(result: dict) -> str:
    rows = []
    by_id = findings_by_id(result)
    for g in result.get("genes") or []:
        pm = g.get("phenotype_match") or {}
        st = g.get("cascade_step") or {}
        rows.append(
            f'<tr><td class="num">{e(g.get("rank"))}</td><td><a href="#gene-{e(g.get("symbol"))}"><b>{e(g.get("symbol"))}</b></a></td>'
            f'<td>{e("/".join(g.get("inheritance") or []) or "—")}</td><td>{e(genotype_fit_label(g.get("genotype_fit")))}</td>'
            f'<td class="num">{_pheno_cell(pm)}</td>'
            f'<td>{_class_scale(g.get("strongest_class"))}</td><td>{e(_ids(g.get("findings") or []))}{_quality_note(by_id, g)}</td>'
            f'<td>{e(st.get("title") or "—")}</td></tr>')
    if not rows:
        return '<p class="muted">No gene hypothesis: no finding in a panel gene passed the filters.</p>'
    note = ""
    cals = {round((g.get("phenotype_match") or {}).get("calibrated"), 2) for g in result.get("genes") or []
            if isinstance((g.get("phenotype_match") or {}).get("calibrated"), (int, float))}
    if len(rows) > 1 and len(cals) == 1:
        note = ('<p class="muted small">The phenotype match is the same for every gene listed, so the phenotype '
                "given does not tell these genes apart; the order comes from the genotype evidence.</p>")
    return ("<table><thead><tr><th>Rank</th><th>Gene</th><th>Inheritance</th><th>Genotype fit</th>"
            "<th>Phenotype match (0–1)</th><th>Strongest classification</th><th>Findings</th><th>Cascade step</th></tr></thead><tbody>"
            + "".join(rows) + "</tbody></table>" + note)


def _pheno_rank(pm: dict) -> str:
    """'rank 3 of 270 panel genes' ('rank 1–69 of 270' for a tie) when the result gives the gene's rank by phenotype alone."""
    place = phenotype_rank(pm)
    if not place:
        return ""
    return f"rank {place} panel genes" if " of " in place else f"rank {place} among the panel genes"


def _pheno_cell(pm: dict) -> str:
    cal = pm.get("calibrated")
    out = e(f"{cal:.2f}" if isinstance(cal, (int, float)) else "n/a")
    rk = _pheno_rank(pm)
    return out + (f'<br><span class="muted small">{e(rk)}</span>' if rk else "")


def _quality_note(by_id: dict, g: dict) -> str:
    bad = [fid for fid in (g.get("findings") or [])[:FINDING_IDS_SHOWN] if (by_id.get(fid) or {}).get("quality_flags")]
    return f'<br><span class="muted small">failed quality: {e(", ".join(bad))}</span>' if bad else ""


def _ids(ids: list) -> str:
    if len(ids) <= FINDING_IDS_SHOWN:
        return ", ".join(map(str, ids))
    return ", ".join(map(str, ids[:FINDING_IDS_SHOWN])) + f" … ({len(ids)} in all)"


def _relevance(f: dict) -> tuple:
    return (STATUS_ORDER.get(f.get("interpretation_status"), 3), CLASS_RANK.get(f.get("classification"), 2))


def detailed_genes(result: dict) -> list[dict]:
    """Genes drawn in full: the first DETAIL_GENES by rank, any gene with a CAUSATIVE finding, and genes
    with a CANDIDATE finding until DETAIL_GENES_MAX sections are drawn (an unannotated genome can
    hold hundreds of candidate genes; the rest are listed compactly)."""
    genes = result.get("genes") or []
    by_id = findings_by_id(result)
    out = []
    for i, g in enumerate(genes):
        statuses = {(by_id.get(fid) or {}).get("interpretation_status") for fid in g.get("findings") or []}
        if i < DETAIL_GENES or "CAUSATIVE" in statuses or ("CANDIDATE" in statuses and len(out) < DETAIL_GENES_MAX):
            out.append(g)
    return out


def _compact_rows(fs: list[dict], with_gene: bool = True) -> str:
    rows = []
    for f in fs:
        hg = " ".join(x for x in (f.get("hgvs_c"), f.get("hgvs_p")) if x)
        pos = f"{f.get('chrom')}:{f.get('pos')} {f.get('ref')}>{f.get('alt')}"
        rows.append(f'<tr><td>{e(f.get("id"))}</td>' + (f'<td>{e(f.get("gene"))}</td>' if with_gene else "")
                    + f'<td>{e(hg or "—")}<br><span class="muted small">{e(pos)}</span></td>'
                    f'<td>{e(zygosity_label(f.get("zygosity"), short=True, fraction=f.get("allele_balance")))}</td>'
                    f'<td>{e(fmt(f.get("classification"), "not classified"))}</td>'
                    f'<td class="crit">{e(criteria_compact(f))}</td><td>{e(fmt(f.get("interpretation_status")))}'
                    + (' <span class="small">(candidate non-coding allele)</span>' if f.get("noncoding_candidate") else "")
                    + "</td></tr>")
    return ("<table class=\"compact\"><thead><tr><th>Finding</th>" + ("<th>Gene</th>" if with_gene else "")
            + "<th>HGVS / position</th><th>Zygosity</th><th>Classification</th><th>Met criteria</th>"
            "<th>Status</th></tr></thead><tbody>" + "".join(rows) + "</tbody></table>")


def _other_findings(result: dict, shown: set) -> str:
    others = [f for f in result.get("findings") or [] if f.get("id") not in shown]
    if not others:
        return ""
    where = ("The full table of all 28 criteria with reasons for every finding is in result.json "
             "and is printed by <code>irdtriage explain &lt;finding id&gt; --result result.json</code>.")
    head = (f'<section id="other-findings"><h2>Other findings ({len(others)})</h2>'
            f'<p class="muted">Findings in genes not drawn in full above. {where}</p>')
    if len(others) <= OTHER_ROWS_MAX:
        return head + _compact_rows(others) + "</section>"
    counts: dict[str, dict[str, int]] = {}
    for f in others:
        row = counts.setdefault(str(f.get("gene") or "—"), {})
        c = f.get("classification") or "not classified"
        row[c] = row.get(c, 0) + 1
    cols = [c for c in CLASS_ORDER[::-1] if any(c in r for r in counts.values())]
    if any("not classified" in r for r in counts.values()):
        cols.append("not classified")
    rank = {g.get("symbol"): i for i, g in enumerate(result.get("genes") or [])}
    order = sorted(counts, key=lambda gname: (rank.get(gname, len(rank)), gname))  # by gene rank
    rows = "".join(f'<tr><td>{e(gname)}</td>' + "".join(f'<td class="num">{counts[gname].get(c, 0) or ""}</td>' for c in cols)
                   + f'<td class="num">{sum(counts[gname].values())}</td></tr>' for gname in order)
    return (head + f'<p><b>{len(others)} findings are more than {OTHER_ROWS_MAX}, so they are counted per gene and '
            "classification here instead of listed one per row;</b> findings.tsv and findings.vcf.gz list each of them.</p>"
            "<table class=\"counts\"><thead><tr><th>Gene</th>" + "".join(f"<th>{e(c)}</th>" for c in cols)
            + "<th>All</th></tr></thead><tbody>" + rows + "</tbody></table></section>")


def _criteria_table(f: dict) -> str:
    rows = []
    for c in f.get("criteria") or []:
        met = c.get("met")
        cls, state = {True: ("met", "met"), False: ("notmet", "not met"), None: ("ne", "not evaluable")}[met]
        rows.append(f'<tr class="{cls}"><td class="crit">{e(c.get("code"))}</td><td class="state">{state}</td>'
                    f'<td>{e(c.get("strength") or "—")}</td><td>{e(c.get("reason"))}</td><td>{e(c.get("source") or "")}</td></tr>')
    return ('<table class="criteria"><thead><tr><th>Criterion</th><th>Status</th><th>Strength</th><th>Reason (evidence)</th>'
            "<th>Source</th></tr></thead><tbody>" + "".join(rows) + "</tbody></table>")


def _finding(f: dict) -> str:
    fam = f.get("family") or {}
    fam_txt = "; ".join(f"{k}{' (' + str(v['role']) + ')' if v.get('role') else ''}: {v.get('genotype')} ({zygosity_label(v.get('zygosity'))})"
                        for k, v in fam.items()) or "—"
    o = f.get("original") or {}
    orig = ""
    if o and (o.get("pos") != f.get("pos") or o.get("ref") != f.get("ref") or list(o.get("alts") or []) != [f.get("alt")]):
        orig = f"input record {o.get('pos')} {o.get('ref')}>{','.join(o.get('alts') or [])} (ALT {o.get('allele_index')})"
    facts = [
        ("Position", f"{f.get('chrom')}:{f.get('pos')} {f.get('ref')}>{f.get('alt')}" + (f" — {orig}" if orig else "")),
        ("HGVS", " ".join(x for x in (f.get("transcript") and f"{f['transcript']}:{f.get('hgvs_c') or ''}", f.get("hgvs_p")) if x) or "—"),
        ("Consequence", fmt(f.get("consequence"))), ("Exon / intron", f"{fmt(f.get('exon'))} / {fmt(f.get('intron'))}"),
        ("Zygosity (GT)", f"{zygosity_label(f.get('zygosity'), fraction=f.get('allele_balance'))} ({fmt(f.get('genotype'))}{', phased' if f.get('phased') else ''})"),
        ("Depth / GQ / allele balance", f"{fmt(f.get('dp'))} / {fmt(f.get('gq'))} / {fmt(f.get('allele_balance'))}"),
        ("Filters / quality flags", f"{fmt(f.get('filters'))} / {fmt(f.get('quality_flags'), 'none')}"),
        ("Family", fam_txt),
        ("Points / posterior", f"{fmt(f.get('points'))} / {fmt(f.get('posterior'))}"),
        ("Rules / points / Bayes", f"{fmt(f.get('rule_class'))} ({fmt(f.get('rule'))}) / {fmt(f.get('point_class'))} / {fmt(f.get('bayes_class'))}"),
        ("Interpretation status", fmt(f.get("interpretation_status"))),
    ]
    facts.extend(structural_facts(f))  # copy-number / structural events (irdtriage.sv)
    nc = f.get("noncoding") or {}
    if nc:
        head = "Candidate non-coding allele" if f.get("noncoding_candidate") else "Listed recurrent non-coding allele"
        facts.append((head, strip_provenance(nc.get("reason"))))
        facts.append(("Next step", strip_provenance(nc.get("next_step"))))
    if f.get("classification_note"):
        facts.append(("Note", f["classification_note"]))
    rows = "".join(f"<tr><th>{e(k)}</th><td>{e(v)}</td></tr>" for k, v in facts)
    return (f'<h4 id="finding-{e(f.get("id"))}">Finding {e(f.get("id"))}: {e(f.get("hgvs_c") or "")} {e(f.get("hgvs_p") or "")}'
            f' {_class_scale(f.get("classification"))}</h4>'
            f'<p>Met criteria: <span class="crit">{e(criteria_compact(f))}</span></p>'
            f'<table class="facts">{rows}</table>'
            f"<details open><summary>All 28 criteria</summary>{_criteria_table(f)}</details>")


def _gene_section(result: dict, g: dict) -> str:
    st = g.get("cascade_step") or {}
    pm = g.get("phenotype_match") or {}
    fs = gene_findings(result, g)
    sym = g.get("symbol")
    parts = [f'<section class="gene" id="gene-{e(sym)}"><h3>{e(g.get("rank"))}. {e(sym)} '
             f'<span class="muted">{e(g.get("hgnc_id") or "")}</span></h3>']
    parts.append(f'<p>{e(strip_provenance(g.get("reason")))}</p>')
    parts.append(f'<p><b>Genotype fit:</b> {e(genotype_fit_label(g.get("genotype_fit")))}'
                 + (f" — phase: {e(g.get('phase'))}" if g.get("phase") else "")
                 + f'. <b>Inheritance:</b> {e("/".join(g.get("inheritance") or []) or "unknown")}.'
                 + (f' <b>Mechanism:</b> {e(", ".join(g["mechanisms"]))}.' if g.get("mechanisms") else "")
                 + (f' <b>Conditions:</b> {e("; ".join(g["conditions"]))}.' if g.get("conditions") else "") + "</p>")
    if st:
        parts.append(f'<h4>Where it acts: {e(st.get("title") or st.get("id"))}</h4><div class="explain">'
                     f'<div><b>What the gene does</b>{e(st.get("text") or "No explanation in the panel.")}</div>'
                     f'<div class="breaks"><b>What a defect breaks</b>{e(st.get("breaks") or "Not described in the panel.")}</div></div>')
    notes = prose_notes(g.get("notes"))
    if notes:
        parts.append('<h4>Gene notes (curated)</h4><ul class="notes muted">'
                     + "".join(f"<li>{e(n)}</li>" for n in notes) + "</ul>")
    parts.append("<h4>Phenotype match</h4>")
    cal = pm.get("calibrated")
    rk = _pheno_rank(pm)
    parts.append(f'<p>{e(pm.get("summary") or "")} (calibrated {e(f"{cal:.2f}" if isinstance(cal, (int, float)) else "n/a")}, '
                 f'raw {e(fmt(pm.get("score")))}{"; " + e(rk) + " by phenotype alone" if rk else ""})</p>')
    mt = pm.get("matched_terms") or []
    if mt:
        parts.append("<table><thead><tr><th>Patient term</th><th>Gene term</th><th>Information content</th></tr></thead><tbody>"
                     + "".join(f'<tr><td>{e(m.get("patient"))} {e(m.get("patient_label") or "")}</td>'
                               f'<td>{e(m.get("gene_term"))} {e(m.get("gene_label") or "")}</td><td class="num">{e(fmt(m.get("ic")))}</td></tr>' for m in mt)
                     + "</tbody></table>")
    if pm.get("conflicting_terms"):
        parts.append(f'<p>Excluded in the patient but typical of the gene: {e(", ".join(map(str, pm["conflicting_terms"])))}</p>')
    if fs:
        fig = svg.protein_svg(result, g, fs, fig_id=f"irdt-protein-{g.get('rank')}")
        parts.append(f'<figure>{fig}<figcaption>Figure: {e(sym)} protein sketch with the '
                     "position of each finding (domains only when the panel gives them).</figcaption></figure>")
        exons = svg.exon_svg(g, fs, fig_id=f"irdt-exons-{g.get('rank')}")
        if exons:  # copy-number / structural findings: the exons they delete, duplicate or break
            parts.append(f'<figure>{exons}<figcaption>Figure: {e(sym)} exons with the copy-number and structural '
                         "findings (deleted exons hatched).</figcaption></figure>")
    ordered = sorted(fs, key=_relevance)
    for f in ordered[:DETAIL_FINDINGS]:
        parts.append(_finding(f))
    rest = ordered[DETAIL_FINDINGS:]
    if rest:
        parts.append(f'<h4>{len(rest)} more {e(sym)} finding(s), in short</h4><p class="muted">Most relevant first above; '
                     "the full criterion tables of these are in result.json and <code>irdtriage explain</code>.</p>"
                     + _compact_rows(rest, with_gene=False))
    if g.get("next_steps"):
        parts.append("<h4>Next steps for this gene</h4><ul>" + "".join(f"<li>{e(strip_provenance(s))}</li>" for s in g["next_steps"]) + "</ul>")
    parts.append("</section>")
    return "".join(parts)


def render_html(result: dict, cascade_steps: Optional[Iterable[dict]] = None) -> str:
    """The whole report as one HTML document (str)."""
    case = result.get("case") or {}
    sample = result.get("sample") or {}
    ph = result.get("phenotype") or {}
    status = case.get("status") or "UNKNOWN"
    out = ['<!DOCTYPE html><html lang="en"><head><meta charset="utf-8">'
           '<meta name="viewport" content="width=device-width, initial-scale=1">'
           "<meta http-equiv=\"Content-Security-Policy\" content=\"default-src 'none'; style-src 'unsafe-inline'; img-src data:\">"
           f"<title>irdtriage case report — {e(sample.get('id'))}</title><style>{CSS}</style></head><body>"]
    out += [f'<div class="caution" role="alert"><p><b>{e(lim)}</b></p></div>' for lim in input_limits(result)]
    out.append(f'<header><h1>Inherited retinal disease gene triage — case {e(sample.get("id"))}</h1>'
               f'<p class="sub">Decision-support report written by irdtriage {e(__version__)} from result schema {e(result.get("schema_version"))}.</p>')
    out.append(_caution_box(result))
    out.append(_meta(result) + "</header>")
    out.append(f'<section id="case"><h2>Case call</h2><div class="call"><span class="status {e(status)}">{e(status)}</span>'
               f"<div>{e(strip_provenance(case.get('summary')))}</div></div>")
    if ph.get("retinal_fit"):
        rf = ph["retinal_fit"]
        out.append(f'<p class="muted">Phenotype check: {e(rf.get("summary") or "")}</p>')
    out.append("</section>")
    out.append(f'<section id="genes"><h2>Gene hypotheses, ranked</h2>{_genes_table(result)}</section>')
    out.append(f'<section id="cascade"><h2>Where the top genes act in light detection</h2><figure>{svg.cascade_svg(result, cascade_steps)}'
               "<figcaption>Figure: the light response from photon capture to the retinal neurons, with the steps that switch it off, "
               "the visual cycle and photoreceptor upkeep. Hatched boxes with a thick outline (◆) are served by the top-ranked genes.</figcaption>"
               "</figure></section>")
    out.append('<section id="details"><h2>Gene hypotheses in detail</h2>')
    detail = detailed_genes(result)
    n_genes = len(result.get("genes") or [])
    if n_genes > len(detail):
        out.append(f'<p class="muted">The {len(detail)} leading gene hypotheses of {n_genes} are shown in full '
                   f"(the first {DETAIL_GENES} by rank and any gene with a causative or candidate finding); "
                   "the findings of the others are listed below.</p>")
    shown: set = set()
    for g in detail:
        out.append(_gene_section(result, g))
        shown.update(g.get("findings") or [])
    out.append("</section>")
    out.append(_other_findings(result, shown))
    terms = "".join(f"<li>{e(t.get('id'))} {e(t.get('label') or '')}</li>" for t in ph.get("present") or [])
    excl = "".join(f"<li>{e(t.get('id'))} {e(t.get('label') or '')}</li>" for t in ph.get("excluded") or [])
    out.append(f'<section id="phenotype"><h2>Phenotype given</h2><p class="muted">Source: {e(ph.get("source") or "none")}</p>'
               f'<h4>Present</h4><ul>{terms or "<li>none given</li>"}</ul>'
               + (f"<h4>Excluded</h4><ul>{excl}</ul>" if excl else "") + "</section>")
    steps = case.get("next_steps") or []
    out.append('<section id="next"><h2>Next steps</h2><ul>' + ("".join(f"<li>{e(strip_provenance(s))}</li>" for s in steps) or "<li>none suggested</li>") + "</ul></section>")
    warnings = result.get("warnings") or []
    counts = result.get("counts") or {}
    out.append('<section id="warnings"><h2>Warnings and counts</h2><ul>' + ("".join(f"<li>{e(w)}</li>" for w in warnings) or "<li>no warnings</li>")
               + "</ul><table class=\"tally\"><tbody>" + "".join(f"<tr><th>{e(k.replace('_', ' '))}</th><td class=\"num\">{e(v)}</td></tr>" for k, v in counts.items())
               + "</tbody></table></section>")
    out.append('<section id="methods"><h2>Methods and limitations</h2><h4>What the classification is based on</h4><ul>'
               + "".join(f"<li>{e(m)}</li>" for m in METHODS) + "</ul><h4>What is not automated or not covered</h4><ul>"
               + "".join(f"<li>{e(m)}</li>" for m in LIMITS) + "</ul></section>")
    out.append(_run_details(result))
    out.append(f'<section id="cautions"><h2>Cautions</h2>{_caution_box(result)}</section>')
    out.append(f"<footer>irdtriage {e(__version__)} · panel {e((result.get('panel') or {}).get('name'))} "
               f"{e((result.get('panel') or {}).get('version'))} · rule set {e((result.get('rules') or {}).get('name'))} "
               f"{e((result.get('rules') or {}).get('version'))} · {e(result.get('genome_build'))} · report generated offline; "
               "no patient data left this machine to make it.</footer>")
    out.append("</body></html>\n")
    return "".join(out)
