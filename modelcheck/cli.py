"""Command line: arguments -> pipeline -> reporter, the guards on inputs and outputs, and the
process set-up of the ``modelcheck`` command (``run``).

Exit codes: 0 no failure; 1 at least one failing member (with --strict also any unchecked), or
a model whose members were found but none could be checked; 2 a usage error or an input that
could not be read (the other models are still reported).
"""

from __future__ import annotations

import argparse
import os
import sys
from pathlib import Path
from typing import Any

from modelcheck import __version__
from modelcheck.common.errors import ModelcheckError, UsageError

EXIT_OK, EXIT_FAIL, EXIT_INPUT = 0, 1, 2


class _Parser(argparse.ArgumentParser):
    def error(self, message: str) -> None:  # one line, exit 2, as for every other input error
        self.exit(EXIT_INPUT, f"modelcheck: error: {message} (see 'modelcheck {self.prog.split()[-1]} --help')\n"
                  if " " in self.prog else f"modelcheck: error: {message} (see 'modelcheck --help')\n")


def build_parser() -> argparse.ArgumentParser:
    p = _Parser(prog="modelcheck", description="Batch-check the axial members of IFC models.")
    p.add_argument("--version", action="version", version=f"modelcheck {__version__}")
    sub = p.add_subparsers(dest="command", required=True, parser_class=_Parser)

    def add_force_args(sp: argparse.ArgumentParser) -> None:
        sp.add_argument("--loads", action="append", default=[], metavar="TABLE",
                        help="axial-force table (.csv or .xlsx); repeatable")
        sp.add_argument("--force-property", metavar="PSET.PROP",
                        help="model property holding each member's axial force "
                             "(default: the rule set's, else MC_MemberForces.AxialForce)")
        sp.add_argument("--no-analysis-results", action="store_true",
                        help="ignore IFC structural-analysis results in the model")
        sp.add_argument("--analysis-frame", choices=("as-flagged", "local", "global"), default=None,
                        help="frame of the analysis results' member end forces: as each result is flagged, "
                             "or all in member (local) or global axes (default: a flag the forces contradict "
                             "makes them doubtful, and the member unchecked)")

    m = sub.add_parser("members", help="list every axial member with section, material, length")
    m.add_argument("models", nargs="+", metavar="MODEL", help="IFC files, folders or glob patterns")
    m.add_argument("--format", choices=("table", "json", "csv"), default="table")
    m.add_argument("--output", "-o", metavar="FILE", help="write to FILE instead of standard output")
    m.add_argument("--units", choices=("model", "SI", "US"), default="model",
                   help="display units (default: the model's own system)")
    m.add_argument("--capacity", action="store_true",
                   help="add each member's allowable tension and compression force under the rule set "
                        "of --rules")
    m.add_argument("--rules", metavar="RULESET", default="steel-asd-us",
                   help="rule set for --capacity (shipped name or file; default steel-asd-us)")
    m.add_argument("--details", action="store_true", default=None,
                   help="table: name, GlobalId, class, storey, E, Fu and the source of each value at any width "
                        f"(shown from {_details_width()} columns on)")
    add_force_args(m)

    c = sub.add_parser("check", help="check members against a rule set",
                       formatter_class=argparse.RawDescriptionHelpFormatter,
                       description="Options not given fall back to modelcheck.toml (or [tool.modelcheck] "
                                   "in pyproject.toml) in the working directory.",
                       epilog="exit codes:\n"
                              "  0  no failing member\n"
                              "  1  a failing member (with --strict also an unchecked one; with --fail-on new\n"
                              "     only a new failure), or a model whose members were found but none\n"
                              "     could be checked (nothing verified)\n"
                              "  2  a usage error, or an input that could not be read")
    c.add_argument("models", nargs="*", metavar="MODEL_OR_FOLDER",
                   help="IFC files, folders (searched recursively) or glob patterns")
    c.add_argument("--rules", metavar="RULESET", default=None,
                   help="shipped rule-set name or a .toml file (default steel-asd-us)")
    c.add_argument("--format", default=None, metavar="FORMATS",
                   help=f"{', '.join(_format_names())} — comma-separated for several (default console)")
    c.add_argument("--output", "-o", metavar="PATH",
                   help="output file (one file format) or folder (several: modelcheck-report.<ext> in it)")
    c.add_argument("--strict", action="store_true", default=None,
                   help="exit 1 also when a member is unchecked")
    c.add_argument("--validate", action="store_true", default=None,
                   help="list schema violations (ifcopenshell validator) as warnings")
    c.add_argument("--jobs", "-j", type=int, default=None, metavar="N",
                   help="worker processes: several models at once, or one large model shared out "
                        "(default: the CPU count)")
    c.add_argument("--scheduler", metavar="ADDRESS", default=None,
                   help="run on an existing Dask cluster (tcp://host:8786) instead of local processes")
    c.add_argument("--baseline", metavar="PREVIOUS.json", default=None,
                   help="compare with an earlier JSON report: new, resolved and still-failing results")
    c.add_argument("--fail-on", choices=("any", "new"), default=None,
                   help="exit 1 on any failure (default) or only on failures new since --baseline")
    c.add_argument("--annotate", metavar="OUT.ifc", default=None,
                   help="write a copy of the model with an MC_CheckResult property set on each "
                        "checked member (a folder when checking several models)")
    c.add_argument("--units", choices=("model", "SI", "US"), default=None,
                   help="units of the results in every report (default: each model's own system)")
    c.add_argument("--details", action="store_true", default=None,
                   help="console: GlobalId, class, storey, section, material, demand and capacity of "
                        f"each listed member at any width (shown from {_details_width()} columns on)")
    c.add_argument("--no-config", action="store_true", help="ignore modelcheck.toml / [tool.modelcheck]")
    add_force_args(c)

    r = sub.add_parser(
        "rules", help="list, show or validate rule sets", formatter_class=argparse.RawDescriptionHelpFormatter,
        description="What a rule set holds, and whether a file is one.\n\n"
                    "  modelcheck rules list             the shipped rule sets, with their basis\n"
                    "  modelcheck rules show NAME|FILE   parameters, definitions and checks of one rule set\n"
                    "  modelcheck rules validate FILE    every error in a rule file, each with its line;\n"
                    "                                    exit 0 when it is valid, 2 when not\n\n"
                    "How a rule set is written is described in SYNTAX.md, installed beside the shipped\n"
                    "rule sets (modelcheck/rulesets/).")
    r.add_argument("action", nargs="?", choices=("list", "show", "validate"), default="list",
                   help="list (the default), show or validate")
    r.add_argument("target", nargs="?", metavar="NAME_OR_FILE",
                   help="a shipped rule-set name or a .toml file (for show and validate)")

    from modelcheck.design.cli_size import add_size_parser

    add_size_parser(sub)
    return p


