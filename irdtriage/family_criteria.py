"""ACMG/AMP criteria that come from the family and the person's own genotype.

``family_criteria`` returns, for each finding the proband carries in one gene, a list of
:class:`CriterionResult` (``source="family"``) for PM3, BP2, PS2, PM6, PP1, BS4 and BP5.
Each result is met, not met, or not evaluable (``met=None``) with a one-line reason that
names the genotypes or points behind it. The ACMG engine takes them as ``extra`` in its
second pass; the classes of *other* findings used here come from the first pass, so a
finding's PM3 never rests on a class that itself used this finding's PM3.

Sources and numbers
-------------------
* PM3 points — ClinGen SVI Recommendation for in trans Criterion (PM3) Version 1.0
  (2019). Points per observation in this person: in trans with Pathogenic 1.0, with
  Likely pathogenic 0.5, with a rare Uncertain significance variant 0.25; phase unknown
  with Pathogenic 0.5, with Likely pathogenic 0.25, with Uncertain significance 0;
  homozygous 0.5 (homozygous occurrences count at most 1.0 in total). Strength from the
  sum: 0.5 Supporting, 1.0 Moderate, 2.0 Strong, 4.0 VeryStrong. The table rows were
  taken from memory of that document and could not be re-read with the search tool here.
  Rarity: the SVI PM3 guidance counts only variants that are rare in population databases.
  PM3 is *not met* for a finding whose own criteria (before family criteria) meet BA1 or BS1
  (too common for the disorder) or that is classified Benign / Likely benign on its own
  evidence, with that reason; a partner allele that is common in the same sense, or classed
  Benign / Likely benign, scores 0 points. A partner's class is the one it has on its own
  evidence, before family criteria (SVI PM3 v1.0: the partner must be classified
  independently of the allele under review); when its final class differs, the reason says so
  (``note_final_partner_classes``, run after the second pass).
* PS2 / PM6 — ClinGen SVI Recommendation for de novo Criteria (PS2 & PM6) Version 1.1
  (from memory): points per de novo occurrence by phenotype consistency — confirmed
  (maternity and paternity confirmed) 2 / 1 / 0.5 / 0 for a phenotype highly specific /
  consistent / consistent but genetically heterogeneous / not consistent; assumed (not
  confirmed) half of that. Strength: 0.5 Supporting, 1 Moderate, 2 Strong, 4 VeryStrong.
  This tool never confirms maternity or paternity itself: a de novo call here is
  *assumed* (PM6) unless the caller states parentage was confirmed (PS2).
* PP1 / BS4 — segregation counted as in Jarvik & Browning, Am J Hum Genet
  2016;98:1077-1081: a dominant segregation (an affected relative carrying the variant)
  multiplies the odds by 2 (LOD log10 2 per meiosis); thresholds Supporting LOD >= 0.9
  (3 meioses), Moderate >= 1.5 (5), Strong >= 2.1 (7) (from memory of that paper; the ClinGen
  cardiomyopathy specification for MYH7 also uses ">= 7 meioses" for PP1_Strong). For
  recessive segregation each affected sibling sharing the proband's biallelic genotype adds
  log10(4) and each unaffected sibling without it adds log10(4/3) (ClinGen Hearing Loss
  expert panel specification, Oza et al., Hum Mutat 2018;39:1593-1613, Table 4b: 1 affected
  0.60, 1 unaffected 0.12; unaffected carrier parents do not count). BS4 (Strong) is met when
  a genotyped affected relative lacks the variant (dominant) or the biallelic genotype
  (recessive): common practice, with the caveat of phenocopies.
* BP2 — Richards et al. 2015 Table 4: observed in trans with a pathogenic variant for a
  fully penetrant dominant gene, or in cis with a pathogenic variant in any inheritance.
* BP5 — Richards et al. 2015 Table 4: variant found in a case with an alternate molecular
  basis for disease (given by the caller as the genes whose P/LP genotype explains the case).
"""
from __future__ import annotations

import math
from typing import Iterable, Mapping, Optional, Sequence

from .genotype import (_call, _class, _confident, _gt, carries, de_novo_evidence, is_x_nonpar, male_heterozygous_x,
                       phase_between)
