"""What changed for a case between two result.json files (an earlier run and a re-analysis).

Findings are matched by chrom-pos-ref-alt (``chr`` prefix ignored); genes by symbol. Changes
that matter clinically come first: the case status, a finding crossing into or out of
Likely pathogenic/Pathogenic, a new or lost P/LP or CAUSATIVE/CANDIDATE finding, a gene that
becomes (or stops being) a candidate explanation. Then the rest: other class changes,
interpretation-status changes, other new or lost findings, gene rank and genotype-fit changes.
The panel, rule and evidence versions behind each side are listed with every comparison.
"""
from __future__ import annotations

import json
import os
from typing import Any, Optional

from .. import CAUTION
from ..errors import InputError

PLP = frozenset({"Pathogenic", "Likely pathogenic"})
EXPLAINING = frozenset({"CAUSATIVE", "CANDIDATE"})
ABBREV = {"Pathogenic": "P", "Likely pathogenic": "LP", "Uncertain significance": "VUS",
          "Likely benign": "LB", "Benign": "B"}


def load_result(path: str) -> dict:
    """Read a result.json; a file that is missing, not JSON or not a triage result is an InputError."""
    if not os.path.isfile(path):
        raise InputError("result file not found", path)
    try:
        with open(path, encoding="utf-8") as fh:
            data = json.load(fh)
    except UnicodeDecodeError:
        raise InputError("not a result.json (not UTF-8 text)", path)
    except json.JSONDecodeError as e:
        raise InputError(f"not a result.json: {e.msg}", path, e.lineno)
    if not isinstance(data, dict) or not isinstance(data.get("case"), dict) or not isinstance(
            data.get("findings"), list):
        raise InputError("not an irdtriage result.json (no 'case' and 'findings')", path)
    return data


def allele_key(f: dict) -> str:
    chrom = str(f.get("chrom") or "")
    chrom = chrom[3:] if chrom.lower().startswith("chr") else chrom
    return f"{chrom}-{f.get('pos')}-{f.get('ref')}-{f.get('alt')}"


def _label(f: dict) -> str:
    name = f.get("hgvs_p") or f.get("hgvs_c") or ""
    return f"{f.get('gene') or '?'} {f.get('hgvs_c') or allele_key(f)}" + (
        f" {f['hgvs_p']}" if f.get("hgvs_p") and name != f.get("hgvs_c") else "")


def short_class(c: Optional[str]) -> str:
    return ABBREV.get(c or "", c or "none")


def versions(result: dict) -> dict[str, Any]:
    """The tool, panel, rule and evidence versions behind a result."""
    rules = result.get("rules") or {}
    comb = rules.get("combining") or {}
    ev = result.get("evidence_sources") or {}
    bundle = ev.get("bundle") or {}
    sources = [f"{s.get('name')} {s.get('version') or ''}".strip() for s in (bundle.get("sources") or [])
               if isinstance(s, dict)]
    files = [os.path.basename(str(f.get("path") or f.get("name") or "")) for f in (ev.get("files") or [])
             if isinstance(f, dict)]
    online = ev.get("online") or {}
    return {
        "tool": (result.get("tool") or {}).get("version"),
        "panel": _ver(result.get("panel")),
        "rules": _ver(rules),
        "combining": _ver(comb),
        "evidence": {"bundle": _ver(bundle) if bundle else None, "bundle_sources": sources,
                     "files": files, "online": (online.get("release") or online.get("server")) if online else None},
        "run_started": (result.get("run") or {}).get("started"),
    }


def _ver(d: Optional[dict]) -> Optional[dict]:
    if not isinstance(d, dict):
        return None
    return {"name": d.get("name"), "version": d.get("version"), "sha256": d.get("sha256")}


def _explaining_genes(result: dict) -> set[str]:
    return {f.get("gene") for f in result.get("findings") or [] if f.get("interpretation_status") in EXPLAINING}


