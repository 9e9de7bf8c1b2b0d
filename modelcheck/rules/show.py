"""Rich renderables for ``modelcheck rules``, ``rules show NAME`` and ``rules validate FILE``.

Each function takes plain values and returns something ``rich.console.Console.print`` accepts::

    >>> from rich.console import Console
    >>> Console().print(ruleset_list(list_rulesets()))          # doctest: +SKIP
"""

from __future__ import annotations

from collections.abc import Sequence

from rich.console import Group, RenderableType
from rich.markup import escape
from rich.panel import Panel
from rich.table import Table
from rich.text import Text

from modelcheck.rules.ruleset import RuleSet
from modelcheck.units import ureg


def _unit(unit: str) -> str:
    return f"{ureg.Unit(unit):~P}" if unit else "–"


def ruleset_list(rulesets: Sequence[RuleSet]) -> Table:
    """One row per rule set: name, units, number of checks, basis."""
    table = Table(title="Rule sets", title_justify="left", show_lines=False)
    table.add_column("name", style="bold", no_wrap=True)
    table.add_column("units", no_wrap=True)
    table.add_column("checks", justify="right")
    table.add_column("basis")
    for rs in rulesets:
        table.add_row(escape(rs.name), rs.units, str(len(rs.checks)), escape(rs.basis))
    return table


def _header(rs: RuleSet) -> Panel:
    lines = Text()
    lines.append(rs.name, style="bold")
    lines.append(f"   ({rs.units} display units)\n")
    lines.append("basis: ", style="dim")
    lines.append(rs.basis + "\n")
    if rs.description:
        lines.append(rs.description + "\n")
    lines.append("file: ", style="dim")
    lines.append(rs.path + "\n")
    lines.append("applies to: ", style="dim")
    lines.append(rs.select.describe())
    return Panel(lines, expand=False)


def parameters_table(rs: RuleSet) -> Table:
    table = Table(title="Parameters", title_justify="left")
    table.add_column("name", style="bold", no_wrap=True)
    table.add_column("value", no_wrap=True)
    table.add_column("about")
    for p in rs.parameters:
        table.add_row(escape(p.name), escape(p.text), escape(p.about))
    return table


def definitions_table(rs: RuleSet) -> Table:
    table = Table(title="Formulas", title_justify="left")
    table.add_column("name", style="bold", no_wrap=True)
    table.add_column("=")
    for d in rs.definitions:
        table.add_row(escape(d.name), escape(d.expr.source) + (f"\n[dim]{escape(d.about)}[/dim]" if d.about else ""))
    return table


def checks_table(rs: RuleSet) -> Table:
    table = Table(title="Checks (pass when demand ≤ capacity)", title_justify="left", show_lines=True)
    table.add_column("id", style="bold", no_wrap=True)
    table.add_column("clause")
    table.add_column("applies when")
    table.add_column("demand")
    table.add_column("capacity")
    table.add_column("unit", no_wrap=True)
    for c in rs.checks:
        when = escape(c.when.source) if c.when is not None else "always"
        if not c.select.empty:
            when += "\n[dim]members: " + escape(c.select.describe()) + "[/dim]"
        demand = f"|{escape(c.demand.source)}|" if c.magnitude else escape(c.demand.source)
        table.add_row(escape(c.id) + f"\n[dim]{escape(c.title)}[/dim]", escape(c.clause), when,
                      demand, escape(c.capacity.source), escape(_unit(c.unit)))
    return table


def ruleset_view(rs: RuleSet) -> RenderableType:
    """The whole rule set: header, parameters, formulas, checks."""
    parts: list[RenderableType] = [_header(rs)]
    if rs.parameters:
        parts.append(parameters_table(rs))
    if rs.definitions:
        parts.append(definitions_table(rs))
    parts.append(checks_table(rs))
    return Group(*parts)