def _format_names() -> list[str]:
    from modelcheck.report.formats import format_names

    return format_names()


def _details_width() -> int:
    from modelcheck.report.console import DETAILS_WIDTH

    return DETAILS_WIDTH


def run() -> None:
    """The ``modelcheck`` command: ``main``, then exit at once.

    A large check leaves millions of objects behind; freeing them one by one at interpreter exit
    takes a noticeable part of a second. Every file is closed and every stream flushed by then,
    so the process ends without that teardown (``main`` itself returns normally, for callers
    such as the tests)."""
    import os

    from modelcheck import lifetime

    # numpy asks for transparent huge pages for arrays of 4 MiB and more; where the system backs
    # them lazily (virtual machines), faulting them in costs more than the check's arithmetic
    if "numpy" not in sys.modules:
        os.environ.setdefault("NUMPY_MADVISE_HUGEPAGE", "0")
    _keep_freed_memory()
    lifetime.ENDS_WITH_EXIT = True
    import signal

    from modelcheck.batch import raise_terminated

    # SIGTERM stops the command as Ctrl-C does: every ``finally`` runs, so the processes it
    # started are stopped too (none is left running on its own)
    signal.signal(signal.SIGTERM, raise_terminated)
    code = main()
    try:
        sys.stdout.flush()
    except BrokenPipeError:
        pass
    except OSError as exc:   # the report on standard output could not be written (a full disk)
        _say(f"modelcheck: error: standard output: cannot be written: {exc.strerror or exc}")
        code = EXIT_INPUT
    try:
        sys.stderr.flush()
    except OSError:
        pass
    os._exit(code)