from .models import CriterionResult, Finding, Gene

# ClinGen SVI PM3 v1.0 point table (see module docstring).
PM3_POINTS = {
    ("trans", "Pathogenic"): 1.0,
    ("trans", "Likely pathogenic"): 0.5,
    ("trans", "Uncertain significance"): 0.25,
    ("unknown", "Pathogenic"): 0.5,
    ("unknown", "Likely pathogenic"): 0.25,
    ("unknown", "Uncertain significance"): 0.0,
}
PM3_PARTNER_CLASSES = ("Pathogenic", "Likely pathogenic", "Uncertain significance")
PM3_MAX_UNCERTAIN_PARTNERS = 100  # bound on pairwise phasing per finding (performance, not a guideline)
PM3_MAX_OBSERVATIONS_SHOWN = 10
PM3_HOMOZYGOUS = 0.5
PM3_HOMOZYGOUS_CAP = 1.0

# SVI de novo v1.1 (from memory): confirmed points by phenotype consistency; assumed = half.
DE_NOVO_POINTS = {
    "highly specific": 2.0,
    "consistent": 1.0,
    "consistent, heterogeneous": 0.5,
    "not consistent": 0.0,
}

# Jarvik & Browning 2016 LOD thresholds (from memory), strongest first.
SEGREGATION_LOD = (("Strong", 2.1), ("Moderate", 1.5), ("Supporting", 0.9))
LOD_DOMINANT = math.log10(2)
LOD_RECESSIVE_AFFECTED = math.log10(4)
LOD_RECESSIVE_UNAFFECTED = math.log10(4 / 3)


def points_to_strength(points: float) -> Optional[str]:
    """SVI point scale shared by PM3 and PS2/PM6: 0.5 Supporting, 1 Moderate, 2 Strong, 4 VeryStrong."""
    for name, cut in (("VeryStrong", 4.0), ("Strong", 2.0), ("Moderate", 1.0), ("Supporting", 0.5)):
        if points >= cut - 1e-9:
            return name
    return None


def lod_to_strength(lod: float) -> Optional[str]:
    for name, cut in SEGREGATION_LOD:
        if lod >= cut - 1e-9:
            return name
    return None


def _r(code, met, reason, strength=None, **evidence) -> CriterionResult:
    return CriterionResult(code=code, met=met, strength=strength if met else None, reason=reason,
                           evidence=evidence, source="family")


def _qualifies(f: Finding) -> bool:
    return f.passes_quality and _class(f) in ("Pathogenic", "Likely pathogenic", "Uncertain significance")


def family_criteria(gene: Gene, findings: Sequence[Finding], proband: str, sex: Optional[str],
                    pedigree=None, mother: Optional[str] = None, father: Optional[str] = None,
                    other_genes_explaining: Iterable[str] | Mapping[str, str] = (),
                    parentage_confirmed: bool = False, phenotype_specificity: str = "consistent",
                    fully_penetrant: bool = False, build: Optional[str] = None,
                    min_dp: int = 10, min_gq: int = 20) -> dict[str, list[CriterionResult]]:
    """Family and genotype criteria for each finding in ``gene`` that the proband carries.

    ``other_genes_explaining``: symbols (or symbol -> reason) of other genes whose P/LP
    genotype fully explains the case (BP5). ``phenotype_specificity``: one of
    ``DE_NOVO_POINTS`` keys, how specific the person's phenotype is for this gene (SVI de
    novo table). ``fully_penetrant``: the caller asserts the dominant condition is fully
    penetrant (needed for BP2 in trans, and for counting unaffected non-carriers in PP1).
    """
    if phenotype_specificity not in DE_NOVO_POINTS:
        raise ValueError(f"phenotype_specificity must be one of {sorted(DE_NOVO_POINTS)}")
    sex_n = sex.upper() if isinstance(sex, str) else None
    carried = [f for f in findings if carries(_call(f, proband))]
    eligible = {id(g) for g in carried
                if g.passes_quality and _class(g) in PM3_PARTNER_CLASSES and common_reason(g) is None}
    out: dict[str, list[CriterionResult]] = {}
    for f in carried:
        res: list[CriterionResult] = []
        if not f.passes_quality:
            why = "call failed quality thresholds (" + "; ".join(f.quality_flags) + ")"
            for code in ("PM3", "BP2", "PS2", "PM6", "PP1", "BS4", "BP5"):
                res.append(_r(code, None, f"not evaluable: {why}"))
            out[f.id] = res
            continue
        others = [g for g in carried if g is not f and g.passes_quality]
        res.append(_pm3(gene, f, [g for g in others if id(g) in eligible], proband, sex_n, mother, father,
                        build, min_dp, min_gq))
        res.append(_bp2(gene, f, others, proband, mother, father, fully_penetrant, min_dp, min_gq))
        res.extend(_de_novo(gene, f, proband, mother, father, sex_n, build, parentage_confirmed,
                            phenotype_specificity, min_dp, min_gq))
        res.extend(_segregation(gene, f, others, proband, sex_n, pedigree, fully_penetrant, build,
                                min_dp, min_gq))
        res.append(_bp5(gene, other_genes_explaining))
        out[f.id] = res
    return out


