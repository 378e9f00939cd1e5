"""Heteroplasmy thresholds of mitochondrial findings (``panels/heteroplasmy.yaml``).

:func:`load_thresholds` reads and validates the file (a bad value is an ``InputError`` naming
the file and the entry); :func:`disease_min_fraction` gives the level from which an allele is
taken to be at a disease-causing level, with the source of that figure.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from functools import lru_cache
from pathlib import Path
from typing import Optional

from .errors import InputError
from .yamlio import package_data_path, read_yaml


@dataclass(frozen=True)
class Thresholds:
    homoplasmic_min_fraction: float
    homoplasmic_source: str
    default_disease_min_fraction: float
    default_source: str
    # (gene, pos, ref, alt) -> (fraction, name, source)
    alleles: dict = field(default_factory=dict)


def _fraction(value, path: str, what: str) -> float:
    if isinstance(value, bool) or not isinstance(value, (int, float)) or not 0 < float(value) <= 1:
        raise InputError(f"{what}: expected a share of reads between 0 and 1, got {value!r}", path)
    return float(value)


def _text(value, path: str, what: str) -> str:
    if not isinstance(value, str) or not value.strip():
        raise InputError(f"{what}: expected non-empty text", path)
    return value.strip()


def load_thresholds(path: Optional[str | Path] = None) -> Thresholds:
    p = Path(path) if path else package_data_path("heteroplasmy.yaml")
    _, _, data = read_yaml(p, "heteroplasmy thresholds")
    where = str(p)
    if not isinstance(data, dict):
        raise InputError("expected a mapping with homoplasmic_min_fraction, default_disease_min_fraction "
                         "and alleles", where)
    alleles = {}
    for i, a in enumerate(data.get("alleles") or []):
        what = f"alleles[{i}]"
        if not isinstance(a, dict):
            raise InputError(f"{what}: expected a mapping", where)
        gene = _text(a.get("gene"), where, f"{what}.gene")
        pos = a.get("pos")
        if isinstance(pos, bool) or not isinstance(pos, int) or not 1 <= pos <= 16569:
            raise InputError(f"{what}.pos: expected an rCRS position 1..16569, got {pos!r}", where)
        ref, alt = (_text(a.get(k), where, f"{what}.{k}").upper() for k in ("ref", "alt"))
        if not set(ref + alt) <= set("ACGT"):
            raise InputError(f"{what}: ref/alt must be bases A, C, G, T", where)
        alleles[(gene, pos, ref, alt)] = (_fraction(a.get("disease_min_fraction"), where,
                                                    f"{what}.disease_min_fraction"),
                                          _text(a.get("name"), where, f"{what}.name"),
                                          _text(a.get("source"), where, f"{what}.source"))
    return Thresholds(
        _fraction(data.get("homoplasmic_min_fraction"), where, "homoplasmic_min_fraction"),
        _text(data.get("homoplasmic_source"), where, "homoplasmic_source"),
        _fraction(data.get("default_disease_min_fraction"), where, "default_disease_min_fraction"),
        _text(data.get("default_source"), where, "default_source"),
        alleles,
    )


@lru_cache(maxsize=1)
def bundled() -> Thresholds:
    return load_thresholds()


def disease_min_fraction(gene: str, pos: int, ref: str, alt: str,
                         thresholds: Optional[Thresholds] = None) -> tuple[float, str, str]:
    """(fraction, allele name or "", source) for an allele of a chrM gene."""
    t = thresholds or bundled()
    hit = t.alleles.get((gene, pos, ref.upper(), alt.upper()))
    if hit:
        return hit
    return t.default_disease_min_fraction, "", t.default_source
