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

from .common import cautions

ACMG = {
    "Pathogenic": "PATHOGENIC",
    "Likely pathogenic": "LIKELY_PATHOGENIC",
    "Uncertain significance": "UNCERTAIN_SIGNIFICANCE",
    "Likely benign": "LIKELY_BENIGN",
    "Benign": "BENIGN",
}
# Genotype Ontology allelic-state terms. 0000135/0000136: as used throughout the GA4GH
# phenopacket-store case records (../shared/refdata/phenopackets); 0000134 hemizygous: from memory.
ALLELIC_STATE = {
    "heterozygous": {"id": "GENO:0000135", "label": "heterozygous"},
    "homozygous": {"id": "GENO:0000136", "label": "homozygous"},
    "hemizygous": {"id": "GENO:0000134", "label": "hemizygous"},
}
RESOURCES = {
    "hp": {"id": "hp", "name": "human phenotype ontology", "url": "http://purl.obolibrary.org/obo/hp.owl",
           "version": "unknown", "namespacePrefix": "HP", "iriPrefix": "http://purl.obolibrary.org/obo/HP_"},
    "geno": {"id": "geno", "name": "Genotype Ontology", "url": "http://purl.obolibrary.org/obo/geno.owl",
             "version": "unknown", "namespacePrefix": "GENO", "iriPrefix": "http://purl.obolibrary.org/obo/GENO_"},
    "so": {"id": "so", "name": "Sequence types and features ontology", "url": "http://purl.obolibrary.org/obo/so.owl",
           "version": "unknown", "namespacePrefix": "SO", "iriPrefix": "http://purl.obolibrary.org/obo/SO_"},
    "hgnc": {"id": "hgnc", "name": "HUGO Gene Nomenclature Committee", "url": "https://www.genenames.org",
             "version": "unknown", "namespacePrefix": "HGNC",
             "iriPrefix": "https://www.genenames.org/data/gene-symbol-report/#!/hgnc_id/"},
}
PROGRESS = {"SOLVED": "SOLVED", "UNSOLVED": "UNSOLVED", "IN_PROGRESS": "IN_PROGRESS"}


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


def schema_problems(obj: dict) -> list[str]:
    """Problems of ``obj`` as a Phenopacket v2: protobuf schema (phenopackets package) + required fields."""
    import phenopackets

    try:
        json_format.ParseDict(obj, phenopackets.Phenopacket(), ignore_unknown_fields=False)
    except json_format.ParseError as e:
        return [f"schema: {e}"]
    problems = []
    # Required fields as documented for Phenopacket, MetaData, OntologyClass (phenopacket-schema v2 docs).
    if not obj.get("id"):
        problems.append("id is required")
    md = obj.get("metaData") or {}
    for key in ("created", "createdBy", "phenopacketSchemaVersion"):
        if not md.get(key):
            problems.append(f"metaData.{key} is required")
    if not md.get("resources"):
        problems.append("metaData.resources must list the ontologies used")
    for i, pf in enumerate(obj.get("phenotypicFeatures") or []):
        if not (pf.get("type") or {}).get("id"):
            problems.append(f"phenotypicFeatures[{i}].type.id is required")
    for i, it in enumerate(obj.get("interpretations") or []):
        if not it.get("id"):
            problems.append(f"interpretations[{i}].id is required")
        if not it.get("progressStatus"):
            problems.append(f"interpretations[{i}].progressStatus is required")
    return problems


def _feature(term: dict, excluded: bool) -> dict:
    t = {"id": term["id"], "label": term.get("label") or term["id"]}
    out = {"type": t}
    if excluded:
        out["excluded"] = True
    return out


def _hgvs(prefix: Optional[str], value: Optional[str]) -> Optional[str]:
    if not value:
        return None
    if ":" in value or not prefix:
        return value
    return f"{prefix}:{value}"


