"""Evidence sources in words, for every output (terminal header, HTML run block, VCF header, TSV).

``result["evidence_sources"]`` (see assemble.py and docs/evidence-bundle.md) is turned into:

* :func:`source_items`: one ``(label, text)`` per source -- kind, name, version, date, sha256,
  and for an online provider its server, data release, mode and cache file; ``[("evidence",
  "none given")]`` when the run had none (population, clinical and score values then come only
  from the VCF's own INFO/annotation, if any);
* :func:`vcf_header_values`: the same as structured ``##irdtriage_evidence=<...>`` values;
* :func:`finding_sources`: for one finding of result.json, which source gave its frequency,
  clinical and score values (``"none given"`` when none did).
"""
from __future__ import annotations

import os
import re
from typing import Any, Optional

NONE_GIVEN = "none given"
_KIND_WORD = {"population": "population frequencies", "clinical": "clinical assertions", "scores": "scores"}


def _short(sha: Optional[str]) -> str:
    return f"sha256:{sha}" if sha else "sha256 unknown"


def _origin_text(o: dict) -> str:
    bits = [o.get("name") or "unnamed source"]
    bits.append(f"version {o['version']}" if o.get("version") else "version unknown")
    bits.append(f"date {o['date']}" if o.get("date") else "date unknown")
    if o.get("sha256"):
        bits.append(_short(o["sha256"]))
    return ", ".join(bits)


def entries(ev: Optional[dict]) -> list[dict[str, Any]]:
    """Flat list of sources: {id, kind, via, name, version, date, sha256, path, cache, ...}."""
    ev = ev or {}
    out: list[dict[str, Any]] = []
    b = ev.get("bundle")
    if b:
        for c in b.get("sources") or []:
            origins = c.get("origin") or []
            o = origins[0] if origins else {}
            out.append({
                "id": f"{c['kind']}{'_' + c['name'] if c.get('name') else ''}", "kind": c["kind"], "via": "bundle",
                "name": c.get("name") or o.get("name") or c.get("bundle_file"),
                "version": o.get("version"), "date": o.get("date"), "sha256": c.get("bundle_sha256"),
                "path": os.path.join(b.get("path") or "", c.get("bundle_file") or ""),
                "text": f"bundle {c.get('bundle_file')} ({_short(c.get('bundle_sha256'))}, built "
                        f"{b.get('created') or 'date unknown'}) from " + "; ".join(_origin_text(x) for x in origins)
                        if origins else f"bundle {c.get('bundle_file')} ({_short(c.get('bundle_sha256'))})",
            })
    for f in ev.get("files") or []:
        name = f.get("name") or os.path.basename(f.get("path") or "")
        out.append({"id": f"{f['kind']}{'_' + f['name'] if f.get('name') else ''}", "kind": f["kind"], "via": "file",
                    "name": name, "version": None, "date": None, "sha256": f.get("sha256"), "path": f.get("path"),
                    "text": f"file {f.get('path')} ({_short(f.get('sha256'))})"})
    on = ev.get("online")
    if on:
        ver = on.get("version") or {}
        rel = ver.get("ensembl_data_release")
        cache = (on.get("cache") or {}).get("path")
        out.append({"id": "online", "kind": "online", "via": "online", "name": on.get("provider"),
                    "version": None if rel is None else f"data release {rel}",
                    "date": on.get("fetched_to") or ver.get("fetched"), "sha256": None, "path": on.get("url"),
                    "cache": cache, "mode": on.get("mode"),
                    "text": f"{on.get('provider')} at {on.get('url')} "
                            f"({'data release ' + str(rel) if rel is not None else 'release unknown'}; "
                            f"{on.get('mode')}; answers fetched {on.get('fetched_from') or '-'} to "
                            f"{on.get('fetched_to') or '-'}; cache {cache}); sent variant coordinates only"})
    return out


