"""Command line: arguments -> pipeline -> reporter. Nothing else lives here.

Exit codes: 0 no failure; 1 at least one failing member (with --strict also any unchecked);
2 a usage error or an input that could not be read (the other models are still reported).
"""

from __future__ import annotations

import argparse
import json
import sys
from pathlib import Path
from typing import Any

from modelcheck import __version__
from modelcheck.errors import ModelcheckError, UsageError

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

    m = sub.add_parser("members", help="list every axial member with section, material, length")
    m.add_argument("models", nargs="+", metavar="MODEL", help="IFC files, folders or glob patterns")
    m.add_argument("--format", choices=("table", "json", "csv"), default="table")
    m.add_argument("--output", "-o", metavar="FILE", help="write to FILE instead of standard output")
    m.add_argument("--units", choices=("model", "SI", "US"), default="model",
                   help="display units (default: the model's own system)")
    m.add_argument("--capacity", action="store_true",
                   help="add each member's allowable tension and compression force (needs --rules)")
    m.add_argument("--rules", metavar="RULESET", default="steel-asd-us",
                   help="rule set for --capacity (shipped name or file; default steel-asd-us)")
    add_force_args(m)

    c = sub.add_parser("check", help="check members against a rule set")
    c.add_argument("models", nargs="+", metavar="MODEL_OR_FOLDER")
    c.add_argument("--rules", metavar="RULESET", default=None,
                   help="shipped rule-set name or a .toml file (default steel-asd-us)")
    c.add_argument("--format", default=None, metavar="FORMATS",
                   help="console, json, csv, junit, bcf, html — comma-separated for several")
    c.add_argument("--output", "-o", metavar="FILE",
                   help="output file (one format) or folder (several formats)")
    c.add_argument("--strict", action="store_true", help="exit 1 also when a member is unchecked")
    c.add_argument("--validate", action="store_true",
                   help="list schema violations (ifcopenshell validator) as warnings")
    c.add_argument("--jobs", "-j", type=int, default=None, metavar="N",
                   help="worker processes for several models (default: the CPU count)")
    add_force_args(c)

    r = sub.add_parser("rules", help="list, show or validate rule sets")
    r.add_argument("action", nargs="?", choices=("list", "show", "validate"), default="list")
    r.add_argument("target", nargs="?", metavar="NAME_OR_FILE")
    return p


def main(argv: list[str] | None = None) -> int:
    parser = build_parser()
    args = parser.parse_args(argv)
    try:
        if args.command == "members":
            return cmd_members(args)
        if args.command == "check":
            return cmd_check(args)
        if args.command == "rules":
            return cmd_rules(args)
    except ModelcheckError as exc:
        print(f"modelcheck: error: {exc}", file=sys.stderr)
        return EXIT_INPUT
    except KeyboardInterrupt:
        print("modelcheck: interrupted", file=sys.stderr)
        return 130
    except BrokenPipeError:
        return EXIT_OK
    except Exception as exc:  # a bug of ours: still one line, never a traceback for the user
        import os

        if os.environ.get("MODELCHECK_DEBUG"):
            raise
        print(f"modelcheck: internal error: {type(exc).__name__}: {exc} "
              "(set MODELCHECK_DEBUG=1 for details and please report it)", file=sys.stderr)
        return EXIT_INPUT
    parser.error(f"unknown command {args.command}")
    return EXIT_INPUT


# ---------------------------------------------------------------------------- helpers
def force_options(args: argparse.Namespace, ruleset: Any = None) -> Any:
    from modelcheck.loads.tables import read_load_table
    from modelcheck.pipeline import ForceOptions

    tables = tuple(read_load_table(p) for p in args.loads)
    prop_text = args.force_property or getattr(ruleset, "force_property", None) or "MC_MemberForces.AxialForce"
    if "." not in prop_text:
        raise UsageError(f"--force-property {prop_text!r}: write it as PSET.PROPERTY")
    pset, prop = prop_text.split(".", 1)
    return ForceOptions(tables=tables, property=(pset, prop), analysis=not args.no_analysis_results)


def write_text(text: str, output: str | None, inputs: list[str]) -> None:
    if output is None:
        sys.stdout.write(text)
        return
    guard_output(output, inputs)
    Path(output).write_text(text, encoding="utf-8")


def guard_output(output: str, inputs: list[str]) -> None:
    """Refuse to write over an input file."""
    out = Path(output).resolve()
    for p in inputs:
        if Path(p).exists() and Path(p).resolve() == out:
            raise UsageError(f"--output {output} is one of the input files; refusing to overwrite it")


def unmatched_rows(tables: tuple[Any, ...], used: set[str]) -> list[dict[str, str]]:
    rows = []
    for t in tables:
        for key, src in zip(t["key"], t["source"], strict=True):
            if src not in used:
                rows.append({"key": str(key), "source": src})
    return rows


