"""Load and validate the criteria rules file (panels/criteria.yaml).

``load_rules(path=None) -> Rules``.  Without a path the packaged file is used
(``importlib.resources.files("irdtriage.panels")``, falling back to the repository's
``panels/`` folder).  Every problem raises :class:`irdtriage.errors.InputError` naming the
file and the line of the offending key.
"""
from __future__ import annotations

import hashlib
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Optional

import yaml

from ..errors import InputError
from ..yamlio import package_data_path, read_yaml

STRENGTH_NAMES = ("Supporting", "Moderate", "Strong", "VeryStrong")

_TOP = {"name", "version", "frequency", "in_silico", "pvs1", "pm4", "clinical_assertions",
        "frequency_exceptions", "genes", "default_max_credible"}
_FREQ = {"ba1_af": (0, 1), "min_an": (0, 10**9), "continental": None, "pm2_strength": None,
         "pm2_max_af_dominant": (0, 1), "pm2_max_af_recessive": (0, 1), "faf_confidence": (0.5, 0.9999),
         "bs2_min_homozygotes": (1, 10**6), "bs2_min_heterozygotes_dominant": (1, 10**6)}
# optional booleans (default False when absent)
_FREQ_OPTIONAL = frozenset({"absent_when_declared_empty"})
# How BA1 and BS1 compare a frequency with their cut-off, panel-wide (frequency block) or per gene:
# the operator (">" or ">=") and the statistic ("popmax": highest continental allele frequency;
# "filtering": filtering allele frequency, Whiffin et al. 2017).  A specification states both.
OPERATORS = (">", ">=")
STATISTICS = ("popmax", "filtering")
COMPARISON_KEYS = frozenset({"ba1_operator", "ba1_statistic", "bs1_operator", "bs1_statistic"})
# Used when a criteria file does not state them (Richards 2015 / Ghosh 2018 for BA1; Whiffin 2017 for BS1).
COMPARISON_DEFAULTS = {"ba1": (">", "popmax"), "bs1": (">", "filtering")}
_INSILICO = {"scores": None, "spliceai_pp3": (0, 1), "spliceai_benign": (0, 1),
             "bp7_intron_donor_min": (1, 1000), "bp7_intron_acceptor_min": (1, 1000),
             "pp3_pm1_cap_points": (1, 8)}
_PVS1 = {"nmd_penultimate_nt": (0, 1000), "removed_fraction_strong": (0, 1), "start_lost_strength": None}
_GENE = {"pm1_residues", "max_credible", "bs2", "spec", "ba1_af", "bs1_af", "pm2_max_af", "pp2", "bp1",
         "repeat_residues", "critical_residues", "bs2_dominant", "start_lost_strength"} | COMPARISON_KEYS
_MAXCRED = {"prevalence", "allelic_contribution", "genetic_contribution", "penetrance", "note", "inheritance"}


@dataclass
class Rules:
    name: str
    version: str
    sha256: str
    path: str
    data: dict[str, Any] = field(repr=False, default_factory=dict)

    # -- accessors -----------------------------------------------------------------
    @property
    def frequency(self) -> dict[str, Any]:
        return self.data["frequency"]

    @property
    def in_silico(self) -> dict[str, Any]:
        return self.data["in_silico"]

    @property
    def pvs1(self) -> dict[str, Any]:
        return self.data["pvs1"]

    def gene(self, symbol: str) -> dict[str, Any]:
        return self.data.get("genes", {}).get(symbol, {}) or {}

    def exceptions(self, symbol: str) -> list[dict[str, Any]]:
        return [e for e in self.data.get("frequency_exceptions", []) if e.get("gene") == symbol]

    def comparison(self, symbol: str, code: str) -> tuple[str, str]:
        """(operator, statistic) for ``code`` "ba1" or "bs1" in gene ``symbol``: the gene's own
        setting, else the panel-wide one in ``frequency``, else COMPARISON_DEFAULTS."""
        g, f = self.gene(symbol), self.frequency
        op0, stat0 = COMPARISON_DEFAULTS[code]
        op = g.get(f"{code}_operator", f.get(f"{code}_operator", op0))
        stat = g.get(f"{code}_statistic", f.get(f"{code}_statistic", stat0))
        return op, stat

    def default_max_credible(self, mode: str) -> Optional[dict]:
        """Panel-wide fallback parameters for a gene without its own max_credible block."""
        return (self.data.get("default_max_credible") or {}).get(mode)


def default_path() -> Path:
    return package_data_path("criteria.yaml")


