"""Check models on an existing Dask cluster (``--scheduler ADDRESS``) instead of local processes.

Each model is one task running ``modelcheck.core.check.check_model`` on a worker; results come
back in the order of the input paths. The workers need modelcheck installed and must see the
model files, load tables and rule-set file under the same paths as this machine (a shared or
synchronised file system). Start a cluster with ``dask scheduler`` and ``dask worker ADDRESS``.

Example::

    checked = run_on_cluster("tcp://10.0.0.5:8786", paths, "steel-asd-us", ForceOptions(), False)
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from typing import Any

from modelcheck.common.errors import UsageError


def run_on_cluster(address: str, paths: Sequence[str], ruleset_ref: str, forces: Any, validate: bool,
                   *, timeout: float = 10.0, progress: Callable[[], None] | None = None,
                   task: Callable[..., Any] | None = None, units: str = "model") -> list[Any]:
    """Run ``check_model(path, ruleset_ref, forces, validate, units=units)`` for every path on the cluster at
    ``address``; return the ModelResult list in input order.

    A scheduler that cannot be reached within ``timeout`` seconds is a UsageError naming the
    address. ``progress`` is called once per model gathered (in input order); ``task`` replaces check_model (tests).
    """
    try:
        from distributed import Client
    except ImportError:
        raise UsageError("--scheduler needs dask.distributed: pip install 'dask[distributed]'") from None
    if task is None:
        from modelcheck.core.check import check_model

        task = check_model
    try:
        client = Client(address, timeout=timeout, set_as_default=False)
    except (OSError, TimeoutError, ValueError) as exc:
        detail = str(exc).strip().splitlines()[0] if str(exc).strip() else type(exc).__name__
        raise UsageError(f"cannot reach the Dask scheduler at {address}: {detail}") from None
    try:
        futures = [client.submit(task, p, ruleset_ref, forces, validate, units=units, pure=False) for p in paths]
        out = []
        for fut in futures:  # in input order; all run meanwhile on the cluster
            out.append(fut.result())
            if progress is not None:
                progress()
        return out
    finally:
        client.close()
