"""The output formats of ``modelcheck members``: each registered once, in :data:`INVENTORY_FORMATS`.

The command reads the models once into an :class:`Inventory` (the models read, the display
units of each, their allowable forces with ``--capacity``, the load-table rows no member used)
and hands it to one format. A format is an :class:`InventoryFormat`: its name (what ``--format``
takes), the extension of a file of it (None for the terminal table) and ``write(inventory,
target, options)``, which writes the inventory to the file ``target`` (None: standard output)
with the :class:`InventoryOptions` of the command. The command's ``--format`` choices come from
:data:`INVENTORY_FORMATS`; nothing else lists these formats. (The check's formats are the other
registry, ``report.formats.FORMATS``.)

Example::

    fmt = inventory_format_named("csv")
    fmt.write(inventory, "members.csv", InventoryOptions())
"""

from __future__ import annotations

import sys
from collections.abc import Callable
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

if TYPE_CHECKING:
    import pandas as pd

    from modelcheck.core.model import ModelData
    from modelcheck.report.quantities import DisplayUnits


@dataclass(frozen=True)
class InventoryModel:
    """One model of the inventory: what was read from it and how it is shown."""

    data: ModelData                            # the model as read (``data.error``: why it could not be)
    units: DisplayUnits                        # the display units of its members
    capacity: pd.DataFrame | None = None       # --capacity: ``design.rating.rate_members``' rows; else None


@dataclass(frozen=True)
class Inventory:
    """Everything ``modelcheck members`` reports, built once by the command."""

    models: tuple[InventoryModel, ...]
    unmatched: tuple[dict[str, str], ...] = ()   # load-table rows no member used (``core.forces.unmatched_rows``)


@dataclass(frozen=True)
class InventoryOptions:
    """What the writers need beyond the inventory, from the command line."""

    details: bool | None = None   # --details (table; None: by the terminal's width)


#: ``write(inventory, target, options)``: ``target`` a file path, None for standard output
InventoryWriter = Callable[[Inventory, "str | None", InventoryOptions], None]


@dataclass(frozen=True)
class InventoryFormat:
    """One output format of the member inventory."""

    name: str
    extension: str | None
    write: InventoryWriter


def force_summary(d: ModelData) -> dict[str, Any]:
    """The force join of one model (members JSON ``forces``): counts, ids and messages."""
    assert d.members is not None
    with_force = set(d.forces["global_id"]) if len(d.forces) else set()
    without = [g for g in d.members["global_id"] if g not in with_force]
    return {"members_with_force": len(with_force), "members_without_force": without, **d.force_report}


def write_json(inventory: Inventory, target: str | None, options: InventoryOptions) -> None:
    """The members JSON document (``schemas/members.schema.json``)."""
    from modelcheck.common.files import writing
    from modelcheck.report.check_json import write_members_json
    from modelcheck.report.members import CAUTION, member_dicts

    models = []
    for m in inventory.models:
        d = m.data
        entry: dict[str, Any] = {"path": d.path, "schema": d.schema, "error": d.error, "units": m.units.system,
                                 "members": [], "warnings": d.warnings + d.force_messages}
        if d.members is not None:
            entry["members"] = member_dicts(d.members, d.forces, m.units, m.capacity)
            entry["forces"] = force_summary(d)
        models.append(entry)
    doc = {"models": models, "unmatched_force_rows": list(inventory.unmatched), "caution": CAUTION}
    if target is None:
        with writing(None):
            write_members_json(doc, sys.stdout.buffer)
            sys.stdout.buffer.flush()
    else:
        with open(target, "wb") as fh:
            write_members_json(doc, fh)


def write_csv(inventory: Inventory, target: str | None, options: InventoryOptions) -> None:
    """One row per member of every model read, the models one after the other."""
    from pathlib import Path

    import pandas as pd

    from modelcheck.common.files import writing
    from modelcheck.report.members import members_csv
    from modelcheck.report.text import csv_frame

    frames = [members_csv(m.data.members, m.units, m.capacity) for m in inventory.models if m.data.members is not None]
    df = pd.concat(frames, ignore_index=True) if frames else pd.DataFrame()
    text = csv_frame(df).to_csv(index=False)
    if target is None:
        with writing(None):
            sys.stdout.write(text)
            sys.stdout.flush()
    else:
        Path(target).write_text(text, encoding="utf-8")


def write_table(inventory: Inventory, target: str | None, options: InventoryOptions) -> None:
    """A table per model as wide as the terminal, its warnings and notes, then the load-table
    rows no member used and the caution."""
    from contextlib import ExitStack, nullcontext

    from rich.markup import escape as markup_escape

    from modelcheck.common.files import writing
    from modelcheck.core.forces import unmatched_lines
    from modelcheck.report.console import make_console
    from modelcheck.report.members import CAUTION, member_notes, members_table
    from modelcheck.report.text import DETAILS_WIDTH, MAX_SHOWN, shown

    def escape(text: str, limit: int | None = MAX_SHOWN * 5) -> str:   # the model's text, safe for a terminal
        return markup_escape(shown(text, limit))

    # a file's errors are named by the command, which writes it through ``common.files.output_file``
    with (writing(None) if target is None else nullcontext()), ExitStack() as stack:
        sink = stack.enter_context(open(target, "w", encoding="utf-8")) if target else None
        con = make_console(file=sink)
        wide = bool(options.details) if options.details is not None else con.width >= DETAILS_WIDTH
        for m in inventory.models:
            d = m.data
            if d.error or d.members is None:
                con.print(f"[bold red]{escape(d.path, None)}: cannot be read[/] — {escape(d.error or '', None)}",
                          highlight=False)
                continue
            con.print(members_table(d.members, m.units, f"{d.path} ({d.schema}, {len(d.members)} members)",
                                    width=con.width, details=wide, capacity=m.capacity))
            for w in d.warnings + d.force_messages:
                con.print(f"[yellow]warning:[/] {escape(w)}", highlight=False)
            for label, note in member_notes(d.members, m.capacity):
                con.print(f"[yellow]{escape(label)}:[/] {escape(note)}", highlight=False)
        for line in unmatched_lines(list(inventory.unmatched)):
            con.print(f"[yellow]warning:[/] {escape(line)}", highlight=False)
        con.print(f"\n[dim]{CAUTION}[/]")
        (sink or sys.stdout).flush()


#: every format of the member inventory, one line each; ``--format`` lists them in this order
INVENTORY_FORMATS: tuple[InventoryFormat, ...] = (
    InventoryFormat("table", None, write_table),
    InventoryFormat("json", "json", write_json),
    InventoryFormat("csv", "csv", write_csv),
)


def inventory_format_names() -> list[str]:
    """The names ``members --format`` takes, in the order of :data:`INVENTORY_FORMATS`."""
    return [f.name for f in INVENTORY_FORMATS]


def inventory_format_named(name: str) -> InventoryFormat | None:
    """The inventory format called ``name``; None when there is none."""
    return next((f for f in INVENTORY_FORMATS if f.name == name), None)
