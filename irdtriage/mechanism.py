"""Disease mechanism per inheritance mode: which alleles make each mode's disease.

A gene's ``modes`` (``Gene.modes``, one :class:`~irdtriage.models.ModeSpec` per inheritance mode)
say, for that mode: the mechanisms (``LOF``, ``GOF``, ``DN``; empty when not established), the
allele classes that cause it (:data:`ALLELE_CLASSES`, optionally limited to exon or intron
numbers), the condition(s) and whether the condition is retinal/visual (``retinal``). Genotype fit
(:mod:`irdtriage.genotype`) counts an allele for a mode only when the mode accepts its class, and
only retinal modes make a fit; PVS1 asks :func:`pvs1_gate` whether loss of function is a
mechanism of a retinal mode and :func:`pvs1_cap` whether the truncation is the dominant-acting kind.

Allele classes (from the annotated Sequence Ontology terms and exon number):

* ``null_variant`` -- predicted null (the PVS1 wording of Richards et al. 2015): stop gained, frameshift, canonical splice donor/acceptor, start
  lost, exon loss, transcript ablation;
* ``truncation_escaping_nmd`` -- a stop gained or frameshift predicted to escape nonsense-mediated
  decay: in the last exon, or in the penultimate exon when PVS1's transcript model placed it in the
  last 50 nt (the 50-nt rule, Abou Tayoun et al., Hum Mutat 2018;39:1517-1524). It is also ``null_variant``;
* ``missense`` -- missense_variant;
* ``inframe`` -- in-frame insertion/deletion, stop lost, protein-altering variant;
* ``other`` -- any other consequence (synonymous, splice region, intronic, UTR, not annotated).

Default modes (:func:`default_modes`, used by ``scripts/curate_panel.py`` for every gene the seed
does not curate, and at load for panels without ``modes``) keep the gene-level rule used before
modes existed (ClinGen SVI PVS1 tree, first question; Mendelian reasoning, common practice):

* a recessive mode (AR, XLR) acts by loss of function when the gene lists ``LOF``, else by the
  gene's mechanisms;
* a dominant mode (AD, XLD) in a gene that also has a recessive mode and lists ``GOF`` or ``DN``
  acts by those (heterozygous loss of function is then the recessive carrier state); otherwise it
  takes all the gene's mechanisms; MT takes all of them;
* a mode with ``LOF`` accepts every allele class; a mode without it accepts all but ``null_variant``;
* every default mode is retinal and names the gene's conditions.
"""
from __future__ import annotations

import re
from typing import Any, Optional, Sequence

from .models import AlleleRule, CriterionResult, Finding, Gene, ModeSpec

MODES = ("AR", "AD", "XLR", "XLD", "MT")
MECHANISMS = ("LOF", "GOF", "DN")
ALLELE_CLASSES = ("null_variant", "truncation_escaping_nmd", "missense", "inframe", "other")
RECESSIVE = ("AR", "XLR")
DOMINANT = ("AD", "XLD")
DEFAULT_SOURCE = "derived from the gene's inheritance and mechanisms (default rule, irdtriage.mechanism)"

# Sequence Ontology terms (as annotators write them).
NULL_CONSEQUENCES = frozenset({
    "stop_gained", "frameshift_variant", "splice_donor_variant", "splice_acceptor_variant", "start_lost",
    "exon_loss_variant", "transcript_ablation",
})
TRUNCATING = frozenset({"stop_gained", "frameshift_variant"})
MISSENSE = frozenset({"missense_variant"})
INFRAME = frozenset({"inframe_insertion", "inframe_deletion", "stop_lost", "protein_altering_variant"})
# Consequences that do not touch the transcript's sequence (the transcript has "no consequence").
NO_TRANSCRIPT_EFFECT = frozenset({
    "intron_variant", "upstream_gene_variant", "downstream_gene_variant", "intergenic_variant",
    "non_coding_transcript_variant", "NMD_transcript_variant", "not annotated", "regulatory_region_variant",
    "TF_binding_site_variant",
})

_ALL = ("null_variant", "missense", "inframe", "other")
_NON_NULL = ("missense", "inframe", "other")


