"""Terminal summary of one result (rich): the input's limits (if any) first, then the case line,
ranked gene hypotheses with their findings, a text drawing of the light-response cascade, then
warnings and the caution.

Patient-provided strings are put into rich ``Text`` objects (never parsed as markup), so a
sample id such as ``[bold]x`` prints literally.
"""
from __future__ import annotations

import os
import sys
from typing import IO, Iterable, Optional

from rich.console import Console
from rich.text import Text

from .common import (
    CLASS_SHORT,
    affected_steps,
    cascade_steps as all_cascade_steps,
    cautions,
    structural_facts,
    chain,
    criteria_compact,
    criterion_label,
    fmt,
    gene_findings,
    genotype_fit_label,
    input_limits,
    phenotype_rank,
    strip_provenance,
    zygosity_label,
)

MAX_WIDTH = 100

# Own palette for the terminal (styles only; meaning is always in the text as well).
ST_STATUS = "bold reverse"
ST_HEAD = "bold underline"
ST_GENE = "bold"
ST_MARK = "bold"
ST_DIM = "dim"
ST_CAUTION = "bold"


def make_console(file: Optional[IO[str]] = None, width: Optional[int] = None) -> Console:
    """A Console for irdtriage output.

    Colour only on a real terminal (rich emits no escape codes when ``file`` is not a TTY) and
    never when ``NO_COLOR`` is set; at most ``MAX_WIDTH`` columns (80 when piped, rich's default).
    """
    no_color = bool(os.environ.get("NO_COLOR"))
    kwargs = dict(file=file or sys.stdout, highlight=False, emoji=False, no_color=no_color, soft_wrap=False)
    if no_color:
        kwargs["color_system"] = None
    if width is not None:
        return Console(width=width, **kwargs)
    console = Console(**kwargs)
    if console.width > MAX_WIDTH:
        console = Console(width=MAX_WIDTH, **kwargs)
    return console


def _case_line(result: dict) -> Text:
    case = result.get("case") or {}
    sample = result.get("sample") or {}
    panel = result.get("panel") or {}
    t = Text()
    t.append(f" {case.get('status', 'UNKNOWN')} ", style=ST_STATUS)
    t.append(f" {sample.get('id', '?')}")
    t.append(f"  sex {fmt(sample.get('sex'))}, {fmt(result.get('genome_build'))}", style=ST_DIM)
    t.append(f"  panel {fmt(panel.get('name'))} {fmt(panel.get('version'))}", style=ST_DIM)
    return t


def _rule_set_line(result: dict) -> Optional[Text]:
    """Combining rule set(s) the findings used: name, version and short content hash."""
    used = (((result.get("rules") or {}).get("combining")) or {}).get("rule_sets") or []
    if not used:
        return None
    return Text("combining rule set" + ("s" if len(used) > 1 else "") + ": " + "; ".join(
        f"{fmt(u.get('name'))} {fmt(u.get('version'))} sha256:{(u.get('sha256') or '')[:12]}" for u in used),
        style=ST_DIM)


def _gene_line(g: dict) -> Text:
    pm = g.get("phenotype_match") or {}
    t = Text()
    t.append(f"{g.get('rank', '?'):>2} ")
    t.append(str(g.get("symbol", "?")), style=ST_GENE)
    cls = g.get("strongest_class")
    t.append(f" {CLASS_SHORT.get(cls, fmt(cls))}", style=ST_MARK)
    t.append(f" {'/'.join(g.get('inheritance') or []) or '?'}")
    t.append(f" · {genotype_fit_label(g.get('genotype_fit'))}")
    cal = pm.get("calibrated")
    t.append(f" · pheno {cal:.2f}" if isinstance(cal, (int, float)) else " · pheno n/a")
    place = phenotype_rank(pm)  # the gene's place by phenotype alone (ties shown as a range), when present
    if place:
        t.append(f" (rank {place})")
    return t


