"""Several models checked at once, in at most ``jobs`` worker processes, each taking one model
at a time.

The workers are this module's own rather than a standard process pool, because a standard pool
breaks as a whole when one of its workers dies (killed by the system for want of memory, by a
user's ``kill -9``, or by a crash in a library) and does not say which model it was on. Here the
model a worker was on when it died is known: that model becomes an error naming it, a new worker
takes the models left, and the others are checked and reported as usual.

Every process started here ends with the command: the command's own SIGTERM (turned into
``modelcheck.run.process.Terminated``) and any other way out of ``run_each`` stop the processes still
running, and each process asks the system to end it when the command's process ends, however
that happens (``die_with_parent``; Linux).

    results = run_each(check_one, [(path, job, 1, None) for path in paths], jobs=2)
    # a result, or a Died naming why the worker ended without one
"""

from __future__ import annotations

import os
import signal
import sys
from collections import deque
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any, cast

if TYPE_CHECKING:
    from multiprocessing.connection import Connection


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


def _worker(conn: Any, fn: Callable[..., Any], items: Sequence[Sequence[Any]]) -> None:
    """A worker process: ``fn(*items[i])`` for each index ``i`` it is sent, the answer (or the
    exception) sent back over ``conn``, until it is sent None. The items themselves are inherited
    (or, started afresh, given once), never sent one by one."""
    import numpy as np

    die_with_parent()
    signal.signal(signal.SIGTERM, signal.SIG_DFL)   # the command's handler is for the command
    while True:
        try:
            i = conn.recv()
        except (EOFError, OSError):
            return
        if i is None:
            return
        try:
            with np.errstate(all="ignore"):   # as in the command itself (``cli.main._dispatch``)
                answer: tuple[str, Any] = ("ok", fn(*items[i]))
        except Exception as exc:   # noqa: BLE001  (sent back and raised again in the command, as a pool does)
            answer = ("raise", exc)
        try:
            conn.send(answer)
        except Exception as exc:   # noqa: BLE001  (an answer that cannot be sent: named, not lost)
            conn.send(("raise", RuntimeError(f"the answer could not be sent back: {type(exc).__name__}: {exc}")))


def _context() -> Any:
    import multiprocessing

    # forked where the system can (the work inherits this process's state: rule set, tables,
    # memory files for the JSON rows), started afresh elsewhere
    return multiprocessing.get_context("fork" if "fork" in multiprocessing.get_all_start_methods() else "spawn")


def run_each(fn: Callable[..., Any], items: Sequence[Sequence[Any]], jobs: int,
             progress: Callable[[], None] | None = None) -> list[Any]:
    """``fn(*item)`` for every item in at most ``jobs`` worker processes, each taking one item at a
    time (a worker keeps what it has imported and cached from one item to the next); the answers
    in the order of ``items``. An item whose worker ended without answering (killed, out of
    memory) gives a :class:`Died`, and a new worker takes the items left; an exception ``fn``
    raised is raised here (the workers still running are stopped first)."""
    from multiprocessing.connection import wait

    ctx = _context()
    answers: list[Any] = [None] * len(items)
    pending = deque(range(len(items)))
    busy: dict[Any, tuple[Any, int]] = {}   # this end of a worker's pipe -> (worker, item it works on)

    def give(conn: Any, proc: Any) -> None:
        i = pending.popleft()
        conn.send(i)
        busy[conn] = (proc, i)

    def start() -> None:
        here, there = ctx.Pipe(duplex=True)
        proc = ctx.Process(target=_worker, args=(there, fn, items), daemon=False)
        proc.start()
        there.close()   # the worker holds the only other end: its end is this end's EOF
        give(here, proc)

    try:
        for _ in range(min(max(1, jobs), len(items))):
            start()
        while busy:
            for ready in wait(list(busy)):
                conn = cast("Connection", ready)   # wait gives back the connections it was given
                proc, i = busy.pop(conn)
                try:
                    kind, value = conn.recv()
                except (EOFError, OSError):
                    kind, value = "died", None
                if kind == "raise":
                    busy[conn] = (proc, i)   # stopped with the others, below
                    raise value
                if kind == "died":
                    conn.close()
                    proc.join()
                    answers[i] = Died(exit_reason(proc.exitcode))
                    if pending:
                        start()
                else:
                    answers[i] = value
                    if pending:
                        give(conn, proc)
                    else:
                        conn.send(None)   # no more work: the worker ends
                        conn.close()
                        proc.join()
                if progress is not None:
                    progress()
    finally:
        for conn, (proc, _) in busy.items():   # stopped early: nothing is left running
            proc.kill()
            proc.join()
            conn.close()
    return answers
