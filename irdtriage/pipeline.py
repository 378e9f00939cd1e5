"""The main job, one case end to end: VCF in, result dict out.

Each stage is a function from another module; this module only wires them together
in the documented order (see DEVELOPERS.md, "Data flow"):

1. panel            irdtriage.panel.load_panel
2. phenotype input  irdtriage.phenopacket_in / --hpo
3. family input     irdtriage.pedigree.read_ped
4. VCF intake       irdtriage.vcf.read_vcf (region fetch or streaming prefilter)
5. findings         consequence from INFO annotation, quality flags
6. evidence         irdtriage.evidence.collect_evidence
7. phenotype match  irdtriage.phenotype.PhenotypeMatcher (+ PP4)
8. ACMG pass 1      irdtriage.acmg.engine.evaluate + combine (no family criteria)
9. family criteria  irdtriage.family_criteria (PM3, BP2, PS2/PM6, PP1/BS4) from pass-1 classes
10. ACMG pass 2     with family and phenotype criteria
11. genotype fit    irdtriage.genotype.assess_gene per gene
12. ranking         irdtriage.rank (score, reason, case call, interpretation statuses)
13. result dict     irdtriage.result.build_result
"""
from __future__ import annotations

import datetime as _dt
import re
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Iterable, Optional, Sequence

from . import models
from .errors import InputError


@dataclass
class TriageOptions:
    sample: Optional[str] = None
    hpo: Optional[Sequence[str] | str] = None
    phenopacket: Optional[str] = None
    ped: Optional[str] = None
    sex: Optional[str] = None  # "MALE" / "FEMALE" / None
    build: Optional[str] = None
    panel_path: Optional[str] = None
    genes: Optional[Sequence[str]] = None
    rules_path: Optional[str] = None
    curated_path: Optional[str] = None
    popfreq_vcf: Optional[str] = None
    clinical_vcf: Optional[str] = None
    sv_vcf: Optional[str] = None  # a second VCF with the person's copy-number / structural calls (irdtriage.sv)
    score_tables: Sequence[str] = ()
    resources: Optional[str] = None  # evidence bundle folder (irdtriage.evidence.bundle)
    online: bool = False  # ask a public service for what local evidence lacks (coordinates only)
    online_cache: Optional[str] = None  # requests-cache SQLite file (default: per-user cache folder)
    offline_replay: bool = False  # online answers from the cache only, never the network
    online_url: Optional[str] = None  # server of the online provider (default: Ensembl REST for the build)
    online_expire_days: Optional[float] = None
    padding: int = 50
    quality: Any = None  # irdtriage.vcf.QualityThresholds
    command: str = ""
    all_variants: bool = False  # report common and silent non-coding alleles too
    phenotype_matcher: Any = None  # reuse a loaded matcher across cases (benchmarks)
    reference: Optional[str] = None  # FASTA for built-in annotation (irdtriage.annotate)
    transcripts_path: Optional[str] = None  # GFF3/GTF for built-in annotation of records without CSQ/ANN
    panel_models: bool = True  # without transcripts_path: annotate with the panel's own structure
    loaded_panel: Any = None  # reuse a panel loaded from panel_path/genes across cases (irdtriage.cohort workers)
    loaded_rules: Any = None  # reuse rules loaded from rules_path across cases (irdtriage.cohort workers)
    extra_warnings: list[str] = field(default_factory=list)


def normalise_sex(value: Optional[str], where: str = "--sex") -> Optional[str]:
    if value is None:
        return None
    v = str(value).strip().upper()
    table = {"M": "MALE", "MALE": "MALE", "1": "MALE", "F": "FEMALE", "FEMALE": "FEMALE", "2": "FEMALE",
             "U": None, "UNKNOWN": None, "UNKNOWN_SEX": None, "0": None, "OTHER_SEX": None}
    if v not in table:
        raise InputError(f"sex must be male, female or unknown, got {value!r}", where)
    return table[v]


def triage(vcf_path: str | Path, **kwargs: Any) -> dict[str, Any]:
    """Run the whole triage on one VCF and return the result dict (see docs/result-contract.md)."""
    opts = TriageOptions(**kwargs)
    return run(str(vcf_path), opts)


