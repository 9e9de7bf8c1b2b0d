"""`modelcheck size`: the smallest stock size for an axial force (arguments -> sizing -> output).

    modelcheck size --force "12 kip" --material A36 --shape threaded
    modelcheck size --force "-180 kN" --rules steel-ec3 --shape catalog --family HEA --length "3.5 m"

The cli registers it with two lines::

    from modelcheck.cli.size import add_size_parser, cmd_size
    add_size_parser(sub)            # in build_parser(); main() dispatches "size" to cmd_size
"""

from __future__ import annotations

import argparse
import json
import math
import sys
from typing import Any

from modelcheck.common.errors import UsageError
from modelcheck.common.vocabulary import STOCK_KIND_NAMES

#: the --shape choices (from the light vocabulary module: building the command line does not
#: import the sizing machinery — start-up time counts)
SHAPE_CHOICES: tuple[str, ...] = STOCK_KIND_NAMES



def add_size_parser(subparsers: Any) -> argparse.ArgumentParser:
    """Add the ``size`` command to an argparse subparsers object; returns its parser."""
    p = subparsers.add_parser(
        "size", help="choose the smallest stock size that carries an axial force",
        description="Choose the smallest stock size (bar, threaded rod or catalog section) that passes "
                    "every applicable check of a rule set for one axial force. Tension is positive, "
                    "compression negative. Without --length the checks that need the member length "
                    "(buckling, slenderness, elongation) are not applied; the output lists them.")
    p.add_argument("--force", required=True, metavar="F",
                   help="axial force with its unit, tension positive: \"12 kip\", \"50 kN\", \"-8 kip\"")
    p.add_argument("--material", metavar="NAME", default=None,
                   help="material grade or name from rulesets/materials.toml (default: ASTM A36 for US "
                        "rule sets, S235 for SI)")
    p.add_argument("--rules", metavar="RULESET", default="steel-asd-us",
                   help="shipped rule-set name or a .toml file (default steel-asd-us)")
    p.add_argument("--shape", choices=SHAPE_CHOICES, default=None,
                   help="round or square bar, flat bar, threaded rod, or catalog section "
                        "(default round; catalog when --family is given)")
    p.add_argument("--family", action="append", default=None, metavar="FAMILY",
                   help="catalog family: W, HSS, L (US tables) or IPE, HEA, L, CHS, RHS, SHS (EN tables); "
                        "repeatable; default all of the rule set's table")
    p.add_argument("--thickness", metavar="T", default=None,
                   help="flat-bar thickness with its unit (\"1/4 in\", \"10 mm\"); default: every stock thickness")
    p.add_argument("--length", metavar="L", default=None,
                   help="member length with its unit (\"8 ft\", \"3.5 m\"): applies buckling, slenderness and "
                        "elongation")
    p.add_argument("--format", choices=("table", "json"), default="table")
    return p


def parse_force(text: str) -> float:
    """'12 kip', '1 1/2 kip', '50 kN' -> newtons, read by :func:`modelcheck.common.units.parse_quantity`
    (the reader of every number with a unit); no unit, or a unit that is not a force, is a
    UsageError."""
    from modelcheck.common.units import QuantityTextError, parse_quantity

    try:
        return parse_quantity(text or "", "force", what="--force").si()
    except QuantityTextError as exc:
        raise UsageError(str(exc)) from None


def parse_length_arg(option: str, text: str | None) -> float | None:
    from modelcheck.common.units import QuantityTextError, parse_quantity

    if text is None:
        return None
    try:
        return parse_quantity(text, "length", what=option).si()
    except QuantityTextError as exc:
        raise UsageError(str(exc)) from None


def cmd_size(args: argparse.Namespace) -> int:
    """Run `modelcheck size`; returns the exit code (0). Input errors raise UsageError / RuleSetError."""
    from modelcheck.design.sizing import size
    from modelcheck.rules.ruleset import load_ruleset

    force = parse_force(args.force)
    thickness = parse_length_arg("--thickness", args.thickness)
    length = parse_length_arg("--length", args.length)
    ruleset = load_ruleset(args.rules)
    result = size(ruleset, force, material=args.material, shape=args.shape, thickness=thickness,
                  length=length, family=tuple(args.family) if args.family else None)
    from modelcheck.common.files import writing

    with writing(None):
        if args.format == "json":
            sys.stdout.write(json.dumps(result.to_dict(), indent=2, ensure_ascii=False) + "\n")
        else:
            from modelcheck.cli.common import report_console

            render_size(result, report_console())
        sys.stdout.flush()
    return 0


