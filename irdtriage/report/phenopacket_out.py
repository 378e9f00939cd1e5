"""GA4GH Phenopacket v2 with an ``interpretations`` block built from the result.

The phenopacket is checked against the official schema (the protobuf classes of the
``phenopackets`` PyPI package, ``json_format.ParseDict`` with unknown fields refused) and
against the fields the schema documentation marks required; an invalid one is never written.

Layout: one Interpretation (id ``irdtriage-<sample>``) whose progressStatus is the case
status and whose ``summary`` carries the clinical caution and the case sentence. Its
Diagnosis names the top gene's disease when the result gives one (``genes[0].diseases``,
an ontology term such as an OMIM id); otherwise ``disease`` is left out rather than
invented, and the genomicInterpretations still say which variants were considered and how.

Which findings become genomicInterpretations (the ones that matter to the case, not the
thousands an unannotated exome rejects): every finding whose interpretation status is
CAUSATIVE, CANDIDATE or CONTRIBUTORY, plus every finding classified Pathogenic or Likely
pathogenic whatever its status; ordered by gene rank, then as the gene lists them. All other
findings (REJECTED, UNKNOWN_STATUS below Likely pathogenic) are in result.json and
findings.tsv / findings.vcf.gz only.
"""
from __future__ import annotations

import copy
import datetime as _dt
import json
from pathlib import Path
from typing import Optional, Union

from google.protobuf import json_format

from irdtriage import __version__
from irdtriage.atomic import write_text
from irdtriage.errors import InputError

from .common import cautions, hgvs_pair

ACMG = {
    "Pathogenic": "PATHOGENIC",
    "Likely pathogenic": "LIKELY_PATHOGENIC",
    "Uncertain significance": "UNCERTAIN_SIGNIFICANCE",
    "Likely benign": "LIKELY_BENIGN",
    "Benign": "BENIGN",
}
# Genotype Ontology (GENO) allelic-state terms for each zygosity of irdtriage.models.ZYGOSITIES.
# 0000135 heterozygous, 0000136 homozygous: phenopacket-schema v2 docs (interpretation.rst,
# variant.rst) and the GA4GH phenopacket-store case records. 0000134 hemizygous, 0000602
# homoplasmic, 0000603 heteroplasmic, 0000137 unspecified zygosity: the GENO zygosity terms as
# listed in the Alliance of Genome Resources / FlyBase zygosity mappings and the phenopackets
# library documentation (label tables). A "haploid call" (one allele where two copies are
# expected) is not read as any definite state: unspecified zygosity.
ALLELIC_STATE = {
    "heterozygous": {"id": "GENO:0000135", "label": "heterozygous"},
    "homozygous": {"id": "GENO:0000136", "label": "homozygous"},
    "hemizygous": {"id": "GENO:0000134", "label": "hemizygous"},
    "homoplasmic": {"id": "GENO:0000602", "label": "homoplasmic"},
    "heteroplasmic": {"id": "GENO:0000603", "label": "heteroplasmic"},
    "haploid call": {"id": "GENO:0000137", "label": "unspecified zygosity"},
}
# Local namespace for a gene-level condition when the result names no disease ontology term:
# the panel has plain condition names only (panels/genes.yaml ``conditions``), so the diagnosis
# says "<GENE>-related condition" under this prefix, declared as its own Resource (a URN, not a
# resolvable ontology) so a reader cannot mistake it for an OMIM/MONDO class.
LOCAL_CONDITION_PREFIX = "IRDTRIAGE_CONDITION"
RESOURCES = {
    "HP": {"id": "hp", "name": "human phenotype ontology", "url": "http://purl.obolibrary.org/obo/hp.owl",
           "version": "unknown", "namespacePrefix": "HP", "iriPrefix": "http://purl.obolibrary.org/obo/HP_"},
    "GENO": {"id": "geno", "name": "Genotype Ontology", "url": "http://purl.obolibrary.org/obo/geno.owl",
             "version": "unknown", "namespacePrefix": "GENO", "iriPrefix": "http://purl.obolibrary.org/obo/GENO_"},
    "SO": {"id": "so", "name": "Sequence types and features ontology", "url": "http://purl.obolibrary.org/obo/so.owl",
           "version": "unknown", "namespacePrefix": "SO", "iriPrefix": "http://purl.obolibrary.org/obo/SO_"},
    "HGNC": {"id": "hgnc", "name": "HUGO Gene Nomenclature Committee", "url": "https://www.genenames.org",
             "version": "unknown", "namespacePrefix": "HGNC",
             "iriPrefix": "https://www.genenames.org/data/gene-symbol-report/#!/hgnc_id/"},
    "OMIM": {"id": "omim", "name": "Online Mendelian Inheritance in Man", "url": "https://www.omim.org",
             "version": "unknown", "namespacePrefix": "OMIM", "iriPrefix": "https://www.omim.org/entry/"},
    "MONDO": {"id": "mondo", "name": "Mondo Disease Ontology", "url": "http://purl.obolibrary.org/obo/mondo.owl",
              "version": "unknown", "namespacePrefix": "MONDO", "iriPrefix": "http://purl.obolibrary.org/obo/MONDO_"},
    "ORPHA": {"id": "ordo", "name": "Orphanet Rare Disease Ontology", "url": "https://www.orphadata.com",
              "version": "unknown", "namespacePrefix": "ORPHA", "iriPrefix": "http://www.orpha.net/ORDO/Orphanet_"},
}
BASE_PREFIXES = ("HP", "GENO", "SO", "HGNC")
PROGRESS = {"SOLVED": "SOLVED", "UNSOLVED": "UNSOLVED", "IN_PROGRESS": "IN_PROGRESS"}