def run(vcf_path: str, opts: TriageOptions) -> dict[str, Any]:
    from . import result as result_mod
    from .acmg import engine as acmg_engine
    from .acmg.combine import combine
    from .acmg.rules import load_rules
    from .acmg.rulesets import load_combining
    from .consequence.annotations import pick_annotation
    from .evidence import EvidenceConfig, collect_evidence
    from .panel import GeneLocator, load_panel
    from .vcf import QualityThresholds, quality_flags, read_vcf

    started = _dt.datetime.now(_dt.timezone.utc).replace(microsecond=0).isoformat().replace("+00:00", "Z")
    warnings: list[str] = list(opts.extra_warnings)

    # 1. panel and rules ------------------------------------------------------------
    panel = opts.loaded_panel if opts.loaded_panel is not None else load_panel(opts.panel_path, genes=opts.genes)
    rules = opts.loaded_rules if opts.loaded_rules is not None else load_rules(opts.rules_path)
    combining = load_combining()

    # 2. phenotype input ------------------------------------------------------------
    profile, term_changes = _phenotype_profile(opts)
    if term_changes:
        from .phenotype import describe_term_change

        warnings.extend(describe_term_change(c) for c in term_changes)
    explicit_sex = normalise_sex(opts.sex) if opts.sex is not None else None

    # 3. family ---------------------------------------------------------------------
    pedigree = None
    if opts.ped:
        from .pedigree import read_ped

        pedigree = read_ped(opts.ped)

    # 4. VCF intake -----------------------------------------------------------------
    quality = opts.quality or QualityThresholds()
    coding_regions: dict[str, Any] = {}

    def exon_intervals(build: str):
        from .regions import CodingRegions, load_exons

        coding_regions["model"] = CodingRegions(load_exons(), panel, build)
        return coding_regions["model"].read_intervals(panel)

    sample = opts.sample or _proband_hint(vcf_path, profile, pedigree)
    if sample and not opts.sample:
        warnings.append(f"no --sample given: triaging {sample} (named by the "
                        f"{'phenopacket subject' if sample == profile.subject_id else 'PED file, the one affected child with parents'})")
    intake = read_vcf(vcf_path, panel, sample=sample,
                      build=opts.build, padding=opts.padding, quality=quality,
                      # built-in annotation tells coding from deep-intronic alleles: whole gene spans are read
                      unannotated_intervals=None if opts.all_variants or opts.transcripts_path else exon_intervals)
    warnings.extend(intake.warnings)
    proband = intake.proband
    mother, father, ped_sex, affected = _relatives(pedigree, proband, intake.samples)
    if opts.phenopacket:
        from .phenopacket_in import check_subject

        w = check_subject(profile.subject_id, opts.phenopacket, proband, intake.samples,
                          pedigree.individuals if pedigree is not None else ())
        if w:
            warnings.append(w)
    from .genotype import infer_sex, male_heterozygous_x_warning, settle_stated_sex, settle_zygosity

    ped_person = pedigree.individuals.get(proband) if pedigree is not None else None
    settled = settle_stated_sex(explicit_sex, explicit_sex is not None, profile.sex, opts.phenopacket,
                                ped_sex, opts.ped, ped_person.line if ped_person is not None else None)
    stated_sex, sex_source = settled.sex, settled.source
    warnings.extend(settled.warnings)

    sex_inf = infer_sex(intake.variants, proband, stated=stated_sex, build=intake.build)
    if getattr(sex_inf, "warning", None):
        warnings.append(sex_inf.warning)
    sex = stated_sex or sex_inf.sex
    if stated_sex is None and sex_inf.sex is not None:
        sex_source = "inferred"
    # Allelic state follows the settled sex: male chrX (outside the PARs) / chrY calls are
    # hemizygous, chrM calls homoplasmic or heteroplasmic (see genotype.allelic_state).
    sexes = {sid: p.sex for sid, p in (pedigree.individuals.items() if pedigree is not None else ())
             if sid in intake.samples and sid != proband}
    sexes[proband] = sex
    settle_zygosity(intake.variants, sexes, intake.build)

    # 5. findings -------------------------------------------------------------------
    layouts = intake.header_info.get("annotation_layouts", {})
    locator = GeneLocator(panel, intake.build, opts.padding)
    # Without consequence annotation nothing tells a coding allele from a deep-intronic one, so
    # only alleles in exons (+/- splice padding) of the genes become findings (see DEVELOPERS.md).
    regions = coding_regions.get("model")  # set when the VCF had no annotation and only exons were read
    outside_regions = 0
    if regions is None and not layouts and not opts.all_variants and not opts.transcripts_path:
        from .regions import CodingRegions, load_exons

        regions = CodingRegions(load_exons(), panel, intake.build)
    # built-in annotation for records without CSQ/ANN (irdtriage.annotate): the GFF3/GTF the user
    # names, else the panel's own transcript structure for the run's build (opened when first needed)
    annotator = None
    built_in_count = 0
    mane_ids = [a for g in panel.genes.values() for a in (g.refseq_transcript, g.ensembl_transcript) if a]

    def open_annotator():
        from .annotate.annotate import Annotator

        a = Annotator(opts.transcripts_path, opts.reference, build=intake.build, genes=list(panel.genes))
        warnings.append(a.describe() + ": used for records without CSQ/ANN")
        return a

    if opts.transcripts_path or (opts.panel_models and not layouts):
        annotator = open_annotator()
    concordance = None
    if annotator is not None and any(k in layouts for k in ("CSQ", "ANN")):
        from .annotate.concordance import Concordance
        from .consequence.annotations import all_annotations

        concordance = Concordance(annotator.describe(), annotator.reference is not None)
    # copy-number and structural events (symbolic records, explicit alleles >= 50 bp): irdtriage.sv
    from .sv.findings import make_findings

    sv_findings, sv_warnings, sv_consumed = make_findings(
        intake.structural_events, intake.variants, panel, intake.build, proband, sexes, vcf_path, locator.genes_at)
    warnings.extend(sv_warnings)
    if opts.sv_vcf:
        from .sv.findings import from_second_vcf

        more, more_warnings = from_second_vcf(opts.sv_vcf, panel, intake.build, proband, sexes, opts.padding,
                                              locator.genes_at)
        sv_findings += more
        warnings.extend(more_warnings)
    findings: list[models.Finding] = []
    ref_mismatch: list[str] = []
    for variant in intake.variants:
        call = variant.calls.get(proband)
        if call is None or call.alt_copies == 0 or id(variant) in sv_consumed:
            continue
        genes_here = locator.genes_at(variant.chrom, variant.pos, variant.pos + max(len(variant.ref), 1) - 1)
        if not genes_here:
            continue
        if regions is not None:
            end = variant.pos + max(len(variant.ref), 1) - 1
            genes_here = [g for g in genes_here if regions.contains(g, variant.chrom, variant.pos, end)]
            if not genes_here:
                outside_regions += 1
                continue
        annotation = pick_annotation(variant, layouts, panel, genes_here)
        if annotator is None and annotation.source == "none" and opts.panel_models:
            annotator = open_annotator()  # an annotated VCF with a record that lacks CSQ/ANN
        if annotator is not None and annotation.source == "none":
            other = annotator.check_ref(variant.chrom, variant.pos, variant.ref)
            if other is not None:  # wrong build or FASTA: no annotation rather than a wrong one
                ref_mismatch.append(f"{variant.chrom}:{variant.pos} REF {variant.ref}, FASTA {other}")
            else:
                built = annotator.annotation_for(variant.chrom, variant.pos, variant.ref, variant.alt, genes_here,
                                                 mane_ids)
                annotation = built or annotation
                built_in_count += built is not None
        elif concordance is not None:  # the VCF's own CSQ/ANN against the built-in annotation
            concordance.add(variant, all_annotations(variant, layouts, panel),
                            annotator.consequences(variant.chrom, variant.pos, variant.ref, variant.alt))
        gene_symbol = annotation.gene if annotation.gene in panel.genes else genes_here[0]
        if annotation.gene != gene_symbol:
            annotation.gene = gene_symbol
        findings.append(models.Finding(
            id=f"F{len(findings) + 1}",
            variant=variant,
            gene=gene_symbol,
            annotation=annotation,
            quality_flags=tuple(quality_flags(variant, proband, quality)),
        ))
    if annotator is not None:
        annotator.close()
    if ref_mismatch:
        warnings.append(f"{len(ref_mismatch)} allele(s) whose REF differs from the reference FASTA were left without "
                        f"built-in annotation (is the FASTA of the VCF's build?), e.g. {ref_mismatch[0]}")
    findings.extend(sv_findings)

    # 6. evidence -------------------------------------------------------------------
    ev_config = EvidenceConfig().with_layouts(layouts)
    from .evidence import assemble

    sources = assemble.open_sources(
        build=intake.build, popfreq_vcf=opts.popfreq_vcf, clinical_vcf=opts.clinical_vcf,
        score_tables=list(opts.score_tables or ()), resources=opts.resources, online=opts.online,
        online_cache=opts.online_cache, offline_replay=opts.offline_replay, online_url=opts.online_url,
        online_expire_days=opts.online_expire_days)
    try:
        for f in findings:
            if f.structural is None:  # structural events: no population or score data is read for them
                f.evidence = collect_evidence(f.variant, f.annotation, ev_config, sources)
        evidence_sources, evidence_notes = assemble.finish(sources)
    finally:
        sources.close()
    warnings.extend(evidence_notes)

    curated: dict[str, list[models.CriterionResult]] = {}
    if opts.curated_path:
        from .curated import load_curated

        curated = load_curated(opts.curated_path)

    # 7. phenotype match ------------------------------------------------------------
    matches: dict[str, models.PhenotypeMatch] = {}
    retinal = None
    matcher = None
    if profile.present or profile.excluded:
        from .phenotype import PhenotypeMatcher

        matcher = opts.phenotype_matcher or PhenotypeMatcher(panel.genes.keys())
        matches = matcher.match(profile)
        retinal = matcher.retinal_fit(profile)

    def pheno_criteria(f: models.Finding) -> list[models.CriterionResult]:
        if matcher is None:
            return []
        m = matches.get(f.gene)
        return [matcher.pp4(m, panel.genes[f.gene])] if m is not None else []

    # 8. ACMG pass 1 ----------------------------------------------------------------
    automated: dict[int, dict[str, models.CriterionResult]] = {}  # pass-1 automated criteria, reused in pass 2

    def classify(f: models.Finding, extra: list[models.CriterionResult]) -> None:
        gene = panel.genes[f.gene]
        base = automated.get(id(f))
        if base is None:
            base = automated[id(f)] = (f.structural.automated if f.structural is not None
                                       else acmg_engine.automated(f, gene, rules))
        f.criteria = acmg_engine.evaluate(f, gene, rules, extra=extra,
                                          curated=curated.get(f.variant.key, []), base=base)
        f.classification = combine(f.criteria, combining.for_gene(f.gene))

    for f in findings:
        classify(f, pheno_criteria(f))

    # Reporting filter: common alleles (BA1 met) and intronic/flanking alleles with no sign of a
    # splice effect are counted, not reported, unless --all-variants (see DEVELOPERS.md).
    counts_extra = {"common_not_reported": 0, "noncoding_not_reported": 0,
                    "outside_coding_regions_not_reported": outside_regions}
    if regions is not None:
        warnings.append(
            f"no consequence annotation: only alleles in exons +/- {regions.padding} bp of the panel genes were "
            f"read and assessed (use --all-variants to read whole gene spans); {regions.describe()}")
    # ... except listed recurrent non-coding alleles and candidate non-coding alleles that would
    # complete a genotype in a gene whose phenotype fits (or with no phenotype given): see noncoding.py
    from .noncoding import held_back_warning, select as select_noncoding
    from .noncoding_alleles import load_noncoding_alleles
    from .rank import PHENOTYPE_FITS

    nc = select_noncoding(
        [f for f in findings if f.structural is None], panel, proband, curated=curated, listed_table=load_noncoding_alleles(),
        matches=matches, phenotype_given=matcher is not None,
        fits_retina=None if retinal is None else bool(retinal[0]), threshold=PHENOTYPE_FITS,
        mother=mother, father=father)
    for f in findings:
        f.noncoding = nc.notes.get(id(f))
    w = None if opts.all_variants else held_back_warning(nc.held_back)
    if w:
        warnings.append(w)
    if not opts.all_variants:
        kept = []
        for f in findings:
            why = None if f.noncoding is not None or f.structural is not None else _not_reported(f, curated)
            if why is None:
                kept.append(f)
            else:
                counts_extra[why] += 1
        findings = kept
    counts_extra["structural_findings"] = sum(1 for f in findings if f.structural is not None)
    counts_extra["noncoding_candidates_reported"] = sum(1 for f in findings if f.noncoding_candidate)
    counts_extra["noncoding_listed_reported"] = sum(1 for f in findings if f.noncoding is not None
                                                    and not f.noncoding_candidate)
    for i, f in enumerate(findings, 1):
        f.id = f"F{i}"
    w = male_heterozygous_x_warning(findings, sexes, intake.build)
    if w:
        warnings.append(w)
    if curated:
        from .curated import unmatched_warning

        w = unmatched_warning(curated, {f.variant.key for f in findings}, opts.curated_path)
        if w:
            warnings.append(w)

    # 9-10. family criteria, ACMG pass 2 -------------------------------------------
    from .family_criteria import family_criteria
    from .genotype import assess_gene

    by_gene: dict[str, list[models.Finding]] = {}
    for f in findings:
        by_gene.setdefault(f.gene, []).append(f)

    by_chrom: dict[str, list[models.Variant]] = {}
    for v in intake.variants:
        by_chrom.setdefault(v.chrom_bare, []).append(v)

    def assess_all() -> dict[str, Any]:
        out = {}
        for symbol, gene_findings in by_gene.items():
            span = panel.genes[symbol].span(intake.build)
            context = [v for v in by_chrom.get(span.chrom, []) if span.start <= v.pos <= span.end] if span else []
            out[symbol] = assess_gene(panel.genes[symbol], gene_findings, proband, sex, mother=mother,
                                      father=father, build=intake.build, context=context)
        return out

    # BP5 needs to know which genes already explain the case: a complete P/LP fit from pass 1.
    pass1 = assess_all()
    complete = _complete_fits(pass1, by_gene)
    for symbol, gene_findings in by_gene.items():
        fam = family_criteria(panel.genes[symbol], gene_findings, proband, sex, pedigree=pedigree,
                              mother=mother, father=father, build=intake.build,
                              other_genes_explaining=[g for g in complete if g != symbol])
        for f in gene_findings:
            classify(f, pheno_criteria(f) + list(fam.get(f.id, [])))
    from .family_criteria import note_final_partner_classes

    note_final_partner_classes(findings)
    from .sv.classify import riggs_family  # Riggs 2020 section 5 from the relatives' calls of each event

    status = {sid: per.affected for sid, per in (pedigree.individuals.items() if pedigree is not None else ())}
    for f in findings:
        if f.structural is not None and f.structural.info.get("riggs"):
            riggs_family(f.structural.info["riggs"], panel.genes[f.gene], f.variant.calls, proband, mother, father,
                         status, bool(profile.present))

    # 11. genotype fit per gene -----------------------------------------------------
    from .rank import assign_interpretation_status, case_call, rank_hypotheses

    hypotheses: list[models.GeneHypothesis] = []
    for symbol, assessment in assess_all().items():
        h = models.GeneHypothesis(symbol=symbol, findings=by_gene[symbol], genotype_fit=assessment.fit,
                                  phase=assessment.phase, phenotype_match=matches.get(symbol))
        h.next_steps = list(getattr(assessment, "notes", []) or [])
        h.assessment = assessment
        hypotheses.append(h)

    # 12. ranking and case call -----------------------------------------------------
    ranked = rank_hypotheses(hypotheses, panel)
    fits_retina = None if retinal is None else bool(retinal[0])
    call = case_call(ranked, fits_retina)
    assign_interpretation_status(ranked, call)

    # 13. result ----------------------------------------------------------------------
    from .phenotype import phenotype_ranks

    limits = input_limits(layouts or ({"built-in": []} if annotator is not None else {}))
    res = result_mod.build_result(
        vcf_path=vcf_path, opts=opts, started=started, panel=panel, rules=rules, combining=combining, intake=intake,
        proband=proband, sex=sex, sex_source=sex_source, inferred_sex=sex_inf.sex,
        mother=mother, father=father, affected=affected, profile=profile, retinal=retinal,
        findings=findings, ranked=ranked, call=call, warnings=warnings, counts_extra=counts_extra,
        phenotype_ranks=phenotype_ranks(matches),
    )
    res["phenotype"]["term_changes"] = term_changes
    res["evidence_sources"] = evidence_sources
    res["annotation_concordance"] = concordance.to_dict() if concordance is not None else None
    res["built_in_annotation"] = None if annotator is None else {
        "transcript_models": annotator.model_source,
        "model_kind": "file" if opts.transcripts_path else "panel",
        "transcripts": len(annotator.transcripts),
        "reference": opts.reference, "alleles_annotated": built_in_count}
    # what the input could not support, first in the result so every output shows it first
    return {"schema_version": res.pop("schema_version"), "input_limits": limits, **res}