def _lines(node, prefix=()) -> dict[tuple, int]:
    out: dict[tuple, int] = {prefix: node.start_mark.line + 1}
    if isinstance(node, yaml.MappingNode):
        for k, v in node.value:
            key = prefix + (k.value,)
            out[key] = k.start_mark.line + 1
            out.update({kk: vv for kk, vv in _lines(v, key).items() if kk != key})
    elif isinstance(node, yaml.SequenceNode):
        for i, v in enumerate(node.value):
            out.update(_lines(v, prefix + (i,)))
    return out


class _Checker:
    def __init__(self, path: str, lines: dict[tuple, int]):
        self.path, self.lines = path, lines

    def fail(self, where: tuple, problem: str):
        line = None
        w = where
        while w and line is None:
            line = self.lines.get(w)
            w = w[:-1]
        raise InputError(problem, self.path, line or self.lines.get(()))

    def mapping(self, value, where, allowed: set, required: set = frozenset()):
        if not isinstance(value, dict):
            self.fail(where, f"{'.'.join(map(str, where)) or 'file'} must be a mapping")
        for k in value:
            if k not in allowed:
                self.fail(where + (k,), f"unknown key {k!r} in {'.'.join(map(str, where)) or 'top level'}")
        for k in required:
            if k not in value:
                self.fail(where, f"missing key {k!r} in {'.'.join(map(str, where)) or 'top level'}")

    def number(self, value, where, lo, hi):
        if isinstance(value, bool) or not isinstance(value, (int, float)):
            self.fail(where, f"{where[-1]} must be a number, got {value!r}")
        if not (lo <= value <= hi):
            self.fail(where, f"{where[-1]} = {value} is outside {lo}..{hi}")

    def strength(self, value, where):
        if value not in STRENGTH_NAMES:
            self.fail(where, f"{where[-1]} must be one of {', '.join(STRENGTH_NAMES)}, got {value!r}")

    def ranged(self, block, where, spec: dict, optional: frozenset = frozenset()):
        self.mapping(block, where, set(spec) | set(optional), set(spec))
        for k, rng in spec.items():
            if rng is not None:
                self.number(block[k], where + (k,), *rng)


def _comparison_keys(block: dict, where: tuple, c: _Checker) -> None:
    for k in COMPARISON_KEYS & set(block):
        allowed = OPERATORS if k.endswith("_operator") else STATISTICS
        if block[k] not in allowed:
            c.fail(where + (k,), f"{k} must be one of {', '.join(repr(a) for a in allowed)}, got {block[k]!r}")


