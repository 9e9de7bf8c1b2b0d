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

from modelcheck.common.units import ureg
from modelcheck.report.text import MAX_LINE, shown
from modelcheck.rules.ruleset import RuleSet


def _e(text: str) -> str:
    """A rule file's text for a table cell: control characters escaped, cut at ``MAX_LINE``
    characters, rich markup escaped."""
    return escape(shown(text, MAX_LINE, layout=True))


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
        table.add_row(_e(rs.name), rs.units, str(len(rs.checks)), _e(rs.basis))
    return table


def _header(rs: RuleSet) -> Panel:
    lines = Text()
    lines.append(shown(rs.name, MAX_LINE), style="bold")
    lines.append(f"   ({rs.units} display units)\n")
    lines.append("basis: ", style="dim")
    lines.append(shown(rs.basis, MAX_LINE, layout=True) + "\n")
    if rs.description:
        lines.append(shown(rs.description, MAX_LINE, layout=True) + "\n")
    lines.append("file: ", style="dim")
    lines.append(shown(rs.path, MAX_LINE) + "\n")
    lines.append("applies to: ", style="dim")
    lines.append(shown(rs.select.describe(), MAX_LINE))
    return Panel(lines, expand=False)


def parameters_table(rs: RuleSet) -> Table:
    table = Table(title="Parameters", title_justify="left")
    table.add_column("name", style="bold", no_wrap=True)
    table.add_column("value", no_wrap=True)
    table.add_column("about")
    for p in rs.parameters:
        table.add_row(_e(p.name), _e(p.text), _e(p.about))
    return table


def definitions_table(rs: RuleSet) -> Table:
    table = Table(title="Formulas", title_justify="left")
    table.add_column("name", style="bold", no_wrap=True)
    table.add_column("=")
    for d in rs.definitions:
        table.add_row(_e(d.name), _e(d.expr.source) + (f"\n[dim]{_e(d.about)}[/dim]" if d.about else ""))
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
        when = _e(c.when.source) if c.when is not None else "always"
        if not c.select.empty:
            when += "\n[dim]members: " + _e(c.select.describe()) + "[/dim]"
        demand = f"|{_e(c.demand.source)}|" if c.magnitude else _e(c.demand.source)
        table.add_row(_e(c.id) + f"\n[dim]{_e(c.title)}[/dim]", _e(c.clause), when,
                      demand, _e(c.capacity.source), _e(_unit(c.unit)))
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
