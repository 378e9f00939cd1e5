"""The classification calculator behind ``irdtriage classify``: criteria as curators write them
-> class, rule, points and posterior, with the same combine function the pipeline uses.

* :func:`parse_criteria` reads ``"PVS1, PM2_Supporting, PM3_Strong"``, ``BS1_Stand Alone``,
  ``PS2_Very Strong``, ``PP1_Strong`` or a plain code (which carries its Richards 2015 strength).
* :func:`classify` combines them with a rule set and returns plain data.
* :func:`render_text` / :func:`classify_tsv` format; nothing here prints.
"""
from __future__ import annotations

import csv
import io
import re
from typing import Any, Iterable, Optional, TextIO

from . import CAUTION
from .acmg.combine import POINTS, combine
from .acmg.rulesets import Combining, RuleSet, load_combining
from .errors import InputError
from .models import ALL_CODES, PATHOGENIC_CODES, CriterionResult

# Strength a criterion carries when no strength is written (Richards et al. 2015, Tables 3-4).
DEFAULT_STRENGTH = {"PVS": "VeryStrong", "PS": "Strong", "PM": "Moderate", "PP": "Supporting",
                    "BA": "StandAlone", "BS": "Strong", "BP": "Supporting"}
# Written strength (lower case, letters only) -> strength name.
STRENGTH_WORDS = {"supporting": "Supporting", "moderate": "Moderate", "strong": "Strong",
                  "verystrong": "VeryStrong", "standalone": "StandAlone"}
_ITEM = re.compile(r"^(?P<code>[A-Za-z]{2,3}[0-9])(?:[\s_-]+(?P<strength>.+))?$")
# A new criterion starts wherever a code follows white space ("PS1 PM2_Supporting" is two criteria,
# "PS2_Very Strong" one).
_CODE_AFTER_SPACE = re.compile(r"\s+(?=(?:PVS|PS|PM|PP|BA|BS|BP)[0-9](?![0-9]))", re.IGNORECASE)

TSV_COLUMNS = ("class", "rule_set", "rule", "points", "posterior", "rule_set_sha256")


def _strength_word(written: str) -> str:
    """The strength name a curator wrote, letters only and lower case; an unambiguous abbreviation of
    at least three letters (``Sup``, ``Mod``, ``Str``, ``VeryStr``, ``Stand``) reads as the whole word."""
    word = re.sub(r"[^a-z]", "", written.lower())
    if word in STRENGTH_WORDS or len(word) < 3:
        return word
    hits = [w for w in STRENGTH_WORDS if w.startswith(word)]
    return hits[0] if len(hits) == 1 else word


def parse_criteria(text: str, where: str = "criteria", line: Optional[int] = None) -> list[CriterionResult]:
    """Met criteria from text such as ``"PVS1, PM2_Supporting, PS2_Very Strong"`` (separated by
    commas, semicolons or white space before a code).  An unknown code or strength, or a code listed twice, raises InputError."""
    out: list[CriterionResult] = []
    seen: set[str] = set()
    items = (y.strip() for x in re.split(r"[,;]", text or "") for y in _CODE_AFTER_SPACE.split(x.strip()))
    for item in items:
        if not item:
            continue
        m = _ITEM.match(item)
        if not m:
            raise InputError(f"cannot read criterion {item!r} (expected CODE or CODE_Strength, e.g. PM2_Supporting)",
                             where, line)
        code = m.group("code").upper()
        if code not in ALL_CODES:
            raise InputError(f"unknown ACMG/AMP criterion code {code!r} in {item!r}", where, line)
        if m.group("strength"):
            word = _strength_word(m.group("strength"))
            if word not in STRENGTH_WORDS:
                raise InputError(f"unknown strength {m.group('strength')!r} in {item!r} (use Supporting, Moderate, "
                                 "Strong, Very Strong or Stand Alone)", where, line)
            strength = STRENGTH_WORDS[word]
        else:
            strength = DEFAULT_STRENGTH[code[:3] if code.startswith("PVS") else code[:2]]
        if strength == "StandAlone" and code in PATHOGENIC_CODES:
            raise InputError(f"{item!r}: only benign criteria can be applied stand-alone", where, line)
        if code in seen:
            raise InputError(f"criterion {code} is listed twice", where, line)
        seen.add(code)
        out.append(CriterionResult(code, True, strength, "given by the user", source="curated"))
    return out


def pick_rule_set(combining: Combining, gene: Optional[str] = None, rule_set: Optional[str] = None) -> RuleSet:
    """``rule_set`` by name when given, else the gene's rule set, else the default."""
    return combining.get(rule_set) if rule_set else combining.for_gene(gene)


def classify(criteria: Iterable[CriterionResult], rule_set: RuleSet) -> dict[str, Any]:
    """Class, rule, points and posterior of the met criteria under ``rule_set`` (plain data)."""
    crit = list(criteria)
    c = combine(crit, rule_set)
    return {
        "criteria": [{"code": x.code, "strength": x.strength,
                      "points": None if x.strength == "StandAlone" else
                      (POINTS[x.strength] if x.code in PATHOGENIC_CODES else -POINTS[x.strength])} for x in crit],
        "class": c.classification, "rule": c.rule, "rule_set": rule_set.ref(), "rule_set_title": rule_set.title,
        "method": rule_set.method, "points": c.points, "point_class": c.point_class,
        "posterior": c.posterior, "bayes_class": c.bayes_class, "note": c.note,
        "why": why_methods_differ(c, rule_set, crit),
    }


