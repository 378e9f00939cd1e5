"""A batch of cases: which need running, running them on a local process pool, and batch.json.

``run_batch`` is the same whatever runs the cases: it plans (a case whose input files, values,
panel, rules and tool version hash to what ``batch.json`` recorded for its last successful run,
and whose result.json is still there, is not run again unless ``force``), hands the cases to an
engine (:func:`local_engine` here, ``dask_runner.dask_engine`` on dask.distributed) that yields
one record per case as cases finish, and keeps ``OUT/batch.json`` (written atomically, at most
every two seconds and at the end) with every case's record: ``ok``, ``unchanged`` or ``failed``
with its one-line error. The cohort summary is written from it (``summary.write_summary``).
"""
from __future__ import annotations

import datetime as _dt
import json

import time
from pathlib import Path
from typing import Callable, Iterable, Iterator, Optional

from .. import CAUTION, __version__
from ..atomic import write_text
from ..errors import InputError
from .manifest import CaseSpec
from .worker import run_case, warm

DONE = ("ok", "unchanged")
Engine = Callable[[list[tuple[dict, Optional[str]]], dict], Iterator[dict]]


def now() -> str:
    return _dt.datetime.now(_dt.timezone.utc).replace(microsecond=0).isoformat().replace("+00:00", "Z")


def read_batch_json(out: Path) -> dict:
    """The previous batch.json of ``out`` (empty when there is none or it cannot be read)."""
    try:
        with open(out / "batch.json", encoding="utf-8") as fh:
            data = json.load(fh)
        return data if isinstance(data, dict) else {}
    except (OSError, ValueError):
        return {}


def plan(specs: Iterable[CaseSpec], out: Path, force: bool) -> list[tuple[dict, Optional[str]]]:
    """(case as a dict, fingerprint of its last successful run or None) for every case."""
    before = {r.get("case"): r for r in read_batch_json(out).get("cases") or [] if isinstance(r, dict)}
    todo = []
    for spec in specs:
        prev = before.get(spec.case)
        fp = None
        if not force and prev and prev.get("status") in DONE:
            fp = (prev.get("fingerprint") or {}).get("sha256")
        todo.append((spec.as_dict(), fp))
    return todo


def local_engine(jobs: int) -> Engine:
    """Run cases on ``jobs`` local worker processes (each loads panel, rules and phenotype model
    once); ``jobs == 1`` runs them in this process. A worker process that dies (killed, out of
    memory) breaks the pool: its unfinished cases are run once more in a fresh pool, then recorded
    as failed."""

    def engine(todo: list[tuple[dict, Optional[str]]], settings: dict) -> Iterator[dict]:
        if jobs <= 1 or len(todo) <= 1:
            for spec, fp in todo:
                yield run_case(spec, settings, fp)
            return
        import multiprocessing
        from concurrent.futures import ProcessPoolExecutor, as_completed
        from concurrent.futures.process import BrokenProcessPool

        pending = list(todo)
        for attempt in (1, 2):
            broken: list[tuple[dict, Optional[str]]] = []
            ctx = multiprocessing.get_context("spawn")  # no fork of a process with threads (progress bar)
            pool = ProcessPoolExecutor(max_workers=min(jobs, len(pending)), mp_context=ctx,
                                       initializer=warm, initargs=(settings,))
            try:
                futures = {pool.submit(run_case, spec, settings, fp): (spec, fp) for spec, fp in pending}
                seen = set()
                try:
                    for fut in as_completed(futures):
                        seen.add(fut)
                        try:
                            yield fut.result()
                        except BrokenProcessPool:
                            broken.append(futures[fut])
                except KeyboardInterrupt:
                    # let the running cases finish (their folders are complete) and record them
                    pool.shutdown(wait=True, cancel_futures=True)
                    for fut in futures:
                        if fut not in seen and fut.done() and not fut.cancelled() and fut.exception() is None:
                            yield fut.result()
                    raise
            finally:
                pool.shutdown(wait=True, cancel_futures=True)
            if not broken:
                return
            pending = broken
            if attempt == 2:
                for spec, _ in broken:
                    yield {"case": spec["case"], "line": spec["line"], "status": "failed", "seconds": None,
                           "error": "the worker process running this case ended unexpectedly (killed or out of "
                                    "memory), twice"}

    return engine


def run_batch(specs: list[CaseSpec], settings: dict, engine: Engine,
              on_record: Callable[[dict], None] = lambda r: None, manifest: str = "",
              engine_name: str = "local") -> dict:
    """Run the batch into ``settings['out']``; returns the batch dict also written to batch.json."""
    out = Path(settings["out"])
    if out.exists() and not out.is_dir():
        raise InputError("--out names an existing file, not a folder; choose a folder name", str(out))
    out.mkdir(parents=True, exist_ok=True)
    from ..atomic import _Lock

    lock = _Lock(out.parent / f".{out.name}.batch.lock", out)
    lock.acquire()
    try:
        before = {r.get("case"): r for r in read_batch_json(out).get("cases") or [] if isinstance(r, dict)}
        todo = plan(specs, out, bool(settings.get("force")))
        batch = {"tool": {"name": "irdtriage", "version": __version__}, "manifest": manifest,
                 "command": settings.get("command", ""), "engine": engine_name, "started": now(), "finished": None,
                 "cases": [], "cautions": [CAUTION]}
        records: dict[str, dict] = {}
        order = [s.case for s in specs]
        last_write = 0.0

        def save(final: bool = False) -> None:
            batch["cases"] = [records.get(c) or {"case": c, "status": "not run"} for c in order]
            batch["counts"] = counts(batch["cases"])
            if final:
                batch["finished"] = now()
            write_text(out / "batch.json", json.dumps(batch, indent=2, ensure_ascii=False) + "\n")

        try:
            for rec in engine(todo, settings):
                if rec["status"] == "unchanged":
                    prev = before.get(rec["case"]) or {}
                    for key in ("case_status", "changed", "compare", "finished"):
                        if key in prev:
                            rec.setdefault(key, prev[key])
                else:
                    rec["finished"] = now()
                records[rec["case"]] = rec
                on_record(rec)
                if time.monotonic() - last_write > 2.0:
                    save()
                    last_write = time.monotonic()
        finally:
            save(final=True)
        return batch
    finally:
        lock.release()


def counts(cases: list[dict]) -> dict[str, int]:
    c = {"cases": len(cases), "ok": 0, "unchanged": 0, "failed": 0, "not run": 0}
    for r in cases:
        c[r.get("status", "not run")] = c.get(r.get("status", "not run"), 0) + 1
    return c