def _keep_freed_memory() -> None:
    """glibc: serve large blocks from the heap and keep freed memory for reuse.

    A check allocates and frees arrays and texts of tens of megabytes over and over. By default
    each comes from a fresh mapping that is returned to the system when freed, so every one is
    faulted in page by page again; kept, the next one reuses the same pages (a fifth of the
    system time of a large check). The process lives for one command, so nothing is held for
    long. Elsewhere (other C libraries, other systems) nothing changes."""
    if not sys.platform.startswith("linux"):
        return
    try:
        import ctypes

        mallopt = ctypes.CDLL(None).mallopt
    except (OSError, AttributeError):
        return
    m_trim_threshold, m_mmap_threshold = -1, -3
    mallopt(m_mmap_threshold, 1 << 30)
    mallopt(m_trim_threshold, (1 << 31) - 1)


def _give_back_freed_memory() -> None:
    """glibc: return the memory freed during the check to the system before the reports are
    written. The kernel hands out what was freed last first: a large report's page cache then
    reuses pages this process has just used, instead of pages a virtual machine may have given
    back to its host (slow to fault in again; docs/performance.md gives the figures)."""
    if not sys.platform.startswith("linux"):
        return
    try:
        import ctypes

        ctypes.CDLL(None).malloc_trim(0)
    except (OSError, AttributeError):
        return


def _say(line: str) -> None:
    """One line on standard error, whatever it quotes: control characters (an escape sequence in
    a model's text or a file name) and undecodable bytes of a file name (kept by Python as lone
    surrogates) are written as visible escapes (``report.text.shown_line``)."""
    from modelcheck.report.text import shown_line

    print(shown_line(line), file=sys.stderr)


def main(argv: list[str] | None = None) -> int:
    import gc

    from modelcheck.batch import Terminated

    parser = build_parser()
    args = parser.parse_args(argv)
    # A run builds millions of small objects and few reference cycles: the cyclic collector would
    # rescan them over and over (it doubles the time of a large model). Reference counting frees
    # almost everything, and the command ends without the interpreter's teardown (``run``).
    gc.disable()
    try:
        return _dispatch(args)
    except ModelcheckError as exc:
        _say(f"modelcheck: error: {exc}")
        return EXIT_INPUT
    except KeyboardInterrupt:
        print("modelcheck: interrupted", file=sys.stderr)
        return 130
    except Terminated:
        print("modelcheck: terminated", file=sys.stderr)
        return 128 + 15
    except BrokenPipeError:
        return EXIT_OK
    except OSError as exc:   # a file that could not be read or written (permissions, a full disk, ...)
        where = f"{exc.filename}: " if exc.filename else ""
        _say(f"modelcheck: error: {where}{exc.strerror or exc}")
        return EXIT_INPUT
    except Exception as exc:  # a bug of ours: still one line, never a traceback for the user
        if os.environ.get("MODELCHECK_DEBUG"):
            raise
        _say(f"modelcheck: internal error: {type(exc).__name__}: {exc} "
             "(set MODELCHECK_DEBUG=1 for details and please report it)")
        return EXIT_INPUT
    finally:
        gc.enable()
    parser.error(f"unknown command {args.command}")
    return EXIT_INPUT


def _dispatch(args: argparse.Namespace) -> int:
    """The command named by ``args``, with numpy's floating-point warnings off: every value that
    overflows or is not a number is judged where it is used (refused, or the member unchecked),
    and a RuntimeWarning naming a line of numpy or of this package would tell the user nothing.
    Processes forked for the work inherit the setting."""
    import numpy as np

    with np.errstate(all="ignore"):
        if args.command == "members":
            return cmd_members(args)
        if args.command == "check":
            return cmd_check(args)
        if args.command == "rules":
            return cmd_rules(args)
        if args.command == "size":
            from modelcheck.design.cli_size import cmd_size

            return cmd_size(args)
    raise UsageError(f"unknown command {args.command}")


