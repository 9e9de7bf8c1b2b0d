"""Rule-set files: read, validate, and hold them as frozen values.

A rule set is a TOML file (syntax documented at the top of every shipped file in
``rulesets/``). Loading checks everything an engineer can get wrong before any member is
touched: TOML syntax, unknown keys and names, unsafe expressions, units, and dimensions — each
expression is evaluated once on a one-member placeholder with unit-ful values, so a demand in
ksi against a capacity in inches, or a misspelt name, fails here with file, line and check id.

Example::

    >>> rs = load_ruleset("steel-asd-us")
    >>> rs.check("tension-yield").capacity.source
    'Fy / Omega_t'
"""

from __future__ import annotations

import re
import tomllib
from collections.abc import Callable, Mapping
from dataclasses import dataclass, field, replace
from pathlib import Path
from types import MappingProxyType
from typing import Any

import numpy as np
import pint

from modelcheck.common.errors import RuleSetError
from modelcheck.common.units import Q_, QuantityTextError, normalise_unit, parse_unit, split_quantity, ureg
from modelcheck.rules.expr import (
    Cond,
    Expression,
    ExpressionError,
    Text,
    Value,
    checked_quantity,
    describe,
    parse_expression,
    unit_literal,
    unknown_name_message,
)
from modelcheck.rules.names import MEMBER_QUANTITIES, MESSAGE_NAMES, RESERVED, TEXT_NAMES
from modelcheck.rules.select import SELECTOR_KEYS, Selector, ifc_class_name

# ---------------------------------------------------------------------------------------------
# display units

#: [display] key -> an SI unit of that dimension
DISPLAY_DIMENSIONS: Mapping[str, str] = MappingProxyType({
    "force": "N",
    "stress": "Pa",
    "length": "m",
    "area": "m**2",
    "volume": "m**3",
    "second_moment": "m**4",
    "force_per_length": "N/m",
    "moment": "N*m",
    "expansion": "1/K",
    "temperature_change": "K",
    "number": "",
})

DEFAULT_DISPLAY: Mapping[str, Mapping[str, str]] = MappingProxyType({
    "US": MappingProxyType({
        "force": "kip", "stress": "ksi", "length": "in", "area": "in**2", "volume": "in**3",
        "second_moment": "in**4", "force_per_length": "kip/ft", "moment": "kip*ft",
        "expansion": "1/delta_degF", "temperature_change": "delta_degF", "number": "",
    }),
    "SI": MappingProxyType({
        "force": "kN", "stress": "MPa", "length": "mm", "area": "mm**2", "volume": "mm**3",
        "second_moment": "mm**4", "force_per_length": "kN/m", "moment": "kN*m",
        "expansion": "1/K", "temperature_change": "K", "number": "",
    }),
})

_DIMENSIONALITY = {key: ureg.Unit(si).dimensionality for key, si in DISPLAY_DIMENSIONS.items()}

SHAPES = frozenset({"round-bar", "round-tube", "square-bar", "flat-bar", "rect-tube", "I", "L", "T",
                    "U", "C", "Z", "ellipse", "arbitrary", "composite"})

TOP_LEVEL = ("ruleset", "display", "parameters", "define", "select", "check", "stock")
CHECK_KEYS = ("id", "title", "clause", "select", "when", "demand", "capacity", "unit", "message", "magnitude")

_ID_RE = re.compile(r"[A-Za-z][A-Za-z0-9_.-]{0,63}\Z")
_NAME_RE = re.compile(r"[A-Za-z][A-Za-z0-9_]{0,63}\Z")
_SPEC_RE = re.compile(r"[<>^=+\- #0-9,._%eEfFgGn]{0,16}\Z")
#: the width and precision of a format spec ([[fill]align][sign][#][0][width][,_][.precision][type])
_SPEC_SIZES_RE = re.compile(r"(?:.?[<>^=])?[+\- ]?#?0?(?P<width>\d*)[,_]?(?:\.(?P<precision>\d+))?[eEfFgGn%]?\Z")
#: the widest number a message may ask for, and the most digits after its point
MAX_FORMAT_WIDTH = 40
MAX_FORMAT_PRECISION = 17
#: checks in one rule set (a shipped one has fewer than ten)
MAX_CHECKS = 500


# ---------------------------------------------------------------------------------------------
# values


@dataclass(frozen=True)
class Parameter:
    """A named constant of the rule set, e.g. ``Omega_t = 1.67`` or ``delta_max = "0.25 in"``."""

    name: str
    value: pint.Quantity
    text: str
    about: str
    line: int


@dataclass(frozen=True)
class Definition:
    """A named expression, e.g. ``KLr = "K * L / r"``; evaluated member by member when used."""

    name: str
    expr: Expression
    about: str
    line: int


