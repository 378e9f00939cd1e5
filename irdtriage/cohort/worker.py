"""One case of a batch, run inside a worker process (local pool or dask.distributed worker).

Each worker process loads the panel, the rules and the phenotype matcher once
(:func:`context`, a module-level cache keyed by the panel and rules paths) and reuses them for
every case it runs. A case writes its outputs exactly as ``irdtriage triage --out`` does: the
same pipeline and writers, inside one output transaction for ``OUT/<case>/``. A case never
raises: its outcome is a plain record (``status`` ``ok``, ``failed`` or ``unchanged``) with a
one-line error when it failed.
"""
from __future__ import annotations

import hashlib
import json
import os
import socket
import time
from dataclasses import dataclass
from typing import Any, Optional

from .. import __version__
from ..errors import InputError


@dataclass
class WorkerContext:
    panel: Any
    rules: Any
    combining: Any
    matcher: Any  # irdtriage.phenotype.PhenotypeMatcher over the precomputed phenotype model (loaded lazily)

    def versions(self) -> dict[str, Any]:
        return {"tool": __version__,
                "panel": {"name": self.panel.name, "version": self.panel.version, "sha256": self.panel.sha256},
                "rules": {"name": getattr(self.rules, "name", ""), "version": getattr(self.rules, "version", ""),
                          "sha256": getattr(self.rules, "sha256", "")},
                "combining": {"name": self.combining.name, "version": self.combining.version,
                              "sha256": self.combining.sha256}}


_CONTEXTS: dict[tuple, WorkerContext] = {}


def context(panel_path: Optional[str] = None, rules_path: Optional[str] = None,
            genes: Optional[tuple[str, ...]] = None, with_matcher: bool = True) -> WorkerContext:
    """The panel, rules, combining rules and phenotype matcher of this process, loaded once."""
    key = (panel_path, rules_path, genes)
    ctx = _CONTEXTS.get(key)
    if ctx is None:
        from ..acmg.rules import load_rules
        from ..acmg.rulesets import load_combining
        from ..panel import load_panel

        panel = load_panel(panel_path, genes=genes)
        ctx = _CONTEXTS[key] = WorkerContext(panel, load_rules(rules_path), load_combining(), None)
    if with_matcher and ctx.matcher is None:
        from ..phenotype import PhenotypeMatcher

        ctx.matcher = PhenotypeMatcher(ctx.panel.genes.keys())
    return ctx


def warm(settings: dict) -> None:
    """Load this process's context before the first case (pool initializer, dask worker plugin)."""
    context(settings.get("panel_path"), settings.get("rules_path"), _genes(settings))


def _genes(settings: dict) -> Optional[tuple[str, ...]]:
    g = settings.get("genes")
    return tuple(g) if g else None


def sha256_file(path: str) -> str:
    h = hashlib.sha256()
    with open(path, "rb") as fh:
        for block in iter(lambda: fh.read(1 << 20), b""):
            h.update(block)
    return h.hexdigest()


LABELS = {"vcf": "VCF", "ped": "PED", "phenopacket": "phenopacket", "hpo": "HPO list", "previous": "previous result"}


def fingerprint(spec: dict, settings: dict, ctx: WorkerContext) -> dict[str, Any]:
    """Content hashes of everything that decides the case's outputs: its input files and values,
    the panel, the rules, the combining rules, the tool version and the chosen formats.
    A missing input file is an InputError naming it."""
    files = {}
    roles = [("vcf", spec["vcf"]), ("ped", spec.get("ped")), ("phenopacket", spec.get("phenopacket")),
             ("previous", spec.get("previous"))]
    if spec.get("hpo") and spec["hpo"].startswith("@"):
        roles.append(("hpo", spec["hpo"][1:]))
    for role, path in roles:
        if not path:
            continue
        if not os.path.isfile(path):
            raise InputError(f"{LABELS[role]} file not found (manifest line {spec['line']}, case {spec['case']})",
                             path)
        files[role] = sha256_file(path)
    values = {k: spec.get(k) for k in ("sample", "hpo", "sex")}
    body = {"files": files, "values": values, "versions": ctx.versions(),
            "formats": list(settings.get("formats") or ())}
    digest = hashlib.sha256(json.dumps(body, sort_keys=True).encode()).hexdigest()
    return {"sha256": digest, **body}


def run_case(spec: dict, settings: dict, previous_fingerprint: Optional[str] = None) -> dict[str, Any]:
    """Run one case into ``settings['out']/<case>/``; return its record (never raises on bad input)."""
    t0 = time.monotonic()
    record: dict[str, Any] = {"case": spec["case"], "line": spec["line"], "status": "failed", "error": None,
                              "worker": f"{socket.gethostname()}:{os.getpid()}"}
    try:
        ctx = context(settings.get("panel_path"), settings.get("rules_path"), _genes(settings))
        fp = fingerprint(spec, settings, ctx)
        record["fingerprint"] = fp
        out = os.path.join(settings["out"], spec["case"])
        if (previous_fingerprint == fp["sha256"] and not settings.get("force")
                and os.path.isfile(os.path.join(out, "result.json"))):
            record["status"] = "unchanged"
        else:
            result = _triage_and_write(spec, settings, ctx, out)
            record["status"] = "ok"
            record["case_status"] = result["case"]["status"]
            if spec.get("previous"):
                from .compare import compare, load_result, short_summary

                diff = compare(load_result(spec["previous"]), result)
                record["changed"] = short_summary(diff)
                record["compare"] = {"status": diff["status"], "clinical": len(diff["clinical"]),
                                     "other": len(diff["other"])}
    except InputError as e:
        record["error"] = e.one_line()
    except (KeyboardInterrupt, SystemExit):
        raise
    except Exception as e:  # an internal error in one case must not stop the others
        record["error"] = f"internal error: {type(e).__name__}: {' '.join(str(e).split())}"
    record["seconds"] = round(time.monotonic() - t0, 3)
    return record


def _triage_and_write(spec: dict, settings: dict, ctx: WorkerContext, out: str) -> dict:
    from ..atomic import output_transaction
    from ..pipeline import TriageOptions, run
    from ..report.writers import is_output_file, render_outputs

    opts = TriageOptions(
        sample=spec.get("sample"), hpo=spec.get("hpo"), phenopacket=spec.get("phenopacket"), ped=spec.get("ped"),
        sex=spec.get("sex"), panel_path=settings.get("panel_path"), genes=_genes(settings),
        rules_path=settings.get("rules_path"), command=f"{settings.get('command', '')} [case {spec['case']}]",
        phenotype_matcher=ctx.matcher, loaded_panel=ctx.panel, loaded_rules=ctx.rules,
        extra_warnings=list(settings.get("extra_warnings") or ()))
    inputs = [p for _, p in [("vcf", spec["vcf"]), ("ped", spec.get("ped")),
                             ("phenopacket", spec.get("phenopacket"))] if p]
    with output_transaction(out, inputs=inputs, owned=is_output_file) as tx:
        result = run(spec["vcf"], opts)
        pp = None
        if spec.get("phenopacket"):
            try:
                with open(spec["phenopacket"], encoding="utf-8") as fh:
                    pp = json.load(fh)
            except json.JSONDecodeError as e:
                raise InputError(f"not JSON: {e.msg}", spec["phenopacket"], e.lineno)
        render_outputs(result, tx.staging, formats=settings.get("formats") or ("json", "html", "tsv", "vcf",
                                                                                 "phenopacket"),
                       input_phenopacket=pp, cascade_steps=result.get("cascade"),
                       input_phenopacket_path=spec.get("phenopacket"))
    return result
