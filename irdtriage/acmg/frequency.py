"""Population-frequency criteria: BA1, BS1, PM2 (Supporting), BS2.

Maximum credible population allele frequency (Whiffin et al., Genet Med 2017;19:1151-1158).

Dominant (the paper's form): a fully penetrant heterozygote carries one disease allele, so
with prevalence P, genetic contribution g (share of cases due to the gene), allelic
contribution a (largest share of the gene's cases due to one allele) and penetrance f,
carriers of the allele are P*g*a/f of the population and, each carrying one of two alleles,
    maxAF = P * a * g / (2 * f).

Recessive (derived here): let Q be the summed frequency of all disease alleles in the gene.
Under Hardy-Weinberg and random pairing, affected-by-this-gene = f * Q^2 = P * g, so
Q = sqrt(P * g / f).  In cases the alleles appear in proportion to their population
frequencies, so an allele making up a share a of case alleles has frequency q = a * Q:
    maxAF = a * sqrt(P * g / f).
(a is the allele's share of disease *alleles*; an allele present in a share c of cases on
at least one chromosome has a ~ c/2 when it is mostly paired with other alleles.)

The observed value compared with maxAF is the filtering allele frequency (irdtriage.evidence
.faf), the conservative lower bound of the true AF; popmax AF is used when AC/AN are absent.
"""
from __future__ import annotations

import math
import operator
import re
from typing import Optional

from ..evidence.popfreq import summarise
from ..models import Annotation, CriterionResult, Gene, Variant
from .common import protein_change, result
from .rules import Rules

NO_FREQ = ("no population frequency available (needs --population-vcf, or gnomAD-style fields "
           "in INFO/annotation)")

# Comparison operators a rule set may state for BA1/BS1 (criteria.yaml ``*_operator``), and the
# wording of their negation in reasons.
_OPS = {">": operator.gt, ">=": operator.ge}
_NOT = {">": "<=", ">=": "<"}

# gnomAD genetic-ancestry group codes and their plain names (gnomAD browser labels; common practice).
POPULATION_NAMES = {
    "afr": "African/African American", "amr": "Admixed American", "asj": "Ashkenazi Jewish",
    "eas": "East Asian", "fin": "European (Finnish)", "nfe": "European (non-Finnish)",
    "sas": "South Asian", "mid": "Middle Eastern", "ami": "Amish", "oth": "remaining individuals",
    "remaining": "remaining individuals", "rmi": "remaining individuals",
}


def population_label(code: Optional[str]) -> str:
    """'European (non-Finnish) (nfe)' for a gnomAD group code; unknown codes are shown as given."""
    if not code:
        return ""
    name = POPULATION_NAMES.get(code.lower())
    return f"{name} ({code})" if name else code


_DATASETS = (  # (pattern on the key's prefix, plain name); first match wins
    (re.compile(r"^gnomad(e|_exomes?)_", re.IGNORECASE), "gnomAD exomes"),
    (re.compile(r"^gnomad(g|_genomes?)_", re.IGNORECASE), "gnomAD genomes"),
    (re.compile(r"^gnomad_", re.IGNORECASE), "gnomAD"),
    (re.compile(r"^exac_", re.IGNORECASE), "ExAC"),
)


def field_label(key: str, where: str = "INFO") -> str:
    """Plain name of a population-frequency field with its key in brackets, e.g.
    ``gnomADe_AF`` -> 'gnomAD exomes allele frequency (INFO gnomADe_AF)'."""
    dataset = next((name for rx, name in _DATASETS if rx.search(key)), "")
    low = key.lower()
    if "faf" in low:
        stat = "filtering allele frequency"
    elif re.search(r"(grpmax|popmax|max_af)", low):
        stat = "highest population allele frequency"
    elif re.search(r"(^|_)af($|_)", low):
        stat = "allele frequency"
    elif re.search(r"(^|_)ac($|_)", low):
        stat = "allele count"
    elif re.search(r"(^|_)an($|_)", low):
        stat = "allele number"
    elif "hom" in low:
        stat = "homozygote count"
    else:
        stat = "population frequency field"
    return f"{dataset + ' ' if dataset else ''}{stat} ({where} {key})"