def compare(old: dict, new: dict) -> dict[str, Any]:
    """Changes from ``old`` to ``new``: {status, clinical: [...], other: [...], versions: {old, new}}.
    Each change is {kind, what, old, new, key?, gene?}."""
    clinical: list[dict] = []
    other: list[dict] = []
    s_old, s_new = (old.get("case") or {}).get("status"), (new.get("case") or {}).get("status")
    if s_old != s_new:
        clinical.append({"kind": "case_status", "what": f"case status {s_old} → {s_new}", "old": s_old, "new": s_new})

    old_f = {allele_key(f): f for f in old.get("findings") or []}
    new_f = {allele_key(f): f for f in new.get("findings") or []}
    for key in sorted(set(old_f) | set(new_f), key=_sort_key):
        a, b = old_f.get(key), new_f.get(key)
        if a is None:
            ch = {"kind": "new_finding", "key": key, "gene": b.get("gene"), "old": None,
                  "new": b.get("classification"),
                  "what": f"new finding {_label(b)} ({short_class(b.get('classification'))}, "
                          f"{b.get('interpretation_status')})"}
            (clinical if _matters(b) else other).append(ch)
            continue
        if b is None:
            ch = {"kind": "lost_finding", "key": key, "gene": a.get("gene"), "old": a.get("classification"),
                  "new": None, "what": f"finding no longer reported {_label(a)} ({short_class(a.get('classification'))}, "
                                       f"{a.get('interpretation_status')})"}
            (clinical if _matters(a) else other).append(ch)
            continue
        ca, cb = a.get("classification"), b.get("classification")
        if ca != cb:
            crossing = (ca in PLP) != (cb in PLP)
            ch = {"kind": "class", "key": key, "gene": b.get("gene"), "old": ca, "new": cb, "crosses_plp": crossing,
                  "what": f"{_label(b)}: {short_class(ca)} → {short_class(cb)}"
                          + (" (crosses the likely pathogenic line)" if crossing else "")}
            (clinical if crossing else other).append(ch)
        ia, ib = a.get("interpretation_status"), b.get("interpretation_status")
        if ia != ib:
            other.append({"kind": "interpretation_status", "key": key, "gene": b.get("gene"), "old": ia, "new": ib,
                          "what": f"{_label(b)}: {ia} → {ib}"})

    old_g = {g.get("symbol"): g for g in old.get("genes") or []}
    new_g = {g.get("symbol"): g for g in new.get("genes") or []}
    exp_old, exp_new = _explaining_genes(old), _explaining_genes(new)
    for sym in sorted(exp_new - exp_old):
        clinical.append({"kind": "new_candidate_gene", "gene": sym, "old": None, "new": sym,
                         "what": f"new candidate gene {sym} (a CAUSATIVE or CANDIDATE finding)"})
    for sym in sorted(exp_old - exp_new):
        clinical.append({"kind": "lost_candidate_gene", "gene": sym, "old": sym, "new": None,
                         "what": f"{sym} is no longer a candidate gene"})
    for sym in sorted(set(old_g) | set(new_g), key=lambda s: (new_g.get(s) or old_g.get(s) or {}).get("rank") or 0):
        a, b = old_g.get(sym), new_g.get(sym)
        ra, rb = (a or {}).get("rank"), (b or {}).get("rank")
        if ra != rb:
            other.append({"kind": "gene_rank", "gene": sym, "old": ra, "new": rb,
                          "what": f"{sym} rank {ra if ra is not None else '-'} → {rb if rb is not None else '-'}"})
        fa, fb = (a or {}).get("genotype_fit"), (b or {}).get("genotype_fit")
        if a is not None and b is not None and fa != fb:
            other.append({"kind": "genotype_fit", "gene": sym, "old": fa, "new": fb,
                          "what": f"{sym} genotype fit: {fa} → {fb}"})
    return {"status": {"old": s_old, "new": s_new}, "sample": {"old": (old.get("sample") or {}).get("id"),
                                                                 "new": (new.get("sample") or {}).get("id")},
            "clinical": clinical, "other": other,
            "versions": {"old": versions(old), "new": versions(new)}, "cautions": [CAUTION]}


def _matters(f: dict) -> bool:
    return f.get("classification") in PLP or f.get("interpretation_status") in EXPLAINING


def _sort_key(key: str) -> tuple:
    chrom, pos, *rest = key.split("-", 2) + [""]
    return (chrom, int(pos) if pos.isdigit() else 0, rest[0])


def short_summary(diff: dict) -> str:
    """One cell for the batch summary's ``changed`` column."""
    if not diff["clinical"] and not diff["other"]:
        return "no change"
    parts = [c["what"] for c in diff["clinical"][:3]]
    if len(diff["clinical"]) > 3:
        parts.append(f"{len(diff['clinical']) - 3} more clinical change(s)")
    if diff["other"]:
        parts.append(f"{len(diff['other'])} other change(s)")
    return "; ".join(parts)


def render_text(diff: dict, old_path: str = "old", new_path: str = "new") -> str:
    lines = [f"Comparison of {old_path} (old) with {new_path} (new)"]
    samples = diff.get("sample") or {}
    if samples.get("old") != samples.get("new"):
        lines.append(f"NOTE: the two results are for different samples ({samples.get('old')} / {samples.get('new')})")
    st = diff["status"]
    lines.append(f"Case status: {st['old']} → {st['new']}" if st["old"] != st["new"] else f"Case status: {st['new']} "
                 "(unchanged)")
    lines.append("")
    lines.append(f"Changes that matter clinically ({len(diff['clinical'])}):")
    lines += [f"  ! {c['what']}" for c in diff["clinical"]] or ["  none"]
    lines.append(f"Other changes ({len(diff['other'])}):")
    lines += [f"  - {c['what']}" for c in diff["other"]] or ["  none"]
    lines.append("")
    lines.append("Versions behind each side:")
    for side in ("old", "new"):
        v = diff["versions"][side]
        lines.append(f"  {side}: irdtriage {v['tool']}; panel {_fmt(v['panel'])}; criteria {_fmt(v['rules'])}; "
                     f"combining {_fmt(v['combining'])}; evidence {_fmt_evidence(v['evidence'])}; run {v['run_started']}")
    lines.append("")
    lines.append("CAUTION: " + " ".join(CAUTION.split()))
    return "\n".join(lines) + "\n"


def _fmt(v: Optional[dict]) -> str:
    if not v:
        return "unknown"
    sha = (v.get("sha256") or "")[:12]
    return f"{v.get('name')} {v.get('version')}" + (f" ({sha})" if sha else "")


def _fmt_evidence(e: dict) -> str:
    parts = []
    if e.get("bundle"):
        parts.append("bundle " + _fmt(e["bundle"]))
    if e.get("files"):
        parts.append("files " + ", ".join(e["files"]))
    if e.get("online"):
        parts.append(f"online {e['online']}")
    return "; ".join(parts) or "VCF INFO only"