# ---------------------------------------------------------------------------- helpers
def force_options(args: argparse.Namespace, ruleset: Any = None, read_ahead: bool = False) -> Any:
    """The force routes of a command. ``read_ahead``: one model will be opened next and shared
    out among processes, so a forked helper reads the load tables meanwhile (``TablesReadAhead``)."""
    from modelcheck.loads.tables import read_load_table
    from modelcheck.pipeline import ForceOptions

    load_paths = expand_load_paths(args.loads)
    tables: Any
    if read_ahead and load_paths:
        from modelcheck.parallel import TablesReadAhead, can_split

        tables = TablesReadAhead(load_paths) if can_split() else tuple(read_load_table(p) for p in load_paths)
    else:
        tables = tuple(read_load_table(p) for p in load_paths)
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


def write_text(text: str, output: str | None, inputs: list[str]) -> None:
    from modelcheck.common.files import writing

    if output is None:
        with writing(None):
            sys.stdout.write(text)
            sys.stdout.flush()
        return
    guard_output(output, inputs)
    with writing(output):
        Path(output).write_text(text, encoding="utf-8")


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
    from modelcheck.config import config_path

    extra = [getattr(args, "rules", None), getattr(args, "baseline", None)]
    if not getattr(args, "no_config", True):
        cfg = config_path(Path.cwd())
        extra.append(str(cfg) if cfg is not None else None)
    return paths + load_paths + [str(x) for x in extra if x]


# ---------------------------------------------------------------------------- members
def cmd_members(args: argparse.Namespace) -> int:
    from rich.markup import escape as markup_escape

    from modelcheck.report.text import MAX_SHOWN, shown

    def escape(text: str, limit: int | None = MAX_SHOWN * 5) -> str:   # the model's text, safe for a terminal
        return markup_escape(shown(text, limit))

    from modelcheck.pipeline import expand_paths, read_model, unmatched_lines, unmatched_rows
    from modelcheck.report.members import CAUTION, member_dicts, member_notes, members_csv, members_table
    from modelcheck.report.quantities import DisplayUnits

    paths = expand_paths(args.models)
    inputs = read_inputs(args, paths, expand_load_paths(args.loads))
    if args.output:
        guard_output(args.output, inputs)
    ruleset = None
    if args.capacity:
        from modelcheck.rules.ruleset import load_ruleset

        ruleset = load_ruleset(args.rules)
    fopts = force_options(args, ruleset)
    datas = [read_model(p, fopts) for p in paths]
    used = set().union(*(d.matched_rows for d in datas)) if datas else set()
    unmatched = unmatched_rows(fopts.tables, used)
    any_error = any(d.error for d in datas)

    def units_for(d: Any) -> DisplayUnits:
        return DisplayUnits(d.system if args.units == "model" else args.units)

    def capacity_for(d: Any) -> Any:
        if ruleset is None or d.members is None:
            return None
        from modelcheck.design.rating import rate_members

        return rate_members(ruleset, d.members, units_for(d))

    def wide(con: Any) -> bool:
        from modelcheck.report.console import DETAILS_WIDTH

        return bool(args.details) if args.details is not None else con.width >= DETAILS_WIDTH

    if args.format == "json":
        models = []
        for d in datas:
            u = units_for(d)
            entry: dict[str, Any] = {"path": d.path, "schema": d.schema, "error": d.error, "units": u.system,
                                     "members": [], "warnings": d.warnings + d.force_messages}
            if d.members is not None:
                entry["members"] = member_dicts(d.members, d.forces, u, capacity_for(d))
                entry["forces"] = force_summary(d)
            models.append(entry)
        doc = {"models": models, "unmatched_force_rows": unmatched, "caution": CAUTION}
        from modelcheck.common.files import writing
        from modelcheck.report.check_json import write_members_json

        if args.output is None:
            with writing(None):
                write_members_json(doc, sys.stdout.buffer)
                sys.stdout.buffer.flush()
        else:
            guard_output(args.output, inputs)
            with writing(args.output), open(args.output, "wb") as fh:
                write_members_json(doc, fh)
    elif args.format == "csv":
        import pandas as pd

        frames = [members_csv(d.members, units_for(d), capacity_for(d)) for d in datas if d.members is not None]
        from modelcheck.report.text import csv_frame

        df = pd.concat(frames, ignore_index=True) if frames else pd.DataFrame()
        write_text(csv_frame(df).to_csv(index=False), args.output, inputs)
    else:
        if args.output:
            guard_output(args.output, inputs)
        from contextlib import ExitStack

        from modelcheck.common.files import writing

        with writing(args.output), ExitStack() as stack:
            sink = stack.enter_context(open(args.output, "w", encoding="utf-8")) if args.output else None
            con = report_console(file=sink)
            for d in datas:
                if d.error:
                    con.print(f"[bold red]{escape(d.path, None)}: cannot be read[/] — {escape(d.error, None)}",
                              highlight=False)
                    continue
                u = units_for(d)
                cap = capacity_for(d)
                con.print(members_table(d.members, u, f"{d.path} ({d.schema}, {len(d.members)} members)",
                                        width=con.width, details=wide(con), capacity=cap))
                for w in d.warnings + d.force_messages:
                    con.print(f"[yellow]warning:[/] {escape(w)}", highlight=False)
                for line in member_notes(d.members, cap):
                    con.print(f"[yellow]{escape(line[0])}:[/] {escape(line[1])}", highlight=False)
            for line in unmatched_lines(unmatched):
                con.print(f"[yellow]warning:[/] {escape(line)}", highlight=False)
            con.print(f"\n[dim]{CAUTION}[/]")
            (sink or sys.stdout).flush()
    for d in datas:
        if d.error:
            _say(f"modelcheck: error: {d.error}")
    return EXIT_INPUT if any_error else EXIT_OK


