"""Stage timings on standard error when MODELCHECK_TIMING is set: how the benchmark's figures
per stage are measured (``MODELCHECK_TIMING=1 modelcheck check ...``).

    with stage("extract"):
        ...
"""

from __future__ import annotations

import os
import sys
import time
from collections.abc import Iterator
from contextlib import contextmanager

_ON = bool(os.environ.get("MODELCHECK_TIMING"))


def _since_start() -> float:
    """Seconds since this process started (Linux; since this module loaded elsewhere)."""
    try:
        with open("/proc/self/stat") as fh:
            start = int(fh.read().rsplit(")", 1)[1].split()[19]) / os.sysconf("SC_CLK_TCK")
        with open("/proc/uptime") as fh:
            return float(fh.read().split()[0]) - start
    except (OSError, ValueError, IndexError):
        return time.perf_counter() - _T0


_T0 = time.perf_counter()


def _rss() -> str:
    """Resident and peak resident memory of this process (Linux), e.g. '512/640 MiB'."""
    try:
        with open("/proc/self/status") as fh:
            fields = dict(line.split(":", 1) for line in fh if ":" in line)
        return f"{int(fields['VmRSS'].split()[0]) // 1024}/{int(fields['VmHWM'].split()[0]) // 1024} MiB"
    except (OSError, KeyError, ValueError):
        return "?"


@contextmanager
def stage(name: str) -> Iterator[None]:
    """Time the block; print 'pid stage seconds (at seconds since the process started) rss now/peak,
    memory faulted in, user + system CPU seconds' when enabled."""
    if not _ON:
        yield
        return
    import resource

    t = time.perf_counter()
    before = resource.getrusage(resource.RUSAGE_SELF)
    try:
        yield
    finally:
        now = time.perf_counter()
        after = resource.getrusage(resource.RUSAGE_SELF)
        faults = after.ru_minflt - before.ru_minflt
        print(f"[timing] {os.getpid()} {name:<24} {now - t:6.2f} s (at {_since_start():5.2f} s) "
              f"rss {_rss()}, {faults * resource.getpagesize() >> 20} MiB faulted in, "
              f"cpu {after.ru_utime - before.ru_utime:.2f} + {after.ru_stime - before.ru_stime:.2f} s",
              file=sys.stderr, flush=True)
