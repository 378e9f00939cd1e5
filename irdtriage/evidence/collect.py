"""Gather the evidence one finding's criteria need, with explicit None for anything missing.

``collect_evidence(variant, annotation, config, sources) -> dict``; keys:

* ``population``: dict (see popfreq.PopulationSource.lookup) or None when no frequency data.
  Absence from a declared resource: when the annotation layout declares population-frequency
  columns (``EvidenceConfig.declared_fields``, or empty values kept in ``Annotation.extra``)
  and every declared frequency field is empty for this allele (in the annotation and in INFO),
  the record is ``{"found": False, "absent_declared": True, "af": 0.0, "an": None, ...}`` with
  ``declared_empty`` naming the fields; the criteria rules decide whether it counts for PM2
  (``frequency.absent_when_declared_empty``); it never supports BA1/BS1/BS2;
* ``revel`` (+ ``revel_key``), ``spliceai`` (four delta scores) and ``spliceai_max``;
* ``clinsig``: clinical significance written in INFO/annotation, or None;
* ``clinical``: {same_variant, nearby} from a clinical-assertion VCF, or None without one;
* ``scores``: {table name: value or None} from score tables;
* ``build``: the genome build given to ``EvidenceSources.open`` (used by PVS1's transcript model).

With an online provider (``EvidenceSources.online``, see online.py), a finding whose local
sources give no population record is looked up online; a clinical significance missing from
the local inputs is filled in as ``clinsig`` with ``clinsig_source`` naming the provider (it
never becomes a criterion by itself).
"""
from __future__ import annotations

import re
from dataclasses import dataclass, field
from typing import Any, Optional

from ..models import Annotation, Variant
from .clinical import ClinicalSource
from .config import EvidenceConfig
from .faf import filtering_af
from .popfreq import PopulationSource
from .scores import ScoreTable
from .values import first_int, lookup, max_number, spliceai_from_string


@dataclass
class EvidenceSources:
    population: Optional[PopulationSource] = None
    clinical: Optional[ClinicalSource] = None
    tables: list[ScoreTable] = field(default_factory=list)
    config: EvidenceConfig = field(default_factory=EvidenceConfig)
    build: Optional[str] = None  # genome build of the patient VCF, passed on as evidence["build"]
    online: Any = None  # an online.OnlineProvider (asked only for what local sources lack)
    provenance: Optional[dict] = None  # filled by assemble.open_sources for result.json

    @classmethod
    def open(cls, popfreq_vcf: Optional[str] = None, clinical_vcf: Optional[str] = None,
             score_tables=(), build: Optional[str] = None,
             config: Optional[EvidenceConfig] = None) -> "EvidenceSources":
        cfg = config or EvidenceConfig()
        src = cls(config=cfg, build=build)
        try:
            if popfreq_vcf:
                src.population = PopulationSource(str(popfreq_vcf), cfg)
            if clinical_vcf:
                src.clinical = ClinicalSource(str(clinical_vcf), cfg)
            for spec in score_tables or ():
                src.tables.append(ScoreTable(str(spec)))
        except Exception:
            src.close()
            raise
        return src

    def close(self) -> None:
        for s in [self.population, self.clinical, *self.tables, self.online]:
            if s is not None:
                s.close()

    def __enter__(self):
        return self

    def __exit__(self, *exc):
        self.close()


def _empty(v: Any) -> bool:
    return v is None or (isinstance(v, str) and v.strip() in ("", ".", "-")) or (
        isinstance(v, (tuple, list)) and all(_empty(x) for x in v))


def _absent_declared(variant: Variant, extra: dict, config: EvidenceConfig):
    """The absence record when declared frequency columns are all empty for this allele, else None."""
    declared = [k for k in config.declared_fields if config.frequency_field(k)]
    declared += [k for k, v in extra.items() if k not in declared and config.frequency_field(k) and _empty(v)]
    if not declared:
        return None
    for k in declared:
        if not _empty(extra.get(k)) or not _empty(variant.info.get(k)):
            return None
    af_like = [k for k in declared if not re.search(r"(^|_)(ac|an)($|_)", k, re.IGNORECASE)] or declared
    return {
        "source": "annotation", "found": False, "absent_declared": True, "declared_empty": declared,
        "af": 0.0, "ac": None, "an": None, "nhomalt": None, "populations": {},
        "popmax_af": None, "popmax_population": None, "faf95": None, "faf95_population": None,
        "note": f"absent: empty {'/'.join(af_like)} in an annotation that declares them",
    }


