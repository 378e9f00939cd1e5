"""`irdtriage explain`: the full criterion table for one finding of a result."""
from __future__ import annotations

from typing import Any, Optional

from . import CAUTION
from .errors import InputError

STATUS_WORD = {True: "met", False: "not met", None: "not evaluable"}


def _norm(text: str) -> str:
    t = text.strip().lower().replace("chr", "").replace(":", "-").replace(">", "-").replace("_", "-")
    return t


def find_finding(result: dict[str, Any], query: str) -> dict[str, Any]:
    """Find a finding by id (F1), chrom-pos-ref-alt (chr1:123:A:G too), or HGVS text."""
    q = query.strip()
    findings = result.get("findings", [])
    for f in findings:
        if f["id"].lower() == q.lower():
            return f
    nq = _norm(q)
    for f in findings:
        if _norm(f"{f['chrom']}-{f['pos']}-{f['ref']}-{f['alt']}") == nq or _norm(f.get("key", "")) == nq:
            return f
    hits = [f for f in findings
            if q and (q in (f.get("hgvs_c") or "") or q in (f.get("hgvs_p") or "")
                      or q.lower() == f"{f['gene']}:{f.get('hgvs_c', '')}".lower())]
    if len(hits) == 1:
        return hits[0]
    known = ", ".join(f"{f['id']} ({f['gene']} {f.get('hgvs_c') or f['key']})" for f in findings[:12])
    if len(hits) > 1:
        raise InputError(f"{query!r} matches {len(hits)} findings; use a finding id: {known}")
    raise InputError(f"no finding matches {query!r}; findings are: {known or 'none'}")


def case_line(result: dict[str, Any], source: Optional[str]) -> str:
    """Whose finding this is: the sample and the result file, or the invented demo case."""
    sample = (result.get("sample") or {}).get("id") or "unnamed sample"
    started = (result.get("run") or {}).get("started")
    when = f", run started {started}" if started else ""
    if source is None:
        return f"Case: {sample} of the bundled invented demo case (not a patient){when}"
    return f"Case: {sample} from {source}{when}"


def render_explain(result: dict[str, Any], finding: dict[str, Any], console, source: Optional[str] = None) -> None:
    """Print the criterion table of ``finding``; ``source`` is the result file (None: the demo)."""
    from rich.table import Table

    f = finding
    console.print(case_line(result, source), soft_wrap=True)
    head = (f"{f['id']}  {f['gene']} {f.get('transcript') or ''} {f.get('hgvs_c') or ''} "
            f"{f.get('hgvs_p') or ''}  [{f['chrom']}:{f['pos']} {f['ref']}>{f['alt']}, {f['zygosity']}]")
    console.print(head, soft_wrap=True)
    console.print(
        f"Classification: {f.get('classification')}  (rule table: {f.get('rule_class')}"
        f"{'; ' + f['rule'] if f.get('rule') else ''}; points {f.get('points')} -> {f.get('point_class')}; "
        f"posterior {f.get('posterior')} -> {f.get('bayes_class')})", soft_wrap=True)
    if f.get("classification_note"):
        console.print(f"Note: {f['classification_note']}", soft_wrap=True)
    table = Table(show_lines=False, expand=False)
    table.add_column("code", no_wrap=True)
    table.add_column("status", no_wrap=True)
    table.add_column("strength", no_wrap=True)
    table.add_column("reason", overflow="fold")
    order = {True: 0, None: 2, False: 1}
    for c in sorted(f.get("criteria", []), key=lambda c: order[c.get("met")]):
        table.add_row(c["code"], STATUS_WORD[c.get("met")], c.get("strength") or "", c.get("reason") or "")
    console.print(table)
    console.print(CAUTION, soft_wrap=True)