@dataclass(frozen=True)
class MessagePart:
    """Literal text, or a ``{expression:format}`` placeholder."""

    text: str = ""
    expr: Expression | None = None
    spec: str = ""


@dataclass(frozen=True)
class Check:
    """One check: pass where ``demand <= capacity``, for members its selectors pick and ``when`` holds."""

    id: str
    title: str
    clause: str
    demand: Expression
    capacity: Expression
    when: Expression | None
    unit: str                        # display unit of demand and capacity
    message: tuple[MessagePart, ...]
    message_source: str
    select: Selector
    line: int
    inputs: frozenset[str]           # member quantities it needs (a missing one -> unchecked)
    optional: frozenset[str]         # member quantities it tests with known() itself
    texts: frozenset[str]            # text names it uses
    definitions: tuple[str, ...]     # definitions it uses, in file order
    parameters: tuple[str, ...]      # parameters it uses, in file order
    magnitude: bool = False          # compare |demand| with the capacity (a signed demand's size)
    unit_given: bool = False         # the unit is the check's own ``unit`` key, not the display's

    @property
    def needs_force(self) -> bool:
        """True when the check needs the axial force P (one result per load case)."""
        return "P" in self.inputs or "P" in self.optional or "load_case" in self.texts

    @property
    def demand_source(self) -> str:
        """The demand as written, between bars when its size is compared (``magnitude``)."""
        return f"|{self.demand.source}|" if self.magnitude else self.demand.source

    @property
    def capacity_source(self) -> str:
        return self.capacity.source


@dataclass(frozen=True)
class RuleSet:
    """A loaded, validated rule set."""

    name: str
    path: str
    basis: str
    units: str                                  # "US" or "SI"
    description: str
    display: Mapping[str, str]                  # [display] key -> unit
    parameters: tuple[Parameter, ...]
    definitions: tuple[Definition, ...]
    select: Selector
    checks: tuple[Check, ...]
    stock: Mapping[str, Any] = field(default_factory=lambda: MappingProxyType({}))
    force_property: str | None = None           # "Pset.Property" holding each member's axial force

    def check(self, check_id: str) -> Check:
        for c in self.checks:
            if c.id == check_id:
                return c
        raise KeyError(check_id)

    @property
    def parameter_map(self) -> Mapping[str, Parameter]:
        return MappingProxyType({p.name: p for p in self.parameters})

    @property
    def definition_map(self) -> Mapping[str, Definition]:
        return MappingProxyType({d.name: d for d in self.definitions})

    def display_unit(self, q: pint.Quantity | pint.Unit) -> str:
        """The unit this rule set shows a quantity of that dimension in ('ksi' for a stress)."""
        return display_unit_for(self.display, q)

    def in_system(self, system: str) -> RuleSet:
        """This rule set showing its results in ``system`` ("SI" or "US").

        In the rule set's own system it is returned as written ([display] and each check's
        ``unit`` kept). In the other system the display units are that system's, a check's
        demand and capacity are shown in them (a dimensionless ``unit`` such as "%" is kept), and
        the suggestions come from that system's stock series unless the rule set's [stock]
        table names a series itself. The checks themselves do not change: units mix freely.

        Example::

            >>> load_ruleset("steel-asd-us").in_system("SI").check("tension-yield").unit
            'MPa'
        """
        if system == self.units:
            return self
        if system not in DEFAULT_DISPLAY:
            raise ValueError(f"units system {system!r} is not one of {', '.join(DEFAULT_DISPLAY)}")
        display = DEFAULT_DISPLAY[system]
        checks = tuple(c if c.unit_given and _dimensionless(c.unit)
                       else replace(c, unit=display_unit_for(display, ureg.parse_units(c.unit)))
                       for c in self.checks)
        return replace(self, units=system, display=display, checks=checks)


def _dimensionless(unit: str) -> bool:
    return not unit.strip() or bool(ureg.parse_units(unit).dimensionless)


def _unit_fits(unit: str, q: pint.Quantity) -> bool:
    """Whether numbers of ``q`` can be given in ``unit`` (the text of a unit, as a check stores it)."""
    try:
        return bool(Q_(1.0, unit).dimensionality == q.dimensionality)
    except Exception:  # pint raises many types for text that is no unit
        return False


def display_unit_for(display: Mapping[str, str], q: pint.Quantity | pint.Unit) -> str:
    dim = q.dimensionality
    for key, d in _DIMENSIONALITY.items():
        if d == dim:
            return display[key]
    try:
        return f"{Q_(1.0, q.units if isinstance(q, pint.Quantity) else q).to_base_units().units:~}"
    except OverflowError:  # a unit raised so high that its size in base units is no float
        return str(dim)


# ---------------------------------------------------------------------------------------------
# name resolution shared by the loader and the engine


