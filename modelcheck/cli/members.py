"""`modelcheck members`: every axial member of the models with section, material, length and
(``--capacity``) allowable forces, in one of the inventory formats (``report/inventory.py``)."""

from __future__ import annotations

import argparse
from typing import TYPE_CHECKING

from modelcheck.cli.common import (
    EXIT_INPUT,
    EXIT_OK,
    expand_load_paths,
    force_options,
    guard_output,
    names_standard_output,
    read_inputs,
    say,
)

if TYPE_CHECKING:
    from collections.abc import Sequence

    from modelcheck.core.model import ModelData
    from modelcheck.loads.tables import LoadTable
    from modelcheck.report.inventory import Inventory
    from modelcheck.rules.values import RuleSet


def cmd_members(args: argparse.Namespace) -> int:
    from modelcheck.core.read import expand_paths, read_model
    from modelcheck.report.inventory import InventoryOptions, inventory_format_named

    paths = expand_paths(args.models)
    inputs = read_inputs(args, paths, expand_load_paths(args.loads))
    if names_standard_output(args.output):
        args.output = None   # '--output /dev/stdout': the stream itself
    if args.output:
        guard_output(args.output, inputs)
    ruleset = None
    if args.capacity:
        from modelcheck.rules.ruleset import load_ruleset

        ruleset = load_ruleset(args.rules)
    fopts = force_options(args, ruleset)
    datas = [read_model(p, fopts) for p in paths]
    inventory = build_inventory(datas, fopts.tables, args.units, ruleset)
    fmt = inventory_format_named(args.format)
    assert fmt is not None   # argparse offers only the registered names
    if args.output is None:
        fmt.write(inventory, None, InventoryOptions(details=args.details))
    else:
        from modelcheck.common.files import output_file, writing

        with writing(args.output), output_file(args.output) as path:
            fmt.write(inventory, path, InventoryOptions(details=args.details))
    for d in datas:
        if d.error:
            say(f"modelcheck: error: {d.error}")
    return EXIT_INPUT if any(d.error for d in datas) else EXIT_OK


def build_inventory(datas: list[ModelData], tables: Sequence[LoadTable], units: str,
                    ruleset: RuleSet | None = None) -> Inventory:
    """The models read, each with its display units (``units``: "model" for each model's own
    system, else "SI" or "US") and, given a rule set, its members' allowable forces; and the rows
    of the load tables ``tables`` that no member used."""
    from modelcheck.core.forces import unmatched_rows
    from modelcheck.report.inventory import Inventory, InventoryModel
    from modelcheck.report.quantities import DisplayUnits

    models = []
    for d in datas:
        u = DisplayUnits(d.system if units == "model" else units)
        capacity = None
        if ruleset is not None and d.members is not None:
            from modelcheck.design.rating import rate_members

            capacity = rate_members(ruleset, d.members, u)
        models.append(InventoryModel(d, u, capacity))
    used = set().union(*(d.matched_rows for d in datas)) if datas else set()
    return Inventory(tuple(models), tuple(unmatched_rows(tables, used)))