def _source_text(pop: dict) -> str:
    """Where the frequency came from, in plain words, for the BA1 reason."""
    if pop.get("source") == "population_vcf":
        return "population-frequency VCF"
    if pop.get("source") == "online":
        return (f"{pop.get('dataset') or 'population data'} via {pop.get('provider') or 'an online source'}"
                + (f", fetched {pop['fetched']}" if pop.get("fetched") else ""))
    keys = pop.get("keys") or []
    if pop.get("source") == "info" and keys:
        return ", ".join(field_label(k, "INFO/annotation") for k in keys)
    return ""


def max_credible_af(prevalence: float, allelic_contribution: float, genetic_contribution: float,
                    penetrance: float, inheritance: str = "dominant") -> float:
    """Whiffin 2017 maximum credible population allele frequency (see module docstring)."""
    for name, v in (("prevalence", prevalence), ("allelic_contribution", allelic_contribution),
                    ("genetic_contribution", genetic_contribution), ("penetrance", penetrance)):
        if not (0 < v <= 1):
            raise ValueError(f"{name} must be in (0, 1], got {v}")
    if inheritance == "dominant":
        return prevalence * allelic_contribution * genetic_contribution / (2.0 * penetrance)
    if inheritance == "recessive":
        return allelic_contribution * math.sqrt(prevalence * genetic_contribution / penetrance)
    raise ValueError(f"inheritance must be dominant or recessive, got {inheritance!r}")


def _default_mode(gene: Gene) -> Optional[str]:
    """Which panel-wide default applies: the more permissive (recessive) one whenever the gene has a
    recessive mode, so that a gene with both modes is never called too common by its dominant figure;
    X-linked recessive genes use the recessive figures (conservative: the X-linked allele frequency
    bound is lower). Mitochondrial genes get none."""
    if gene.recessive:
        return "recessive"
    if gene.dominant:
        return "dominant"
    return None


def _norm_p(s: str) -> Optional[tuple]:
    pc = protein_change(s)
    return pc if pc else None


def _norm_c(s: str) -> str:
    s = (s or "").split(":", 1)[-1].strip()
    return re.sub(r"\s+", "", s)


def frequency_exception(variant: Variant, ann: Optional[Annotation], gene: Gene, rules: Rules) -> Optional[dict]:
    """A curated BA1/BS1 exception matching this variant (by key, HGVS c. or HGVS p.)."""
    for e in rules.exceptions(gene.symbol):
        if e.get("key") and e["key"] == variant.key:
            return e
        if ann is not None:
            if e.get("hgvs_c") and _norm_c(ann.hgvs_c) and _norm_c(ann.hgvs_c) == _norm_c(e["hgvs_c"]):
                return e
            if e.get("hgvs_p") and ann.hgvs_p and _norm_p(ann.hgvs_p) and _norm_p(ann.hgvs_p) == _norm_p(e["hgvs_p"]):
                return e
    return None


def _observed(pop: dict, rules: Rules) -> dict:
    f = rules.frequency
    s = summarise(pop, tuple(f["continental"]), f["min_an"])
    popmax = s["popmax_af"] if s["popmax_af"] is not None else pop.get("popmax_af")
    popmax_pop = s["popmax_population"]
    faf, faf_pop = s["faf"], s["faf_population"]
    if faf is None and not pop.get("populations"):
        faf = pop.get("faf95")
    af = pop.get("af")
    return {"af": af, "popmax_af": popmax, "popmax_population": popmax_pop, "popmax_an": s["popmax_an"],
            "faf": faf, "faf_population": faf_pop, "ac": pop.get("ac"), "an": pop.get("an"),
            "nhomalt": pop.get("nhomalt"), "source": pop.get("source")}


def _fmt(x: Optional[float]) -> str:
    return "n/a" if x is None else (f"{x:.3g}" if x else "0")


def _fmt_pair(x: float, t: float) -> tuple[str, str]:
    """A value and its threshold, with enough digits that unequal numbers never print alike."""
    for digits in (3, 6, 10, 17):
        a, b = (f"{x:.{digits}g}" if x else "0"), f"{t:.{digits}g}"
        if a != b or x == t:
            return a, b
    return repr(x), repr(t)


def _statistic(obs: dict, stat: str) -> tuple[Optional[float], str, Optional[str]]:
    """(value, plain label, population code) of the statistic a rule set asks for."""
    highest = obs["popmax_af"] if obs["popmax_af"] is not None else obs["af"]
    h_label = "highest continental allele frequency" if obs["popmax_af"] is not None else "allele frequency"
    if stat == "filtering":
        if obs["faf"] is not None:
            return obs["faf"], "filtering allele frequency", obs["faf_population"]
        return highest, f"{h_label} (filtering allele frequency not available: no allele counts)", \
            obs["popmax_population"]
    return highest, h_label, obs["popmax_population"]