def default_modes(inheritance: Sequence[str], mechanisms: Sequence[str]) -> dict[str, dict[str, Any]]:
    """Default per-mode mechanisms and allele classes (rule in the module docstring), as plain data."""
    mech = [m for m in MECHANISMS if m in mechanisms]
    non_lof = [m for m in mech if m != "LOF"]
    has_recessive = any(m in RECESSIVE for m in inheritance)
    out: dict[str, dict[str, Any]] = {}
    for mode in inheritance:
        if mode in RECESSIVE:
            mm = ["LOF"] if "LOF" in mech else list(mech)
        elif mode in DOMINANT and has_recessive and non_lof:
            mm = non_lof
        else:
            mm = list(mech)
        out[mode] = {"mechanisms": mm, "alleles": list(_ALL if "LOF" in mm else _NON_NULL), "retinal": True}
    return out


def to_specs(raw: dict[str, dict[str, Any]], conditions: Sequence[str], source: str = DEFAULT_SOURCE
             ) -> tuple[ModeSpec, ...]:
    """ModeSpecs from already validated plain data (see irdtriage.panel for the checks)."""
    specs = []
    for mode, d in raw.items():
        rules = []
        for a in d["alleles"]:
            if isinstance(a, str):
                rules.append(AlleleRule(a))
            else:
                rules.append(AlleleRule(a["class"], tuple(a.get("exons") or ()), tuple(a.get("introns") or ())))
        specs.append(ModeSpec(mode=mode, mechanisms=tuple(d["mechanisms"]), alleles=tuple(rules),
                              conditions=tuple(d.get("conditions") or conditions), retinal=bool(d["retinal"]),
                              source=d.get("source") or source))
    return tuple(specs)


def modes_of(gene: Gene) -> dict[str, ModeSpec]:
    """The gene's mode specs by mode (derived by the default rule when the gene carries none)."""
    specs = gene.modes or to_specs(default_modes(gene.inheritance, gene.mechanisms), gene.conditions)
    return {s.mode: s for s in specs}


# ---------------------------------------------------------------------------
# Allele classes of a finding
# ---------------------------------------------------------------------------
def _number(text: str) -> tuple[Optional[int], Optional[int]]:
    m = re.match(r"^\s*(\d+)(?:-\d+)?\s*/\s*(\d+)\s*$", text or "")
    return (int(m.group(1)), int(m.group(2))) if m else (None, None)


def _pvs1_nmd(f: Finding) -> Optional[bool]:
    for c in f.criteria:
        if c.code == "PVS1" and "nmd_predicted" in c.evidence:
            return c.evidence["nmd_predicted"]
    return None


def escapes_nmd(f: Finding) -> tuple[Optional[bool], str]:
    """Whether a stop/frameshift finding is predicted to escape NMD, and why (None: cannot tell)."""
    n, total = _number(f.annotation.exon)
    if n is not None and n == total:
        return True, f"in the last exon ({n}/{total})"
    nmd = _pvs1_nmd(f)
    if nmd is not None:
        return (not nmd), ("PVS1 transcript model: NMD not predicted" if not nmd else "NMD predicted")
    if n is not None and total is not None and n < total - 1:
        return False, f"exon {n}/{total}: NMD predicted"
    if n is not None:
        return None, f"penultimate exon ({n}/{total}) without the distance to its end"
    return None, "exon number not annotated"


def allele_classes(f: Finding) -> tuple[frozenset[str], str]:
    """The allele classes of a finding (several for a truncation escaping NMD) and a note."""
    terms = set(f.annotation.consequence or ())
    out: set[str] = set()
    note = ""
    if terms & NULL_CONSEQUENCES:
        out.add("null_variant")
        if terms & TRUNCATING:
            esc, note = escapes_nmd(f)
            if esc:
                out.add("truncation_escaping_nmd")
    elif terms & MISSENSE:
        out.add("missense")
    elif terms & INFRAME:
        out.add("inframe")
    else:
        out.add("other")
    return frozenset(out), note


