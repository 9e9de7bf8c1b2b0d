"""The tables of a rule-set file other than [[check]]: one function per table.

Each takes the TOML document (a dict) and the file's :class:`~modelcheck.common.problems.Problems`,
adds every problem it finds with the key path of its place (the collector turns it into the line),
and returns what it read, leaving out what it refused, so that the tables after it are still read
and every problem of the file is listed at once.
"""

from __future__ import annotations

import re
from collections.abc import Mapping
from dataclasses import dataclass
from types import MappingProxyType
from typing import Any

import pint

from modelcheck.common import vocabulary
from modelcheck.common.errors import RuleSetError
from modelcheck.common.problems import Key, Problems
from modelcheck.common.units import QuantityTextError, normalise_unit, parse_unit, split_quantity, ureg
from modelcheck.rules.expr import ExpressionError, checked_quantity, parse_expression, unit_literal
from modelcheck.rules.names import MEMBER_QUANTITIES, RESERVED, TEXT_NAMES
from modelcheck.rules.scope import Scope, placeholder
from modelcheck.rules.select import SELECTOR_KEYS, Selector, ifc_class_name
from modelcheck.rules.values import (
    DEFAULT_DISPLAY,
    DISPLAY_DIMENSIONALITY,
    DISPLAY_DIMENSIONS,
    Definition,
    Parameter,
)

#: the tables (and keys) of a rule-set file
TOP_LEVEL = ("ruleset", "display", "parameters", "define", "select", "check", "stock")
#: keys of [ruleset], and those it needs
RULESET_KEYS = ("name", "basis", "units", "description", "force_property")
RULESET_REQUIRED = ("name", "basis", "units")
#: keys of a parameter written as a table, ``K = { value = 1.0, about = "…" }``
PARAMETER_KEYS = ("value", "about")
#: keys of a definition written as a table, ``KLr = { expr = "K * L / r", about = "…" }``
DEFINE_KEYS = ("expr", "about")
#: the selector that leaves out members, in [select] and [check.select]
EXCLUDE = "exclude"
#: the shape families a ``shape`` selector names
SHAPES = frozenset(vocabulary.SHAPES)
#: words a parameter may not be named by
KEYWORDS = ("pi", "True", "False", "and", "or", "not", "if", "else", "in")

NAME_RE = re.compile(r"[A-Za-z][A-Za-z0-9_]{0,63}\Z")


@dataclass(frozen=True)
class Header:
    """What the [ruleset] table says."""

    name: str
    basis: str
    units: str                      # "US" or "SI"
    description: str
    force_property: str | None      # as written (stripped by the rule set)


@dataclass(frozen=True)
class Definitions:
    """The [define] table read: the definitions in file order, those that cannot be used (an
    error of their own, or a use of one that has), those the checks evaluate, and every name an
    expression may use (member values, texts, parameters and every name [define] gives)."""

    parsed: Mapping[str, Definition]
    broken: frozenset[str]
    usable: Mapping[str, Definition]
    known_names: frozenset[str]


def parse_top_level(data: Mapping[str, Any], problems: Problems[RuleSetError]) -> None:
    """The file holds only the tables of a rule set."""
    for key in data:
        if key not in TOP_LEVEL:
            problems.add((key,), f"unknown table or key {key!r} (a rule set has: {', '.join(TOP_LEVEL)})")


def parse_header(data: Mapping[str, Any], problems: Problems[RuleSetError]) -> Header:
    """[ruleset]: name, basis, units ("US" or "SI"), description, force_property."""
    meta = data.get("ruleset")
    units = "SI"
    if not isinstance(meta, dict):
        problems.add(("ruleset",), "the file needs a [ruleset] table with name, basis and units")
        meta = {}
    for k in meta:
        if k not in RULESET_KEYS:
            problems.add(("ruleset", k), f"unknown key {k!r} in [ruleset] ({', '.join(RULESET_KEYS)})")
    for k in RULESET_REQUIRED:
        if k not in meta and data.get("ruleset") is not None:
            problems.add(("ruleset",), f"[ruleset] needs {k}")
    for k in RULESET_KEYS:
        if k in meta and not isinstance(meta[k], str):
            problems.add(("ruleset", k), f"[ruleset] {k} is a text")
    force_property = meta.get("force_property") if isinstance(meta.get("force_property"), str) else None
    if force_property is not None:
        from modelcheck.loads.properties import parse_property_name

        try:
            parse_property_name(force_property)
        except ValueError:
            problems.add(("ruleset", "force_property"),
                         f"force_property is \"PropertySetName.PropertyName\", not {force_property!r}")
    if isinstance(meta.get("units"), str):
        u = meta["units"].strip().upper()
        if u in ("US", "US CUSTOMARY", "USCS", "IMPERIAL"):
            units = "US"
        elif u in ("SI", "METRIC"):
            units = "SI"
        else:
            problems.add(("ruleset", "units"), f"units is \"US\" or \"SI\", not {meta['units']!r}")
    return Header(name=_text(meta, "name"), basis=_text(meta, "basis"), units=units,
                  description=_text(meta, "description"), force_property=force_property)


