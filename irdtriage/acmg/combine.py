"""Combine evaluated ACMG/AMP criteria into a classification.

Three published combining methods run side by side on the same met criteria:

* the rule table of Richards et al., Genet Med 2015;17:405-424, Table 5 ("rule class");
* the Bayesian formulation of Tavtigian et al., Genet Med 2018;20:1054-1060: prior 0.10,
  odds of pathogenicity for Very Strong O_PVSt = 350, exponent base X = 2, so
  OP = 350 ** (Nsup/8 + Nmod/4 + Nstr/2 + Nvstr) with benign evidence subtracting from the
  exponent; posterior = OP * prior / ((OP - 1) * prior + 1).  Posterior bands as in that
  paper: Pathogenic > 0.99, Likely pathogenic 0.90-0.99, Likely benign 0.001-0.10,
  Benign < 0.001, otherwise Uncertain significance;
* the point system of Tavtigian et al., Hum Mutat 2020;41:1734-1737 (Supporting 1,
  Moderate 2, Strong 4, Very Strong 8; benign negative; Table 3: P >= 10, LP 6..9,
  VUS 0..5, LB -1..-6, B <= -7).

Decisions documented here (they are ours, not the papers'):

* The final ``classification`` is the class of the rule set chosen for the gene
  (``panels/combining.yaml``, loaded by :mod:`irdtriage.acmg.rulesets`): a table rule set
  (Table 5 rules as data, plus the rule set's own rules), the point system or the posterior.
  ``note`` says in one sentence when the points or the posterior disagree with it.
* Strengths are used as applied: a PVS1 applied at Strong counts as Strong, a PP3 applied
  at Moderate counts as Moderate.  Table 5 counts are minimums, so a criterion applied at a
  higher strength fills a lower-strength place: a second criterion applied at Very Strong
  (PM3_VeryStrong, PS2_VeryStrong) counts at least as Strong, and PVS1 plus it is
  Pathogenic (i)(a).  Very Strong and Stand Alone are accepted for any code the
  specifications grade that way; Stand Alone only for benign criteria.
* BA1, or any benign criterion applied at Stand Alone (e.g. ``BS1_Stand Alone``), is
  stand-alone (Richards 2015; Ghosh et al., Hum Mutat 2018;39:1525-1530): all three methods
  report Benign; points and posterior are still computed from the other criteria and shown
  so a reviewer sees what else was met.
* Conflict: when any pathogenic and any benign criterion are both met, Table 5 "Uncertain
  significance (ii)" fires (criteria for benign and pathogenic are contradictory), unless the
  rule set says ``conflict: points`` (the evidence is then netted on the point scale).
* ClinGen SVI amendment to Table 5 (Recommendation for Absence/Rarity (PM2), version 1.0,
  approved September 2020): "PVS1 AND PM2_Supporting -> Likely pathogenic" (8 + 1 = 9 points,
  Likely pathogenic in Tavtigian 2020, posterior 0.988 in Tavtigian 2018), written in the
  rule sets as a rule naming PVS1 at Very Strong and PM2 at Supporting.
* Exactly 6 points (e.g. Likely pathogenic rule (ii), 1 Strong + 1 Moderate) gives a
  posterior of 0.89991 at prior 0.10; Tavtigian 2020 (Table 3 footnote) says the prior
  should be read as "infinitesimally greater than 0.10" so that these rules land in
  Likely pathogenic.  We apply that by comparing the posterior with 0.90 after rounding
  to 3 decimals, the precision at which Tavtigian 2018 reports posteriors (0.900).
"""
from __future__ import annotations

from collections import Counter
from typing import Iterable, Optional

from ..models import BENIGN_CODES, PATHOGENIC_CODES, Classification, CriterionResult

PRIOR = 0.10
ODDS_VERY_STRONG = 350.0
EXPONENT_WEIGHT = {"Supporting": 1 / 8, "Moderate": 1 / 4, "Strong": 1 / 2, "VeryStrong": 1.0}
POINTS = {"Supporting": 1, "Moderate": 2, "Strong": 4, "VeryStrong": 8}

PATHOGENIC = "Pathogenic"
LIKELY_PATHOGENIC = "Likely pathogenic"
UNCERTAIN = "Uncertain significance"
LIKELY_BENIGN = "Likely benign"
BENIGN = "Benign"


