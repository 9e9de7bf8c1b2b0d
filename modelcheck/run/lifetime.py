"""Large objects kept until the process ends, when the command ends with ``os._exit``.

Freeing an opened model and its maps (millions of small objects) takes a noticeable part of a
second; when the process is about to end without its interpreter's teardown anyway (the
``modelcheck`` command, see ``run.process``), that work is skipped by keeping them referenced here.
Anywhere else (the tests, a library caller) ``keep`` does nothing and they are freed as usual.

    lifetime.keep(idx)      # in a function whose locals would otherwise be freed on return
"""

from __future__ import annotations

from typing import Any

#: set by ``run.process.prepare_process``: the process ends with os._exit, so nothing kept here needs freeing
ENDS_WITH_EXIT = False

_KEPT: list[Any] = []


def keep(*objects: Any) -> None:
    """Keep ``objects`` referenced until the process ends (only when it ends with os._exit)."""
    if ENDS_WITH_EXIT:
        _KEPT.extend(objects)
