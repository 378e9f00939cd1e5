"""User-curated ACMG/AMP evidence (functional studies, case-control data, expert review).

``load_curated(path) -> dict[variant_key, list[CriterionResult]]`` from YAML or TSV.

Each row/item: ``variant`` (chrom-pos-ref-alt, chromosome without "chr", as in
``Variant.key``), ``code`` (ACMG/AMP code), ``strength`` (Supporting, Moderate, Strong,
VeryStrong; StandAlone only for BA1), ``reason`` (one line), ``citation`` (where the
evidence comes from: PMID, DOI, lab report id), optional ``met`` (true/false, default true).
YAML: a list of mappings (or ``{evidence: [...]}``).  TSV: a header line with those column
names.  Problems raise InputError naming the file and line.  PP5/BP6 are accepted but the
reason records that ClinGen SVI (Biesecker & Harrison, Genet Med 2018 - from memory)
recommends against using them.
"""
from __future__ import annotations

import csv
import re
from pathlib import Path
from typing import Any

from .errors import InputError
from .models import ALL_CODES, STRENGTHS, CriterionResult
from .yamlio import parse_yaml

_KEY = re.compile(r"^(?:chr)?([0-9]{1,2}|X|Y|MT|M)-([0-9]+)-([ACGTNacgtn]+)-([ACGTNacgtn]+|\*)$")
_FIELDS = {"variant", "code", "strength", "reason", "citation", "met"}
DISCOURAGED = {"PP5", "BP6"}


def _key(text: str, path: str, line) -> str:
    m = _KEY.match(str(text).strip())
    if not m:
        raise InputError(f"variant must be chrom-pos-ref-alt (e.g. 1-94010914-T-A), got {text!r}", path, line)
    chrom = "MT" if m.group(1) == "M" else m.group(1)
    if int(m.group(2)) < 1:
        raise InputError("variant position must be >= 1", path, line)
    return f"{chrom}-{int(m.group(2))}-{m.group(3).upper()}-{m.group(4).upper()}"


def _row(item: dict[str, Any], path: str, line) -> tuple[str, CriterionResult]:
    unknown = set(item) - _FIELDS
    if unknown:
        raise InputError(f"unknown field(s) {', '.join(sorted(map(str, unknown)))}; allowed: {', '.join(sorted(_FIELDS))}",
                         path, line)
    for k in ("variant", "code", "reason", "citation"):
        if not str(item.get(k) or "").strip():
            raise InputError(f"missing {k}", path, line)
    key = _key(item["variant"], path, line)
    code = str(item["code"]).strip().upper()
    if code not in ALL_CODES:
        raise InputError(f"unknown ACMG/AMP criterion code {item['code']!r}", path, line)
    met_raw = item.get("met", True)
    if isinstance(met_raw, str):
        if met_raw.strip().lower() not in ("true", "false", "yes", "no", "1", "0", ""):
            raise InputError(f"met must be true or false, got {met_raw!r}", path, line)
        met = met_raw.strip().lower() in ("true", "yes", "1", "")
    elif isinstance(met_raw, bool):
        met = met_raw
    else:
        raise InputError(f"met must be true or false, got {met_raw!r}", path, line)
    strength = str(item.get("strength") or "").strip() or None
    if met:
        if strength not in STRENGTHS:
            raise InputError(f"strength must be one of {', '.join(STRENGTHS)}, got {item.get('strength')!r}", path, line)
        if strength == "StandAlone" and code != "BA1":
            raise InputError("only BA1 can be applied at StandAlone strength", path, line)
        if code == "BA1" and strength != "StandAlone":
            raise InputError("BA1 is applied only at StandAlone strength", path, line)
    reason = " ".join(str(item["reason"]).split())
    if code in DISCOURAGED:
        reason += " [ClinGen SVI recommends against reputable-source criteria PP5/BP6]"
    citation = " ".join(str(item["citation"]).split())
    return key, CriterionResult(code=code, met=met, strength=strength if met else None,
                                reason=f"{reason} ({citation})",
                                evidence={"citation": citation, "file": path, "line": line}, source="curated")


def load_curated(path: str | Path) -> dict[str, list[CriterionResult]]:
    p = str(path)
    try:
        text = Path(p).read_text(encoding="utf-8")
    except (OSError, UnicodeDecodeError) as e:
        raise InputError(f"cannot read curated evidence file: {e}", p) from None
    rows: list[tuple[dict, Any]] = []
    if p.lower().endswith((".tsv", ".txt")):
        lines = text.splitlines()
        if not lines:
            raise InputError("curated evidence file is empty", p)
        header = [h.strip() for h in lines[0].split("\t")]
        missing = {"variant", "code", "reason", "citation"} - set(header)
        if missing:
            raise InputError(f"header lacks column(s) {', '.join(sorted(missing))}", p, 1)
        for n, cols in enumerate(csv.reader(lines[1:], delimiter="\t"), start=2):
            if not cols or not "".join(cols).strip() or cols[0].startswith("#"):
                continue
            if len(cols) > len(header):
                raise InputError(f"{len(cols)} columns but the header has {len(header)}", p, n)
            rows.append((dict(zip(header, cols)), n))
    else:
        node, data = parse_yaml(text, p)
        if isinstance(data, dict) and set(data) == {"evidence"}:
            data, node = data["evidence"], node.value[0][1]
        if data is None:
            return {}
        if not isinstance(data, list):
            raise InputError("curated evidence YAML must be a list of items (or {evidence: [...]})", p, 1)
        for item, inode in zip(data, node.value):
            line = inode.start_mark.line + 1
            if not isinstance(item, dict):
                raise InputError("each curated evidence item must be a mapping", p, line)
            rows.append((item, line))
    out: dict[str, list[CriterionResult]] = {}
    seen: dict[tuple[str, str], Any] = {}
    for item, line in rows:
        key, res = _row(item, p, line)
        if (key, res.code) in seen:
            raise InputError(f"{res.code} for {key} is already given at line {seen[(key, res.code)]}", p, line)
        seen[(key, res.code)] = line
        out.setdefault(key, []).append(res)
    return out


def unmatched_warning(curated: dict[str, list[CriterionResult]], finding_keys, path: str | Path,
                      shown: int = 5) -> str | None:
    """One warning listing curated entries whose variant matches no finding of this run (they
    were not applied), with their lines; None when every entry matched."""
    keys = set(finding_keys)
    items = []
    for key, results in curated.items():
        if key in keys:
            continue
        for r in results:
            line = r.evidence.get("line")
            items.append(f"{r.code} for {key}" + (f" (line {line})" if line else ""))
    if not items:
        return None
    more = f" and {len(items) - shown} more" if len(items) > shown else ""
    return (f"{len(items)} curated evidence entr{'y' if len(items) == 1 else 'ies'} in {path} match no finding "
            f"of this run and were not applied: " + "; ".join(items[:shown]) + more
            + " (check the chrom-pos-ref-alt key: chromosome without 'chr', alleles trimmed as in the findings)")
