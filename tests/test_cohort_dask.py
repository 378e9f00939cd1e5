"""The batch on dask.distributed: a real LocalCluster with 2 worker processes on this machine.

By construction: the per-case result.json equals the local process pool's apart from the
documented run-time fields (run.started, run.command); one worker process killed (SIGKILL) while
it runs a case loses no case.
"""
from __future__ import annotations

import json
import os
import signal
import subprocess
import sys
import threading
import time

import pytest

distributed = pytest.importorskip("distributed", reason="dask[distributed] is not installed (extra 'cohort')")

from cohort_cases import make_cohort  # noqa: E402
from irdtriage.cohort.dask_runner import dask_engine  # noqa: E402
from irdtriage.cohort.manifest import read_manifest  # noqa: E402
from irdtriage.cohort.runner import local_engine, run_batch  # noqa: E402

CASES = 6


def settings_for(out) -> dict:
    """What `irdtriage batch` passes to the engines (the default evidence tier as in `triage`)."""
    from argparse import Namespace

    from irdtriage.cli import _tier_genes

    genes, warnings = _tier_genes(Namespace(genes=None, panel=None, tier=None))
    return {"out": str(out), "formats": ["json", "tsv"], "genes": genes, "extra_warnings": warnings}


def stable(path):
    r = json.loads(path.read_text())
    r["run"].pop("started")
    r["run"].pop("command")
    return r


@pytest.fixture(scope="module")
def cohort(tmp_path_factory):
    folder = tmp_path_factory.mktemp("dask")
    manifest = make_cohort(folder, CASES)
    pool_out = folder / "pool"
    run_batch(read_manifest(manifest), settings_for(pool_out), local_engine(2))
    return folder, manifest, pool_out


def test_dask_results_equal_the_local_pool_with_a_worker_killed(cohort):
    folder, manifest, pool_out = cohort
    out = folder / "dask"
    settings = settings_for(out)
    from distributed import Client, LocalCluster

    cluster = LocalCluster(n_workers=2, threads_per_worker=1, processes=True, host="127.0.0.1",
                           dashboard_address=None)
    client = Client(cluster)
    killed = {}

    def kill_one_busy_worker():
        # wait until a worker holds a case in processing, then SIGKILL that worker's process
        deadline = time.monotonic() + 300
        while time.monotonic() < deadline and not killed:
            busy = [(w, keys) for w, keys in client.processing().items() if keys]
            if busy:
                worker, keys = busy[0]
                pid = client.run(os.getpid, workers=[worker])[worker]
                os.kill(pid, signal.SIGKILL)
                killed.update(pid=pid, cases=[str(k).split("-")[2] for k in keys])
                return
            time.sleep(0.05)

    try:
        engine = dask_engine(scheduler=cluster.scheduler_address)
        killer = threading.Thread(target=kill_one_busy_worker, daemon=True)
        killer.start()
        batch = run_batch(read_manifest(manifest), settings, engine, engine_name="dask test")
        killer.join(timeout=60)
    finally:
        client.close()
        cluster.close()
    assert killed, "no worker was found busy to kill"
    assert [c["status"] for c in batch["cases"]] == ["ok"] * CASES, batch["cases"]
    # the cases the killed worker was running were run again by a live worker
    by_case = {c["case"]: c for c in batch["cases"]}
    assert killed["cases"] and all(not by_case[c]["worker"].endswith(f":{killed['pid']}") for c in killed["cases"])
    for i in range(1, CASES + 1):
        name = f"C{i:04d}"
        assert stable(out / name / "result.json") == stable(pool_out / name / "result.json"), name
        assert (out / name / "findings.tsv").read_text() == (pool_out / name / "findings.tsv").read_text()
        assert not [p for p in out.iterdir() if p.name.startswith(f".{name}.")]  # no staging left behind


def test_cli_dask_local(cohort, tmp_path):
    folder, manifest, pool_out = cohort
    out = tmp_path / "cli"
    p = subprocess.run([sys.executable, "-m", "irdtriage", "batch", str(manifest), "--out", str(out),
                        "--dask-local", "2", "--formats", "json,tsv"], capture_output=True, text=True, timeout=600)
    assert p.returncode == 0, p.stderr
    batch = json.loads((out / "batch.json").read_text())
    assert batch["engine"] == "dask LocalCluster (2 workers)"
    assert all(c["status"] == "ok" for c in batch["cases"])
    assert stable(out / "C0003" / "result.json") == stable(pool_out / "C0003" / "result.json")