def _fmt(q: dict[str, Any] | None, digits: str = ".4g") -> str:
    if q is None:
        return "—"
    from modelcheck.common.units import ureg

    unit = f"{ureg.Unit(q['unit']):~P}" if q["unit"] else ""
    return f"{format(q['value'], digits)} {unit}".strip()


def render_size(result: Any, console: Any) -> None:
    """The size result as rich tables, ending with the caution."""
    from rich.markup import escape
    from rich.table import Table
    from rich.text import Text

    from modelcheck.report.members import CAUTION
    from modelcheck.report.text import shown

    doc = result.to_dict()
    sel = doc["selected"]
    mat = doc["material"]
    what = "tension" if result.force > 0 else "compression"
    force = dict(doc["force"], value=abs(doc["force"]["value"]))
    head = Table(title=Text(f"Size for {_fmt(force)} {what} — rule set {shown(result.ruleset)}"),
                 title_justify="left", show_header=False, box=None, pad_edge=False)
    head.add_column(style="bold")
    head.add_column()
    name = shown(mat["grade"] if mat["name"] == mat["grade"] else f"{mat['name']} → {mat['grade']}")
    head.add_row("Material", Text(f"{name} (Fy {_fmt(mat['Fy'])}, Fu {_fmt(mat['Fu'])}, "
                                  f"E {_fmt(mat['E'], '.0f')})"))
    head.add_row("Stock", Text(str(result.stock)))
    if doc["length"] is not None:
        head.add_row("Length", Text(_fmt(doc["length"])))
    if doc["thickness"] is not None:
        head.add_row("Thickness", Text(_fmt(doc["thickness"])))
    head.add_row("Required area", Text(f"{_fmt(doc['required_area'])}  ({doc['required_area_basis']})"
                                       if doc["required_area"] else "—"))
    head.add_row("Selected", Text(str(sel["designation"]), style="bold green"))
    head.add_row("Area", Text(_fmt(sel["area"])))
    if sel["tensile_stress_area"] is not None:
        head.add_row("Tensile-stress area", Text(_fmt(sel["tensile_stress_area"])))
    head.add_row("Stress", Text(f"{_fmt(sel['stress'])}  ({sel['stress']['source']})" if sel["stress"] else "—"))
    head.add_row("Ratio", Text(f"{sel['ratio']:.3f}  (governing: {shown(sel['governing_check'])})"))
    head.add_row("Elongation" if result.force > 0 else "Shortening",
                 Text(_fmt(dict(sel["elongation"], value=abs(sel["elongation"]["value"])), ".3g")
                      if sel["elongation"] is not None else "— (give --length)"))
    console.print(head)

    t = Table(title=Text(f"Checks of {sel['designation']}"), title_justify="left", header_style="bold")
    for col, just in (("Check", "left"), ("Clause", "left"), ("Demand", "right"), ("Capacity", "right"),
                      ("Ratio", "right"), ("Status", "left")):
        t.add_column(col, justify=just, overflow="fold")
    for c in doc["checks"]:
        colour = {"pass": "green", "fail": "red"}.get(c["status"], "yellow")
        ratio = "—" if c["ratio"] is None or not math.isfinite(c["ratio"]) else f"{c['ratio']:.3f}"
        t.add_row(Text(shown(c["check"])), Text(shown(c["clause"])), Text(_fmt(c["demand"])), Text(_fmt(c["capacity"])),
                  ratio, Text(str(c["status"]), style=colour))
    console.print(t)
    for na in doc["not_applicable"]:
        console.print(f"[yellow]not applied:[/] {escape(shown(na['check']))} — {escape(shown(na['reason'], None))}",
                      highlight=False)
    console.print(f"\n[dim]{CAUTION}[/]")