def _compare(code: str, value: float, label: str, pop: Optional[str], op: str, t: float, basis: str,
             exc: Optional[dict], strength: str, obs: dict) -> CriterionResult:
    """BA1/BS1 outcome for one comparison ``value op t``, with a curated exception taking precedence."""
    v_txt, t_txt = _fmt_pair(value, t)
    where = f" in {population_label(pop)}" if pop else ""
    if _OPS[op](value, t):
        if exc:
            return result(code, False, None, f"{label} {v_txt}{where} {op} {t_txt} but curated exception: "
                          f"{exc['reason']}", exception=exc, threshold=t, operator=op, **obs)
        return result(code, True, strength, f"{label} {v_txt}{where} {op} {t_txt} ({basis})", threshold=t,
                      operator=op, **obs)
    return result(code, False, None, f"{label} {v_txt}{where} {_NOT[op]} {t_txt} ({basis})", threshold=t,
                  operator=op, **obs)


def _pm2_threshold(gene: Gene, f: dict, g: dict) -> tuple[float, str]:
    if "pm2_max_af" in g:
        return g["pm2_max_af"], g.get("spec", "gene specification")
    if gene.dominant:
        return f["pm2_max_af_dominant"], "dominant gene: absent"
    return f["pm2_max_af_recessive"], "recessive gene"


def _absent_declared(pop: dict, gene: Gene, rules: Rules) -> list[CriterionResult]:
    """The annotation declares frequency columns and all are empty for this allele.

    Absence supports PM2 only (setting ``frequency.absent_when_declared_empty``); it never drives
    a benign criterion: BA1/BS1 are not met (no frequency above a cut-off was observed) and BS2
    is not evaluable (no homozygote or heterozygote count; allele number unknown).
    """
    f, g = rules.frequency, rules.gene(gene.symbol)
    declared = list(pop.get("declared_empty") or [])
    af_like = [k for k in declared if not re.search(r"(^|_)(ac|an)($|_)", k, re.IGNORECASE)] or declared
    if af_like:
        note = ("absent: empty " + ", ".join(field_label(k, "annotation field") for k in af_like)
                + " in an annotation that declares "
                + ("it" if len(af_like) == 1 else "them"))
    else:
        note = "absent: empty frequency fields in an annotation that declares them"
    obs = {k: pop.get(k) for k in ("af", "ac", "an", "nhomalt", "source", "declared_empty")}
    if not f.get("absent_when_declared_empty", False):
        off = f"{note}; not used (criteria setting frequency.absent_when_declared_empty is off): {NO_FREQ}"
        return [result(c, None, None, off, **obs) for c in ("BA1", "BS1", "PM2", "BS2")]
    t2, basis2 = _pm2_threshold(gene, f, g)
    return [
        result("BA1", False, None, f"{note}: no frequency above {g.get('ba1_af', f['ba1_af']):g} observed "
               "(allele number unknown; absence never makes a benign criterion met)", **obs),
        result("BS1", False, None, f"{note}: no frequency above a maximum credible AF observed "
               "(allele number unknown)", **obs),
        result("PM2", True, f["pm2_strength"], f"{note}; AF 0 <= {t2:g} ({basis2}); allele number unknown; "
               f"applied at {f['pm2_strength']} (SVI 2020)", threshold=t2, **obs),
        result("BS2", None, None, f"{note}: no homozygote or heterozygote counts (allele number unknown), "
               "so BS2 cannot be assessed", **obs),
    ]


