"""Turn the pipeline's dataclasses into the result dict (docs/result-contract.md).

Pure formatting of data into plain JSON types; no I/O except hashing the input files.
"""
from __future__ import annotations

import hashlib
from pathlib import Path
from typing import Any, Optional

from . import CAUTION, __version__, models

SCHEMA_VERSION = "1.0"

CAUTIONS = [
    CAUTION,
    "Population frequency, clinical assertions and in-silico scores are only as complete as the "
    "sources given to this run; criteria without data are reported as not evaluable, not as absent.",
    "Copy-number changes, deep-intronic and repeat-region variants and regions of low coverage "
    "may be missed by a variant file; a negative result does not exclude a genetic diagnosis.",
]


def sha256_file(path: str | Path, chunk: int = 1 << 20) -> Optional[str]:
    h = hashlib.sha256()
    try:
        with open(path, "rb") as fh:
            while True:
                block = fh.read(chunk)
                if not block:
                    break
                h.update(block)
    except OSError:
        return None
    return h.hexdigest()


def genotype_string(call: Optional[models.Call]) -> str:
    if call is None:
        return "./."
    sep = "|" if call.phased else "/"
    return sep.join("." if a is None else str(a) for a in call.gt) or "."


def _round(x: Any, n: int = 4) -> Any:
    return round(x, n) if isinstance(x, float) else x


def cascade_dict(step: Optional[models.CascadeStep]) -> Optional[dict[str, Any]]:
    if step is None:
        return None
    return {"id": step.id, "title": step.title, "kind": step.kind, "order": step.order,
            "text": step.text, "breaks": step.breaks}


def allele_depths(call: Optional[models.Call]) -> Optional[list[Optional[int]]]:
    """[reference depth, this allele's depth] from the call's AD, or None when AD is absent."""
    if call is None or (call.ad_ref is None and call.ad_alt is None):
        return None
    return [call.ad_ref, call.ad_alt]


def protein_accession(annotation: models.Annotation, gene: Optional[models.Gene]) -> Optional[str]:
    """The protein reference that pairs with the annotation's transcript, so HGVS c. and p. are
    written on one transcript/protein pair: the annotation's own ``ENSP`` (CSQ field) for an
    Ensembl transcript; the gene's MANE Select RefSeq protein when the transcript is the gene's
    MANE Select RefSeq transcript (same version). None when no pair is known."""
    tx = annotation.transcript or ""
    ensp = str(annotation.extra.get("ENSP") or "")
    if tx.startswith("ENST") and ensp.startswith("ENSP"):
        return ensp
    if gene is not None and tx.startswith("NM_") and tx == gene.refseq_transcript and gene.refseq_protein:
        return gene.refseq_protein
    return None


def finding_dict(f: models.Finding, proband: str, relatives: dict[str, str],
                 gene: Optional[models.Gene] = None) -> dict[str, Any]:
    v = f.variant
    call = v.calls.get(proband)
    c = f.classification
    family = {}
    for role, sid in relatives.items():
        rc = v.calls.get(sid)
        if rc is not None:
            family[sid] = {"role": role, "genotype": genotype_string(rc), "zygosity": rc.zygosity,
                           "dp": rc.dp, "gq": rc.gq, "ad": allele_depths(rc)}
    return {
        "id": f.id,
        "chrom": v.chrom,
        "pos": v.pos,
        "ref": v.ref,
        "alt": v.alt,
        "key": v.key,
        "original": {"pos": v.original_pos or v.pos, "ref": v.original_ref or v.ref,
                     "alts": list(v.original_alts or (v.alt,)), "allele_index": v.allele_index},
        "vcf_id": v.vcf_id,
        "qual": v.qual,
        "gene": f.gene,
        "transcript": f.annotation.transcript,
        "protein_accession": protein_accession(f.annotation, gene),
        "is_mane": f.annotation.is_mane,
        "hgvs_c": f.annotation.hgvs_c,
        "hgvs_p": f.annotation.hgvs_p,
        "consequence": list(f.annotation.consequence),
        "exon": f.annotation.exon,
        "intron": f.annotation.intron,
        "annotation_source": f.annotation.source,
        "protein_position": _protein_position(f.annotation.extra),
        "zygosity": call.zygosity if call else "no call",
        "genotype": genotype_string(call),
        "phased": bool(call.phased) if call else False,
        "phase_set": call.phase_set if call else None,
        "dp": call.dp if call else None,
        "gq": call.gq if call else None,
        "ad": allele_depths(call),
        "allele_balance": _round(call.allele_balance) if call else None,
        "filters": list(v.filters) or ["PASS"],
        "quality_flags": list(f.quality_flags),
        "family": family,
        "evidence": _jsonable(f.evidence),
        "classification": c.classification if c else None,
        "rule_class": c.rule_class if c else None,
        "rule": c.rule if c else None,
        "rule_set": (c.rule_set or None) if c else None,
        "points": c.points if c else None,
        "point_class": c.point_class if c else None,
        "posterior": _round(c.posterior, 6) if c else None,
        "bayes_class": c.bayes_class if c else None,
        "classification_note": c.note if c else "",
        "criteria": _criteria_list(f),
        "met_criteria": [f"{cr.code}" + ("" if not cr.strength else f"_{cr.strength}")
                         for cr in f.criteria if cr.met],
        "interpretation_status": f.interpretation_status,
        "noncoding_candidate": f.noncoding_candidate,
        "noncoding": f.noncoding.to_dict() if f.noncoding is not None else None,
        "kind": "structural" if f.structural is not None else "small",
        "structural": _jsonable(f.structural.to_dict()) if f.structural is not None else None,
    }


