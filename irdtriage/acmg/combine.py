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

* The final ``classification`` is the rule-table class; ``note`` says in one sentence when
  the points or the posterior disagree.
* Strengths are used as applied: a PVS1 applied at Strong counts as Strong, a PP3 applied
  at Moderate counts as Moderate, and so on.  A benign criterion applied at Very Strong
  counts as Strong in the rule table (Table 5 has no benign Very Strong rule) and -8 points.
* BA1 is stand-alone (Richards 2015; Ghosh et al., Hum Mutat 2018;39:1525-1530): when BA1
  is met all three methods report Benign; points and posterior are still computed from the
  other criteria and shown so a reviewer sees what else was met.
* Conflict: when any pathogenic and any benign criterion are both met, Table 5 "Uncertain
  significance (ii)" fires (criteria for benign and pathogenic are contradictory); the
  point and Bayesian results then show how the evidence nets out.
* ClinGen SVI amendment to Table 5 (Recommendation for Absence/Rarity (PM2), version 1.0,
  approved September 2020): with PM2 applied at Supporting, PVS1 + PM2_Supporting no longer
  reaches any Table 5 rule, so the SVI added "PVS1 AND PM2_Supporting -> Likely pathogenic"
  (it is 8 + 1 = 9 points, Likely pathogenic in Tavtigian 2020, posterior 0.988 in Tavtigian
  2018).  Applied here only for PVS1 at Very Strong together with PM2 at Supporting, when no
  Table 5 pathogenic rule fires; ``rule`` names the amendment.
* Exactly 6 points (e.g. Likely pathogenic rule (ii), 1 Strong + 1 Moderate) gives a
  posterior of 0.89991 at prior 0.10; Tavtigian 2020 (Table 3 footnote) says the prior
  should be read as "infinitesimally greater than 0.10" so that these rules land in
  Likely pathogenic.  We apply that by comparing the posterior with 0.90 after rounding
  to 3 decimals, the precision at which Tavtigian 2018 reports posteriors (0.900).
