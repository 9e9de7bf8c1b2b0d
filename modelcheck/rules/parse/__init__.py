"""Reading a rule-set file: its text to a :class:`~modelcheck.rules.values.RuleSet`, or every problem in it.

:func:`parse_ruleset` reads the TOML, then each table in turn, one function per table
(:mod:`.tables`: the file's tables, [ruleset], [display], [parameters], [define], [select],
[stock]; :mod:`.checks`: [[check]]), all adding to one
:class:`~modelcheck.common.problems.Problems` of the file, which places each problem on its line.
A table with a problem does not stop the reading: the tables after it are still read, so that
``modelcheck rules validate`` lists every problem of the file at once. The syntax itself is
documented in ``modelcheck/rulesets/SYNTAX.md``.
"""

from __future__ import annotations

import re
import tomllib
from types import MappingProxyType

from modelcheck.common.errors import RuleSetError
from modelcheck.common.problems import Problems, toml_lines
from modelcheck.rules.parse.checks import parse_checks
from modelcheck.rules.parse.tables import (
    parse_define,
    parse_display,
    parse_header,
    parse_parameters,
    parse_select,
    parse_stock,
    parse_top_level,
)
from modelcheck.rules.values import RuleSet

__all__ = ["parse_ruleset"]


def parse_ruleset(text: str, path: str) -> tuple[RuleSet | None, list[RuleSetError]]:
    """Parse rule-set ``text`` (read from ``path``); returns the rule set and every error found,
    in the order of their lines."""
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        line, message = _toml_error_line(exc)
        if line == 0:
            line = max(1, text.count("\n") + 1)
        return None, [RuleSetError(message, path=path, where=str(line))]
    except RecursionError:  # tomllib descends once per nested array or inline table
        return None, [RuleSetError("not valid TOML for a rule set: arrays or tables nested too deeply",
                                   path=path, where=str(_deepest_line(text)))]
    problems = Problems(path, RuleSetError, lines=toml_lines(text, arrays=("check",)))

    parse_top_level(data, problems)
    header = parse_header(data, problems)
    display = parse_display(data, header.units, problems)
    params = parse_parameters(data, problems)
    definitions = parse_define(data, params, problems)
    select = parse_select(data, problems)
    stock = parse_stock(data, problems)
    checks = parse_checks(data, problems, params=params, definitions=definitions, display=display)

    if problems:
        return None, problems.by_line()
    return RuleSet(
        name=header.name, path=path, basis=header.basis, units=header.units, description=header.description,
        display=MappingProxyType(display), parameters=tuple(params.values()),
        definitions=tuple(definitions.parsed.values()), select=select, checks=tuple(checks), stock=stock,
        force_property=header.force_property.strip() if header.force_property else None,
    ), []


def _toml_error_line(exc: tomllib.TOMLDecodeError) -> tuple[int, str]:
    m = re.search(r"\(at line (\d+), column (\d+)\)", str(exc))
    message = re.sub(r"\s*\(at line \d+, column \d+\)", "", str(exc)) or "TOML syntax error"
    if m:
        return int(m.group(1)), f"not valid TOML: {message} (column {m.group(2)})"
    message = re.sub(r"\s*\(at end of document\)", "", message)
    return 0, f"not valid TOML: {message} (at the end of the file)"


def _deepest_line(text: str, limit: int = 100) -> int:
    """The first line at which '[' and '{' outside strings are open more than ``limit`` deep."""
    depth, quote = 0, ""
    for no, line in enumerate(text.splitlines(), 1):
        for ch in line:
            if quote:
                quote = "" if ch == quote else quote
            elif ch in "\"'":
                quote = ch
            elif ch in "[{":
                depth += 1
                if depth > limit:
                    return no
            elif ch in "]}":
                depth -= 1
    return 1