NO_ANNOTATION = "no_consequence_annotation"


def input_limits(layouts: dict) -> list[dict[str, str]]:
    """Limits of the input that every output must show before anything else: ``[{code, message}]``
    (stable codes). A VCF without consequence annotation (no CSQ/ANN in INFO) leaves every
    allele's consequence, HGVS names and annotated population frequency unknown."""
    if layouts:
        return []
    return [{"code": NO_ANNOTATION,
             "message": "The VCF has no consequence annotation (no CSQ or ANN in INFO): consequences and HGVS "
                        "names are unknown, and an allele whose population frequency is unknown as well is never "
                        "called causative or a candidate. Annotate the VCF (consequences and gnomAD frequencies) "
                        "and run again."}]


# Consequences that on their own say nothing about the protein or splicing (Sequence Ontology terms).
SILENT_NONCODING = frozenset({
    "intron_variant", "upstream_gene_variant", "downstream_gene_variant", "intergenic_variant",
    "regulatory_region_variant", "TF_binding_site_variant",
})
SPLICE_SIGNAL = 0.2  # SpliceAI delta at which splicing evidence starts (Walker et al. 2023)
NEAR_EXON_NT = 50  # intronic alleles this close to an exon are always reported (common practice)


def _not_reported(f: models.Finding, curated: dict) -> Optional[str]:
    """Why an allele is counted but not reported as a finding, or None to report it."""
    if f.variant.key in curated:
        return None
    if any(c.code == "BA1" and c.met for c in f.criteria):
        return "common_not_reported"
    terms = set(f.annotation.consequence)
    if terms and terms <= SILENT_NONCODING:
        splice = f.evidence.get("spliceai_max") if isinstance(f.evidence, dict) else None
        asserted = any(c.code in ("PS1", "PP5") and c.met for c in f.criteria)
        offset = intron_offset(f.annotation.hgvs_c)
        extra = f.annotation.extra or {}
        if offset is None and extra.get("splice_side") == "intron" and str(extra.get("splice_distance", "")).isdigit():
            offset = int(extra["splice_distance"])  # built-in annotation of an indel without reference: no c.
        near_exon = offset is not None and offset <= NEAR_EXON_NT
        if (splice is None or splice < SPLICE_SIGNAL) and not asserted and not near_exon:
            return "noncoding_not_reported"
    return None