def _class_method(f: dict) -> Optional[str]:
    """Which combining method gave the reported class, when the three methods disagree."""
    cls = f.get("classification")
    pcls, bcls = f.get("point_class"), f.get("bayes_class")
    if not cls or (pcls in (None, cls) and bcls in (None, cls)):
        return None
    parts = []
    if pcls not in (None, cls):
        pts = f.get("points")
        parts.append(f"points (Tavtigian 2020) give {CLASS_SHORT.get(pcls, pcls)}"
                     + (f" at {pts:+d}" if isinstance(pts, int) else ""))
    if bcls not in (None, cls):
        post = f.get("posterior")
        parts.append(f"posterior (Tavtigian 2018) gives {CLASS_SHORT.get(bcls, bcls)}"
                     + (f" at {post:.3f}" if isinstance(post, (int, float)) else ""))
    return f"class from the ACMG/AMP 2015 table; {', '.join(parts)}"


def _finding_line(f: dict) -> Text:
    t = Text()
    t.append(f"{f.get('id', '?')} ", style=ST_DIM)
    t.append(f"{f.get('chrom')}:{f.get('pos')} {f.get('ref')}>{f.get('alt')} ")
    hg = " ".join(x for x in (f.get("hgvs_c"), f.get("hgvs_p")) if x)
    if hg:
        t.append(hg + " ")
    t.append(f"{zygosity_label(f.get('zygosity'), short=True, fraction=f.get('allele_balance'))} ")
    cls = f.get("classification")
    t.append(f"{CLASS_SHORT.get(cls, fmt(cls))} ", style=ST_MARK)
    pts = f.get("points")
    if pts is not None:
        t.append(f"{pts:+d}pt ", style=ST_DIM)
    t.append(criteria_compact(f))
    if f.get("quality_flags"):
        t.append("  quality: " + ", ".join(f["quality_flags"]), style=ST_DIM)
    method = _class_method(f)
    if method:
        t.append(f"  ({method})", style=ST_DIM)
    return t


def _noncoding_lines(f: dict) -> list[Text]:
    """Why a non-coding allele is reported (candidate or listed) and its next step."""
    nc = f.get("noncoding") or {}
    if not nc:
        return []
    head = "candidate non-coding allele" if f.get("noncoding_candidate") else "listed recurrent non-coding allele"
    t = Text()
    t.append(f"{head}: ", style=ST_MARK)
    t.append(strip_provenance(nc.get("reason")))
    n = Text()
    n.append("next step: ", style=ST_MARK)
    n.append(strip_provenance(nc.get("next_step")))
    return [t, n]


def _criteria_detail(f: dict) -> list[Text]:
    lines = []
    for c in f.get("criteria") or []:
        state = {True: "met", False: "not met", None: "n/e"}[c.get("met")]
        t = Text()
        t.append(f"{criterion_label(c) if c.get('met') else c.get('code'):<10} {state:<8} ")
        t.append(c.get("reason") or "", style=None if c.get("met") else ST_DIM)
        lines.append(t)
    return lines


def _cascade_drawing(result: dict, cascade_steps: Optional[Iterable[dict]], width: int) -> list[Text]:
    """Chain steps in order, joined by arrows, wrapped between steps (never inside one)."""
    steps = all_cascade_steps(result, cascade_steps)
    hit = affected_steps(result)
    lines: list[Text] = []
    tokens: list[tuple[str, str]] = []
    for i, s in enumerate(chain(steps)):
        title = s.get("title") or s["id"]
        n = s.get("order") or i + 1
        if s["id"] in hit:
            tokens.append((f"[{n} {title} ◆{','.join(hit[s['id']])}]", ST_MARK))
        else:  # unmarked steps in short: the part before a colon, else the first two words
            short = title.split(":")[0] if ":" in title else " ".join(title.split()[:2])
            tokens.append((f"{n} {short}", ST_DIM))
    line = Text()
    for i, (tok, style) in enumerate(tokens):
        sep = " → " if i else ""
        if line.cell_len and line.cell_len + len(sep) + len(tok) > width:
            lines.append(line)
            line = Text("→ ")
            sep = ""
        line.append(sep)
        line.append(tok, style=style)
    if line.cell_len:
        lines.append(line)
    for s in steps:
        if s.get("kind") != "chain" and s["id"] in hit:
            t = Text()
            t.append(f"beside the chain ({s.get('kind', '').replace('_', ' ')}): ", style=ST_DIM)
            t.append(f"[{s.get('title', s['id'])} ◆{','.join(hit[s['id']])}]", style=ST_MARK)
            lines.append(t)
    if not hit:
        lines.append(Text("no step marked: no top gene with a qualifying finding", style=ST_DIM))
    return lines


