"""Load and validate the combining rule sets (panels/combining.yaml).

``load_combining(path=None) -> Combining``.  Without a path the packaged file is used.  Every
problem raises :class:`irdtriage.errors.InputError` naming the file and the line of the
offending key.  A rule set is plain data (:class:`RuleSet`); ``irdtriage.acmg.combine`` applies it.
"""
from __future__ import annotations

import hashlib
import json
from dataclasses import dataclass, field
from functools import lru_cache
from pathlib import Path
from typing import Any, Optional

from ..errors import InputError
from ..models import ALL_CODES, CLASSES, PATHOGENIC_CODES
from ..yamlio import package_data_path, read_yaml
from .rules import _Checker, _lines

RULE_STRENGTHS = ("VeryStrong", "Strong", "Moderate", "Supporting")  # strongest first
METHODS = ("table", "points", "bayes")
CONFLICT = ("uncertain", "points")
PATHOGENIC_CLASSES = ("Pathogenic", "Likely pathogenic")
BENIGN_CLASSES = ("Benign", "Likely benign")

_TOP = {"name", "version", "default", "tables", "rule_sets", "genes"}
_TABLE = {"source", "pathogenic", "benign"}
_SET = {"title", "version", "source", "method", "table", "extra_rules", "conflict"}
_RULE = {"class", "label", "need", "codes"}


@dataclass(frozen=True)
class Rule:
    cls: str  # one of CLASSES (never Uncertain significance)
    label: str
    need: tuple[tuple[str, int], ...] = ()  # (strength, minimum count)
    codes: tuple[tuple[str, str], ...] = ()  # (criterion code, minimum strength)

    @property
    def side(self) -> str:
        return "pathogenic" if self.cls in PATHOGENIC_CLASSES else "benign"


@dataclass(frozen=True)
class RuleSet:
    name: str
    title: str
    version: str
    source: str
    method: str  # "table", "points" or "bayes"
    rules: tuple[Rule, ...] = ()  # table rules then the rule set's own, in file order
    conflict: str = "uncertain"
    sha256: str = ""  # SHA-256 of the resolved content (rule set text, table used, every rule)

    def ref(self) -> dict[str, str]:
        """Name, version and content hash: what a result records about the rule set used."""
        return {"name": self.name, "version": self.version, "sha256": self.sha256}


@dataclass(frozen=True)
class Combining:
    name: str
    version: str
    sha256: str  # of the file bytes
    path: str
    default: str
    rule_sets: dict[str, RuleSet] = field(default_factory=dict)
    genes: dict[str, str] = field(default_factory=dict)  # gene symbol -> rule set name

    def for_gene(self, gene: Optional[str]) -> RuleSet:
        name = self.genes.get((gene or "").upper(), self.default)
        return self.rule_sets[name]

    def get(self, name: str) -> RuleSet:
        if name not in self.rule_sets:
            raise InputError(f"unknown rule set {name!r}; choose from {', '.join(self.rule_sets)}", self.path)
        return self.rule_sets[name]


def default_path() -> Path:
    return package_data_path("combining.yaml")


def _content_hash(rs: dict[str, Any]) -> str:
    return hashlib.sha256(json.dumps(rs, sort_keys=True, ensure_ascii=True).encode()).hexdigest()


def _rule(ck: _Checker, raw, where: tuple) -> Rule:
    ck.mapping(raw, where, _RULE, {"class", "label"})
    cls = raw["class"]
    if cls not in CLASSES or cls == "Uncertain significance":
        ck.fail(where + ("class",), f"class must be one of {', '.join(c for c in CLASSES if 'Uncertain' not in c)}, "
                                   f"got {cls!r}")
    if not isinstance(raw["label"], str) or not raw["label"].strip():
        ck.fail(where + ("label",), "label must be a non-empty text")
    need = raw.get("need") or {}
    codes = raw.get("codes") or {}
    if not need and not codes:
        ck.fail(where, "a rule needs `need` (counts per strength) or `codes` (named criteria)")
    if not isinstance(need, dict):
        ck.fail(where + ("need",), "need must be a mapping of strength to count")
    for s, n in need.items():
        if s not in RULE_STRENGTHS:
            ck.fail(where + ("need", s), f"strength must be one of {', '.join(RULE_STRENGTHS)}, got {s!r}")
        if isinstance(n, bool) or not isinstance(n, int) or n < 1:
            ck.fail(where + ("need", s), f"count for {s} must be a whole number >= 1, got {n!r}")
    if not isinstance(codes, dict):
        ck.fail(where + ("codes",), "codes must be a mapping of criterion code to strength")
    for c, s in codes.items():
        if c not in ALL_CODES:
            ck.fail(where + ("codes", c), f"unknown ACMG/AMP criterion code {c!r}")
        if s not in RULE_STRENGTHS:
            ck.fail(where + ("codes", c), f"strength must be one of {', '.join(RULE_STRENGTHS)}, got {s!r}")
    side = "pathogenic" if cls in PATHOGENIC_CLASSES else "benign"
    if any((c in PATHOGENIC_CODES) != (side == "pathogenic") for c in codes):
        ck.fail(where + ("codes",), f"a {cls} rule can only name {side} criteria")
    order = {s: i for i, s in enumerate(RULE_STRENGTHS)}
    return Rule(cls, raw["label"].strip(),
                tuple(sorted(need.items(), key=lambda kv: order[kv[0]])), tuple(codes.items()))