def force_summary(d: Any) -> dict[str, Any]:
    """The force join of one model (members JSON ``forces``): counts, ids and messages."""
    with_force = set(d.forces["global_id"]) if len(d.forces) else set()
    without = [g for g in d.members["global_id"] if g not in with_force]
    return {"members_with_force": len(with_force), "members_without_force": without, **d.force_report}


# ---------------------------------------------------------------------------- rules
def cmd_rules(args: argparse.Namespace) -> int:
    from modelcheck.common.files import writing
    from modelcheck.rules import ruleset as rs
    from modelcheck.rules import show

    con = report_console()
    if args.action == "list":
        view = show.ruleset_list(rs.list_rulesets())
        with writing(None):
            con.print(view)
            sys.stdout.flush()
        return EXIT_OK
    if not args.target:
        raise UsageError(f"'modelcheck rules {args.action}' needs a rule-set name or file")
    if args.action == "show":
        view = show.ruleset_view(rs.load_ruleset(args.target))
        with writing(None):
            con.print(view)
            sys.stdout.flush()
        return EXIT_OK
    errors = rs.validate_ruleset_file(args.target)
    for e in errors:
        _say(e)
    if errors:
        _say(f"modelcheck: error: {args.target}: {len(errors)} error(s)")
        return EXIT_INPUT
    for w in rs.ruleset_warnings(rs.load_ruleset(args.target)):
        _say(w)
    from rich.markup import escape

    from modelcheck.report.text import shown

    con.print(f"{escape(shown(args.target, None))}: valid", highlight=False)
    return EXIT_OK


