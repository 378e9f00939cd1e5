"""The batch on dask.distributed: ``--scheduler ADDRESS`` (a scheduler the user runs) or
``--dask-local N`` (a LocalCluster of N single-threaded worker processes on this machine,
listening on 127.0.0.1 only, no dashboard).

Each worker loads the panel, rules and phenotype model once: a worker plugin calls
``worker.warm`` when the worker starts (and when a restarted worker joins), and the
module-level cache in ``irdtriage.cohort.worker`` keeps them for every case it runs. Results
stream back as cases finish (``as_completed``). A worker that dies mid-case loses nothing: the
scheduler runs its cases again on another worker (``distributed.scheduler.allowed-failures``
times), and a case that still cannot finish is recorded as failed with its one-line error.
dask is imported only on this path (the optional extra ``irdtriage[cohort]``).

Workers read the inputs and write ``OUT/<case>/`` by the paths the batch resolved, so a
scheduler whose workers run on other machines needs the manifest's files and ``--out`` on a file
system they all share. Nothing is sent anywhere but to the scheduler the user names.
"""
from __future__ import annotations

from typing import Iterator, Optional

from ..errors import InputError
from .worker import run_case, warm


def _import_distributed():
    try:
        import distributed  # noqa: F401
    except ImportError:
        raise InputError("--scheduler and --dask-local need dask.distributed: pip install 'irdtriage[cohort]'")
    return distributed


try:  # this module is imported only on the dask path
    from distributed.diagnostics.plugin import WorkerPlugin as _PluginBase
except ImportError:  # pragma: no cover - reported by _import_distributed
    _PluginBase = object


class WarmContext(_PluginBase):
    """Worker plugin: load panel, rules and phenotype model when a worker starts."""

    name = "irdtriage-context"

    def __init__(self, settings: dict):
        self.settings = {k: settings.get(k) for k in ("panel_path", "rules_path", "genes")}

    def setup(self, worker=None):
        warm(self.settings)

    def teardown(self, worker=None):
        pass


def dask_engine(scheduler: Optional[str] = None, local_workers: Optional[int] = None, retries: int = 0):
    """An engine for ``runner.run_batch``. ``retries`` re-runs a case whose task raised (a case never
    raises on bad input, so this only matters for a worker-side crash outside the case)."""
    _import_distributed()

    def engine(todo, settings) -> Iterator[dict]:
        from distributed import Client, LocalCluster, as_completed

        cluster = None
        if scheduler:
            try:
                client = Client(scheduler, timeout="20s")
            except (OSError, TimeoutError) as e:
                raise InputError(f"cannot reach the dask scheduler at {scheduler}: {' '.join(str(e).split())}")
        else:
            cluster = LocalCluster(n_workers=max(1, int(local_workers or 1)), threads_per_worker=1, processes=True,
                                   host="127.0.0.1", dashboard_address=None)
            client = Client(cluster)
        try:
            client.register_plugin(WarmContext(settings))
            futures = {}
            for spec, fp in todo:
                fut = client.submit(run_case, spec, settings, fp, key=f"irdtriage-case-{spec['case']}-{id(todo)}",
                                    pure=False, retries=retries)
                futures[fut] = spec
            for fut in as_completed(list(futures)):
                spec = futures[fut]
                try:
                    yield fut.result()
                except Exception as e:  # the task failed on every worker tried (e.g. KilledWorker)
                    yield {"case": spec["case"], "line": spec["line"], "status": "failed", "seconds": None,
                           "error": f"dask could not finish the case: {type(e).__name__}: {' '.join(str(e).split())}"}
        finally:
            client.close()
            if cluster is not None:
                cluster.close()

    return engine