class Scope:
    """Resolves names for one evaluation: extra values, parameters, definitions, then ``base``.

    Definitions are evaluated when first used and remembered for this scope only.
    """

    def __init__(self, base: Callable[[str], Value], parameters: Mapping[str, Parameter],
                 definitions: Mapping[str, Definition], extra: Mapping[str, Value] | None = None) -> None:
        self._base = base
        self._parameters = parameters
        self._definitions = definitions
        self._extra = extra if extra is not None else {}
        self._memo: dict[str, Value] = {}
        self._active: list[str] = []

    def __call__(self, name: str) -> Value:
        if name in self._extra:
            return self._extra[name]
        if name in self._parameters:
            return self._parameters[name].value
        if name in self._definitions:
            if name in self._memo:
                return self._memo[name]
            if name in self._active:
                chain = " -> ".join(self._active[self._active.index(name):] + [name])
                raise ExpressionError(f"definitions refer to themselves: {chain}")
            self._active.append(name)
            try:
                value = self._definitions[name].expr.evaluate(self)
            finally:
                self._active.pop()
            self._memo[name] = value
            return value
        return self._base(name)


def _dummy_base(name: str) -> Value:
    if name in MEMBER_QUANTITIES:
        q = MEMBER_QUANTITIES[name]
        return Q_(np.array([q.dummy]), q.unit)
    if name in TEXT_NAMES:
        return Text(np.array(["x"], dtype=object))
    raise ExpressionError(unknown_name_message(name, list(MEMBER_QUANTITIES) + list(TEXT_NAMES)))


def closure(names: frozenset[str], definitions: Mapping[str, Definition]) -> tuple[set[str], set[str], list[str]]:
    """(all names reached through definitions, names reached inside known(), definitions used)."""
    seen: set[str] = set()
    known: set[str] = set()
    used: list[str] = []
    stack = list(names)
    while stack:
        name = stack.pop()
        if name in seen:
            continue
        seen.add(name)
        d = definitions.get(name)
        if d is not None:
            used.append(name)
            stack.extend(d.expr.names)
            known |= d.expr.known_names
    return seen, known, used


# ---------------------------------------------------------------------------------------------
# file reading


def _split_key(text: str) -> tuple[str, ...]:
    parts = re.findall(r'"[^"]*"|\'[^\']*\'|[^.\s]+', text)
    return tuple(p.strip("\"'") for p in parts)


_HEADER_ARRAY_RE = re.compile(r"\[\[\s*([^\]]+?)\s*\]\]")
_HEADER_RE = re.compile(r"\[\s*([^\]]+?)\s*\]")
_KEY_RE = re.compile(
    r"((?:[A-Za-z0-9_-]+|\"[^\"]*\"|'[^']*')(?:\s*\.\s*(?:[A-Za-z0-9_-]+|\"[^\"]*\"|'[^']*'))*)\s*="
)


def line_map(text: str) -> dict[tuple[Any, ...], int]:
    """Line number of every table header and key: ('check', 2, 'demand') -> 57."""
    lines: dict[tuple[Any, ...], int] = {}
    section: tuple[Any, ...] = ()
    checks = -1
    open_string: str | None = None
    open_brackets = 0          # inside a value (array) that runs over several lines
    for no, raw in enumerate(text.splitlines(), 1):
        if open_string is not None:
            if raw.count(open_string) % 2 == 1:
                open_string = None
            continue
        s = raw.strip()
        if open_brackets > 0:
            open_brackets += _bracket_balance(s)
            continue
        if not s or s.startswith("#"):
            continue
        m = _HEADER_ARRAY_RE.match(s)
        if m:
            path = _split_key(m.group(1))
            if path == ("check",):
                checks += 1
                section = ("check", checks)
            else:
                section = path
            lines.setdefault(section, no)
            continue
        m = _HEADER_RE.match(s)
        if m:
            path = _split_key(m.group(1))
            section = ("check", checks) + path[1:] if path[:1] == ("check",) and checks >= 0 else path
            lines.setdefault(section, no)
            continue
        m = _KEY_RE.match(s)
        if m:
            lines.setdefault(section + _split_key(m.group(1)), no)
            rest = s[m.end():]
            for delim in ('"""', "'''"):
                if rest.count(delim) % 2 == 1:
                    open_string = delim
                    break
            else:
                open_brackets = max(0, _bracket_balance(rest))
    return lines


def _bracket_balance(text: str) -> int:
    """Opening minus closing brackets of a TOML line, outside quotes and comments (roughly)."""
    depth = 0
    quote: str | None = None
    for ch in text:
        if quote:
            if ch == quote:
                quote = None
        elif ch in "\"'":
            quote = ch
        elif ch == "#":
            break
        elif ch in "[{":
            depth += 1
        elif ch in "]}":
            depth -= 1
    return depth