# ---------------------------------------------------------------------------
def common_reason(f: Finding) -> Optional[str]:
    """Why ``f`` is not a rare allele for PM3 (BA1/BS1 met, or a benign class on its own evidence); None when rare."""
    met = [r for r in f.criteria if r.code in ("BA1", "BS1") and r.met]
    if met:
        r = met[0]
        return f"{r.code} met ({r.reason})" if r.reason else f"{r.code} met"
    c = _class(f)
    if c in ("Benign", "Likely benign"):
        return f"classified {c} on its own evidence (before family criteria)"
    return None


def _pm3(gene, f, others, proband, sex_n, mother, father, build, min_dp, min_gq) -> CriterionResult:
    if not gene.recessive:
        return _r("PM3", False, f"{gene.symbol} has no recessive inheritance; PM3 applies to recessive disorders")
    own = common_reason(f)
    if own is not None:
        return _r("PM3", False, f"not a rare allele: {own}; the SVI PM3 guidance counts only rare variants",
                  points=0.0, common=True)
    if sex_n == "MALE" and is_x_nonpar(f.variant, build) and not ("AR" in gene.inheritance):
        if male_heterozygous_x(_call(f, proband), f.variant, sex_n, build):
            return _r("PM3", None, "not evaluable: heterozygous call in a male on chrX outside the pseudoautosomal "
                                   "regions, where one copy is expected (a quality or sex problem)")
        return _r("PM3", False, "hemizygous on chrX in a male: no second allele to place in trans")
    c = _call(f, proband)
    if c.alt_copies >= 2:
        pts = min(PM3_HOMOZYGOUS, PM3_HOMOZYGOUS_CAP)
        s = points_to_strength(pts)
        return _r("PM3", s is not None,
                  f"homozygous ({_gt(c)}) in this person: {pts} point (SVI PM3 v1.0; homozygous occurrences "
                  f"capped at {PM3_HOMOZYGOUS_CAP}; a deletion on the other allele would mimic homozygosity)",
                  s, points=pts, observations=[{"kind": "homozygous", "points": pts}])
    best = None
    obs = []
    # Only partners that can score points are phased: a common partner or a benign class scores 0
    # whatever its phase. Uncertain partners can score only in trans; when a gene holds very many
    # of them (an unannotated genome), they are not phased one by one (reported in the reason).
    partners = list(others)  # the caller passes only rare partners of a scoring class (eligible)
    vus = [g for g in partners if _class(g) == "Uncertain significance"]
    extra_note = ""
    if vus and mother is None and father is None and not c.phased:
        # without parents or a phased genotype no pair can be shown in trans, and an uncertain
        # partner scores only in trans (SVI PM3 table): nothing to phase
        partners = [g for g in partners if _class(g) != "Uncertain significance"]
        extra_note = (f"; {len(vus)} other allele(s) of uncertain significance in this gene would count only "
                      f"in trans, which needs parental or phased genotypes")
    elif len(vus) > PM3_MAX_UNCERTAIN_PARTNERS:
        partners = [g for g in partners if _class(g) != "Uncertain significance"]
        extra_note = (f"; {len(vus)} other allele(s) of uncertain significance in this gene were not phased "
                      f"one by one (more than {PM3_MAX_UNCERTAIN_PARTNERS}; annotate and filter the VCF first)")
    partners.sort(key=lambda g: PM3_PARTNER_CLASSES.index(_class(g)))
    for g in partners:
        gc = _class(g)
        if best is not None and best["points"] >= max(PM3_POINTS.get((ph_, gc), 0.0) for ph_ in ("trans", "unknown")):
            continue  # this partner cannot beat the best observation so far
        ph = phase_between(f, g, proband, mother, father, min_dp, min_gq)
        partner_common = common_reason(g)
        if ph.phase == "cis" or partner_common is not None:
            pts = 0.0
        else:
            pts = PM3_POINTS.get((ph.phase, gc), 0.0)
        obs.append({"partner": g.id, "partner_class": gc, "phase": ph.phase, "how": ph.how, "points": pts})
        if partner_common is not None:
            obs[-1]["partner_not_rare"] = partner_common
        if best is None or pts > best["points"]:
            best = obs[-1]
    if best is None:
        return _r("PM3", False, "no second rare allele that could score (Pathogenic, Likely pathogenic, or of "
                                "uncertain significance in trans) in this gene in this person: 0.0 point(s) "
                                "(SVI PM3 v1.0)" + extra_note, points=0.0)
    obs.sort(key=lambda o: -o["points"])
    if len(obs) > PM3_MAX_OBSERVATIONS_SHOWN:
        obs = obs[:PM3_MAX_OBSERVATIONS_SHOWN] + [{"more_partners_not_shown": len(obs) - PM3_MAX_OBSERVATIONS_SHOWN}]
    pts = best["points"]
    s = points_to_strength(pts)
    desc = (f"{best['phase'] if best['phase'] != 'unknown' else 'phase unknown'} with {best['partner']} "
            f"({_own_class_words(best['partner_class'])}): {pts} point(s) (SVI PM3 v1.0); one observation in "
            f"this person; phase: {best['how']}")
    if "partner_not_rare" in best:
        desc += f"; partner not a rare allele ({best['partner_not_rare']}), so it scores 0"
    desc += extra_note
    if s is None:
        return _r("PM3", False, desc + "; below the 0.5 needed for Supporting", points=pts, observations=obs,
                  partner=best["partner"], partner_class=best["partner_class"])
    return _r("PM3", True, desc, s, points=pts, observations=obs, partner=best["partner"],
              partner_class=best["partner_class"])