def evaluate_frequency(variant: Variant, ann: Optional[Annotation], gene: Gene, rules: Rules,
                       ev: dict) -> list[CriterionResult]:
    pop = ev.get("population")
    if not pop:
        return [result(c, None, None, NO_FREQ) for c in ("BA1", "BS1", "PM2", "BS2")]
    if pop.get("absent_declared"):
        return _absent_declared(pop, gene, rules)
    obs = _observed(pop, rules)
    f, g = rules.frequency, rules.gene(gene.symbol)
    exc = frequency_exception(variant, ann, gene, rules)
    out = []

    # BA1 (Ghosh 2018: > 0.05 in a continental population with enough alleles), or the gene
    # specification's cut-off, operator and statistic (criteria.yaml).
    ba1_t = g.get("ba1_af", f["ba1_af"])
    op, stat = rules.comparison(gene.symbol, "ba1")
    value, label, vpop = _statistic(obs, stat)
    basis = g.get("spec", "gene specification") if "ba1_af" in g else "Ghosh et al. 2018"
    src = _source_text(pop)
    if src:
        basis += f"; source: {src}"
    if value is None:
        out.append(result("BA1", None, None, "population record has no allele frequency", **obs))
    else:
        out.append(_compare("BA1", value, label, vpop, op, ba1_t, basis, exc, "StandAlone", obs))

    # BS1: frequency above the gene's maximum credible AF (or the gene specification's cut-off).
    op, stat = rules.comparison(gene.symbol, "bs1")
    value, label, vpop = _statistic(obs, stat)
    if "bs1_af" in g:
        t, basis = g["bs1_af"], g.get("spec", "gene specification")
    elif "max_credible" in g:
        m = g["max_credible"]
        inh = m.get("inheritance") or ("recessive" if gene.recessive and not gene.dominant else "dominant")
        t = max_credible_af(m["prevalence"], m["allelic_contribution"], m["genetic_contribution"],
                            m["penetrance"], inh)
        basis = f"maximum credible AF ({inh}, Whiffin et al. 2017)"
    elif _default_mode(gene) and rules.default_max_credible(_default_mode(gene)):
        inh = _default_mode(gene)
        m = rules.default_max_credible(inh)
        t = max_credible_af(m["prevalence"], m["allelic_contribution"], m["genetic_contribution"],
                            m["penetrance"], inh)
        basis = f"panel-wide default maximum credible AF ({inh}, Whiffin et al. 2017; no gene-specific figures)"
    else:
        t = None
    if t is None:
        out.append(result("BS1", None, None, f"no maximum credible AF curated for {gene.symbol} "
                          "(add genes.{0}.max_credible to criteria.yaml)".format(gene.symbol), **obs))
    elif value is None:
        out.append(result("BS1", None, None, "no allele frequency to compare", **obs))
    else:
        out.append(_compare("BS1", value, label, vpop, op, t, basis, exc, "Strong", obs))

    # PM2 at Supporting (SVI 2020): absent (dominant) / extremely rare (recessive).
    t2, basis2 = _pm2_threshold(gene, f, g)
    vals = [v for v in (obs["af"], obs["popmax_af"]) if v is not None]
    if not vals:
        out.append(result("PM2", None, None, "population record has no allele frequency", **obs))
    else:
        v2 = max(vals)
        ok = (v2 == 0) if t2 == 0 else (v2 <= t2)
        state = "absent" if v2 == 0 else f"AF {_fmt(v2)}"
        out.append(result("PM2", ok, f["pm2_strength"], f"{state} {'<=' if ok else '>'} {t2:g} ({basis2}); "
                          f"applied at {f['pm2_strength']} (SVI 2020)", threshold=t2, **obs))

    # BS2: observed in healthy adults in a state that should cause disease (full penetrance).
    if g.get("bs2"):
        hom = obs["nhomalt"]
        if hom is None and pop.get("found") is False:
            hom = 0
        if hom is None:
            out.append(result("BS2", None, None, "no homozygote count in the population data", **obs))
        else:
            need = f["bs2_min_homozygotes"]
            out.append(result("BS2", hom >= need, "Strong", f"{hom} homozygotes in population data "
                              f"({'>=' if hom >= need else '<'} {need}; {gene.symbol} curated as fully penetrant, "
                              "early-onset recessive)", **obs))
    elif g.get("bs2_dominant"):
        ac, hom = obs["ac"], obs["nhomalt"] or 0
        if ac is None:
            out.append(result("BS2", None, None, "no allele count in the population data", **obs))
        else:
            het = ac - 2 * hom
            need = f["bs2_min_heterozygotes_dominant"]
            out.append(result("BS2", het >= need, "Strong", f"{het} heterozygotes in population data "
                              f"({'>=' if het >= need else '<'} {need}; {gene.symbol} curated as fully penetrant dominant)",
                              **obs))
    else:
        out.append(result("BS2", False, None, f"{gene.symbol} is not curated as fully penetrant with early onset "
                          "(BS2 needs that gene-level fact)", **obs))
    return out
