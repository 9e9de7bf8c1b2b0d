"""Command line: the parser of every command, the entry point of the ``modelcheck`` command
(``run``: the process set-up of ``modelcheck.run.process``, then ``main``) and ``main``, which
turns every error into one line and an exit code. The commands themselves are ``check``,
``members``, ``rules`` and ``size`` beside this module.

Exit codes: 0 no failure; 1 at least one failing member (with --strict also any unchecked), or
a model whose members were found but none could be checked; 2 a usage error or an input that
could not be read (the other models are still reported).
"""

from __future__ import annotations

import argparse
import os
import sys

from modelcheck import __version__
from modelcheck.cli.common import EXIT_INPUT, EXIT_OK, say
from modelcheck.common.errors import ModelcheckError, UsageError


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
    m.add_argument("--format", choices=_inventory_format_names(), default="table")
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

    from modelcheck.cli.size import add_size_parser

    add_size_parser(sub)
    return p


def _inventory_format_names() -> list[str]:
    from modelcheck.report.inventory import inventory_format_names

    return inventory_format_names()


def _format_names() -> list[str]:
    from modelcheck.report.formats import format_names

    return format_names()


def _details_width() -> int:
    from modelcheck.report.text import DETAILS_WIDTH

    return DETAILS_WIDTH


def run() -> None:
    """The ``modelcheck`` command: the process set-up (``modelcheck.run.process``), ``main``,
    then exit at once (``main`` itself returns normally, for callers such as the tests)."""
    from modelcheck.run.process import end_process, prepare_process

    prepare_process()
    end_process(main(), say)


def main(argv: list[str] | None = None) -> int:
    from modelcheck.run.process import Terminated, paused_gc

    parser = build_parser()
    args = parser.parse_args(argv)
    try:
        with paused_gc():
            return _dispatch(args)
    except ModelcheckError as exc:
        say(f"modelcheck: error: {exc}")
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
        say(f"modelcheck: error: {where}{exc.strerror or exc}")
        return EXIT_INPUT
    except Exception as exc:  # a bug of ours: still one line, never a traceback for the user
        if os.environ.get("MODELCHECK_DEBUG"):
            raise
        say(f"modelcheck: internal error: {type(exc).__name__}: {exc} "
            "(set MODELCHECK_DEBUG=1 for details and please report it)")
        return EXIT_INPUT
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
            from modelcheck.cli.members import cmd_members

            return cmd_members(args)
        if args.command == "check":
            from modelcheck.cli.check import cmd_check

            return cmd_check(args)
        if args.command == "rules":
            from modelcheck.cli.rules import cmd_rules

            return cmd_rules(args)
        if args.command == "size":
            from modelcheck.cli.size import cmd_size

            return cmd_size(args)
    raise UsageError(f"unknown command {args.command}")