# Fields the phenopacket-schema v2 documentation marks REQUIRED (1..1 / required), checked on top of
# the protobuf parse (which accepts a message with any field left empty). Source: GA4GH
# phenopacket-schema docs, v2: phenopacket.rst (Phenopacket.id), metadata.rst (created, createdBy,
# resources 1..*, phenopacketSchemaVersion), resource.rst (id, name, namespacePrefix, url,
# version, iriPrefix), ontologyclass.rst (id, label), phenotype.rst (type), interpretation.rst
# (id, progressStatus; Diagnosis.disease 1..1), genomic-interpretation.rst
# (subjectOrBiosampleId, interpretationStatus, call = gene | variantInterpretation),
# variant-interpretation.rst (acmgPathogenicityClassification, variationDescriptor),
# gene.rst (GeneDescriptor valueId, symbol), VRSATILE VariationDescriptor (id).
REQUIRED_METADATA = ("created", "createdBy", "phenopacketSchemaVersion")
REQUIRED_RESOURCE = ("id", "name", "namespacePrefix", "url", "version", "iriPrefix")
REQUIRED_VCF_RECORD = ("genomeAssembly", "chrom", "pos", "ref", "alt")


class InvalidPhenopacket(ValueError):
    """The phenopacket built does not satisfy the GA4GH schema (a bug: nothing is written)."""


def _now() -> str:
    return _dt.datetime.now(_dt.timezone.utc).replace(microsecond=0).isoformat().replace("+00:00", "Z")


def _timestamp(result: dict) -> str:
    started = (result.get("run") or {}).get("started")
    if started:
        try:
            from google.protobuf.timestamp_pb2 import Timestamp

            Timestamp().FromJsonString(started)
            return started
        except ValueError:
            pass
    return _now()


def _term_problems(term, where: str) -> list[str]:
    if not isinstance(term, dict):
        return [f"{where} is required"]
    return [f"{where}.{k} is required" for k in ("id", "label") if not term.get(k)]