def _own_class_words(cls: str) -> str:
    return f"classified {cls} on its own evidence, before family criteria"


def note_final_partner_classes(findings: Sequence[Finding]) -> int:
    """After the second pass, say in each PM3 reason when the partner's final class differs from
    the class it has on its own evidence (the one PM3 counted). The points do not change: the
    SVI PM3 guidance counts the partner as classified independently of the allele under review.
    Returns how many reasons were amended."""
    by_id = {f.id: f for f in findings}
    changed = 0
    for f in findings:
        for cr in f.criteria:
            if cr.code != "PM3" or cr.source != "family" or "partner" not in cr.evidence:
                continue
            partner = by_id.get(cr.evidence["partner"])
            own = cr.evidence.get("partner_class")
            final = _class(partner) if partner is not None else None
            if final is None or final == own or "partner_final_class" in cr.evidence:
                continue
            words = _own_class_words(own)
            cr.reason = cr.reason.replace(words, f"{words}; its final class is {final}", 1)
            cr.evidence = dict(cr.evidence, partner_final_class=final)
            changed += 1
    return changed


def _bp2(gene, f, others, proband, mother, father, fully_penetrant, min_dp, min_gq) -> CriterionResult:
    path = [g for g in others if _class(g) == "Pathogenic"]
    if not path:
        return _r("BP2", False, "no other finding in this gene classified Pathogenic on its own evidence (before "
                                "family criteria) to compare phase with")
    unknown = []
    for g in path:
        ph = phase_between(f, g, proband, mother, father, min_dp, min_gq)
        if ph.phase == "cis":
            return _r("BP2", True, f"in cis with Pathogenic {g.id} ({ph.how}); caution: some recessive alleles "
                                   f"are complex (two changes on one haplotype), common practice",
                      "Supporting", partner=g.id, phase="cis")
        if ph.phase == "trans":
            dominant_only = gene.dominant and not gene.recessive
            if dominant_only and fully_penetrant:
                return _r("BP2", True, f"in trans with Pathogenic {g.id} ({ph.how}) in a fully penetrant "
                                       f"dominant gene", "Supporting", partner=g.id, phase="trans")
            why = ("the gene is recessive, where in trans is expected" if not dominant_only
                   else "full penetrance of the dominant condition not asserted")
            return _r("BP2", False, f"in trans with Pathogenic {g.id}, but {why}", partner=g.id, phase="trans")
        unknown.append(g.id)
    return _r("BP2", None, f"not evaluable: phase with Pathogenic {', '.join(unknown)} unknown", partners=unknown)