class _Errors:
    """Collects every error of one file, each with its line."""

    def __init__(self, path: str, lines: dict[tuple[Any, ...], int]) -> None:
        self.path = path
        self.lines = lines
        self.items: list[RuleSetError] = []

    def line(self, key: tuple[Any, ...]) -> int:
        while key:
            if key in self.lines:
                return self.lines[key]
            key = key[:-1]
        return 1

    def add(self, key: tuple[Any, ...], message: str, check_id: str | None = None) -> None:
        if check_id is not None:
            message = f"check {check_id}: {message}"
        self.items.append(RuleSetError(message, path=self.path, where=str(self.line(key))))


def _parse_parameter(name: str, raw: Any) -> tuple[pint.Quantity, str, str]:
    about = ""
    if isinstance(raw, dict):
        unknown = set(raw) - {"value", "about"}
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


def _parse_selector(table: Any, key: tuple[Any, ...], errors: _Errors, check_id: str | None,
                    nested: bool = False) -> Selector:
    if not isinstance(table, dict):
        errors.add(key, "select is a table of selector keys", check_id)
        return Selector()
    keys: list[tuple[str, tuple[str, ...]]] = []
    exclude: Selector | None = None
    for k, v in table.items():
        where = key + (k,)
        if k == "exclude" and not nested:
            exclude = _parse_selector(v, where, errors, check_id, nested=True)
            continue
        if k not in SELECTOR_KEYS:
            errors.add(where, f"unknown selector {k!r} (selectors: {', '.join(SELECTOR_KEYS)}"
                              + ("" if nested else ", exclude") + ")", check_id)
            continue
        values = [v] if isinstance(v, str) else v
        if not isinstance(values, list) or not values or not all(isinstance(x, str) and x for x in values):
            errors.add(where, f"selector {k} takes a text or a list of texts", check_id)
            continue
        if k == "ifc_class":
            canon = []
            for x in values:
                name = ifc_class_name(x)
                if name is None:
                    errors.add(where, f"{x!r} is not an IFC class (IFC2X3, IFC4 or IFC4X3)", check_id)
                else:
                    canon.append(name)
            values = canon
        if k == "shape":
            for x in values:
                if not any(c in x for c in "*?[") and x not in SHAPES:
                    errors.add(where, f"{x!r} is not a shape family ({', '.join(sorted(SHAPES))})", check_id)
        keys.append((k, tuple(values)))
    return Selector(keys=tuple(keys), exclude=exclude)


def _parse_message(text: str, names: set[str]) -> tuple[MessagePart, ...]:
    parts: list[MessagePart] = []
    buf: list[str] = []
    i = 0
    while i < len(text):
        ch = text[i]
        if ch == "{":
            if text.startswith("{{", i):
                buf.append("{")
                i += 2
                continue
            j = text.find("}", i)
            if j < 0:
                raise ExpressionError("message: '{' without a closing '}' (write {{ for a brace)")
            expr_text, _, spec = text[i + 1:j].partition(":")
            spec = spec.strip()
            if not _SPEC_RE.match(spec):
                raise ExpressionError(f"message: {spec!r} is not a number format like .3g or .2%")
            sizes = _SPEC_SIZES_RE.match(spec)
            width = int(sizes.group("width") or 0) if sizes else 0
            precision = int(sizes.group("precision") or 0) if sizes else 0
            if width > MAX_FORMAT_WIDTH or precision > MAX_FORMAT_PRECISION:
                raise ExpressionError(f"message: {spec!r}: a number format is at most {MAX_FORMAT_WIDTH} wide "
                                      f"with at most {MAX_FORMAT_PRECISION} digits after the point")
            try:
                format(1.0, spec)
            except ValueError as exc:
                raise ExpressionError(f"message: {spec!r} is not a number format ({exc})") from None
            if buf:
                parts.append(MessagePart(text="".join(buf)))
                buf = []
            parts.append(MessagePart(expr=parse_expression(expr_text, names), spec=spec))
            i = j + 1
        elif ch == "}":
            if text.startswith("}}", i):
                buf.append("}")
                i += 2
                continue
            raise ExpressionError("message: '}' without an opening '{' (write }} for a brace)")
        else:
            buf.append(ch)
            i += 1
    if buf:
        parts.append(MessagePart(text="".join(buf)))
    return tuple(parts)


def _expr_text(raw: Any, what: str) -> str:
    if isinstance(raw, bool):
        raise ExpressionError(f"{what} is an expression, not true/false")
    if isinstance(raw, (int, float)):
        return repr(raw)
    if not isinstance(raw, str):
        raise ExpressionError(f"{what} is an expression in quotes, not {type(raw).__name__}")
    return raw


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


