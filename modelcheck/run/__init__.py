"""How the check is run: in this process, over a local pool of processes (one model each), one
large model split over forked processes, or on a Dask cluster, all behind one small interface
(``runner.Executor``); where each model's JSON rows go (``sinks``); and the tuning of the
command's process (``process``). The check itself (``modelcheck.core``) knows none of this.

    run = run_check(paths, ruleset, ForceOptions(), jobs=2, rows=Rows.JSON_ONLY)
"""