# ---------------------------------------------------------------------------- check
def merge_config(args: argparse.Namespace) -> argparse.Namespace:
    """Fill options not given on the command line from the project configuration file."""
    from modelcheck.config import load_config

    if args.no_config:
        return args
    cfg = load_config(Path.cwd())
    if not args.models and "models" in cfg:
        args.models = list(cfg["models"])
    if not args.loads and "loads" in cfg:
        args.loads = list(cfg["loads"])
    for key in ("rules", "format", "output", "baseline", "fail_on", "strict", "jobs", "force_property",
                "annotate", "validate", "scheduler", "analysis_frame", "units", "details"):
        if getattr(args, key, None) is None and key in cfg:
            setattr(args, key, cfg[key])
            if key == "format":   # named here, where the file is known, not as if typed as --format
                from modelcheck.config import config_path

                names = _format_names()
                unknown = [f.strip() for f in cfg[key].split(",") if f.strip() not in names]
                if unknown:
                    raise UsageError(f"format: unknown {', '.join(unknown)} (choose from {', '.join(names)})",
                                     path=str(config_path(Path.cwd())))
    return args


def cmd_check(args: argparse.Namespace) -> int:
    import datetime as dt
    import os

    args = merge_config(args)
    from modelcheck.pipeline import expand_paths
    from modelcheck.report.check_json import check_document
    from modelcheck.rules.ruleset import load_ruleset

    if not args.models:
        raise UsageError("no model given (name files, folders or patterns, or set 'models' in modelcheck.toml)")
    from modelcheck.report.formats import FORMATS, WriteOptions, default_file_name, format_named, write_report

    names = [f.strip() for f in (args.format or "console").split(",") if f.strip()]
    unknown = [f for f in names if format_named(f) is None]
    if unknown:
        raise UsageError(f"unknown --format {', '.join(unknown)} "
                         f"(choose from {', '.join(_format_names())})")
    formats = [fmt for fmt in map(format_named, names) if fmt is not None]
    files = [f for f in formats if f.extension is not None]   # the rest go to the terminal
    if files and not args.output and (len(files) > 1 or any(f.binary for f in files)):
        raise UsageError(f"--format {','.join(f.name for f in files)} needs --output "
                         f"({'a folder for several formats' if len(files) > 1 else 'a file'})")
    if args.fail_on == "new" and not args.baseline:
        raise UsageError("--fail-on new needs --baseline PREVIOUS.json")
    paths = expand_paths(args.models)
    load_paths = expand_load_paths(args.loads)
    inputs = read_inputs(args, paths, load_paths)
    if len(files) > 1 and Path(args.output).exists() and not Path(args.output).is_dir():
        raise UsageError(f"--output {args.output}: several formats are written into a folder, and this is a file")
    targets = {f.name: (os.path.join(args.output, default_file_name(f)) if len(files) > 1 else args.output)
               for f in FORMATS if f in files}
    for out in targets.values():
        if out:
            guard_output(out, inputs, new_folder=len(files) > 1)
    baseline = None
    if args.baseline:
        from modelcheck.report.compare import load_baseline

        baseline = load_baseline(args.baseline)
    from modelcheck.timing import stage

    jobs = args.jobs if args.jobs is not None else (os.cpu_count() or 1)
    if jobs < 1:
        raise UsageError("--jobs must be at least 1")
    with stage("rule set + load tables"):
        ruleset = load_ruleset(args.rules or "steel-asd-us")
        # one model for several processes: its tables are read while it opens
        fopts = force_options(args, ruleset, read_ahead=len(paths) == 1 and jobs > 1 and not args.scheduler)
    # formats that need no results table: the statuses alone (summary, exit code), the rows encoded
    slim = bool(formats) and not any(f.needs_results for f in formats) and not args.baseline and not args.annotate
    try:
        with stage("check models"):
            run = _run_with_progress(paths, ruleset, fopts, jobs, bool(args.validate), args.scheduler,
                                     encode_json=any(f.json_rows for f in files), slim=slim,
                                     units=args.units or "model")
    finally:
        if hasattr(fopts.tables, "close"):   # tables read ahead by a helper process
            fopts.tables.close()
    now = dt.datetime.now(dt.UTC).replace(microsecond=0)
    comparison = None
    if baseline is not None:
        from modelcheck.report.compare import compare

        comparison = compare(check_document(run, now=now), baseline)
    if len(files) > 1:
        os.makedirs(args.output, exist_ok=True)
    from modelcheck.parallel import release_rows
    from modelcheck.timing import stage

    _give_back_freed_memory()
    try:
        if args.annotate:   # first: the copy reads every entity, and may find a model unreadable
            _annotate(run, args.annotate, inputs)
        from modelcheck.common.files import writing

        options = WriteOptions(now=now, comparison=comparison, strict=bool(args.strict),
                               only_new=args.fail_on == "new", details=args.details)
        for f in files:
            target = targets[f.name]
            with stage(f"write {f.name}"), writing(target):
                if target is not None:
                    guard_output(target, inputs)   # again: --annotate has written meanwhile
                write_report(f, run, target, options)
    finally:
        release_rows(run.json_rows)
    terminal = list(dict.fromkeys(f for f in formats if f.extension is None))
    if terminal:
        from modelcheck.common.files import writing

        # on standard output, unless a file format goes there
        stream = sys.stderr if bool(files) and not args.output else sys.stdout
        with writing(None):
            for f in terminal:
                f.write(run, stream, options)
            stream.flush()
    else:   # file formats only: still one line per model, on stderr when a report goes to stdout
        from modelcheck.report.console import summary_line

        con = report_console(stderr=not args.output)
        for m in run.models:
            if not m.error:   # an unreadable model has its one error line below
                con.print(summary_line(m, run.results), soft_wrap=True)   # one line, whatever its length
    for m in run.models:
        if m.error:
            _say(f"modelcheck: error: {m.error}")
    return exit_code(run, bool(args.strict), args.fail_on or "any", comparison)