def parse_combining(raw_bytes: bytes, node, data, path: str) -> Combining:
    ck = _Checker(path, _lines(node) if node is not None else {})
    ck.mapping(data, (), _TOP, _TOP)
    for key in ("name", "version", "default"):
        if not isinstance(data[key], str) or not data[key].strip():
            ck.fail((key,), f"{key} must be a non-empty text")
    tables_raw = data["tables"]
    ck.mapping(tables_raw, ("tables",), set(tables_raw) if isinstance(tables_raw, dict) else set())
    tables: dict[str, tuple[list[Rule], dict]] = {}
    for tname, t in tables_raw.items():
        ck.mapping(t, ("tables", tname), _TABLE, _TABLE)
        rules = []
        for side in ("pathogenic", "benign"):
            if not isinstance(t[side], list) or not t[side]:
                ck.fail(("tables", tname, side), f"{side} must be a non-empty list of rules")
            for i, r in enumerate(t[side]):
                rule = _rule(ck, r, ("tables", tname, side, i))
                if rule.side != side:
                    ck.fail(("tables", tname, side, i), f"a {rule.cls} rule is listed under {side}")
                rules.append(rule)
        tables[tname] = (rules, t)
    sets_raw = data["rule_sets"]
    if not isinstance(sets_raw, dict) or not sets_raw:
        ck.fail(("rule_sets",), "rule_sets must be a non-empty mapping")
    rule_sets: dict[str, RuleSet] = {}
    for name, rs in sets_raw.items():
        where = ("rule_sets", name)
        ck.mapping(rs, where, _SET, {"title", "version", "source", "method"})
        for key in ("title", "version", "source"):
            if not isinstance(rs[key], str) or not rs[key].strip():
                ck.fail(where + (key,), f"{key} must be a non-empty text")
        method = rs["method"]
        if method not in METHODS:
            ck.fail(where + ("method",), f"method must be one of {', '.join(METHODS)}, got {method!r}")
        rules: list[Rule] = []
        # Canonical content of the resolved rule set (its own text, the table it uses with that
        # table's source, every rule): its SHA-256 identifies this rule set on its own, so two rule
        # sets with the same rules still carry different hashes, and editing one leaves the others'.
        content: dict[str, Any] = {"name": name, "title": rs["title"].strip(), "version": str(rs["version"]).strip(),
                                   "source": " ".join(rs["source"].split()), "method": method}
        conflict = rs.get("conflict", "uncertain")
        if method == "table":
            if rs.get("table") not in tables:
                ck.fail(where + ("table",), f"table must name one of {', '.join(tables) or '(none)'}, "
                                            f"got {rs.get('table')!r}")
            if conflict not in CONFLICT:
                ck.fail(where + ("conflict",), f"conflict must be one of {', '.join(CONFLICT)}, got {conflict!r}")
            rules = list(tables[rs["table"]][0])
            extra = rs.get("extra_rules") or []
            if not isinstance(extra, list):
                ck.fail(where + ("extra_rules",), "extra_rules must be a list of rules")
            rules += [_rule(ck, r, where + ("extra_rules", i)) for i, r in enumerate(extra)]
            content.update(conflict=conflict, table={"name": rs["table"], "source": " ".join(tables[rs["table"]][1]["source"].split())},
                           rules=[[r.cls, r.label, r.need, r.codes] for r in rules])
        else:
            for key in ("table", "extra_rules", "conflict"):
                if key in rs:
                    ck.fail(where + (key,), f"{key} applies to method 'table' only")
            conflict = "points"
        rule_sets[name] = RuleSet(name, rs["title"].strip(), str(rs["version"]).strip(), " ".join(rs["source"].split()),
                                  method, tuple(rules), conflict, _content_hash(content))
    if data["default"] not in rule_sets:
        ck.fail(("default",), f"default must name a rule set, got {data['default']!r}")
    genes_raw = data["genes"] or {}
    if not isinstance(genes_raw, dict):
        ck.fail(("genes",), "genes must be a mapping of gene symbol to rule set name")
    genes = {}
    for g, rsname in genes_raw.items():
        if rsname not in rule_sets:
            ck.fail(("genes", g), f"gene {g} names unknown rule set {rsname!r}")
        genes[str(g).upper()] = rsname
    return Combining(data["name"], str(data["version"]), hashlib.sha256(raw_bytes).hexdigest(), path,
                     data["default"], rule_sets, genes)


def load_combining(path: Optional[str | Path] = None) -> Combining:
    """The combining rule sets from ``path`` (default: the bundled panels/combining.yaml)."""
    if path is None:
        return _load_default()
    return _load(Path(path))


def _load(p: Path) -> Combining:
    raw, node, data = read_yaml(p, "combining rules")
    if data is None:
        raise InputError("combining rules file is empty", str(p))
    return parse_combining(raw, node, data, str(p))


@lru_cache(maxsize=1)
def _load_default() -> Combining:
    return _load(default_path())