def intron_offset(hgvs_c: str) -> Optional[int]:
    """Smallest distance into the intron written in an HGVS c. description (c.1611+27G>A -> 27)."""
    offsets = [int(m) for m in re.findall(r"\d[+-](\d+)", hgvs_c or "")]
    return min(offsets) if offsets else None


STRONG_FITS = ("biallelic in trans", "homozygous", "hemizygous", "heterozygous in a dominant gene", "de novo",
               "mitochondrial homoplasmic", "mitochondrial heteroplasmic")


def _complete_fits(assessments: dict[str, Any], by_gene: dict[str, list[models.Finding]]) -> list[str]:
    """Genes whose genotype fit is complete and made only of Pathogenic/Likely pathogenic alleles."""
    out = []
    for symbol, a in assessments.items():
        if a.fit not in STRONG_FITS:
            continue
        ids = set(getattr(a, "qualifying_ids", ()) or ())
        classes = [f.classification.classification for f in by_gene[symbol]
                   if f.id in ids and f.classification is not None]
        if classes and all(c in ("Pathogenic", "Likely pathogenic") for c in classes):
            out.append(symbol)
    return out


def _proband_hint(vcf_path: str, profile: models.PhenotypeProfile, pedigree: Any) -> Optional[str]:
    """No --sample given for a multi-sample VCF: the phenopacket subject when it is a VCF sample,
    else the PED's only affected individual whose parents are both in the VCF; None otherwise
    (read_vcf then asks for --sample, listing the samples)."""
    try:
        import pysam

        with pysam.VariantFile(vcf_path) as vf:
            samples = list(vf.header.samples)
    except Exception:  # unreadable here: read_vcf reports the problem properly
        return None
    if len(samples) < 2:
        return None
    if profile.subject_id and profile.subject_id in samples:
        return profile.subject_id
    if pedigree is not None:
        people = getattr(pedigree, "individuals", {}) or {}
        cands = [pid for pid, p in people.items()
                 if getattr(p, "affected", None) and pid in samples
                 and getattr(p, "mother", None) in samples and getattr(p, "father", None) in samples]
        if len(cands) == 1:
            return cands[0]
    return None