def parse_ruleset(text: str, path: str) -> tuple[RuleSet | None, list[RuleSetError]]:
    """Parse rule-set ``text`` (read from ``path``); returns the rule set and every error found."""
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
    errors = _Errors(path, line_map(text))

    for key in data:
        if key not in TOP_LEVEL:
            errors.add((key,), f"unknown table or key {key!r} (a rule set has: {', '.join(TOP_LEVEL)})")

    # [ruleset]
    meta = data.get("ruleset")
    name = basis = description = ""
    units = "SI"
    if not isinstance(meta, dict):
        errors.add(("ruleset",), "the file needs a [ruleset] table with name, basis and units")
        meta = {}
    for k in meta:
        if k not in ("name", "basis", "units", "description", "force_property"):
            errors.add(("ruleset", k), f"unknown key {k!r} in [ruleset] "
                                       "(name, basis, units, description, force_property)")
    for k in ("name", "basis", "units"):
        if k not in meta and data.get("ruleset") is not None:
            errors.add(("ruleset",), f"[ruleset] needs {k}")
    for k in ("name", "basis", "units", "description", "force_property"):
        if k in meta and not isinstance(meta[k], str):
            errors.add(("ruleset", k), f"[ruleset] {k} is a text")
    force_property = meta.get("force_property") if isinstance(meta.get("force_property"), str) else None
    if force_property is not None:
        from modelcheck.loads.properties import parse_property_name

        try:
            parse_property_name(force_property)
        except ValueError:
            errors.add(("ruleset", "force_property"),
                       f"force_property is \"PropertySetName.PropertyName\", not {force_property!r}")
    name = meta.get("name", "") if isinstance(meta.get("name"), str) else ""
    basis = meta.get("basis", "") if isinstance(meta.get("basis"), str) else ""
    description = meta.get("description", "") if isinstance(meta.get("description"), str) else ""
    if isinstance(meta.get("units"), str):
        u = meta["units"].strip().upper()
        if u in ("US", "US CUSTOMARY", "USCS", "IMPERIAL"):
            units = "US"
        elif u in ("SI", "METRIC"):
            units = "SI"
        else:
            errors.add(("ruleset", "units"), f"units is \"US\" or \"SI\", not {meta['units']!r}")

    # [display]
    display = dict(DEFAULT_DISPLAY[units])
    disp = data.get("display", {})
    if not isinstance(disp, dict):
        errors.add(("display",), "[display] is a table like stress = \"ksi\"")
        disp = {}
    for k, v in disp.items():
        if k not in DISPLAY_DIMENSIONS:
            errors.add(("display", k), f"unknown display key {k!r} ({', '.join(DISPLAY_DIMENSIONS)})")
            continue
        try:
            if not isinstance(v, str):
                raise ExpressionError("a display unit is a text like \"ksi\"")
            unit = parse_unit(v) if v.strip() else ureg.Unit("")
            if unit.dimensionality != _DIMENSIONALITY[k]:
                raise ExpressionError(f"{v!r} is not a unit of {k.replace('_', ' ')}")
            display[k] = normalise_unit(v)
        except ExpressionError as exc:
            errors.add(("display", k), str(exc))
        except QuantityTextError as exc:
            errors.add(("display", k), f"unit {exc}")
        except Exception as exc:  # pint raises many types for odd unit text
            errors.add(("display", k), f"{v!r} is not a unit pint knows ({exc})")

    # [parameters]
    params: dict[str, Parameter] = {}
    ptable = data.get("parameters", {})
    if not isinstance(ptable, dict):
        errors.add(("parameters",), "[parameters] is a table of name = value")
        ptable = {}
    for pname, raw in ptable.items():
        where = ("parameters", pname)
        if not _NAME_RE.match(pname) or "__" in pname:
            errors.add(where, f"parameter name {pname!r}: use letters, digits and _ (start with a letter)")
            continue
        if pname in RESERVED or pname in ("pi", "True", "False", "and", "or", "not", "if", "else", "in"):
            errors.add(where, f"parameter name {pname!r} is taken by a member value or keyword")
            continue
        try:
            value, ptext, about = _parse_parameter(pname, raw)
        except ExpressionError as exc:
            errors.add(where + ("value",) if isinstance(raw, dict) and "value" in raw else where,
                       f"parameter {pname}: {exc}")
            continue
        params[pname] = Parameter(pname, value, ptext, about, errors.line(where))

    # [define]
    dtable = data.get("define", {})
    if not isinstance(dtable, dict):
        errors.add(("define",), "[define] is a table of name = \"expression\"")
        dtable = {}
    def_names = set(dtable)
    all_names = set(MEMBER_QUANTITIES) | set(TEXT_NAMES) | set(params) | def_names
    defs: dict[str, Definition] = {}
    broken_defs: set[str] = set()
    for dname, raw in dtable.items():
        where = ("define", dname)
        if not _NAME_RE.match(dname) or "__" in dname:
            errors.add(where, f"name {dname!r}: use letters, digits and _ (start with a letter)")
            broken_defs.add(dname)
            continue
        if dname in RESERVED or dname in params or dname == "pi":
            errors.add(where, f"name {dname!r} is already a member value, parameter or constant")
            broken_defs.add(dname)
            continue
        about = ""
        try:
            if isinstance(raw, dict):
                unknown = set(raw) - {"expr", "about"}
                if unknown or "expr" not in raw:
                    raise ExpressionError("a definition table has expr (and about)")
                about = raw.get("about", "") if isinstance(raw.get("about", ""), str) else ""
                raw = raw["expr"]
            expr = parse_expression(_expr_text(raw, dname), all_names)
        except ExpressionError as exc:
            errors.add(where, f"{dname}: {exc}")
            broken_defs.add(dname)
            continue
        defs[dname] = Definition(dname, expr, about, errors.line(where))
    # definitions that use broken ones are not evaluated (their error is already reported)
    changed = True
    while changed:
        changed = False
        for d in defs.values():
            if d.name not in broken_defs and d.expr.names & broken_defs:
                broken_defs.add(d.name)
                changed = True
    good_defs = {k: v for k, v in defs.items() if k not in broken_defs}
    for d in defs.values():
        if d.name in broken_defs:
            continue
        try:
            Scope(_dummy_base, params, good_defs)(d.name)
        except ExpressionError as exc:
            errors.add(("define", d.name), f"{d.name}: {exc}")
            broken_defs.add(d.name)

    # [select]
    top_select = Selector()
    if "select" in data:
        top_select = _parse_selector(data["select"], ("select",), errors, None)

    # [stock] is read by the sizing command; kept as written
    stock = data.get("stock", {})
    if not isinstance(stock, dict):
        errors.add(("stock",), "[stock] is a table")
        stock = {}

    # [[check]]
    checks: list[Check] = []
    raw_checks = data.get("check", [])
    if not isinstance(raw_checks, list):
        errors.add(("check",), "checks are written as [[check]] tables")
        raw_checks = []
    if not raw_checks and "check" not in data:
        errors.add(("ruleset",), "the rule set has no [[check]]")
    if len(raw_checks) > MAX_CHECKS:
        errors.add(("check", MAX_CHECKS), f"the rule set has {len(raw_checks):,} checks, more than {MAX_CHECKS}; "
                   "split it into several rule sets")
        raw_checks = raw_checks[:MAX_CHECKS]
    seen_ids: set[str] = set()
    names_for_checks = all_names
    for k, raw in enumerate(raw_checks):
        base = ("check", k)
        if not isinstance(raw, dict):
            errors.add(base, "a check is a table")
            continue
        cid = raw.get("id")
        label = cid if isinstance(cid, str) and cid else f"#{k + 1}"
        if not isinstance(cid, str) or not _ID_RE.match(cid):
            errors.add(base + ("id",) if "id" in raw else base,
                       "needs an id of letters, digits, '-', '_' or '.' (starting with a letter)", label)
        elif cid in seen_ids:
            errors.add(base + ("id",), "the id is used by an earlier check", label)
        else:
            seen_ids.add(cid)
        for key in raw:
            if key not in CHECK_KEYS:
                errors.add(base + (key,), f"unknown key {key!r} (a check has {', '.join(CHECK_KEYS)})", label)
        for key in ("title", "clause", "message", "unit"):
            if key in raw and not isinstance(raw[key], str):
                errors.add(base + (key,), f"{key} is a text", label)
        if "magnitude" in raw and not isinstance(raw["magnitude"], bool):
            errors.add(base + ("magnitude",), "magnitude is true or false", label)
        parsed: dict[str, Expression | None] = {}
        ok = True
        for key in ("demand", "capacity", "when"):
            if key not in raw:
                if key != "when":
                    errors.add(base, f"needs a {key} expression", label)
                    ok = False
                parsed[key] = None
                continue
            try:
                parsed[key] = parse_expression(_expr_text(raw[key], key), names_for_checks)
            except ExpressionError as exc:
                errors.add(base + (key,), f"{key}: {exc}", label)
                parsed[key] = None
                ok = False
        message_source = raw.get("message", "") if isinstance(raw.get("message", ""), str) else ""
        message: tuple[MessagePart, ...] = ()
        message_ok = True
        try:
            message = _parse_message(message_source, names_for_checks | set(MESSAGE_NAMES))
        except ExpressionError as exc:
            errors.add(base + ("message",), f"message: {exc}", label)
            message_ok = False
        select = _parse_selector(raw["select"], base + ("select",), errors, label) if "select" in raw else Selector()
        if not ok or parsed["demand"] is None or parsed["capacity"] is None:
            continue
        demand, capacity, when = parsed["demand"], parsed["capacity"], parsed["when"]
        exprs = [demand, capacity] + ([when] if when is not None else []) + [
            p.expr for p in message if p.expr is not None]
        all_used: frozenset[str] = frozenset().union(*(e.names for e in exprs))
        reached, known_reached, used_defs = closure(all_used, defs)
        bad = reached & broken_defs
        if bad:
            errors.add(base, f"uses {', '.join(sorted(bad))}, which has an error (see above)", label)
            continue
        known_reached |= frozenset().union(*(e.known_names for e in exprs))
        # kinds and dimensions, on a one-member placeholder
        scope = Scope(_dummy_base, params, good_defs)
        values: dict[str, Value] = {}
        for key, expr in (("demand", demand), ("capacity", capacity), ("when", when)):
            if expr is None:
                continue
            try:
                values[key] = expr.evaluate(scope)
            except ExpressionError as exc:
                errors.add(base + (key,), f"{key}: {exc}", label)
                ok = False
        for key in ("demand", "capacity"):
            if key in values and not isinstance(values[key], pint.Quantity):
                errors.add(base + (key,), f"{key} must be a number, but is {describe(values[key])}", label)
                ok = False
        if "when" in values and not isinstance(values["when"], Cond):
            errors.add(base + ("when",), f"when must be a condition (a comparison), but is {describe(values['when'])}",
                       label)
            ok = False
        if not ok:
            continue
        dval, cval = values["demand"], values["capacity"]
        assert isinstance(dval, pint.Quantity) and isinstance(cval, pint.Quantity)
        if dval.dimensionality != cval.dimensionality:
            errors.add(base + ("capacity",),
                       f"demand {demand.source!r} is {describe(dval)} ({display_unit_for(display, dval) or 'no unit'}) "
                       f"but capacity {capacity.source!r} is {describe(cval)} "
                       f"({display_unit_for(display, cval) or 'no unit'}); they must have one dimension", label)
            ok = False
        unit = display_unit_for(display, dval)
        if ok and "unit" not in raw and not _unit_fits(unit, dval):
            errors.add(base + ("demand",), f"demand {demand.source!r} is {describe(dval)}, a unit that cannot be "
                                           "written down (powers must be whole numbers or simple fractions)", label)
            ok = False
        if isinstance(raw.get("unit"), str):
            try:
                u = parse_unit(raw["unit"]) if raw["unit"].strip() else ureg.Unit("")
                if u.dimensionality != dval.dimensionality:
                    errors.add(base + ("unit",), f"unit {raw['unit']!r} does not fit {describe(dval)}", label)
                    ok = False
                unit = normalise_unit(raw["unit"])
            except QuantityTextError as exc:
                errors.add(base + ("unit",), f"unit {exc}", label)
                ok = False
            except Exception as exc:  # pint raises many types for odd unit text
                errors.add(base + ("unit",), f"{raw['unit']!r} is not a unit pint knows ({exc})", label)
                ok = False
        if message_ok:
            message_extra = {"demand": dval, "capacity": cval, "ratio": Q_(np.array([0.5]), "")}
            for part in message:
                if part.expr is None:
                    continue
                try:
                    v = part.expr.evaluate(Scope(_dummy_base, params, good_defs, message_extra))
                except ExpressionError as exc:
                    errors.add(base + ("message",), f"message {{{part.expr.source}}}: {exc}", label)
                    ok = False
                    continue
                if part.spec and not isinstance(v, pint.Quantity):
                    errors.add(base + ("message",), f"message {{{part.expr.source}:{part.spec}}}: a format "
                                                    "applies to numbers only", label)
                    ok = False
        if not ok or not message_ok:
            continue
        quantities = reached & set(MEMBER_QUANTITIES)
        optional = frozenset(quantities & known_reached)
        checks.append(Check(
            id=str(cid), title=str(raw.get("title", cid)), clause=str(raw.get("clause", "")),
            demand=demand, capacity=capacity, when=when, unit=unit, message=message,
            message_source=message_source, select=select, line=errors.line(base),
            inputs=frozenset(quantities - optional), optional=optional,
            texts=frozenset(reached & set(TEXT_NAMES)),
            definitions=tuple(n for n in defs if n in used_defs),
            parameters=tuple(n for n in params if n in reached),
            magnitude=raw.get("magnitude") is True,
            unit_given=isinstance(raw.get("unit"), str),
        ))

    if errors.items:
        return None, sorted(errors.items, key=lambda e: int(e.where or 0))
    return RuleSet(
        name=name, path=path, basis=basis, units=units, description=description,
        display=MappingProxyType(display), parameters=tuple(params.values()),
        definitions=tuple(defs.values()), select=top_select, checks=tuple(checks),
        stock=MappingProxyType(stock), force_property=force_property.strip() if force_property else None,
    ), []


