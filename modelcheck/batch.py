"""Several models checked at once: each in a process of its own, at most ``jobs`` at a time.

A process per model, rather than a pool of workers that each take several, so that a process
that dies (killed by the system for want of memory, by a user's ``kill -9``, or by a crash in a
library) loses exactly one model, which is known: that model becomes an error naming it, and the
others are checked and reported as usual. (A pool breaks as a whole when one of its workers dies,
and does not say which model it was working on.)

Every process started here ends with the command: the command's own SIGTERM (``cli.run`` turns
it into :class:`Terminated`) and any other way out of ``run_each`` stop the processes still
running, and each process asks the system to end it when the command's process ends, however
that happens (``die_with_parent``; Linux).

    results = run_each(check_model, [(path, ref, ...) for path in paths], jobs=2)
    # a result, or a Died naming why the process ended without one
"""

from __future__ import annotations

import os
import signal
import sys
from collections import deque
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from typing import Any


class Terminated(BaseException):
    """The command was asked to stop (SIGTERM): raised in the main process so that every
    ``finally`` runs (processes started for the work are stopped, memory files closed).
    A BaseException, like KeyboardInterrupt, so that no ``except Exception`` stops it."""


def raise_terminated(signum: int, frame: Any) -> None:
    """SIGTERM handler of the command (``cli.run``)."""
    raise Terminated()


@dataclass(frozen=True)
class Died:
    """The process working on one item ended without an answer."""

    why: str


def die_with_parent() -> None:
    """In a process just forked: ask the system to kill it when its parent ends (Linux's
    PR_SET_PDEATHSIG), so no process of a stopped command is left running. Elsewhere nothing."""
    parent = os.getppid()
    if sys.platform.startswith("linux"):
        try:
            import ctypes

            pr_set_pdeathsig = 1
            ctypes.CDLL(None).prctl(pr_set_pdeathsig, signal.SIGKILL)
        except (OSError, AttributeError):
            pass   # no prctl: the parent's own clean-up (run_each's finally) still stops it
    if os.getppid() != parent:   # the parent ended before the request was made
        os._exit(1)


def exit_reason(exitcode: int | None) -> str:
    """Why a process ended, in words: 'killed by SIGKILL', 'exit status 3'."""
    if exitcode is None:
        return "it did not end"
    if exitcode < 0:
        try:
            name = signal.Signals(-exitcode).name
        except ValueError:
            name = f"signal {-exitcode}"
        hint = ": out of memory, or stopped from outside" if -exitcode == signal.SIGKILL else ""
        return f"killed by {name}{hint}"
    return f"exit status {exitcode}"


def _child(conn: Any, fn: Callable[..., Any], args: Sequence[Any]) -> None:
    """The work of one item, in its own process: the answer (or the exception) goes back over
    ``conn``."""
    die_with_parent()
    signal.signal(signal.SIGTERM, signal.SIG_DFL)   # the command's handler is for the command
    import numpy as np

    try:
        with np.errstate(all="ignore"):   # as in the command itself (``cli._dispatch``), if started afresh
            answer: tuple[str, Any] = ("ok", fn(*args))
    except Exception as exc:   # noqa: BLE001  (sent back and raised again in the command, as a pool does)
        answer = ("raise", exc)
    try:
        conn.send(answer)
    except Exception as exc:   # noqa: BLE001  (an answer that cannot be sent: named, not lost)
        conn.send(("raise", RuntimeError(f"the answer could not be sent back: {type(exc).__name__}: {exc}")))
    conn.close()


def _context() -> Any:
    import multiprocessing

    # forked where the system can (the work inherits this process's state: rule set, tables,
    # memory files for the JSON rows), started afresh elsewhere
    return multiprocessing.get_context("fork" if "fork" in multiprocessing.get_all_start_methods() else "spawn")


def run_each(fn: Callable[..., Any], items: Sequence[Sequence[Any]], jobs: int,
             progress: Callable[[], None] | None = None) -> list[Any]:
    """``fn(*item)`` for every item, each in a process of its own, at most ``jobs`` at once;
    the answers in the order of ``items``. An item whose process ended without answering gives
    a :class:`Died`; an exception ``fn`` raised is raised here (the processes still running are
    stopped first)."""
    from multiprocessing.connection import wait

    ctx = _context()
    answers: list[Any] = [None] * len(items)
    pending = deque(enumerate(items))
    live: dict[Any, tuple[int, Any]] = {}
    try:
        while pending or live:
            while pending and len(live) < max(1, jobs):
                i, args = pending.popleft()
                receive, send = ctx.Pipe(duplex=False)
                proc = ctx.Process(target=_child, args=(send, fn, tuple(args)), daemon=False)
                proc.start()
                send.close()   # the child holds the only writing end: its end is this end's EOF
                live[receive] = (i, proc)
            for conn in wait(list(live)):
                i, proc = live.pop(conn)
                try:
                    kind, value = conn.recv()
                except (EOFError, OSError):
                    kind, value = "died", None
                conn.close()
                proc.join()
                if kind == "raise":
                    raise value
                answers[i] = value if kind == "ok" else Died(exit_reason(proc.exitcode))
                if progress is not None:
                    progress()
    finally:
        for conn, (_, proc) in live.items():   # stopped early: nothing is left running
            proc.kill()
            proc.join()
            conn.close()
    return answers