def _ind(console: Console, text: Text, n: int = 0, hang: int = 2) -> None:
    """Print ``text`` wrapped to the console width, indented ``n`` columns; continuation lines
    are indented ``hang`` columns more, so a wrapped item stays visibly one item."""
    for i, line in enumerate(text.wrap(console, max(20, console.width - n - hang))):
        line.rstrip()
        console.print(Text(" " * (n + (hang if i else 0))) + line, overflow="fold", no_wrap=True, crop=True)


def render_written(console: Console, paths: Iterable[object]) -> None:
    """The 'Written:' list, one file per line, folded to the console width."""
    console.print(Text("Written:"))
    for p in paths:
        console.print(Text("  " + str(p)), overflow="fold", no_wrap=False)


def render_terminal(
    result: dict,
    console: Console,
    verbose: bool = False,
    quiet: bool = False,
    cascade_steps: Optional[Iterable[dict]] = None,
) -> None:
    """Print the case to ``console`` (see module docstring for the order of sections)."""
    p = console.print
    case = result.get("case") or {}
    genes = result.get("genes") or []
    for lim in input_limits(result):  # what the input could not support comes before anything else
        _ind(console, Text("! " + lim, style=ST_CAUTION), hang=2)
    _ind(console, _case_line(result))
    if quiet:
        if genes:
            _ind(console, _gene_line(genes[0]))
        else:
            p(Text("no gene hypothesis"))
        _ind(console, Text("CAUTION: " + cautions(result)[0], style=ST_CAUTION), hang=0)
        return
    if _rule_set_line(result) is not None:
        _ind(console, _rule_set_line(result), hang=2)
    from ..evidence.describe import source_items  # evidence sources: "none given" rather than nothing

    for label, text in source_items(result.get("evidence_sources")):
        _ind(console, Text(f"{label}: {text}", style=ST_DIM), 2)
    _ind(console, Text(strip_provenance(case.get("summary"))), hang=0)
    p()
    p(Text("Gene hypotheses (ranked)", style=ST_HEAD))
    _ind(console, Text("class P LP VUS LB B · criteria strength shown if not default: Sup Mod Str VStr", style=ST_DIM))
    if not genes:
        p(Text("  none: no finding in a panel gene passed the filters", style=ST_DIM))
    for g in genes:
        _ind(console, _gene_line(g))
        st = g.get("cascade_step") or {}
        if st:
            _ind(console, Text(f"step: {st.get('title', st.get('id'))}", style=ST_DIM), 4)
        if g.get("reason") and verbose:
            _ind(console, Text(strip_provenance(g["reason"]), style=ST_DIM), 4)
        for f in gene_findings(result, g):
            _ind(console, _finding_line(f), 4)
            for line in _noncoding_lines(f):
                _ind(console, line, 6)
            for label, text in structural_facts(f):  # copy-number / structural events
                t = Text()
                t.append(f"{label.lower()}: ", style=ST_MARK)
                t.append(text)
                _ind(console, t, 6)
            if verbose:
                for line in _criteria_detail(f):
                    _ind(console, line, 8)
    p()
    p(Text("Light-response cascade (◆ = step served by a top-ranked gene)", style=ST_HEAD))
    for line in _cascade_drawing(result, cascade_steps, console.width - 2):
        _ind(console, line, 2, hang=0)
    steps = case.get("next_steps") or []
    if steps:
        p()
        p(Text("Next steps", style=ST_HEAD))
        for s in steps:
            _ind(console, Text("- " + strip_provenance(s)), 2)  # continuation lines under the text, not the dash
    conc = result.get("annotation_concordance")
    if verbose and conc:  # the VCF's CSQ/ANN against the built-in annotation (irdtriage.annotate.concordance)
        from ..annotate.concordance import difference_lines, summary_line

        p()
        p(Text("Annotation concordance", style=ST_HEAD))
        _ind(console, Text(summary_line(conc)), 2)
        for line in difference_lines(conc):
            _ind(console, Text("≠ " + line, style=ST_DIM), 4)
    warnings = result.get("warnings") or []
    if warnings:
        p()
        p(Text("Warnings", style=ST_HEAD))
        for w in warnings:
            _ind(console, Text("! " + w), 2)
    p()
    for c in cautions(result):
        _ind(console, Text("CAUTION: " + c, style=ST_CAUTION), hang=0)