_PLAIN = (str, int, bool, type(None))


def _jsonable(x: Any, memo: Optional[dict[int, Any]] = None) -> Any:
    """Plain JSON types only (NaN/inf -> None, tuples/sets -> lists, dataclasses -> dicts).

    ``memo`` converts a container shared by several criteria (the population record, say)
    once; the result is only read afterwards, so sharing the converted object is safe."""
    t = type(x)
    if t in _PLAIN:
        return x
    if t is float:
        return x if x == x and x not in (float("inf"), float("-inf")) else None
    if memo is None:
        memo = {}
    key = id(x)
    if key in memo:
        return memo[key]
    if isinstance(x, dict):
        out: Any = {k if type(k) is str else str(k): _jsonable(v, memo) for k, v in x.items()}
    elif isinstance(x, (list, tuple, set)):
        out = [_jsonable(v, memo) for v in x]
    elif isinstance(x, float):
        out = x if x == x and x not in (float("inf"), float("-inf")) else None
    elif isinstance(x, (str, int, bool)):
        out = x
    elif hasattr(x, "__dataclass_fields__"):
        from dataclasses import asdict

        out = _jsonable(asdict(x), memo)
    else:
        out = str(x)
    memo[key] = out
    return out


def _criteria_list(f: models.Finding) -> list[dict[str, Any]]:
    memo: dict[int, Any] = {}
    return [{"code": cr.code, "met": cr.met, "strength": cr.strength, "reason": cr.reason,
             "evidence": _jsonable(cr.evidence, memo), "source": cr.source} for cr in f.criteria]


def combining_dict(combining, findings) -> dict[str, Any]:
    """result["rules"]["combining"]: the combining file and every rule set the findings used
    (name, version, content hash), so a report can say which rules produced each class."""
    if combining is None:
        return {}
    used = sorted({f.classification.rule_set for f in findings if f.classification and f.classification.rule_set})
    return {"combining": {
        "name": combining.name, "version": combining.version, "sha256": combining.sha256,
        "default": combining.rule_sets[combining.default].ref(),
        "rule_sets": [combining.rule_sets[n].ref() for n in used if n in combining.rule_sets],
    }}


PROTEIN_POSITION_KEYS = ("Protein_position", "AA.pos / AA.length", "protein_position")  # CSQ, ANN, generic


def _protein_field(extra: dict[str, Any]) -> str:
    """The annotation's "position/length" protein field ("356/533"), or ""."""
    for key in PROTEIN_POSITION_KEYS:
        if extra.get(key):
            return str(extra[key])
    return ""


def _protein_position(extra: dict[str, Any]) -> Optional[str]:
    return _protein_field(extra).split("/")[0].strip() or None


CLASS_ORDER = {c: i for i, c in enumerate(models.CLASSES)}


def _pheno_rank(r: Any) -> dict[str, Any]:
    """phenotype.PhenotypeRank -> rank (first place of a tie), genes_ranked and rank_range {from, to, of}."""
    return {"rank": r.low, "genes_ranked": r.of, "rank_range": {"from": r.low, "to": r.high, "of": r.of}}


def gene_dict(h: models.GeneHypothesis, panel: models.Panel,
              phenotype_ranks: Optional[dict[str, Any]] = None) -> dict[str, Any]:
    gene = panel.genes[h.symbol]
    step = panel.cascade.get(gene.cascade_step)
    classes = [f.classification.classification for f in h.findings if f.classification]
    strongest = min(classes, key=lambda c: CLASS_ORDER[c]) if classes else None
    pm = h.phenotype_match
    return {
        "rank": h.rank,
        "symbol": gene.symbol,
        "hgnc_id": gene.hgnc_id,
        "name": gene.name,
        "transcript": gene.refseq_transcript,
        "refseq_protein": gene.refseq_protein,
        "ensembl_transcript": gene.ensembl_transcript or None,
        "protein": _protein(h),
        "inheritance": list(gene.inheritance),
        "mechanisms": list(gene.mechanisms),
        "conditions": list(gene.conditions),
        "cascade_step": cascade_dict(step),
        "findings": [f.id for f in h.findings],
        "genotype_fit": h.genotype_fit,
        "phase": h.phase,
        "phenotype_match": None if pm is None else {
            "score": _round(pm.score), "calibrated": _round(pm.calibrated),
            "matched_terms": _jsonable(pm.matched_terms), "conflicting_terms": list(pm.conflicting_terms),
            "summary": pm.summary,
            **(_pheno_rank(phenotype_ranks[h.symbol]) if phenotype_ranks and h.symbol in phenotype_ranks else {})},
        "strongest_class": strongest,
        "score": _round(h.score),
        "reason": h.reason,
        "next_steps": list(h.next_steps),
        "notes": list(gene.notes),
    }


