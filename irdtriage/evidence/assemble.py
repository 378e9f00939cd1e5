"""Assemble a run's evidence sources: explicit files (--population-vcf, --clinical-vcf,
--scores), an evidence bundle (--resources), an online provider (--online / --offline-replay),
and record where every piece came from (``result["evidence_sources"]``).

Rules: a bundle and an explicit file of the same kind are not combined (one population and
one clinical source per run; a score table name may appear once); the bundle's genome build
must be the patient VCF's.  Online sources answer only what the local ones lack.
"""
from __future__ import annotations

from typing import Any, Optional

from ..errors import InputError
from .collect import EvidenceSources
from .config import EvidenceConfig


def _file_entry(kind: str, path: str, name: Optional[str] = None) -> dict[str, Any]:
    from .bundle import sha256_file

    entry = {"kind": kind, "via": "file", "path": str(path), "sha256": None}
    if name:
        entry["name"] = name
    try:
        entry["sha256"] = sha256_file(path)
    except OSError:
        pass
    return entry


def open_sources(*, build: Optional[str], popfreq_vcf: Optional[str] = None, clinical_vcf: Optional[str] = None,
                 score_tables=(), resources: Optional[str] = None, online: bool = False,
                 online_cache: Optional[str] = None, offline_replay: bool = False,
                 online_url: Optional[str] = None, online_expire_days: Optional[float] = None,
                 config: Optional[EvidenceConfig] = None) -> EvidenceSources:
    """EvidenceSources for one run, with ``provenance`` and ``notes`` filled in."""
    from .scores import table_name

    bundle = None
    tables = list(score_tables or ())
    if resources:
        from .bundle import Bundle

        bundle = Bundle.open(str(resources))
        if build and bundle.build != build:
            raise InputError(f"the evidence bundle is for {bundle.build} but the VCF is {build}", resources)
        if popfreq_vcf and bundle.population_vcf:
            raise InputError("--population-vcf and --resources both give population frequencies; use one",
                             popfreq_vcf)
        if clinical_vcf and bundle.clinical_vcf:
            raise InputError("--clinical-vcf and --resources both give clinical assertions; use one", clinical_vcf)
        names = {table_name(t)[0] for t in tables}
        for spec in bundle.score_tables:
            name = table_name(spec)[0]
            if name in names:
                raise InputError(f"score table {name!r} is given with --scores and in the evidence bundle; use one",
                                 resources)
    src = EvidenceSources.open(
        popfreq_vcf=popfreq_vcf or (bundle.population_vcf if bundle else None),
        clinical_vcf=clinical_vcf or (bundle.clinical_vcf if bundle else None),
        score_tables=tables + (bundle.score_tables if bundle else []), build=build, config=config)
    prov: dict[str, Any] = {"bundle": None, "files": [], "online": None}
    try:
        if bundle is not None:
            from .bundle import CoveredSource

            if not popfreq_vcf and src.population is not None:
                src.population = CoveredSource(src.population, bundle.regions)
            if not clinical_vcf and src.clinical is not None:
                src.clinical = CoveredSource(src.clinical, bundle.regions)
            own = {table_name(t)[0] for t in bundle.score_tables}
            src.tables = [CoveredSource(t, bundle.regions) if t.name in own else t for t in src.tables]
            prov["bundle"] = bundle.provenance()
        if popfreq_vcf:
            prov["files"].append(_file_entry("population", popfreq_vcf))
        if clinical_vcf:
            prov["files"].append(_file_entry("clinical", clinical_vcf))
        for spec in tables:
            name, path = table_name(spec)
            prov["files"].append(_file_entry("scores", path, name))
        if online or offline_replay:
            from .online import DEFAULT_EXPIRE_DAYS, open_provider

            src.online = open_provider(build, url=online_url, cache_path=online_cache, offline_replay=offline_replay,
                                       expire_days=online_expire_days or DEFAULT_EXPIRE_DAYS)
    except BaseException:
        src.close()
        raise
    src.provenance = prov
    return src


def finish(src: EvidenceSources) -> tuple[dict[str, Any], list[str]]:
    """After collection: the provenance for result.json and the warnings for the run."""
    notes: list[str] = []
    outside = sum(getattr(s, "outside", 0) for s in [src.population, src.clinical, *src.tables] if s is not None)
    if outside:
        notes.append(f"{outside} evidence look-up(s) fell outside the evidence bundle's regions (gene spans of the "
                     "panel it was built for, plus padding): left not evaluable, not taken as absent")
    prov = dict(getattr(src, "provenance", None) or {"bundle": None, "files": [], "online": None})
    if src.online is not None:
        from .online import disclosure

        notes.append(disclosure(src.online))
        notes.extend(src.online.warnings)
        prov["online"] = src.online.provenance()
    return prov, notes
