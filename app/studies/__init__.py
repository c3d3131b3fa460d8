"""Studies: durable batches and sweeps of budgets or contact plans, executed on Dask.

store.py (SQL, the one data-access module), expand.py (the study request, sweeps), items.py (one item
through the service's compute path), executor.py (the Dask dispatcher), runtime.py (per-app store and
dispatcher), table.py (CSV trade tables).
"""