def _de_novo(gene, f, proband, mother, father, sex_n, build, confirmed, specificity, min_dp, min_gq):
    if mother is None and father is None:
        why = "not evaluable: no parental genotypes"
        return [_r("PS2", None, why), _r("PM6", None, why)]
    if male_heterozygous_x(_call(f, proband), f.variant, sex_n, build):
        why = ("not evaluable: heterozygous call in a male on chrX outside the pseudoautosomal regions, where one "
               "copy is expected (a quality or sex problem)")
        return [_r("PS2", None, why), _r("PM6", None, why)]
    decision, how = de_novo_evidence(f, proband, mother, father, min_dp, min_gq, sex_n, build)
    if decision is None:
        why = f"not evaluable: {how}"
        return [_r("PS2", None, why), _r("PM6", None, why)]
    if decision is False:
        why = f"not de novo: {how}"
        return [_r("PS2", False, why), _r("PM6", False, why)]
    single_allele_disease = gene.dominant or (sex_n == "MALE" and gene.x_linked and is_x_nonpar(f.variant, build))
    if not single_allele_disease:
        why = (f"de novo ({how}) but {gene.symbol} is recessive: one de novo allele does not cause disease alone "
               f"(its phase with another allele is assessed under PM3)")
        return [_r("PS2", False, why, de_novo=True), _r("PM6", False, why, de_novo=True)]
    full = DE_NOVO_POINTS[specificity]
    if confirmed:
        pts = full
        s = points_to_strength(pts)
        return [_r("PS2", s is not None, f"de novo with maternity and paternity confirmed by the caller ({how}); "
                                         f"phenotype {specificity}: {pts} point(s) (SVI de novo v1.1)", s,
                   points=pts, de_novo=True),
                _r("PM6", False, "PS2 applies instead (parentage confirmed)", de_novo=True)]
    pts = full / 2
    s = points_to_strength(pts)
    return [_r("PS2", None, "not evaluable: maternity and paternity are not confirmed by this tool", de_novo=True),
            _r("PM6", s is not None, f"assumed de novo ({how}); parentage not confirmed; phenotype {specificity}: "
                                     f"{pts} point(s) (SVI de novo v1.1)"
                                     + ("" if s else "; below the 0.5 needed for Supporting"), s,
               points=pts, de_novo=True)]


def _bp5(gene, other) -> CriterionResult:
    items = dict(other) if isinstance(other, Mapping) else {g: "" for g in other}
    items.pop(gene.symbol, None)
    if not items:
        return _r("BP5", False, "no other gene's genotype explains the case")
    desc = "; ".join(f"{g}" + (f" ({why})" if why else "") for g, why in sorted(items.items()))
    return _r("BP5", True, f"the case has an alternate molecular explanation: {desc}; caution: dual diagnoses "
                           f"and digenic effects occur", "Supporting", genes=sorted(items))