def _read(path: Path) -> str:
    try:
        raw = path.read_bytes()
    except OSError as exc:
        raise RuleSetError(f"cannot read the rule set: {exc.strerror or exc}", path=str(path)) from exc
    try:
        return raw.decode("utf-8").removeprefix("\ufeff")  # a byte-order mark, as some editors save
    except UnicodeDecodeError as exc:
        line = raw[:exc.start].count(b"\n") + 1
        raise RuleSetError("not UTF-8 text", path=str(path), where=str(line)) from exc


class RuleSetErrors(RuleSetError):
    """A rule-set file with errors: the message is the first, ``errors`` holds them all."""

    def __init__(self, errors: list[RuleSetError]) -> None:
        first = errors[0]
        more = len(errors) - 1
        text = str(first) + (f" (and {more} more error{'s' if more > 1 else ''}; "
                             "'modelcheck rules validate FILE' lists them)" if more else "")
        super().__init__(text)
        self.path = first.path
        self.where = first.where
        self.errors = tuple(errors)


def resolve_ruleset(name_or_path: str | Path) -> Path:
    """A shipped rule set by name ('steel-asd-us'), or a file by path."""
    from modelcheck.common.data import data_dir

    text = str(name_or_path)
    candidate = Path(text)
    looks_like_path = isinstance(name_or_path, Path) or "/" in text or "\\" in text or text.endswith(".toml")
    if looks_like_path or candidate.exists():
        if candidate.is_dir():
            raise RuleSetError("is a folder, not a rule-set file (.toml)", path=text)
        if not candidate.exists():
            raise RuleSetError("no such rule-set file", path=text)
        if not candidate.is_file():   # a device or a pipe: reading it may never end
            raise RuleSetError("is not a regular file (a device, pipe or socket), not a rule-set file (.toml)",
                               path=text)
        return candidate
    shipped = data_dir() / f"{text}.toml"
    if _NAME_RE.match(text.replace("-", "_")) and shipped.is_file() and text in shipped_names():
        return shipped
    raise RuleSetError(f"no rule set named {text!r}; shipped rule sets: {', '.join(shipped_names())}")