def _phenotype_profile(opts: TriageOptions) -> tuple[models.PhenotypeProfile, list[dict[str, Any]]]:
    """The person's HPO terms, and the changes made to fit them to the bundled ontology
    (obsolete IDs replaced, unknown IDs left out; see phenotype.resolve_terms). Malformed
    IDs are input errors."""
    from .phenotype import resolve_terms

    present: list[str] = []
    excluded: list[str] = []
    sex = None
    subject = None
    source = []
    labels: dict[str, str] = {}
    if opts.phenopacket:
        from .phenopacket_in import read_phenopacket

        p = read_phenopacket(opts.phenopacket, validate_terms=False)  # IDs are checked below
        present += list(p.present)
        excluded += list(p.excluded)
        sex, subject = p.sex, p.subject_id
        labels.update(p.labels)
        source.append(str(opts.phenopacket))
    if opts.hpo:
        from .phenopacket_in import HPO_ID, _tokens

        for tok, path, line in _tokens(opts.hpo, "--hpo"):
            if not HPO_ID.match(tok):
                raise InputError(f"malformed HPO term ID {tok!r} (expected HP: followed by 7 digits)", path, line)
            if tok not in present:
                present.append(tok)
        source.append("--hpo")
    present, changes = resolve_terms(present)
    excluded, changes_ex = resolve_terms(excluded)
    changes += changes_ex
    for c in changes:
        if not c.get("label") and labels.get(c["id"]):
            c["label"] = labels[c["id"]]  # the label the phenopacket gave with an ID the ontology lacks
        if c["action"] == "replaced":
            labels.pop(c["id"], None)  # the label given with the old ID does not name the replacement
    return models.PhenotypeProfile(present=tuple(present), excluded=tuple(excluded), sex=sex,
                                   subject_id=subject, source=", ".join(source), labels=labels), changes


def _relatives(pedigree: Any, proband: str, samples: Iterable[str]):
    if pedigree is None:
        return None, None, None, None
    from .pedigree import trio_from_ped

    mother, father = trio_from_ped(pedigree, proband, list(samples))
    person = pedigree.individuals.get(proband) if hasattr(pedigree, "individuals") else None
    sex = getattr(person, "sex", None) if person is not None else None
    affected = getattr(person, "affected", None) if person is not None else None
    return mother, father, sex, affected