def _validate(data: Any, c: _Checker) -> None:
    c.mapping(data, (), _TOP, _TOP - {"frequency_exceptions", "genes", "default_max_credible"})
    dm = data.get("default_max_credible")
    if dm is not None:
        c.mapping(dm, ("default_max_credible",), {"recessive", "dominant", "note"})
        for mode in ("recessive", "dominant"):
            if mode in dm:
                m = dm[mode]
                w = ("default_max_credible", mode)
                c.mapping(m, w, _MAXCRED, {"prevalence", "allelic_contribution", "genetic_contribution", "penetrance"})
                for k in ("prevalence", "allelic_contribution", "genetic_contribution", "penetrance"):
                    c.number(m[k], w + (k,), 1e-12, 1)
    for k in ("name", "version"):
        if not isinstance(data[k], str) or not data[k].strip():
            c.fail((k,), f"{k} must be a non-empty string")
    c.ranged(data["frequency"], ("frequency",), _FREQ, _FREQ_OPTIONAL | COMPARISON_KEYS)
    f = data["frequency"]
    for k in _FREQ_OPTIONAL:
        if k in f and not isinstance(f[k], bool):
            c.fail(("frequency", k), f"{k} must be true or false")
    if not isinstance(f["continental"], list) or not all(isinstance(x, str) for x in f["continental"]):
        c.fail(("frequency", "continental"), "continental must be a list of population codes")
    c.strength(f["pm2_strength"], ("frequency", "pm2_strength"))
    _comparison_keys(f, ("frequency",), c)
    c.ranged(data["in_silico"], ("in_silico",), _INSILICO)
    ins = data["in_silico"]
    if ins["spliceai_benign"] >= ins["spliceai_pp3"]:
        c.fail(("in_silico", "spliceai_benign"), "spliceai_benign must be below spliceai_pp3")
    if not isinstance(ins["scores"], dict):
        c.fail(("in_silico", "scores"), "scores must be a mapping of score name to thresholds")
    for name, sc in ins["scores"].items():
        w = ("in_silico", "scores", name)
        c.mapping(sc, w, {"higher_is_damaging", "pp3", "bp4", "source"}, {"higher_is_damaging", "pp3", "bp4", "source"})
        if not isinstance(sc["higher_is_damaging"], bool):
            c.fail(w + ("higher_is_damaging",), "higher_is_damaging must be true or false")
        for side in ("pp3", "bp4"):
            block = sc[side]
            if not isinstance(block, dict) or not block:
                c.fail(w + (side,), f"{side} must map strengths to thresholds")
            for s, v in block.items():
                c.strength(s, w + (side, s))
                c.number(v, w + (side, s), -1e9, 1e9)
            vals = [block[s] for s in STRENGTH_NAMES if s in block]
            up = sc["higher_is_damaging"] == (side == "pp3")
            if vals != sorted(vals, reverse=not up):
                c.fail(w + (side,), f"{side} thresholds must grow stricter with strength")
        hi = min(sc["pp3"].values()) if sc["higher_is_damaging"] else max(sc["pp3"].values())
        lo = max(sc["bp4"].values()) if sc["higher_is_damaging"] else min(sc["bp4"].values())
        if (sc["higher_is_damaging"] and lo >= hi) or (not sc["higher_is_damaging"] and lo <= hi):
            c.fail(w, "pp3 and bp4 intervals overlap")
    c.ranged(data["pvs1"], ("pvs1",), _PVS1)
    c.strength(data["pvs1"]["start_lost_strength"], ("pvs1", "start_lost_strength"))
    c.mapping(data["pm4"], ("pm4",), {"strength"}, {"strength"})
    c.strength(data["pm4"]["strength"], ("pm4", "strength"))
    ca = data["clinical_assertions"]
    c.mapping(ca, ("clinical_assertions",), {"pathogenic_terms", "excluded_review_terms"},
              {"pathogenic_terms", "excluded_review_terms"})
    for k in ca:
        if not isinstance(ca[k], list) or not all(isinstance(x, str) for x in ca[k]):
            c.fail(("clinical_assertions", k), f"{k} must be a list of strings")
    exc = data.get("frequency_exceptions") or []
    if not isinstance(exc, list):
        c.fail(("frequency_exceptions",), "frequency_exceptions must be a list")
    for i, e in enumerate(exc):
        w = ("frequency_exceptions", i)
        c.mapping(e, w, {"gene", "hgvs_c", "hgvs_p", "key", "reason"}, {"gene", "reason"})
        if not any(e.get(k) for k in ("hgvs_c", "hgvs_p", "key")):
            c.fail(w, "a frequency exception needs hgvs_c, hgvs_p or key (chrom-pos-ref-alt)")
    genes = data.get("genes") or {}
    if not isinstance(genes, dict):
        c.fail(("genes",), "genes must be a mapping of gene symbol to overrides")
    for sym, g in genes.items():
        w = ("genes", sym)
        c.mapping(g, w, _GENE)
        for k in ("ba1_af", "bs1_af", "pm2_max_af"):
            if k in g:
                c.number(g[k], w + (k,), 0, 1)
        _comparison_keys(g, w, c)
        for k in ("bs2", "pp2", "bp1", "bs2_dominant"):
            if k in g and not isinstance(g[k], bool):
                c.fail(w + (k,), f"{k} must be true or false")
        if "start_lost_strength" in g:
            c.strength(g["start_lost_strength"], w + ("start_lost_strength",))
        for k in ("pm1_residues", "repeat_residues", "critical_residues"):
            for i, r in enumerate(g.get(k, []) or []):
                c.mapping(r, w + (k, i), {"start", "end", "label", "note"}, {"start", "end", "label"})
                c.number(r["start"], w + (k, i, "start"), 1, 10**6)
                c.number(r["end"], w + (k, i, "end"), r["start"], 10**6)
        if "max_credible" in g:
            m = g["max_credible"]
            c.mapping(m, w + ("max_credible",), _MAXCRED,
                      {"prevalence", "allelic_contribution", "genetic_contribution", "penetrance"})
            for k in ("prevalence", "allelic_contribution", "genetic_contribution", "penetrance"):
                c.number(m[k], w + ("max_credible", k), 1e-12, 1)
            if m.get("inheritance", "recessive") not in ("recessive", "dominant"):
                c.fail(w + ("max_credible", "inheritance"), "inheritance must be recessive or dominant")


def load_rules(path: Optional[str | Path] = None) -> Rules:
    p = Path(path) if path else default_path()
    raw, node, data = read_yaml(p, "criteria rules file")
    if node is None:
        raise InputError("criteria rules file is empty", str(p))
    _validate(data, _Checker(str(p), _lines(node)))
    return Rules(name=data["name"], version=str(data["version"]), sha256=hashlib.sha256(raw).hexdigest(),
                 path=str(p), data=data)
