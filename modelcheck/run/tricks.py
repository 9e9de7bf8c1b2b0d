"""The speed tricks of the runner, each of which can be turned off for measuring its gain:
``MODELCHECK_WITHOUT=split,memfd,...`` (a comma list; docs/performance.md). Turning a trick off
never changes a report's bytes, only the time and memory it takes.

* ``split``      one model with ``--jobs`` > 1 is not shared out among processes (``split``)
* ``memfd``      JSON rows and helpers' answers go back as bytes / through temporary files, not memory files
* ``slim``       a JSON-only report keeps the full results table (rows encoded from it afterwards)
* ``gc``         the cyclic garbage collector stays on during the command
* ``exit``       the command ends through the interpreter's teardown, not ``os._exit``
"""

from __future__ import annotations

import os

TRICKS = ("split", "memfd", "slim", "gc", "exit")


def without(trick: str) -> bool:
    """Whether ``trick`` (one of :data:`TRICKS`) is turned off by ``MODELCHECK_WITHOUT``."""
    assert trick in TRICKS, trick
    return trick in {t.strip() for t in os.environ.get("MODELCHECK_WITHOUT", "").split(",")}