def _rule_matches(rule: AlleleRule, classes: frozenset[str], f: Finding) -> bool:
    if rule.cls not in classes:
        return False
    if not rule.exons and not rule.introns:
        return True
    ex, _ = _number(f.annotation.exon)
    intr, _ = _number(f.annotation.intron)
    return (ex is not None and ex in rule.exons) or (intr is not None and intr in rule.introns)


def describe_rule(rule: AlleleRule) -> str:
    where = []
    if rule.exons:
        where.append("exon " + "/".join(map(str, rule.exons)))
    if rule.introns:
        where.append("intron " + "/".join(map(str, rule.introns)))
    return rule.cls.replace("_", " ") + (f" ({' or '.join(where)})" if where else "")


def mode_accepts(spec: ModeSpec, f: Finding) -> tuple[bool, str]:
    """Whether ``spec``'s disease arises from an allele like ``f``; the reason when it does not."""
    classes, note = allele_classes(f)
    if any(_rule_matches(r, classes, f) for r in spec.alleles):
        return True, ""
    kinds = "/".join(sorted(c.replace("_", " ") for c in classes))
    wanted = ", ".join(describe_rule(r) for r in spec.alleles) or "none listed"
    mech = "/".join(spec.mechanisms) or "not established"
    extra = f" ({note})" if note and "null_variant" in classes else ""
    return False, (f"a {kinds} allele{extra} does not cause the {spec.mode} disease of this gene "
                   f"(mechanism {mech}; alleles {wanted})")


def mechanisms_text(gene: Gene) -> str:
    parts = []
    for s in modes_of(gene).values():
        tag = "" if s.retinal else " (not retinal: " + "; ".join(s.conditions) + ")"
        parts.append(f"{s.mode}: {'/'.join(s.mechanisms) or 'not established'}{tag}")
    return "; ".join(parts)


# ---------------------------------------------------------------------------
# PVS1 (called by irdtriage.acmg.pvs1)
# ---------------------------------------------------------------------------
def pvs1_gate(gene: Gene) -> Optional[str]:
    """None when loss of function is a mechanism of a retinal mode of ``gene``; else why PVS1 does not apply."""
    if any(s.retinal and "LOF" in s.mechanisms for s in modes_of(gene).values()):
        return None
    return (f"loss of function is not an established disease mechanism of a retinal mode of {gene.symbol} "
            f"({mechanisms_text(gene)})")


PVS1_DOMINANT_TRUNCATION_CAP = "Moderate"
_ORDER = ("Supporting", "Moderate", "Strong", "VeryStrong")


def dominant_truncation_modes(gene: Gene) -> list[ModeSpec]:
    """Retinal dominant modes whose disease comes from truncations escaping NMD and not from loss of function."""
    return [s for s in modes_of(gene).values()
            if s.retinal and s.mode in DOMINANT and "LOF" not in s.mechanisms
            and any(r.cls == "truncation_escaping_nmd" for r in s.alleles)]


def pvs1_cap(gene: Gene, res: CriterionResult, cap: str = PVS1_DOMINANT_TRUNCATION_CAP) -> CriterionResult:
    """Cap a met PVS1 for a truncation escaping NMD in a gene whose dominant disease is such a truncation.

    Such an allele makes a protein that acts dominantly; it is not the loss-of-function allele PVS1
    measures (Abou Tayoun et al. 2018: PVS1 presumes loss of function is the mechanism), so it does
    not take PVS1 above ``cap``; the reason says so.
    """
    if not res.met or res.evidence.get("nmd_predicted") is not False:
        return res
    modes = dominant_truncation_modes(gene)
    if not modes or res.strength not in _ORDER or _ORDER.index(res.strength) <= _ORDER.index(cap):
        return res
    was = res.strength
    res.strength = cap
    mm = ", ".join(f"{s.mode} ({'/'.join(s.mechanisms) or 'mechanism not established'})" for s in modes)
    res.reason += (f"; capped {was} -> {cap}: a truncation escaping NMD is how the dominant disease of "
                   f"{gene.symbol} arises [{mm}], a dominant-acting protein rather than loss of function")
    res.evidence["capped_from"] = was
    return res