def _population_from_info(variant: Variant, annotation: Optional[Annotation], config: EvidenceConfig):
    extra = annotation.extra if annotation else {}
    af_key, af = lookup(config.af_keys, variant.info, extra)
    pm_key, popmax = lookup(config.popmax_keys, variant.info, extra)
    faf_key, faf = lookup(config.faf_keys, variant.info, extra)
    _, ac = lookup(config.ac_keys, variant.info, extra)
    _, an = lookup(config.an_keys, variant.info, extra)
    _, hom = lookup(config.hom_keys, variant.info, extra)
    if af is None and popmax is None and faf is None and ac is None:
        return _absent_declared(variant, extra, config)
    ac_i, an_i = first_int(ac), first_int(an)
    af_f = max_number(af)
    if af_f is None and ac_i is not None and an_i:
        af_f = ac_i / an_i
    return {
        "source": "info", "keys": [k for k in (af_key, pm_key, faf_key) if k], "found": True,
        "af": af_f, "ac": ac_i, "an": an_i, "nhomalt": first_int(hom), "populations": {},
        "popmax_af": max_number(popmax), "popmax_population": None,
        "faf95": max_number(faf) if faf is not None else (
            filtering_af(ac_i, an_i) if ac_i is not None and an_i else None),
        "faf95_population": None,
    }


def _spliceai(variant: Variant, annotation: Optional[Annotation], config: EvidenceConfig):
    extra = annotation.extra if annotation else {}
    gene = annotation.gene if annotation else ""
    for d in (variant.info, extra):
        for k in config.spliceai_string_keys:
            if k in d:
                ds = spliceai_from_string(d[k], variant.alt, gene)
                if ds:
                    return ds
    for prefix in config.spliceai_ds_prefixes:
        for d in (variant.info, extra):
            vals = {n: max_number(d.get(prefix + n)) for n in ("DS_AG", "DS_AL", "DS_DG", "DS_DL")}
            if all(v is not None for v in vals.values()):
                return vals
    return None


def collect_evidence(variant: Variant, annotation: Optional[Annotation], config: Optional[EvidenceConfig] = None,
                     sources: Optional[EvidenceSources] = None,
                     layouts: Optional[dict[str, list[str]]] = None) -> dict[str, Any]:
    """Evidence for one finding; ``layouts`` (declared CSQ/ANN field names) may be given here or
    through ``config.with_layouts(layouts)``."""
    config = config or (sources.config if sources else EvidenceConfig())
    if layouts:
        config = config.with_layouts(layouts)
    ev: dict[str, Any] = {"build": sources.build if sources is not None else None}
    extra = annotation.extra if annotation else {}
    if sources is not None and sources.population is not None:
        ev["population"] = sources.population.lookup(variant.chrom, variant.pos, variant.ref, variant.alt)
    else:
        ev["population"] = _population_from_info(variant, annotation, config)
    rk, rv = lookup(config.revel_keys, variant.info, extra)
    ev["revel"] = max_number(rv)
    ev["revel_key"] = rk
    ds = _spliceai(variant, annotation, config)
    ev["spliceai"] = ds
    ev["spliceai_max"] = max(ds.values()) if ds else None
    _, cs = lookup(config.clinsig_keys, variant.info, extra)
    ev["clinsig"] = (",".join(map(str, cs)) if isinstance(cs, (tuple, list)) else str(cs)) if cs is not None else None
    ev["clinical"] = (sources.clinical.lookup(variant.chrom, variant.pos, variant.ref, variant.alt)
                      if sources is not None and sources.clinical is not None else None)
    ev["scores"] = {t.name: t.lookup(variant.chrom, variant.pos, variant.ref, variant.alt)
                    for t in (sources.tables if sources else [])}
    if ev["revel"] is None and ev["scores"].get("revel") is not None:
        ev["revel"], ev["revel_key"] = ev["scores"]["revel"], "score table revel"
    online = sources.online if sources is not None else None
    if online is not None:
        if ev["population"] is None:
            ev["population"] = online.population(variant.chrom, variant.pos, variant.ref, variant.alt)
        if ev["clinsig"] is None:
            oc = online.clinical(variant.chrom, variant.pos, variant.ref, variant.alt)
            if oc is not None:
                ev["clinsig"], ev["clinsig_source"] = oc["clnsig"], f"online: {oc['provider']}"
                ev["online_clinical"] = oc
    return ev
