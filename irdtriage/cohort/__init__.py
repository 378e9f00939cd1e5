"""Cohorts: many cases in one batch (local process pool or dask.distributed), comparison of a
case's result with an earlier one, and a summary across the cases (cohort.tsv, cohort.html).

Every per-case output folder is written exactly as ``irdtriage triage --out`` writes it (one
transaction, ``irdtriage.atomic.output_transaction``). Decision support only: the summary and
the comparison carry the same caution as every other output (``irdtriage.CAUTION``).
"""