def schema_problems(obj: dict) -> list[str]:
    """Problems of ``obj`` as a Phenopacket v2: protobuf schema (phenopackets package) + the
    fields the schema documentation marks required (see REQUIRED_* above)."""
    import phenopackets

    try:
        json_format.ParseDict(obj, phenopackets.Phenopacket(), ignore_unknown_fields=False)
    except json_format.ParseError as e:
        return [f"schema: {e}"]
    problems = []
    if not obj.get("id"):
        problems.append("id is required")
    md = obj.get("metaData")
    if not md:
        return problems + ["metaData is required"]
    for key in REQUIRED_METADATA:
        if not md.get(key):
            problems.append(f"metaData.{key} is required")
    if not md.get("resources"):
        problems.append("metaData.resources must list the ontologies used")
    for i, res in enumerate(md.get("resources") or []):
        for key in REQUIRED_RESOURCE:
            if not res.get(key):
                problems.append(f"metaData.resources[{i}].{key} is required")
    for i, pf in enumerate(obj.get("phenotypicFeatures") or []):
        problems += _term_problems(pf.get("type"), f"phenotypicFeatures[{i}].type")
    for i, it in enumerate(obj.get("interpretations") or []):
        w = f"interpretations[{i}]"
        if not it.get("id"):
            problems.append(f"{w}.id is required")
        if not it.get("progressStatus"):
            problems.append(f"{w}.progressStatus is required")
        dx = it.get("diagnosis")
        if dx is None:
            continue
        problems += _term_problems(dx.get("disease"), f"{w}.diagnosis.disease")
        for j, gi in enumerate(dx.get("genomicInterpretations") or []):
            wg = f"{w}.diagnosis.genomicInterpretations[{j}]"
            for key in ("subjectOrBiosampleId", "interpretationStatus"):
                if not gi.get(key):
                    problems.append(f"{wg}.{key} is required")
            gene, vi = gi.get("gene"), gi.get("variantInterpretation")
            if not gene and not vi:
                problems.append(f"{wg}: gene or variantInterpretation is required")
            if gene:
                problems += [f"{wg}.gene.{k} is required" for k in ("valueId", "symbol") if not gene.get(k)]
            if vi:
                if not vi.get("acmgPathogenicityClassification"):
                    problems.append(f"{wg}.variantInterpretation.acmgPathogenicityClassification is required")
                vd = vi.get("variationDescriptor")
                if not vd:
                    problems.append(f"{wg}.variantInterpretation.variationDescriptor is required")
                    continue
                wv = f"{wg}.variantInterpretation.variationDescriptor"
                if not vd.get("id"):
                    problems.append(f"{wv}.id is required")
                gc = vd.get("geneContext")
                if gc:
                    problems += [f"{wv}.geneContext.{k} is required" for k in ("valueId", "symbol") if not gc.get(k)]
                if "allelicState" in vd:
                    problems += _term_problems(vd["allelicState"], f"{wv}.allelicState")
                rec = vd.get("vcfRecord")
                if rec:
                    problems += [f"{wv}.vcfRecord.{k} is required" for k in REQUIRED_VCF_RECORD if not rec.get(k)]
    return problems


def _prefix(curie: Optional[str]) -> str:
    return (curie or "").split(":", 1)[0] if ":" in (curie or "") else ""


def own_term_problems(pp: dict, terms: list[dict]) -> list[str]:
    """Each ontology class irdtriage wrote must name a Resource of metaData by its prefix, and carry
    the class name as label, not its id (ontologyclass.rst: id is a CURIE whose prefix is a
    Resource's namespacePrefix; label is the class name)."""
    declared = {r.get("namespacePrefix") for r in (pp.get("metaData") or {}).get("resources") or []}
    out = []
    for t in terms:
        p = _prefix(t.get("id"))
        if not p:
            out.append(f"{t.get('id')!r} is not a CURIE")
        elif p not in declared:
            out.append(f"{t.get('id')}: prefix {p} has no Resource in metaData")
        if (t.get("label") or "").strip() == (t.get("id") or "").strip():
            out.append(f"{t.get('id')}: label repeats the id instead of naming the class")
    return out


def _hp_labels(ids: list[str]) -> dict[str, str]:
    if not ids:
        return {}
    from irdtriage.result import hpo_labels

    return hpo_labels(ids)


def _feature(term: dict, excluded: bool, names: dict[str, str]) -> dict:
    label = term.get("label") or ""
    if not label or label == term["id"]:
        label = names.get(term["id"], "")
    out = {"type": {"id": term["id"], "label": label}}
    if excluded:
        out["excluded"] = True
    return out