def _run_with_progress(paths: list[str], ruleset: Any, fopts: Any, jobs: int, validate: bool,
                       scheduler: str | None, encode_json: bool = False, slim: bool = False,
                       units: str = "model") -> Any:
    """Run the batch; a rich progress bar on a terminal with several models, quiet otherwise."""
    from modelcheck.pipeline import run_check

    if len(paths) < 2 or not sys.stderr.isatty():
        return run_check(paths, ruleset, fopts, jobs=jobs, validate=validate, scheduler=scheduler,
                         encode_json=encode_json, slim=slim, units=units)
    from rich.console import Console
    from rich.progress import Progress

    with Progress(transient=True, console=Console(stderr=True)) as bar:
        task = bar.add_task("checking models", total=len(paths))
        return run_check(paths, ruleset, fopts, jobs=jobs, validate=validate, scheduler=scheduler,
                         progress=lambda: bar.advance(task), encode_json=encode_json, slim=slim, units=units)


def _annotate(run: Any, target: str, inputs: list[str]) -> None:
    import os

    from modelcheck.report.annotate import annotate_model

    readable = [m for m in run.models if not m.error]
    several = len(readable) > 1 or os.path.isdir(target)
    names: dict[str, str] = {}
    for m in readable:
        if several and names.setdefault(Path(m.path).name, m.path) != m.path:
            raise UsageError(f"--annotate {target}: {names[Path(m.path).name]} and {m.path} would both be written "
                             f"as {Path(m.path).name} in that folder; annotate them one at a time")
    outs = [os.path.join(target, Path(m.path).name) if several else target for m in readable]
    for out in outs:   # every target judged before any is written
        guard_output(out, inputs, option="--annotate", new_folder=several)
    if several and readable:
        os.makedirs(target, exist_ok=True)
    from modelcheck.common.files import writing

    for m, out in zip(readable, outs, strict=True):
        with writing(out):
            annotate_model(m.path, out, run.results)


def exit_code(run: Any, strict: bool, fail_on: str = "any", comparison: Any = None) -> int:
    if any(m.error for m in run.models):
        return EXIT_INPUT
    if any(m.coverage is not None and m.coverage.verified_nothing for m in run.models):
        return EXIT_FAIL   # members were found and not one could be checked: nothing was verified
    if fail_on == "new" and comparison is not None:
        from modelcheck.report.compare import new_problems

        return EXIT_FAIL if new_problems(comparison, strict=strict) else EXIT_OK
    status = run.results["status"] if len(run.results) else None
    if status is not None and (status == "fail").any():
        return EXIT_FAIL
    if strict and status is not None and (status == "unchecked").any():
        return EXIT_FAIL
    return EXIT_OK