def why_methods_differ(c, rule_set: RuleSet, crit: list[CriterionResult]) -> list[str]:
    """Plain sentences on why the rule set, the points and the posterior disagree (empty if they agree)."""
    out: list[str] = []
    has_p = any(x.code in PATHOGENIC_CODES for x in crit)
    has_b = any(x.code not in PATHOGENIC_CODES for x in crit)
    if c.classification != c.point_class:
        if c.rule.startswith("Benign (i)"):
            out.append("A stand-alone benign criterion decides the class; the points of the other criteria "
                       "are shown for review only.")
        elif rule_set.method == "table" and has_p and has_b and rule_set.conflict == "uncertain":
            out.append("The rule table treats pathogenic and benign criteria met together as contradictory "
                       f"(Uncertain significance); the point system nets them to {c.points} points.")
        elif rule_set.method == "table" and c.classification == "Uncertain significance":
            out.append("No combination of the rule table is met, but the weights of the criteria add up to "
                       f"{c.points} points, which the point system calls {c.point_class}.")
        elif rule_set.method == "table":
            out.append(f"The rule table counts criteria per strength ({c.rule}); the point system adds their "
                       f"weights ({c.points} points) and reaches {c.point_class}. Tavtigian et al. 2018 showed "
                       "that some table rules do not match the Bayesian model.")
        else:
            out.append(f"{rule_set.title} gives {c.classification}; the point system gives {c.point_class}.")
    if c.point_class != c.bayes_class and not c.rule.startswith("Benign (i)"):
        out.append(f"The posterior ({c.posterior:.4f}) lies on the other side of a class boundary from the "
                   f"{c.points}-point band (boundaries are rounded differently in the two papers).")
    return out


def _points_text(p: Optional[int]) -> str:
    return "stand-alone" if p is None else f"{p:+d}"


def render_text(res: dict[str, Any]) -> str:
    """The calculator's plain-text answer (caution line included)."""
    crit = ", ".join(f"{c['code']} {c['strength']} ({_points_text(c['points'])})" for c in res["criteria"]) or "(none)"
    rs = res["rule_set"]
    lines = [
        f"Criteria:   {crit}",
        f"Rule set:   {rs['name']} - {res['rule_set_title']} (version {rs['version']}; sha256 {rs['sha256'][:12]})",
        f"Class:      {res['class']}",
        f"Rule:       {res['rule']}",
        f"Points:     {res['points']} -> {res['point_class']} (Tavtigian et al. 2020)",
        f"Posterior:  {res['posterior']:.4f} -> {res['bayes_class']} (Tavtigian et al. 2018, prior 0.10)",
    ]
    if res["why"]:
        lines.append("Why the methods differ:")
        lines += [f"  - {w}" for w in res["why"]]
    else:
        lines.append("The rule set, the point system and the posterior agree.")
    lines.append(f"Caution: {CAUTION}")
    return "\n".join(lines) + "\n"


def classify_tsv(src: TextIO, path: str, combining: Combining, gene: Optional[str] = None,
                 rule_set: Optional[str] = None) -> str:
    """Rows of a tab-separated file with a ``criteria_met`` column (and ``gene`` when present),
    returned as TSV text with class, rule_set, rule, points, posterior and the rule set's SHA-256
    added, and the caution as the last column.  The rule set of a row: a non-empty ``rule_set`` cell of that row, else
    ``rule_set`` (the --rule-set option), else the row's gene's rule set, else the default."""
    reader = csv.reader(src, delimiter="\t")
    try:
        header = next(reader)
    except StopIteration:
        raise InputError("file is empty (expected a header row with a criteria_met column)", path, 1) from None
    except csv.Error as e:
        raise InputError(f"not a readable TSV: {e}", path, 1) from None
    if "criteria_met" not in header:
        raise InputError("header has no criteria_met column", path, 1)
    ci = header.index("criteria_met")
    gi = header.index("gene") if "gene" in header else None
    ri = header.index("rule_set") if "rule_set" in header else None  # a row may name its own rule set
    fixed = combining.get(rule_set) if rule_set else None
    added = [c for c in TSV_COLUMNS if c not in header]
    out = io.StringIO()
    w = csv.writer(out, delimiter="\t", lineterminator="\n")
    w.writerow(header + added + ["caution"])
    line = 1
    try:
        for row in reader:
            line = reader.line_num
            if not row or all(not x.strip() for x in row):
                continue
            if len(row) != len(header):
                raise InputError(f"row has {len(row)} fields, the header has {len(header)}", path, line)
            if ri is not None and row[ri].strip():
                if row[ri].strip() not in combining.rule_sets:
                    raise InputError(f"unknown rule set {row[ri].strip()!r}; choose from {', '.join(combining.rule_sets)}",
                                     path, line)
                rs = combining.rule_sets[row[ri].strip()]
            else:
                rs = fixed or combining.for_gene(row[gi] if gi is not None and row[gi].strip() else gene)
            res = classify(parse_criteria(row[ci], path, line), rs)
            values = {"class": res["class"], "rule_set": rs.name, "rule": res["rule"], "points": str(res["points"]),
                      "posterior": f"{res['posterior']:.6f}", "rule_set_sha256": rs.sha256}
            row = [values.get(h, v) if h in TSV_COLUMNS else v for h, v in zip(header, row)]
            w.writerow(row + [values[c] for c in added] + [CAUTION])
    except csv.Error as e:
        raise InputError(f"not a readable TSV: {e}", path, reader.line_num) from None
    return out.getvalue()


def default_combining() -> Combining:
    return load_combining()