def shipped_names() -> list[str]:
    """File stems of the shipped rule sets (TOML files in the data folder with a [ruleset] table)."""
    from modelcheck.common.data import data_dir

    names = []
    for p in sorted(data_dir().glob("*.toml")):
        try:
            head = tomllib.loads(p.read_text(encoding="utf-8"))
        except (OSError, UnicodeDecodeError, tomllib.TOMLDecodeError):
            continue
        if isinstance(head.get("ruleset"), dict):
            names.append(p.stem)
    return names


def load_ruleset(name_or_path: str | Path) -> RuleSet:
    """Load and validate a rule set; raises :class:`RuleSetErrors` (a RuleSetError) listing all errors."""
    path = resolve_ruleset(name_or_path)
    ruleset, errors = parse_ruleset(_read(path), str(path))
    if errors:
        raise RuleSetErrors(errors)
    assert ruleset is not None
    return ruleset


def validate_ruleset_file(path: str | Path) -> list[str]:
    """Every error in a rule set (a shipped name or a file), each 'file:line: check <id>: message';
    [] when it is valid."""
    try:
        resolved = resolve_ruleset(path)
        text = _read(resolved)
    except RuleSetError as exc:
        return [str(exc)]
    _, errors = parse_ruleset(text, str(resolved))
    return [str(e) for e in errors]


