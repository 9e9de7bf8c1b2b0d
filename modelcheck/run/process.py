"""The tuning of the ``modelcheck`` command's own process, called from its entry point
(``modelcheck.cli.main.run`` and ``main``) only: a library caller or a test gets none of it.
Each piece can be turned off for measuring (``modelcheck.run.tricks``).

    prepare_process()            # before the work: the collector off, SIGTERM, lifetime
    with paused_gc(): ...        # the command's work (for a library caller: the collector off)
    end_process(code)            # flush, then os._exit
"""

from __future__ import annotations

import os
import sys
from collections.abc import Iterator
from contextlib import contextmanager
from typing import Any, NoReturn

from modelcheck.run import lifetime
from modelcheck.run.tricks import without


class Terminated(BaseException):
    """The command was asked to stop (SIGTERM): raised in the main process so that every
    ``finally`` runs (processes started for the work are stopped, memory files closed).
    A BaseException, like KeyboardInterrupt, so that no ``except Exception`` stops it."""


def raise_terminated(signum: int, frame: Any) -> None:
    """SIGTERM handler of the command (``prepare_process``)."""
    raise Terminated()


def prepare_process() -> None:
    """Set up the command's process before any work: the cyclic garbage collector off for the whole
    life of the process (``paused_gc``; from the imports on, and to the end: turned on again after
    the work, its first pass would walk every object the run left), the objects ``lifetime.keep``
    holds until ``os._exit``, and SIGTERM stopping the command as Ctrl-C does (every ``finally``
    runs, so the processes it started are stopped too: none is left running on its own)."""
    if not without("exit"):
        lifetime.ENDS_WITH_EXIT = True
        if not without("gc"):
            import gc

            gc.disable()   # nothing is left to collect: the process ends with os._exit
    import signal

    signal.signal(signal.SIGTERM, raise_terminated)


@contextmanager
def paused_gc() -> Iterator[None]:
    """The cyclic garbage collector off for the block. A run builds millions of small objects and
    few reference cycles: the collector would rescan them over and over (it doubles the time of a
    large model). Reference counting frees almost everything, and the command ends without the
    interpreter's teardown (``end_process``). The collector is left as the block found it: off for
    the rest of the command's process (``prepare_process``), on again for a library caller."""
    import gc

    if without("gc"):
        yield
        return
    was_on = gc.isenabled()
    gc.disable()
    try:
        yield
    finally:
        if was_on:
            gc.enable()


def end_process(code: int, say: Any) -> NoReturn:
    """Flush the standard streams and end the process with ``code`` at once.

    A large check leaves millions of objects behind; freeing them one by one at interpreter exit
    takes a noticeable part of a second. Every file is closed and every stream flushed by then,
    so the process ends without that teardown. ``say`` writes one line on standard error (the
    report on standard output could not be written: exit 2)."""
    try:
        sys.stdout.flush()
    except BrokenPipeError:
        pass
    except OSError as exc:   # the report on standard output could not be written (a full disk)
        say(f"modelcheck: error: standard output: cannot be written: {exc.strerror or exc}")
        code = 2
    try:
        sys.stderr.flush()
    except OSError:
        pass
    if without("exit"):
        sys.exit(code)
    os._exit(code)
