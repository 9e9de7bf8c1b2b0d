"""`modelcheck members`: every axial member of the models with section, material, length and
(``--capacity``) allowable forces; table, JSON or CSV."""

from __future__ import annotations

import argparse
import sys
from typing import Any

from modelcheck.cli.common import (
    EXIT_INPUT,
    EXIT_OK,
    expand_load_paths,
    force_options,
    guard_output,
    read_inputs,
    report_console,
    say,
    write_text,
)


def cmd_members(args: argparse.Namespace) -> int:
    from rich.markup import escape as markup_escape

    from modelcheck.report.text import MAX_SHOWN, shown

    def escape(text: str, limit: int | None = MAX_SHOWN * 5) -> str:   # the model's text, safe for a terminal
        return markup_escape(shown(text, limit))

    from modelcheck.core.forces import unmatched_lines, unmatched_rows
    from modelcheck.core.read import expand_paths, read_model
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
            say(f"modelcheck: error: {d.error}")
    return EXIT_INPUT if any_error else EXIT_OK


def force_summary(d: Any) -> dict[str, Any]:
    """The force join of one model (members JSON ``forces``): counts, ids and messages."""
    with_force = set(d.forces["global_id"]) if len(d.forces) else set()
    without = [g for g in d.members["global_id"] if g not in with_force]
    return {"members_with_force": len(with_force), "members_without_force": without, **d.force_report}


