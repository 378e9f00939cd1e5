"""Small parsers for raw INFO / annotation values (annotators write numbers many ways)."""
from __future__ import annotations

import math
import re
from typing import Any, Iterable, Optional

_SPLIT = re.compile(r"[&,|;/]")


def numbers(value: Any) -> list[float]:
    """All finite numbers in a raw value: 0.1, "0.1", "0.1&0.3", ("0.1", "."), ...."""
    if value is None or isinstance(value, bool):
        return []
    if isinstance(value, (int, float)):
        return [float(value)] if math.isfinite(value) else []
    if isinstance(value, (tuple, list)):
        out: list[float] = []
        for v in value:
            out.extend(numbers(v))
        return out
    out = []
    for part in _SPLIT.split(str(value)):
        part = part.strip()
        if part in ("", ".", "NA", "nan", "-"):
            continue
        try:
            f = float(part)
        except ValueError:
            continue
        if math.isfinite(f):
            out.append(f)
    return out


def max_number(value: Any) -> Optional[float]:
    vals = numbers(value)
    return max(vals) if vals else None


def first_int(value: Any) -> Optional[int]:
    vals = numbers(value)
    return int(vals[0]) if vals else None


def lookup(keys: Iterable[str], *dicts: dict) -> tuple[Optional[str], Any]:
    """First key present (case-sensitive first, then case-insensitive) in the dicts, in order."""
    for d in dicts:
        if not d:
            continue
        lower = {str(k).lower(): k for k in d}
        for k in keys:
            if k in d and d[k] not in (None, "", "."):
                return k, d[k]
            real = lower.get(k.lower())
            if real is not None and d[real] not in (None, "", "."):
                return real, d[real]
    return None, None


def spliceai_from_string(raw: Any, allele: str = "", gene: str = "") -> Optional[dict[str, float]]:
    """Parse ``ALLELE|SYMBOL|DS_AG|DS_AL|DS_DG|DS_DL|DP_AG|DP_AL|DP_DG|DP_DL`` entries.

    Several entries (comma-separated, one per gene/allele) may be present: the one for this
    allele and gene is used when present, else the highest-scoring entry.
    """
    if raw is None:
        return None
    text = ",".join(str(x) for x in raw) if isinstance(raw, (tuple, list)) else str(raw)
    best: Optional[dict[str, float]] = None
    preferred: Optional[dict[str, float]] = None
    for entry in text.split(","):
        parts = entry.split("|")
        if len(parts) < 6:
            continue
        try:
            ds = {k: float(v) for k, v in zip(("DS_AG", "DS_AL", "DS_DG", "DS_DL"), parts[2:6])}
        except ValueError:
            continue
        if best is None or max(ds.values()) > max(best.values()):
            best = ds
        if (not allele or parts[0] == allele) and (not gene or parts[1] == gene):
            if preferred is None or max(ds.values()) > max(preferred.values()):
                preferred = ds
    return preferred or best