def _met(criteria: Iterable[CriterionResult]) -> list[CriterionResult]:
    out = []
    for c in criteria:
        if c.met is not True:
            continue
        if c.code not in PATHOGENIC_CODES and c.code not in BENIGN_CODES:
            raise ValueError(f"unknown ACMG/AMP criterion code {c.code!r}")
        if c.strength not in POINTS and c.strength != "StandAlone":
            raise ValueError(f"criterion {c.code} is met but has no valid strength ({c.strength!r})")
        if c.strength == "StandAlone" and c.code not in BENIGN_CODES:
            raise ValueError(f"only benign criteria can be applied stand-alone, not {c.code}")
        out.append(c)
    return out


def pathogenic_counts(met: list[CriterionResult]) -> Counter:
    return Counter(c.strength for c in met if c.code in PATHOGENIC_CODES)


def benign_counts(met: list[CriterionResult]) -> Counter:
    return Counter(c.strength for c in met if c.code in BENIGN_CODES and c.strength != "StandAlone")


_ORDER = ("VeryStrong", "Strong", "Moderate", "Supporting")
_RANK = {s: i for i, s in enumerate(_ORDER)}


def satisfies(counts: Counter, need) -> bool:
    """True when distinct criteria can fill every place in ``need`` ((strength, count) pairs), a
    criterion at a higher strength filling a lower-strength place (Richards 2015 Table 5 counts are
    minimums, and a criterion applied at Very Strong counts at least as Strong).  For nested
    "at least this strong" places this is the Hall condition: at every strength, the criteria at
    that strength or above are at least as many as the places at that strength or above."""
    want = dict(need)
    have = placed = 0
    for s in _ORDER:
        have += counts.get(s, 0)
        placed += want.get(s, 0)
        if have < placed:
            return False
    return True


def _codes_met(met: list[CriterionResult], codes) -> bool:
    for code, strength in codes:
        if not any(c.code == code and c.strength in _RANK and _RANK[c.strength] <= _RANK[strength] for c in met):
            return False
    return True


def _stand_alone(met: list[CriterionResult]) -> Optional[CriterionResult]:
    return next((c for c in met if c.code == "BA1"), None) or next(
        (c for c in met if c.code in BENIGN_CODES and c.strength == "StandAlone"), None)


def _rule_set(rule_set):
    if rule_set is not None:
        return rule_set
    from .rulesets import load_combining

    return load_combining().for_gene(None)


_CLASS_RANK = {PATHOGENIC: 0, LIKELY_PATHOGENIC: 1, BENIGN: 0, LIKELY_BENIGN: 1}


def table_rule(met: list[CriterionResult], rules, side: str) -> tuple[str, str]:
    """The strongest class any rule of ``side`` gives, and the first such rule's label."""
    counts = pathogenic_counts(met) if side == "pathogenic" else benign_counts(met)
    best: Optional[tuple[str, str]] = None
    for r in rules:
        if r.side != side:
            continue
        if r.need and not satisfies(counts, r.need):
            continue
        if r.codes and not _codes_met(met, r.codes):
            continue
        if best is None or _CLASS_RANK[r.cls] < _CLASS_RANK[best[0]]:
            best = (r.cls, r.label)
    return best or (UNCERTAIN, "")


def rule_class(criteria: Iterable[CriterionResult], rule_set=None) -> tuple[str, str]:
    """The rule set's class for the met criteria and the rule that fired (default rule set:
    Richards 2015 Table 5 with the SVI 2020 PVS1 + PM2_Supporting rule)."""
    rs = _rule_set(rule_set)
    met = _met(criteria)
    alone = _stand_alone(met)
    if alone is not None:
        return BENIGN, f"Benign (i): 1 Stand-alone ({alone.code})"
    pts = points(met)
    if rs.method == "points":
        cls = point_class(pts)
        return cls, f"{rs.title}: {pts} points is {cls}"
    if rs.method == "bayes":
        post = posterior(odds_of_pathogenicity(met))
        cls = bayes_class(post)
        return cls, f"{rs.title}: posterior {post:.3f} is {cls}"
    has_p = any(c.code in PATHOGENIC_CODES for c in met)
    has_b = any(c.code in BENIGN_CODES for c in met)
    if has_p and has_b:
        if rs.conflict == "points":
            cls = point_class(pts)
            return cls, (f"Contradictory pathogenic and benign criteria netted on the point scale: {pts} points "
                         f"is {cls} (Tavtigian 2020)")
        return UNCERTAIN, "Uncertain significance (ii): pathogenic and benign criteria are contradictory"
    cls, rule = table_rule(met, rs.rules, "pathogenic" if has_p else "benign") if (has_p or has_b) else (UNCERTAIN, "")
    if cls == UNCERTAIN:
        return UNCERTAIN, "Uncertain significance (i): other criteria shown above are not met"
    return cls, rule