def _genomic_interpretation(result: dict, f: dict, gene: dict, subject_id: str) -> dict:
    vd: dict = {"id": f"irdtriage-{f.get('id')}"}
    symbol = f.get("gene") or gene.get("symbol") or ""
    if gene.get("hgnc_id") and symbol:  # GeneDescriptor needs both (gene.rst); left out otherwise
        vd["geneContext"] = {"valueId": gene["hgnc_id"], "symbol": symbol}
    exprs = []
    c, p = hgvs_pair(f, gene)
    if c:
        exprs.append({"syntax": "hgvs.c", "value": c})
    if p:
        exprs.append({"syntax": "hgvs.p", "value": p})
    if exprs:
        vd["expressions"] = exprs
    if result.get("genome_build"):  # genomeAssembly is required in a VcfRecord
        rec = {"genomeAssembly": result["genome_build"], "chrom": str(f["chrom"]), "pos": int(f["pos"]),
               "ref": f["ref"], "alt": f["alt"]}
        if f.get("vcf_id"):
            rec["id"] = str(f["vcf_id"])
        if f.get("qual") is not None:
            rec["qual"] = f"{float(f['qual']):g}"  # a string in the VcfRecord message
        if f.get("filters"):
            rec["filter"] = ";".join(f["filters"])
        if f.get("zygosity") in ("homoplasmic", "heteroplasmic") and isinstance(f.get("allele_balance"), (int, float)):
            rec["info"] = f"AF={float(f['allele_balance']):.3f}"  # heteroplasmy level: share of reads (VCF 4.2 AF)
        vd["vcfRecord"] = rec
    vd["moleculeContext"] = "genomic"
    if f.get("structural"):  # copy-number / structural finding: VRS copy number, SO type, symbolic record
        from irdtriage.sv.phenopacket import descriptor

        sv = descriptor(f, result.get("genome_build"))
        g_expr = sv.pop("hgvsG", None)
        if g_expr:
            vd["expressions"] = vd.get("expressions", []) + [g_expr]
        vd.pop("vcfRecord", None)
        vd.update(sv)
    state = ALLELIC_STATE.get(f.get("zygosity"))
    if state:
        vd["allelicState"] = dict(state)
    vi = {"acmgPathogenicityClassification": ACMG.get(f.get("classification"), "NOT_PROVIDED"),
          "variationDescriptor": vd}
    return {"subjectOrBiosampleId": subject_id,
            "interpretationStatus": f.get("interpretation_status") or "UNKNOWN_STATUS",
            "variantInterpretation": vi}


def diagnosis_disease(gene: dict) -> dict:
    """The disease of a gene hypothesis: its first disease term with a known prefix (OMIM, MONDO,
    ORPHA) when the result gives one (``genes[].diseases``), else a local, clearly labelled
    gene-level condition naming the panel's conditions for the gene."""
    for d in gene.get("diseases") or []:
        if d.get("id") and d.get("label") and _prefix(d["id"]) in ("OMIM", "MONDO", "ORPHA"):
            return {"id": d["id"], "label": d["label"]}
    sym = gene.get("symbol") or "unknown gene"
    conds = "; ".join(gene.get("conditions") or [])
    label = f"{sym}-related condition (irdtriage panel grouping, not an ontology class"
    label += f"; panel conditions: {conds})" if conds else ")"
    return {"id": f"{LOCAL_CONDITION_PREFIX}:{sym}", "label": label}


def _local_resource(result: dict) -> dict:
    panel = result.get("panel") or {}
    name, version = panel.get("name") or "panel", panel.get("version") or "unknown"
    return {"id": "irdtriage_condition",
            "name": "irdtriage gene-level condition (panel grouping; not an ontology)",
            "url": f"urn:irdtriage:panel:{name}:{version}", "version": str(version),
            "namespacePrefix": LOCAL_CONDITION_PREFIX, "iriPrefix": "urn:irdtriage:condition:"}


KEPT_STATUSES = frozenset({"CAUSATIVE", "CANDIDATE", "CONTRIBUTORY"})
KEPT_CLASSES = frozenset({"Pathogenic", "Likely pathogenic"})


def included(finding: dict) -> bool:
    """Whether a finding becomes a genomicInterpretation (rule in the module docstring)."""
    return (finding.get("interpretation_status") in KEPT_STATUSES
            or finding.get("classification") in KEPT_CLASSES)


def _add_resources(md: dict, prefixes, result: dict, hp_version: Optional[str] = None) -> None:
    """Add a Resource for each namespace prefix used that metaData does not declare yet."""
    md.setdefault("resources", [])
    have = {r.get("namespacePrefix") for r in md["resources"]}
    for p in dict.fromkeys(prefixes):
        if p in have:
            continue
        if p == LOCAL_CONDITION_PREFIX:
            res = _local_resource(result)
        elif p in RESOURCES:
            res = dict(RESOURCES[p])
            if p == "HP" and hp_version:
                res["version"] = hp_version
        else:
            continue  # an unknown prefix stays undeclared and own_term_problems reports it
        md["resources"].append(res)
        have.add(p)


def _hpo_version() -> Optional[str]:
    """The release of the HPO loaded in this process (never loaded just for this), else None."""
    try:
        from irdtriage import phenotype

        onto = phenotype._ONTOLOGY
        return (str(onto.version()) or None) if onto is not None else None
    except Exception:  # the version is informative; "unknown" when hpo3 cannot say
        return None