def _genomic_interpretation(result: dict, f: dict, gene: dict, subject_id: str) -> dict:
    vd: dict = {"id": f"irdtriage-{f.get('id')}"}
    gc = {"symbol": f.get("gene") or gene.get("symbol") or ""}
    if gene.get("hgnc_id"):
        gc = {"valueId": gene["hgnc_id"], **gc}
    vd["geneContext"] = gc
    exprs = []
    c = _hgvs(f.get("transcript"), f.get("hgvs_c"))
    if c:
        exprs.append({"syntax": "hgvs.c", "value": c})
    p = _hgvs(f.get("protein_accession") or gene.get("refseq_protein"), f.get("hgvs_p"))
    if p:
        exprs.append({"syntax": "hgvs.p", "value": p})
    if exprs:
        vd["expressions"] = exprs
    rec = {"genomeAssembly": result.get("genome_build") or "", "chrom": str(f["chrom"]), "pos": int(f["pos"]),
           "ref": f["ref"], "alt": f["alt"]}
    if f.get("vcf_id"):
        rec["id"] = str(f["vcf_id"])
    if f.get("qual") is not None:
        rec["qual"] = f"{float(f['qual']):g}"  # a string in the VcfRecord message
    if f.get("filters"):
        rec["filter"] = ";".join(f["filters"])
    vd["vcfRecord"] = rec
    vd["moleculeContext"] = "genomic"
    state = ALLELIC_STATE.get(f.get("zygosity"))
    if state:
        vd["allelicState"] = dict(state)
    vi = {"acmgPathogenicityClassification": ACMG.get(f.get("classification"), "NOT_PROVIDED"),
          "variationDescriptor": vd}
    return {"subjectOrBiosampleId": subject_id,
            "interpretationStatus": f.get("interpretation_status") or "UNKNOWN_STATUS",
            "variantInterpretation": vi}


KEPT_STATUSES = frozenset({"CAUSATIVE", "CANDIDATE", "CONTRIBUTORY"})
KEPT_CLASSES = frozenset({"Pathogenic", "Likely pathogenic"})


def included(finding: dict) -> bool:
    """Whether a finding becomes a genomicInterpretation (rule in the module docstring)."""
    return (finding.get("interpretation_status") in KEPT_STATUSES
            or finding.get("classification") in KEPT_CLASSES)


def _ensure_resources(md: dict) -> None:
    have = {r.get("id") for r in md.get("resources") or []}
    md.setdefault("resources", [])
    for rid, res in RESOURCES.items():
        if rid not in have:
            md["resources"].append(dict(res))


def to_phenopacket(result: dict, input_phenopacket: Optional[dict] = None,
                   input_path: Optional[Union[str, Path]] = None) -> dict:
    """The input phenopacket (or a new one) plus an irdtriage interpretation; validated."""
    caution = " ".join(cautions(result))
    sample = result.get("sample") or {}
    subject_id = sample.get("id") or "SAMPLE"
    if input_phenopacket is not None:
        problems = schema_problems(input_phenopacket)
        if problems:
            raise InputError(f"input phenopacket is not a valid GA4GH Phenopacket v2: {problems[0]}", input_path)
        pp = copy.deepcopy(input_phenopacket)
        subject_id = (pp.get("subject") or {}).get("id") or subject_id
        md = pp.setdefault("metaData", {})
        _ensure_resources(md)
        md.setdefault("updates", []).append({
            "timestamp": _timestamp(result), "updatedBy": f"irdtriage {__version__}",
            "comment": f"interpretations added by irdtriage {__version__}. CAUTION: {caution}"})
    else:
        pp = {"id": f"irdtriage-{subject_id}"}
        subj = {"id": subject_id, "sex": sample.get("sex") or "UNKNOWN_SEX"}
        pp["subject"] = subj
        ph = result.get("phenotype") or {}
        feats = [_feature(t, False) for t in ph.get("present") or []] + [_feature(t, True) for t in ph.get("excluded") or []]
        if feats:
            pp["phenotypicFeatures"] = feats
        pp["metaData"] = {"created": _timestamp(result), "createdBy": f"irdtriage {__version__}",
                          "resources": [dict(r) for r in RESOURCES.values()],
                          "phenopacketSchemaVersion": "2.0"}

    genes = result.get("genes") or []
    by_id = {f.get("id"): f for f in result.get("findings") or []}
    gis = []
    for g in genes:
        for fid in g.get("findings") or []:
            f = by_id.get(fid)
            if f and included(f):
                gis.append(_genomic_interpretation(result, f, g, subject_id))
    case = result.get("case") or {}
    interp = {"id": f"irdtriage-{subject_id}", "progressStatus": PROGRESS.get(case.get("status"), "UNKNOWN_PROGRESS")}
    diagnosis: dict = {}
    diseases = (genes[0].get("diseases") if genes else None) or []
    if diseases and diseases[0].get("id"):
        diagnosis["disease"] = {"id": diseases[0]["id"], "label": diseases[0].get("label") or diseases[0]["id"]}
    if gis:
        diagnosis["genomicInterpretations"] = gis
    if diagnosis:
        interp["diagnosis"] = diagnosis
    interp["summary"] = " ".join(f"CAUTION: {caution} Case: {case.get('summary') or ''}".split())
    existing = [i for i in pp.get("interpretations") or [] if i.get("id") != interp["id"]]
    pp["interpretations"] = existing + [interp]

    problems = schema_problems(pp)
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