# ---------------------------------------------------------------------------- members
def cmd_members(args: argparse.Namespace) -> int:
    from modelcheck.pipeline import expand_paths, read_model
    from modelcheck.report.members import CAUTION, member_dicts, members_csv, members_table
    from modelcheck.report.quantities import DisplayUnits

    paths = expand_paths(args.models)
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
        write_text(json.dumps(doc, indent=2, ensure_ascii=False) + "\n", args.output, paths + args.loads)
    elif args.format == "csv":
        import pandas as pd

        frames = [members_csv(d.members, units_for(d)) for d in datas if d.members is not None]
        df = pd.concat(frames, ignore_index=True) if frames else pd.DataFrame()
        write_text(df.to_csv(index=False), args.output, paths + args.loads)
    else:
        from rich.console import Console

        con = Console(file=open(args.output, "w", encoding="utf-8") if args.output else None,  # noqa: SIM115
                      width=160 if args.output else None)
        if args.output:
            guard_output(args.output, paths + args.loads)
        for d in datas:
            if d.error:
                con.print(f"[bold red]{d.path}: cannot be read[/] — {d.error}")
                continue
            u = units_for(d)
            con.print(members_table(d.members, u, f"{d.path} ({d.schema}, {len(d.members)} members)"))
            for w in d.warnings + d.force_messages:
                con.print(f"[yellow]warning:[/] {w}")
            for gid, ws in zip(d.members["global_id"], d.members["warnings"], strict=True):
                for w in ws or []:
                    con.print(f"[yellow]{gid}:[/] {w}", highlight=False)
        for row in unmatched:
            con.print(f"[yellow]force row matches no member:[/] {row['source']} ({row['key']})")
        con.print(f"\n[dim]{CAUTION}[/]")
    for d in datas:
        if d.error:
            print(f"modelcheck: error: {d.error}", file=sys.stderr)
    return EXIT_INPUT if any_error else EXIT_OK


def force_summary(d: Any) -> dict[str, Any]:
    """Counts and ids of the force join for one model (members JSON ``forces``)."""
    members = d.members
    with_force = set(d.forces["global_id"]) if len(d.forces) else set()
    without = [g for g in members["global_id"] if g not in with_force]
    by_source: dict[str, int] = {}
    if len(d.forces):
        route = d.forces["source"].str.split(":", n=1).str[0]
        by_source = {str(k): int(v) for k, v in route.value_counts().sort_index().items()}
    return {"members_with_force": len(with_force), "members_without_force": without,
            "rows_by_source": by_source, "messages": d.force_messages}


# ---------------------------------------------------------------------------- rules
def cmd_rules(args: argparse.Namespace) -> int:
    from rich.console import Console

    from modelcheck.rules import ruleset as rs
    from modelcheck.rules import show

    con = Console()
    if args.action == "list":
        con.print(show.ruleset_list(rs.list_rulesets()))
        return EXIT_OK
    if not args.target:
        raise UsageError(f"'modelcheck rules {args.action}' needs a rule-set name or file")
    if args.action == "show":
        con.print(show.ruleset_detail(rs.load_ruleset(args.target)))
        return EXIT_OK
    errors = rs.validate_ruleset_file(args.target)
    for e in errors:
        print(e, file=sys.stderr)
    if errors:
        print(f"modelcheck: error: {args.target}: {len(errors)} error(s)", file=sys.stderr)
        return EXIT_INPUT
    con.print(f"{args.target}: valid")
    return EXIT_OK


# ---------------------------------------------------------------------------- check
#: output format -> (file extension, writer(run, path))
FILE_FORMATS = ("json",)


def _write_json(run: Any, path: str | None, inputs: list[str]) -> None:
    from modelcheck.report.check_json import check_document

    write_text(json.dumps(check_document(run), indent=2, ensure_ascii=False) + "\n", path, inputs)


def cmd_check(args: argparse.Namespace) -> int:
    import os

    from rich.console import Console

    from modelcheck.pipeline import expand_paths, run_check
    from modelcheck.report.console import render_check
    from modelcheck.rules.ruleset import load_ruleset

    formats = [f.strip() for f in (args.format or "console").split(",") if f.strip()]
    unknown = [f for f in formats if f not in ("console",) + FILE_FORMATS]
    if unknown:
        raise UsageError(f"unknown --format {', '.join(unknown)} (choose from console, {', '.join(FILE_FORMATS)})")
    files = [f for f in formats if f != "console"]
    if len(files) > 1 and not args.output:
        raise UsageError("several file formats need --output FOLDER")
    paths = expand_paths(args.models)
    ruleset = load_ruleset(args.rules or "steel-asd-us")
    fopts = force_options(args, ruleset)
    jobs = args.jobs if args.jobs is not None else (os.cpu_count() or 1)
    if jobs < 1:
        raise UsageError("--jobs must be at least 1")
    run = run_check(paths, ruleset, fopts, jobs=jobs, validate=args.validate)
    inputs = paths + list(args.loads)
    for fmt in files:
        out = args.output
        if len(files) > 1:
            os.makedirs(args.output, exist_ok=True)
            out = os.path.join(args.output, f"modelcheck-report.{fmt}")
        if fmt == "json":
            _write_json(run, out, inputs)
    if "console" in formats:
        render_check(run, Console(stderr=bool(files) and not args.output))
    for m in run.models:
        if m.error:
            print(f"modelcheck: error: {m.error}", file=sys.stderr)
    return exit_code(run, args.strict)


def exit_code(run: Any, strict: bool) -> int:
    if any(m.error for m in run.models):
        return EXIT_INPUT
    status = run.results["status"] if len(run.results) else None
    if status is not None and (status == "fail").any():
        return EXIT_FAIL
    if strict and status is not None and (status == "unchecked").any():
        return EXIT_FAIL
    return EXIT_OK