SVI_PVS1_PM2_RULE = "Likely pathogenic (SVI 2020 amendment to Table 5): PVS1 and PM2_Supporting"


def points(criteria: Iterable[CriterionResult]) -> int:
    """Tavtigian 2020 point sum (BA1 and other stand-alone benign criteria excluded)."""
    total = 0
    for c in _met(criteria):
        if c.strength == "StandAlone":
            continue
        value = POINTS[c.strength]
        total += value if c.code in PATHOGENIC_CODES else -value
    return total


def point_class(total: int) -> str:
    """Tavtigian 2020 Table 3 point bands."""
    if total >= 10:
        return PATHOGENIC
    if total >= 6:
        return LIKELY_PATHOGENIC
    if total >= 0:
        return UNCERTAIN
    if total >= -6:
        return LIKELY_BENIGN
    return BENIGN


def odds_of_pathogenicity(criteria: Iterable[CriterionResult]) -> float:
    """Tavtigian 2018 combined odds: 350 ** (Nsup/8 + Nmod/4 + Nstr/2 + Nvstr), benign subtracts."""
    exponent = 0.0
    for c in _met(criteria):
        if c.strength == "StandAlone":
            continue
        w = EXPONENT_WEIGHT[c.strength]
        exponent += w if c.code in PATHOGENIC_CODES else -w
    return ODDS_VERY_STRONG ** exponent


def posterior(odds: float, prior: float = PRIOR) -> float:
    """Tavtigian 2018: Post_P = OP * Prior_P / ((OP - 1) * Prior_P + 1)."""
    return odds * prior / ((odds - 1.0) * prior + 1.0)


def bayes_class(post: float) -> str:
    """Tavtigian 2018 posterior bands (see module docstring for the 0.90 rounding)."""
    if post > 0.99:
        return PATHOGENIC
    if round(post, 3) >= 0.90:
        return LIKELY_PATHOGENIC
    if post < 0.001:
        return BENIGN
    if post < 0.10:
        return LIKELY_BENIGN
    return UNCERTAIN


def combine(criteria: Iterable[CriterionResult], rule_set=None) -> Classification:
    """Classify the met criteria with ``rule_set`` (a :class:`irdtriage.acmg.rulesets.RuleSet`;
    default: the bundled default rule set) and, side by side, the point system and the posterior."""
    rs = _rule_set(rule_set)
    met = _met(list(criteria))
    alone = _stand_alone(met)
    rcls, rule = rule_class(met, rs)
    pts = points(met)
    post = posterior(odds_of_pathogenicity(met))
    pcls = BENIGN if alone else point_class(pts)
    bcls = BENIGN if alone else bayes_class(post)
    note = ""
    if alone and any(c.code in PATHOGENIC_CODES for c in met):
        note = (f"{alone.code} is stand-alone benign, but pathogenic criteria are also met "
                f"({pts} points without {alone.code}): check for a curated {alone.code} exception.")
    elif pcls != rcls or bcls != rcls:
        what = "rule table" if rs.method == "table" else rs.title
        note = (f"The {what} gives {rcls} (rule set {rs.name}), the point system {pcls} ({pts} points) and "
                f"the Bayesian posterior {bcls} ({post:.4f}); the {what} class is reported.")
    return Classification(
        classification=rcls,
        rule_class=rcls,
        points=pts,
        point_class=pcls,
        posterior=post,
        bayes_class=bcls,
        note=note,
        rule=rule,
        rule_set=rs.name,
    )
