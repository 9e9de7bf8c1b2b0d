"""The output formats of ``modelcheck check``: each registered once, in :data:`FORMATS`.

A format is an :class:`OutputFormat`: its name (what ``--format`` takes), the extension of its
default file name (``modelcheck-report.<extension>`` when several formats go into a folder;
None for the terminal report) and ``write(run, target, options)``, which writes the check run
``run`` to ``target`` (a file path, or a text stream) with the :class:`WriteOptions` of the
command. The command's ``--format`` choices, its help, the default file names and the writing
all come from :data:`FORMATS`; nothing else lists the formats.

Each writer module has its ``write``; it is imported only when its format is written (the
console report's library, rich, is not imported for a JSON report).

Example::

    fmt = format_named("csv")
    write_report(fmt, run, "out/report.csv", WriteOptions(now=now))
"""

from __future__ import annotations

import datetime as _dt
import sys
from collections.abc import Callable
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

if TYPE_CHECKING:
    from modelcheck.core.model import CheckRun

#: ``write(run, target, options)``: ``target`` a path, or a text stream
Writer = Callable[["CheckRun", Any, "WriteOptions"], None]


@dataclass(frozen=True)
class WriteOptions:
    """What the writers need beyond the run, from the command line."""

    now: _dt.datetime                          # the report's time ("generated")
    comparison: dict[str, Any] | None = None   # the comparison with --baseline
    strict: bool = False                       # --strict: an unchecked member fails (JUnit)
    only_new: bool = False                     # --fail-on new: only new problems fail (JUnit)
    details: bool | None = None                # --details (console; None: by the terminal's width)


@dataclass(frozen=True)
class OutputFormat:
    """One output format.

    ``needs_results``: it reads the results table (``run.results``); a run whose formats need
    none is checked without building it: its results are then the statuses alone, and the rows
    come encoded (``run.json_rows``). ``json_rows``: it reads those encoded rows, which are then
    made as the models are checked. ``streams``: ``write`` takes a text stream as ``target``
    too (else standard output gets a copy of the file written to a temporary folder).
    ``binary``: never written to standard output (``--output`` is needed)."""

    name: str
    extension: str | None
    write: Writer
    needs_results: bool = True
    json_rows: bool = False
    streams: bool = False
    binary: bool = False


def _writer(module: str) -> Writer:
    """The ``write`` of ``module``, imported when first called."""
    def write(run: CheckRun, target: Any, options: WriteOptions) -> None:
        from importlib import import_module

        import_module(module).write(run, target, options)

    return write


#: every output format, one line each; ``--format`` lists them in this order
FORMATS: tuple[OutputFormat, ...] = (
    OutputFormat("console", None, _writer("modelcheck.report.console"), streams=True),
    OutputFormat("json", "json", _writer("modelcheck.report.check_json"), needs_results=False, json_rows=True,
                 streams=True),
    OutputFormat("csv", "csv", _writer("modelcheck.report.csv_report")),
    OutputFormat("junit", "xml", _writer("modelcheck.report.junit")),
    OutputFormat("bcf", "bcfzip", _writer("modelcheck.report.bcf"), binary=True),
    OutputFormat("html", "html", _writer("modelcheck.report.html")),
)


def format_names() -> list[str]:
    """The names ``--format`` takes, in the order of :data:`FORMATS`."""
    return [f.name for f in FORMATS]


def format_named(name: str) -> OutputFormat | None:
    """The format called ``name``; None when there is none."""
    return next((f for f in FORMATS if f.name == name), None)


def default_file_name(fmt: OutputFormat) -> str:
    """The file a format is written to in the ``--output`` folder when several are asked for."""
    return f"modelcheck-report.{fmt.extension}"


def write_report(fmt: OutputFormat, run: CheckRun, target: str | None, options: WriteOptions) -> None:
    """Write ``run`` in ``fmt`` to the file ``target``, or to standard output when None."""
    if target is not None:
        fmt.write(run, target, options)
        return
    if fmt.streams:
        fmt.write(run, sys.stdout, options)
        return
    import tempfile
    from pathlib import Path

    with tempfile.TemporaryDirectory() as tmp:   # a text format to standard output: write, then copy
        path = str(Path(tmp) / f"report.{fmt.extension}")
        fmt.write(run, path, options)
        sys.stdout.write(Path(path).read_text(encoding="utf-8"))