# ---------------------------------------------------------------------------
def _segregation(gene, f, others, proband, sex_n, pedigree, fully_penetrant, build, min_dp, min_gq):
    if pedigree is None:
        why = "not evaluable: no PED file"
        return [_r("PP1", None, why), _r("BS4", None, why)]
    if proband not in pedigree.individuals:
        why = "not evaluable: proband not in the PED file"
        return [_r("PP1", None, why), _r("BS4", None, why)]
    rel = [r for r in pedigree.relatives_in(f.variant.calls.keys(), of=proband)]
    if not rel:
        why = "not evaluable: no relatives from the PED file are genotyped in the VCF"
        return [_r("PP1", None, why), _r("BS4", None, why)]

    pc = _call(f, proband)
    x_male = sex_n == "MALE" and gene.x_linked and is_x_nonpar(f.variant, build)
    partners = [g for g in others if _qualifies(g)]
    recessive_model = gene.recessive and not x_male and (pc.alt_copies >= 2 or bool(partners))
    if not recessive_model and not gene.dominant and not x_male:
        return [_r("PP1", None, "not evaluable: single allele in a recessive gene, no biallelic genotype to track"),
                _r("BS4", None, "not evaluable: single allele in a recessive gene")]

    informative, against, skipped, lod = [], [], [], 0.0
    if recessive_model:
        partner = None
        if pc.alt_copies < 2 and partners:
            # prefer the partner shown in trans, then the strongest class
            order = {"trans": 0, "unknown": 1, "cis": 2}
            partner = min(partners, key=lambda g: (
                order[phase_between(f, g, proband, pedigree.individuals[proband].mother,
                                    pedigree.individuals[proband].father, min_dp, min_gq).phase],
                _class(g) not in ("Pathogenic", "Likely pathogenic"), g.id))
        sibs = set(pedigree.full_siblings(proband))
        for r in rel:
            person = pedigree.individuals[r]
            c = _call(f, r)
            if not _confident(c, min_dp, min_gq):
                skipped.append(r)
                continue
            if pc.alt_copies >= 2:
                biallelic = c.alt_copies >= 2
            else:
                c2 = _call(partner, r)
                if not _confident(c2, min_dp, min_gq):
                    skipped.append(r)
                    continue
                biallelic = c.alt_copies >= 1 and c2.alt_copies >= 1
            if person.affected is True:
                if biallelic:
                    informative.append(f"{r} affected, biallelic")
                    lod += LOD_RECESSIVE_AFFECTED
                else:
                    against.append(f"{r} affected without the biallelic genotype")
            elif person.affected is False and r in sibs and not biallelic:
                informative.append(f"{r} unaffected sibling, not biallelic")
                lod += LOD_RECESSIVE_UNAFFECTED
        model = "recessive (Oza et al. 2018 Table 4b LOD)"
    else:
        for r in rel:
            person = pedigree.individuals[r]
            if x_male and person.sex != "MALE":
                continue  # in X-linked recessive disease only hemizygous males are expected to be affected
            c = _call(f, r)
            if not _confident(c, min_dp, min_gq):
                skipped.append(r)
                continue
            k = c.alt_copies >= 1
            if person.affected is True:
                if k:
                    informative.append(f"{r} affected carrier")
                    lod += LOD_DOMINANT
                else:
                    against.append(f"{r} affected non-carrier")
            elif person.affected is False and not k and fully_penetrant:
                informative.append(f"{r} unaffected non-carrier")
                lod += LOD_DOMINANT
        model = "X-linked (males)" if x_male else "dominant"
        model += " (Jarvik & Browning 2016, log10(2) per meiosis)"

    lod = round(lod, 3)
    ev = dict(model=model, lod=lod, informative=informative, against=against, skipped_low_quality=skipped)
    extra = f"; low-quality or missing calls skipped: {', '.join(skipped)}" if skipped else ""
    if against:
        pp1 = _r("PP1", False, f"does not segregate: {'; '.join(against)}", **ev)
        bs4 = _r("BS4", True, f"lack of segregation in affected relatives: {'; '.join(against)} "
                              f"(caution: phenocopies occur){extra}", "Strong", **ev)
        return [pp1, bs4]
    bs4 = _r("BS4", False, "no genotyped affected relative lacks the genotype" + extra, **ev)
    if not informative:
        return [_r("PP1", None, "not evaluable: no informative relatives (affected carriers or unaffected "
                                "siblings) genotyped" + extra, **ev), bs4]
    s = lod_to_strength(lod)
    desc = f"{'; '.join(informative)}: LOD {lod:.2f} under a {model} model"
    if s is None:
        return [_r("PP1", False, desc + " - below LOD 0.9 for Supporting" + extra, **ev), bs4]
    return [_r("PP1", True, desc + extra, s, **ev), bs4]