def _text(table: Mapping[str, Any], key: str) -> str:
    value = table.get(key)
    return value if isinstance(value, str) else ""


def parse_display(data: Mapping[str, Any], units: str, problems: Problems[RuleSetError]) -> dict[str, str]:
    """[display]: the display units of ``units``' system, with the keys the file changes."""
    display = dict(DEFAULT_DISPLAY[units])
    table = data.get("display", {})
    if not isinstance(table, dict):
        problems.add(("display",), "[display] is a table like stress = \"ksi\"")
        table = {}
    for k, v in table.items():
        if k not in DISPLAY_DIMENSIONS:
            problems.add(("display", k), f"unknown display key {k!r} ({', '.join(DISPLAY_DIMENSIONS)})")
            continue
        try:
            if not isinstance(v, str):
                raise ExpressionError("a display unit is a text like \"ksi\"")
            unit = parse_unit(v) if v.strip() else ureg.Unit("")
            if unit.dimensionality != DISPLAY_DIMENSIONALITY[k]:
                raise ExpressionError(f"{v!r} is not a unit of {k.replace('_', ' ')}")
            display[k] = normalise_unit(v)
        except ExpressionError as exc:
            problems.add(("display", k), str(exc))
        except QuantityTextError as exc:
            problems.add(("display", k), f"unit {exc}")
        except Exception as exc:  # pint raises many types for odd unit text
            problems.add(("display", k), f"{v!r} is not a unit pint knows ({exc})")
    return display


def parse_parameters(data: Mapping[str, Any], problems: Problems[RuleSetError]) -> dict[str, Parameter]:
    """[parameters]: named constants, a number or a text "number unit", or a table of
    value and about; in file order."""
    params: dict[str, Parameter] = {}
    table = data.get("parameters", {})
    if not isinstance(table, dict):
        problems.add(("parameters",), "[parameters] is a table of name = value")
        table = {}
    for name, raw in table.items():
        where = ("parameters", name)
        if not NAME_RE.match(name) or "__" in name:
            problems.add(where, f"parameter name {name!r}: use letters, digits and _ (start with a letter)")
            continue
        if name in RESERVED or name in KEYWORDS:
            problems.add(where, f"parameter name {name!r} is taken by a member value or keyword")
            continue
        try:
            value, text, about = _parameter(raw)
        except ExpressionError as exc:
            problems.add(where + ("value",) if isinstance(raw, dict) and "value" in raw else where,
                         f"parameter {name}: {exc}")
            continue
        params[name] = Parameter(name, value, text, about, _line(problems, where))
    return params


def _line(problems: Problems[RuleSetError], key: Key) -> int:
    line = problems.line(key)
    return line if line is not None else 1


def _parameter(raw: Any) -> tuple[pint.Quantity, str, str]:
    """(value, its text, about) of one parameter; ExpressionError saying what is wrong."""
    about = ""
    if isinstance(raw, dict):
        unknown = set(raw) - set(PARAMETER_KEYS)
        if unknown:
            raise ExpressionError(f"unknown key {sorted(unknown)[0]!r} (a parameter has value and about)")
        if "value" not in raw:
            raise ExpressionError("a parameter table needs a value")
        about = raw.get("about", "")
        if not isinstance(about, str):
            raise ExpressionError("about is a text")
        raw = raw["value"]
    if isinstance(raw, bool) or not isinstance(raw, (int, float, str)):
        raise ExpressionError(f"a parameter is a number or a text like \"0.25 in\", not {type(raw).__name__}")
    if isinstance(raw, (int, float)):
        return checked_quantity(float(raw), ureg.Unit(""), str(raw)), str(raw), about
    try:   # the one reading of a number with a unit: '3/8 in', '1 1/2 in', '25 [mm]', '355 N/mm2'
        number, unit_text = split_quantity(raw, what="", example='"0.25 in" or "25 mm"')
    except QuantityTextError as exc:
        raise ExpressionError(str(exc).strip()) from None
    if unit_text:
        value = unit_literal(repr(float(number)), unit_text)   # read by units.parse_unit
    else:
        value = checked_quantity(float(number), ureg.Unit(""), raw)
    return value, raw, about