def source_items(ev: Optional[dict]) -> list[tuple[str, str]]:
    """(label, text) per source for the terminal header and the HTML run block."""
    items = [(f"Evidence: {_KIND_WORD.get(e['kind'], e['kind'])}" + (f" ({e['name']})" if e["kind"] == "scores" else ""),
              e["text"]) for e in entries(ev)]
    return items or [("Evidence sources", NONE_GIVEN + " (only what the VCF itself carries)")]


def _hv(v: Any) -> str:
    """A value for a structured VCF header line: quoted, no double quotes or angle brackets inside."""
    s = " ".join(str(v if v is not None else "unknown").split())
    return '"' + s.replace('"', "'").replace("<", "(").replace(">", ")") + '"'


def vcf_header_values(ev: Optional[dict]) -> list[str]:
    """Values of ``##irdtriage_evidence=<...>`` lines (one per source; one saying none given)."""
    out = []
    for e in entries(ev):
        fields = [("ID", re.sub(r"[^A-Za-z0-9_.-]", "_", e["id"])), ("Kind", e["kind"]), ("Via", e["via"]), ("Name", _hv(e["name"])),
                  ("Version", _hv(e["version"])), ("Date", _hv(e["date"])), ("SHA256", _hv(e["sha256"])),
                  ("Location", _hv(e["path"]))]
        if e.get("cache"):
            fields += [("Cache", _hv(e["cache"])), ("Mode", _hv(e.get("mode")))]
        out.append("<" + ",".join(f"{k}={v}" for k, v in fields) + ">")
    return out or ['<ID=none,Description="none given: no evidence bundle, file or online source">']


def source_index(ev: Optional[dict]) -> tuple[dict[str, dict], dict[str, dict]]:
    """(first source by kind, score sources by name): built once per output, read per finding."""
    by_kind: dict[str, dict] = {}
    scores_by_name: dict[str, dict] = {}
    for e in entries(ev):
        if e["kind"] == "scores":
            scores_by_name[e["name"]] = e
        else:
            by_kind.setdefault(e["kind"], e)
    return by_kind, scores_by_name


def finding_sources(f: dict, ev: Optional[dict], index: Optional[tuple] = None) -> str:
    """Which sources gave one finding's frequency, clinical and score values (result.json finding);
    ``index``: :func:`source_index` of ``ev``, when the caller describes many findings."""
    evd = f.get("evidence") or {}
    by_kind, scores_by_name = index if index is not None else source_index(ev)

    def label(e: Optional[dict], fallback: str) -> str:
        if not e:
            return fallback
        v = f" {e['version']}" if e.get("version") else ""
        return f"{e['via']} {e['name']}{v}"

    parts = []
    pop = evd.get("population")
    if isinstance(pop, dict):
        src = pop.get("source")
        if src == "population_vcf":
            parts.append("frequency: " + label(by_kind.get("population"), "population file"))
        elif src == "online":
            parts.append("frequency: " + label(by_kind.get("online"), "online"))
        elif src in ("info", "annotation"):
            parts.append("frequency: VCF " + ("INFO" if src == "info" else "annotation"))
    if isinstance(evd.get("clinical"), dict):
        parts.append("clinical: " + label(by_kind.get("clinical"), "clinical file"))
    if evd.get("clinsig"):
        cs = evd.get("clinsig_source") or ""
        parts.append("clinical significance: " + (label(by_kind.get("online"), cs) if cs.startswith("online")
                                                   else "VCF INFO/annotation"))
    for name, value in sorted((evd.get("scores") or {}).items()):
        if value is not None:
            parts.append(f"score {name}: " + label(scores_by_name.get(name), "score table"))
    if evd.get("revel") is not None and evd.get("revel_key") != "score table revel":
        parts.append("score revel: VCF INFO/annotation")
    if evd.get("spliceai") and "spliceai" not in (evd.get("scores") or {}):
        parts.append("score spliceai: VCF INFO/annotation")
    return "; ".join(parts) or NONE_GIVEN