def to_phenopacket(result: dict, input_phenopacket: Optional[dict] = None,
                   input_path: Optional[Union[str, Path]] = None) -> dict:
    """The input phenopacket (or a new one) plus an irdtriage interpretation; validated."""
    caution = " ".join(cautions(result))
    sample = result.get("sample") or {}
    subject_id = sample.get("id") or "SAMPLE"
    own_terms: list[dict] = []
    hp_version = None
    if input_phenopacket is not None:
        problems = schema_problems(input_phenopacket)
        if problems:
            raise InputError(f"input phenopacket is not a valid GA4GH Phenopacket v2: {problems[0]}", input_path)
        pp = copy.deepcopy(input_phenopacket)
        subject_id = (pp.get("subject") or {}).get("id") or subject_id
        md = pp.setdefault("metaData", {})
        md.setdefault("updates", []).append({
            "timestamp": _timestamp(result), "updatedBy": f"irdtriage {__version__}",
            "comment": f"interpretations added by irdtriage {__version__}. CAUTION: {caution}"})
    else:
        pp = {"id": f"irdtriage-{subject_id}"}
        subj = {"id": subject_id, "sex": sample.get("sex") or "UNKNOWN_SEX"}
        pp["subject"] = subj
        ph = result.get("phenotype") or {}
        present, excluded = ph.get("present") or [], ph.get("excluded") or []
        unnamed = [t["id"] for t in present + excluded if not t.get("label") or t.get("label") == t["id"]]
        names = _hp_labels(unnamed)
        feats = [_feature(t, False, names) for t in present] + [_feature(t, True, names) for t in excluded]
        if feats:
            pp["phenotypicFeatures"] = feats
            own_terms += [f["type"] for f in feats]
            hp_version = _hpo_version()
        md = pp["metaData"] = {"created": _timestamp(result), "createdBy": f"irdtriage {__version__}",
                               "resources": [], "phenopacketSchemaVersion": "2.0"}

    genes = result.get("genes") or []
    by_id = {f.get("id"): f for f in result.get("findings") or []}
    gis = []
    lead_gene = None
    for g in genes:
        for fid in g.get("findings") or []:
            f = by_id.get(fid)
            if f and included(f):
                gis.append(_genomic_interpretation(result, f, g, subject_id))
                lead_gene = lead_gene or g
    case = result.get("case") or {}
    interp = {"id": f"irdtriage-{subject_id}", "progressStatus": PROGRESS.get(case.get("status"), "UNKNOWN_PROGRESS")}
    if gis:
        # Diagnosis.disease is required (interpretation.rst): the condition of the best-ranked gene
        # hypothesis holding a reported finding; with nothing to report there is no diagnosis.
        disease = diagnosis_disease(lead_gene)
        interp["diagnosis"] = {"disease": disease, "genomicInterpretations": gis}
        own_terms.append(disease)
        for gi in gis:
            vd = gi["variantInterpretation"]["variationDescriptor"]
            if vd.get("allelicState"):
                own_terms.append(vd["allelicState"])
            if vd.get("structuralType"):
                own_terms.append(vd["structuralType"])
    interp["summary"] = " ".join(f"CAUTION: {caution} Case: {case.get('summary') or ''}".split())
    existing = [i for i in pp.get("interpretations") or [] if i.get("id") != interp["id"]]
    pp["interpretations"] = existing + [interp]
    prefixes = list(BASE_PREFIXES) + [_prefix(t.get("id")) for t in own_terms]
    _add_resources(md, prefixes, result, hp_version)

    problems = schema_problems(pp) + own_term_problems(pp, own_terms)
    if problems:
        raise InvalidPhenopacket("; ".join(problems))
    return pp


def render_phenopacket(result: dict, input_phenopacket: Optional[dict] = None,
                       input_path: Optional[Union[str, Path]] = None) -> str:
    return json.dumps(to_phenopacket(result, input_phenopacket, input_path), indent=2, ensure_ascii=False) + "\n"


def write_phenopacket(result: dict, path: Union[str, Path], input_phenopacket: Optional[dict] = None,
                      input_path: Optional[Union[str, Path]] = None) -> Path:
    write_text(path, render_phenopacket(result, input_phenopacket, input_path))
    return Path(path)
