"""What every command of the command line shares: exit codes, the one-line message on standard
error, the force options from the arguments, the guards on inputs and outputs."""

from __future__ import annotations

import argparse
import os
import sys
from pathlib import Path
from typing import Any

from modelcheck.common.errors import UsageError

EXIT_OK, EXIT_FAIL, EXIT_INPUT = 0, 1, 2


def say(line: str) -> None:
    """One line on standard error, whatever it quotes: control characters (an escape sequence in
    a model's text or a file name) and undecodable bytes of a file name (kept by Python as lone
    surrogates) are written as visible escapes (``report.text.shown_line``)."""
    from modelcheck.report.text import shown_line

    print(shown_line(line), file=sys.stderr)


def force_options(args: argparse.Namespace, ruleset: Any = None) -> Any:
    """The force routes of a command."""
    from modelcheck.core.model import ForceOptions
    from modelcheck.loads.tables import read_load_table

    tables = tuple(read_load_table(p) for p in expand_load_paths(args.loads))
    from modelcheck.loads.properties import parse_property_name

    prop_text = (args.force_property if args.force_property is not None
                 else getattr(ruleset, "force_property", None) or "MC_MemberForces.AxialForce")
    try:
        pset, prop = parse_property_name(prop_text)
    except ValueError:
        raise UsageError(f"--force-property {prop_text!r}: write it as PSET.PROPERTY") from None
    return ForceOptions(tables=tables, property=(pset, prop), analysis=not args.no_analysis_results,
                        analysis_frame=getattr(args, "analysis_frame", None))


def report_console(stderr: bool = False, file: Any = None) -> Any:
    """A rich console as wide as the terminal, else COLUMNS, else 100 columns."""
    from modelcheck.report.console import make_console

    return make_console(stderr=stderr, file=file)


def expand_load_paths(items: list[str]) -> list[str]:
    """Load-table arguments with glob patterns expanded (sorted); a pattern matching nothing is an error."""
    import glob

    out: list[str] = []
    for item in items:
        if any(ch in item for ch in "*?["):
            hits = sorted(glob.glob(item))
            if not hits:
                raise UsageError(f"--loads pattern {item!r} matches no file")
            out += hits
        else:
            out.append(item)
    return out


def names_standard_output(output: str | None) -> bool:
    """Whether ``output`` is another name of this process's standard output (``/dev/stdout``,
    ``/dev/fd/1``, the file or pipe the shell opened for it): the command then writes to the stream
    itself, as without ``--output``, and its other lines go to standard error."""
    if not output:
        return False
    try:
        return os.path.samestat(os.stat(output), os.fstat(sys.stdout.fileno()))
    except (OSError, ValueError, AttributeError):   # no such file; no descriptor (a captured stream)
        return False


def guard_output(output: str, inputs: list[str], option: str = "--output", new_folder: bool = False) -> None:
    """Refuse to write over an input file (by any name: a link to it counts), into a folder that
    does not exist (``new_folder``: the command makes the file's own folder, whose parent must
    exist), or onto a folder."""
    from modelcheck.common.files import utf8_name

    if not utf8_name(output):
        raise UsageError(f"{option} {output}: the file name is not UTF-8 text; choose another name")
    out = Path(output)
    if out.is_dir():
        raise UsageError(f"{option} {output} is a folder; name a file to write")
    parent = out.resolve().parent
    if new_folder and not parent.exists():
        parent = parent.parent
    if not parent.is_dir():
        raise UsageError(f"{option} {output}: the folder {parent} does not exist")
    for p in inputs:
        if not Path(p).is_file():
            continue
        if Path(p).resolve() == out.resolve() or (out.exists() and os.path.samefile(p, out)):
            raise UsageError(f"{option} {output} is one of the input files ({p}); refusing to overwrite it")


def read_inputs(args: argparse.Namespace, paths: list[str], load_paths: list[str]) -> list[str]:
    """Every file a command reads: models, load tables, rule set, baseline, configuration."""
    from modelcheck.cli.config import config_path

    extra = [getattr(args, "rules", None), getattr(args, "baseline", None)]
    if not getattr(args, "no_config", True):
        cfg = config_path(Path.cwd())
        extra.append(str(cfg) if cfg is not None else None)
    return paths + load_paths + [str(x) for x in extra if x]