def parse_define(data: Mapping[str, Any], params: Mapping[str, Parameter], problems: Problems[RuleSetError]) -> Definitions:
    """[define]: named formulas, ``name = "expression"`` or a table of expr and about.

    Each is parsed, then evaluated once on a one-member placeholder (unknown names, dimension
    mismatches, definitions that refer to themselves); one that uses a broken definition is not
    evaluated, its cause being reported already.
    """
    table = data.get("define", {})
    if not isinstance(table, dict):
        problems.add(("define",), "[define] is a table of name = \"expression\"")
        table = {}
    known_names = frozenset(MEMBER_QUANTITIES) | frozenset(TEXT_NAMES) | frozenset(params) | frozenset(table)
    defs: dict[str, Definition] = {}
    broken: set[str] = set()
    for name, raw in table.items():
        where = ("define", name)
        if not NAME_RE.match(name) or "__" in name:
            problems.add(where, f"name {name!r}: use letters, digits and _ (start with a letter)")
            broken.add(name)
            continue
        if name in RESERVED or name in params or name == "pi":
            problems.add(where, f"name {name!r} is already a member value, parameter or constant")
            broken.add(name)
            continue
        about = ""
        try:
            if isinstance(raw, dict):
                unknown = set(raw) - set(DEFINE_KEYS)
                if unknown or "expr" not in raw:
                    raise ExpressionError("a definition table has expr (and about)")
                about = raw.get("about", "") if isinstance(raw.get("about", ""), str) else ""
                raw = raw["expr"]
            expr = parse_expression(expression_text(raw, name), known_names)
        except ExpressionError as exc:
            problems.add(where, f"{name}: {exc}")
            broken.add(name)
            continue
        defs[name] = Definition(name, expr, about, _line(problems, where))
    # definitions that use broken ones are not evaluated (their error is already reported)
    changed = True
    while changed:
        changed = False
        for d in defs.values():
            if d.name not in broken and d.expr.names & broken:
                broken.add(d.name)
                changed = True
    usable = {k: v for k, v in defs.items() if k not in broken}
    for d in defs.values():
        if d.name in broken:
            continue
        try:
            Scope(placeholder, params, usable)(d.name)
        except ExpressionError as exc:
            problems.add(("define", d.name), f"{d.name}: {exc}")
            broken.add(d.name)
    return Definitions(parsed=MappingProxyType(defs), broken=frozenset(broken), usable=MappingProxyType(usable),
                       known_names=known_names)


def expression_text(raw: Any, what: str) -> str:
    """The text of an expression as the file gives it (a number is written as one)."""
    if isinstance(raw, bool):
        raise ExpressionError(f"{what} is an expression, not true/false")
    if isinstance(raw, (int, float)):
        return repr(raw)
    if not isinstance(raw, str):
        raise ExpressionError(f"{what} is an expression in quotes, not {type(raw).__name__}")
    return raw


def parse_select(data: Mapping[str, Any], problems: Problems[RuleSetError]) -> Selector:
    """[select]: which members the whole rule set covers (all when it is left out)."""
    if "select" not in data:
        return Selector()
    return parse_selector(data["select"], ("select",), problems)


def parse_selector(table: Any, key: Key, problems: Problems[RuleSetError], nested: bool = False) -> Selector:
    """A table of selectors ([select], [check.select], or ``exclude = {…}`` inside one)."""
    if not isinstance(table, dict):
        problems.add(key, "select is a table of selector keys")
        return Selector()
    keys: list[tuple[str, tuple[str, ...]]] = []
    exclude: Selector | None = None
    for k, v in table.items():
        where = key + (k,)
        if k == EXCLUDE and not nested:
            exclude = parse_selector(v, where, problems, nested=True)
            continue
        if k not in SELECTOR_KEYS:
            problems.add(where, f"unknown selector {k!r} (selectors: {', '.join(SELECTOR_KEYS)}"
                                + ("" if nested else f", {EXCLUDE}") + ")")
            continue
        values = [v] if isinstance(v, str) else v
        if not isinstance(values, list) or not values or not all(isinstance(x, str) and x for x in values):
            problems.add(where, f"selector {k} takes a text or a list of texts")
            continue
        if k == "ifc_class":
            canon = []
            for x in values:
                name = ifc_class_name(x)
                if name is None:
                    problems.add(where, f"{x!r} is not an IFC class (IFC2X3, IFC4 or IFC4X3)")
                else:
                    canon.append(name)
            values = canon
        if k == "shape":
            for x in values:
                if not any(c in x for c in "*?[") and x not in SHAPES:
                    problems.add(where, f"{x!r} is not a shape family ({', '.join(sorted(SHAPES))})")
        keys.append((k, tuple(values)))
    return Selector(keys=tuple(keys), exclude=exclude)


def parse_stock(data: Mapping[str, Any], problems: Problems[RuleSetError]) -> Mapping[str, Any]:
    """[stock]: the rule set's changes to its stock series, kept as written; the sizing
    command reads them (:func:`modelcheck.design.stock.stock_series`)."""
    stock = data.get("stock", {})
    if not isinstance(stock, dict):
        problems.add(("stock",), "[stock] is a table")
        stock = {}
    return MappingProxyType(stock)