def ruleset_warnings(ruleset: RuleSet) -> list[str]:
    """What a valid rule set may not mean: 'file:line: check <id>: ...' for each check that
    applies to every member (no ``when``) and whose demand is negative for a tension or a
    compression force (a signed demand). The engine leaves such a row unchecked rather than
    passing it; ``magnitude = true`` compares the demand's size instead."""
    out: list[str] = []
    for check in ruleset.checks:
        if check.when is not None or check.magnitude or "P" not in check.inputs | check.optional:
            continue
        for sign in (1.0, -1.0):
            def base(name: str, sign: float = sign) -> Value:
                if name == "P":
                    return Q_(np.array([sign * MEMBER_QUANTITIES["P"].dummy]), MEMBER_QUANTITIES["P"].unit)
                return _dummy_base(name)
            try:
                value = check.demand.evaluate(Scope(base, ruleset.parameter_map, ruleset.definition_map))
            except ExpressionError:
                continue
            if isinstance(value, pint.Quantity) and bool(np.any(np.asarray(value.magnitude) < 0)):
                out.append(f"{ruleset.path}:{check.line}: check {check.id}: warning: the demand "
                           f"{check.demand.source!r} is negative for a {'tension' if sign > 0 else 'compression'} "
                           "force and the check has no 'when': such members are left unchecked (add a 'when' "
                           "such as \"P > 0\", or 'magnitude = true' to compare the demand's size)")
                break
    return out


def list_rulesets() -> list[RuleSet]:
    """The shipped rule sets, by name."""
    from modelcheck.common.data import data_dir

    return sorted((load_ruleset(data_dir() / f"{n}.toml") for n in shipped_names()), key=lambda r: r.name)