def _protein(h: models.GeneHypothesis) -> Optional[dict[str, Any]]:
    """Protein length as the annotation gives it ("356/533" in a Protein_position or AA.pos / AA.length
    field), else from the panel's transcript structure (panels/transcripts.yaml), with its source."""
    for f in h.findings:
        _, sep, tail = _protein_field(f.annotation.extra).rpartition("/")
        if sep and tail.strip().isdigit():
            return {"length": int(tail.strip()), "domains": [], "length_source": "annotation"}
    from .transcripts import default_model

    model = default_model()
    coding = model.coding_for(h.symbol)
    if coding is not None and coding.protein_length:
        return {"length": int(coding.protein_length), "domains": [], "length_source": coding.describe()}
    for build in ("GRCh38", "GRCh37"):
        tx = model.get(h.symbol, build)
        if tx is not None and tx.protein_length:
            return {"length": int(tx.protein_length), "domains": [], "length_source": tx.describe()}
    return None


def hpo_labels(term_ids) -> dict[str, str]:
    """HPO term names from the bundled phenotype model (offline); ids it lacks are left out."""
    ids = [t for t in dict.fromkeys(term_ids or ()) if t]
    if not ids:
        return {}
    from .phenotype import term_names

    return term_names(ids)


def build_result(*, vcf_path, opts, started, panel, rules, intake, proband, sex, sex_source, inferred_sex,
                 mother, father, affected, profile, retinal, findings, ranked, call, warnings,
                 counts_extra=None, phenotype_ranks=None, combining=None) -> dict[str, Any]:
    inputs = [{"role": "vcf", "path": str(vcf_path), "sha256": sha256_file(vcf_path)}]
    for role, p in (("ped", opts.ped), ("phenopacket", opts.phenopacket), ("panel", opts.panel_path),
                    ("rules", opts.rules_path), ("curated", opts.curated_path),
                    ("population_vcf", opts.popfreq_vcf), ("clinical_vcf", opts.clinical_vcf)):
        if p:
            inputs.append({"role": role, "path": str(p), "sha256": sha256_file(p)})
    for p in opts.score_tables or ():
        inputs.append({"role": "scores", "path": str(p), "sha256": sha256_file(p)})

    relatives = {k: v for k, v in (("mother", mother), ("father", father)) if v}
    labels = {k: v for k, v in profile.labels.items() if v and v != k}
    missing = [t for t in list(profile.present) + list(profile.excluded) if t not in labels]
    labels.update(hpo_labels(missing))
    ordered_findings = [f for h in ranked for f in h.findings]
    counts = dict(intake.counts)
    counts.update(counts_extra or {})
    counts["findings"] = len(findings)
    return {
        "schema_version": SCHEMA_VERSION,
        "tool": {"name": "irdtriage", "version": __version__},
        "run": {"started": started, "command": opts.command, "inputs": inputs},
        "panel": {"name": panel.name, "version": panel.version, "sha256": panel.sha256,
                  "genes": len(panel.genes), "subset": list(opts.genes) if opts.genes else None},
        "rules": {"name": getattr(rules, "name", "criteria"), "version": getattr(rules, "version", ""),
                  "sha256": getattr(rules, "sha256", ""), **combining_dict(combining, findings)},
        "genome_build": intake.build,
        "sample": {"id": proband, "sex": sex, "sex_source": sex_source, "inferred_sex": inferred_sex,
                   "mother": mother, "father": father, "affected": affected,
                   "vcf_samples": list(intake.samples)},
        "phenotype": {
            "source": profile.source or None,
            "present": [{"id": t, "label": labels.get(t, "")} for t in profile.present],
            "excluded": [{"id": t, "label": labels.get(t, "")} for t in profile.excluded],
            "retinal_fit": None if retinal is None else
            {"fits": bool(retinal[0]), "score": _round(float(retinal[1])), "summary": retinal[2]},
        },
        "case": {"status": call.status, "summary": call.summary, "next_steps": list(call.next_steps)},
        "cascade": [cascade_dict(s) for s in panel.cascade.values()],
        "genes": [gene_dict(h, panel, phenotype_ranks) for h in ranked],
        "findings": [finding_dict(f, proband, relatives, panel.genes.get(f.gene)) for f in ordered_findings],
        "counts": counts,
        "warnings": list(dict.fromkeys(warnings)),
        "cautions": list(CAUTIONS),
    }