"""
from __future__ import annotations

from collections import Counter
from typing import Iterable

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
        if c.strength == "StandAlone" and c.code != "BA1":
            raise ValueError(f"only BA1 can be applied stand-alone, not {c.code}")
        out.append(c)
    return out


def pathogenic_counts(met: list[CriterionResult]) -> Counter:
    return Counter(c.strength for c in met if c.code in PATHOGENIC_CODES)


def benign_counts(met: list[CriterionResult]) -> Counter:
    cnt: Counter = Counter()
    for c in met:
        if c.code in BENIGN_CODES:
            s = "Strong" if c.strength == "VeryStrong" else c.strength
            cnt[s] += 1
    return cnt


def pathogenic_rule(n: Counter) -> tuple[str, str]:
    """Richards 2015 Table 5, pathogenic side only. Returns (class, rule) or (UNCERTAIN, "")."""
    vs, s, m, p = n["VeryStrong"], n["Strong"], n["Moderate"], n["Supporting"]
    if vs >= 1:
        if s >= 1:
            return PATHOGENIC, "Pathogenic (i)(a): 1 Very Strong and >=1 Strong"
        if m >= 2:
            return PATHOGENIC, "Pathogenic (i)(b): 1 Very Strong and >=2 Moderate"
        if m == 1 and p >= 1:
            return PATHOGENIC, "Pathogenic (i)(c): 1 Very Strong, 1 Moderate and 1 Supporting"
        if p >= 2:
            return PATHOGENIC, "Pathogenic (i)(d): 1 Very Strong and >=2 Supporting"
    if s >= 2:
        return PATHOGENIC, "Pathogenic (ii): >=2 Strong"
    if s >= 1:
        if m >= 3:
            return PATHOGENIC, "Pathogenic (iii)(a): 1 Strong and >=3 Moderate"
        if m == 2 and p >= 2:
            return PATHOGENIC, "Pathogenic (iii)(b): 1 Strong, 2 Moderate and >=2 Supporting"
        if m == 1 and p >= 4:
            return PATHOGENIC, "Pathogenic (iii)(c): 1 Strong, 1 Moderate and >=4 Supporting"
    if vs >= 1 and m == 1:
        return LIKELY_PATHOGENIC, "Likely pathogenic (i): 1 Very Strong and 1 Moderate"
    if s >= 1 and m in (1, 2):
        return LIKELY_PATHOGENIC, "Likely pathogenic (ii): 1 Strong and 1-2 Moderate"
    if s >= 1 and p >= 2:
        return LIKELY_PATHOGENIC, "Likely pathogenic (iii): 1 Strong and >=2 Supporting"
    if m >= 3:
        return LIKELY_PATHOGENIC, "Likely pathogenic (iv): >=3 Moderate"
    if m == 2 and p >= 2:
        return LIKELY_PATHOGENIC, "Likely pathogenic (v): 2 Moderate and >=2 Supporting"
    if m == 1 and p >= 4:
        return LIKELY_PATHOGENIC, "Likely pathogenic (vi): 1 Moderate and >=4 Supporting"
    return UNCERTAIN, ""


def benign_rule(n: Counter, ba1: bool) -> tuple[str, str]:
    """Richards 2015 Table 5, benign side only."""
    if ba1:
        return BENIGN, "Benign (i): 1 Stand-alone (BA1)"
    if n["Strong"] >= 2:
        return BENIGN, "Benign (ii): >=2 Strong"
    if n["Strong"] >= 1 and n["Supporting"] >= 1:
        return LIKELY_BENIGN, "Likely benign (i): 1 Strong and 1 Supporting"
    if n["Supporting"] >= 2:
        return LIKELY_BENIGN, "Likely benign (ii): >=2 Supporting"
    return UNCERTAIN, ""


SVI_PVS1_PM2_RULE = ("Likely pathogenic (SVI 2020 amendment to Table 5): PVS1 and PM2_Supporting "
                     "(ClinGen SVI PM2 recommendation v1.0)")


def svi_pvs1_pm2(met: list[CriterionResult]) -> bool:
    """PVS1 at Very Strong and PM2 at Supporting are both met (the SVI 2020 amendment's case)."""
    return (any(c.code == "PVS1" and c.strength == "VeryStrong" for c in met)
            and any(c.code == "PM2" and c.strength == "Supporting" for c in met))


def rule_class(criteria: Iterable[CriterionResult]) -> tuple[str, str]:
    """Richards 2015 Table 5 result (with the SVI 2020 PVS1 + PM2_Supporting amendment) and the rule."""
    met = _met(criteria)
    ba1 = any(c.code == "BA1" for c in met)
    if ba1:
        return benign_rule(Counter(), True)
    pc, bc = pathogenic_counts(met), benign_counts(met)
    if sum(pc.values()) and sum(bc.values()):
        return UNCERTAIN, "Uncertain significance (ii): pathogenic and benign criteria are contradictory"
    if sum(pc.values()):
        cls, rule = pathogenic_rule(pc)
        if cls == UNCERTAIN and svi_pvs1_pm2(met):
            cls, rule = LIKELY_PATHOGENIC, SVI_PVS1_PM2_RULE
    else:
        cls, rule = benign_rule(bc, False)
    if cls == UNCERTAIN:
        return UNCERTAIN, "Uncertain significance (i): other criteria shown above are not met"
    return cls, rule


def points(criteria: Iterable[CriterionResult]) -> int:
    """Tavtigian 2020 point sum (BA1 excluded: it is stand-alone)."""
    total = 0
    for c in _met(criteria):
        if c.code == "BA1":
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
        if c.code == "BA1":
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


def combine(criteria: Iterable[CriterionResult]) -> Classification:
    crit = list(criteria)
    met = _met(crit)
    ba1 = any(c.code == "BA1" for c in met)
    rcls, rule = rule_class(met)
    pts = points(met)
    post = posterior(odds_of_pathogenicity(met))
    pcls = BENIGN if ba1 else point_class(pts)
    bcls = BENIGN if ba1 else bayes_class(post)
    note = ""
    if ba1 and any(c.code in PATHOGENIC_CODES for c in met):
        note = ("BA1 is stand-alone benign, but pathogenic criteria are also met "
                f"({pts} points without BA1): check for a curated BA1 exception.")
    elif pcls != rcls or bcls != rcls:
        note = (f"The rule table gives {rcls}, the point system {pcls} ({pts} points) and the "
                f"Bayesian posterior {bcls} ({post:.4f}); the rule-table class is reported.")
    return Classification(
        classification=rcls,
        rule_class=rcls,
        points=pts,
        point_class=pcls,
        posterior=post,
        bayes_class=bcls,
        note=note,
        rule=rule,
    )
