"""The [[check]] tables of a rule-set file.

Each check is read in steps, every problem added with the check's id (``check stress: …``):
its keys; its expressions (demand, capacity, when) and message parsed; then, once all of them
parse, evaluated on a one-member placeholder for their kinds and dimensions; then its unit and
the values of its message. A check with a problem is left out; the others are still read.
"""

from __future__ import annotations

import re
from collections.abc import Mapping
from typing import Any

import numpy as np
import pint

from modelcheck.common.errors import RuleSetError
from modelcheck.common.problems import Key, Problems
from modelcheck.common.units import Q_, QuantityTextError, normalise_unit, parse_unit, ureg
from modelcheck.rules.expr import Cond, Expression, ExpressionError, Value, describe, parse_expression
from modelcheck.rules.names import MEMBER_QUANTITIES, MESSAGE_NAMES, TEXT_NAMES
from modelcheck.rules.parse.tables import Definitions, expression_text, parse_selector
from modelcheck.rules.scope import Scope, closure, placeholder
from modelcheck.rules.select import Selector
from modelcheck.rules.values import Check, MessagePart, Parameter, display_unit_for

#: keys of a [[check]] table
CHECK_KEYS = ("id", "title", "clause", "select", "when", "demand", "capacity", "unit", "message", "magnitude")
#: keys of a check that hold a text
TEXT_KEYS = ("title", "clause", "message", "unit")
#: checks in one rule set (a shipped one has fewer than ten)
MAX_CHECKS = 500
#: the widest number a message may ask for, and the most digits after its point
MAX_FORMAT_WIDTH = 40
MAX_FORMAT_PRECISION = 17

_ID_RE = re.compile(r"[A-Za-z][A-Za-z0-9_.-]{0,63}\Z")
_SPEC_RE = re.compile(r"[<>^=+\- #0-9,._%eEfFgGn]{0,16}\Z")
#: the width and precision of a format spec ([[fill]align][sign][#][0][width][,_][.precision][type])
_SPEC_SIZES_RE = re.compile(r"(?:.?[<>^=])?[+\- ]?#?0?(?P<width>\d*)[,_]?(?:\.(?P<precision>\d+))?[eEfFgGn%]?\Z")


def parse_checks(data: Mapping[str, Any], problems: Problems[RuleSetError], *, params: Mapping[str, Parameter],
                 definitions: Definitions, display: Mapping[str, str]) -> list[Check]:
    """[[check]]: the checks that have no problem, in file order (at most :data:`MAX_CHECKS`)."""
    raw_checks = data.get("check", [])
    if not isinstance(raw_checks, list):
        problems.add(("check",), "checks are written as [[check]] tables")
        raw_checks = []
    if not raw_checks and "check" not in data:
        problems.add(("ruleset",), "the rule set has no [[check]]")
    if len(raw_checks) > MAX_CHECKS:
        problems.add(("check", MAX_CHECKS), f"the rule set has {len(raw_checks):,} checks, more than {MAX_CHECKS}; "
                     "split it into several rule sets")
        raw_checks = raw_checks[:MAX_CHECKS]
    checks: list[Check] = []
    seen_ids: set[str] = set()
    for k, raw in enumerate(raw_checks):
        base = ("check", k)
        if not isinstance(raw, dict):
            problems.add(base, "a check is a table")
            continue
        cid = raw.get("id")
        label = cid if isinstance(cid, str) and cid else f"#{k + 1}"
        own = problems.within(f"check {label}")
        if not isinstance(cid, str) or not _ID_RE.match(cid):
            own.add(base + ("id",) if "id" in raw else base,
                    "needs an id of letters, digits, '-', '_' or '.' (starting with a letter)")
        elif cid in seen_ids:
            own.add(base + ("id",), "the id is used by an earlier check")
        else:
            seen_ids.add(cid)
        check = _parse_check(raw, base, own, params=params, definitions=definitions, display=display)
        if check is not None:
            checks.append(check)
    return checks


def _parse_check(raw: Mapping[str, Any], base: Key, problems: Problems[RuleSetError], *, params: Mapping[str, Parameter],
                 definitions: Definitions, display: Mapping[str, str]) -> Check | None:
    """One check (its id already read), or None where it has a problem."""
    _check_keys(raw, base, problems)
    parsed, ok = _parse_expressions(raw, base, problems, definitions.known_names)
    message_source = raw.get("message", "") if isinstance(raw.get("message", ""), str) else ""
    message: tuple[MessagePart, ...] = ()
    message_ok = True
    try:
        message = parse_message(message_source, set(definitions.known_names) | set(MESSAGE_NAMES))
    except ExpressionError as exc:
        problems.add(base + ("message",), f"message: {exc}")
        message_ok = False
    select = parse_selector(raw["select"], base + ("select",), problems) if "select" in raw else Selector()
    demand, capacity, when = parsed["demand"], parsed["capacity"], parsed["when"]
    if not ok or demand is None or capacity is None:
        return None
    exprs = [demand, capacity] + ([when] if when is not None else []) + [
        p.expr for p in message if p.expr is not None]
    all_used: frozenset[str] = frozenset().union(*(e.names for e in exprs))
    reached, known_reached, used_defs = closure(all_used, definitions.parsed)
    bad = reached & definitions.broken
    if bad:
        problems.add(base, f"uses {', '.join(sorted(bad))}, which has an error (see above)")
        return None
    known_reached |= frozenset().union(*(e.known_names for e in exprs))
    values = _evaluate(parsed, base, problems, Scope(placeholder, params, definitions.usable))
    if values is None:
        return None
    dval, cval = values
    ok = _same_dimension(demand, capacity, dval, cval, base, problems, display)
    unit, unit_ok = _unit(raw, demand, dval, base, problems, display, check_written=ok)
    ok = ok and unit_ok
    if message_ok:
        ok = _message_values(message, dval, cval, base, problems, params, definitions) and ok
    if not ok or not message_ok:
        return None
    quantities = reached & set(MEMBER_QUANTITIES)
    optional = frozenset(quantities & known_reached)
    cid = raw.get("id")
    return Check(
        id=str(cid), title=str(raw.get("title", cid)), clause=str(raw.get("clause", "")),
        demand=demand, capacity=capacity, when=when, unit=unit, message=message,
        message_source=message_source, select=select, line=problems.line(base) or 1,
        inputs=frozenset(quantities - optional), optional=optional,
        texts=frozenset(reached & set(TEXT_NAMES)),
        definitions=tuple(n for n in definitions.parsed if n in used_defs),
        parameters=tuple(n for n in params if n in reached),
        magnitude=raw.get("magnitude") is True,
        unit_given=isinstance(raw.get("unit"), str),
    )


def _check_keys(raw: Mapping[str, Any], base: Key, problems: Problems[RuleSetError]) -> None:
    """Keys a check does not have, and keys of the wrong kind."""
    for key in raw:
        if key not in CHECK_KEYS:
            problems.add(base + (key,), f"unknown key {key!r} (a check has {', '.join(CHECK_KEYS)})")
    for key in TEXT_KEYS:
        if key in raw and not isinstance(raw[key], str):
            problems.add(base + (key,), f"{key} is a text")
    if "magnitude" in raw and not isinstance(raw["magnitude"], bool):
        problems.add(base + ("magnitude",), "magnitude is true or false")


def _parse_expressions(raw: Mapping[str, Any], base: Key, problems: Problems[RuleSetError],
                       names: frozenset[str]) -> tuple[dict[str, Expression | None], bool]:
    """demand, capacity (both needed) and when, parsed; and whether all of them are usable."""
    parsed: dict[str, Expression | None] = {}
    ok = True
    for key in ("demand", "capacity", "when"):
        if key not in raw:
            if key != "when":
                problems.add(base, f"needs a {key} expression")
                ok = False
            parsed[key] = None
            continue
        try:
            parsed[key] = parse_expression(expression_text(raw[key], key), names)
        except ExpressionError as exc:
            problems.add(base + (key,), f"{key}: {exc}")
            parsed[key] = None
            ok = False
    return parsed, ok


def _evaluate(parsed: Mapping[str, Expression | None], base: Key, problems: Problems[RuleSetError],
              scope: Scope) -> tuple[pint.Quantity, pint.Quantity] | None:
    """Demand and capacity on the placeholder, each a number, and ``when`` a condition; None
    where one is not."""
    ok = True
    values: dict[str, Value] = {}
    for key in ("demand", "capacity", "when"):
        expr = parsed[key]
        if expr is None:
            continue
        try:
            values[key] = expr.evaluate(scope)
        except ExpressionError as exc:
            problems.add(base + (key,), f"{key}: {exc}")
            ok = False
    for key in ("demand", "capacity"):
        if key in values and not isinstance(values[key], pint.Quantity):
            problems.add(base + (key,), f"{key} must be a number, but is {describe(values[key])}")
            ok = False
    if "when" in values and not isinstance(values["when"], Cond):
        problems.add(base + ("when",), f"when must be a condition (a comparison), but is {describe(values['when'])}")
        ok = False
    if not ok:
        return None
    dval, cval = values["demand"], values["capacity"]
    assert isinstance(dval, pint.Quantity) and isinstance(cval, pint.Quantity)
    return dval, cval


def _same_dimension(demand: Expression, capacity: Expression, dval: pint.Quantity, cval: pint.Quantity,
                    base: Key, problems: Problems[RuleSetError], display: Mapping[str, str]) -> bool:
    """Whether demand and capacity have one dimension (a stress against a stress)."""
    if dval.dimensionality == cval.dimensionality:
        return True
    problems.add(base + ("capacity",),
                 f"demand {demand.source!r} is {describe(dval)} ({display_unit_for(display, dval) or 'no unit'}) "
                 f"but capacity {capacity.source!r} is {describe(cval)} "
                 f"({display_unit_for(display, cval) or 'no unit'}); they must have one dimension")
    return False


def _unit(raw: Mapping[str, Any], demand: Expression, dval: pint.Quantity, base: Key, problems: Problems[RuleSetError],
          display: Mapping[str, str], *, check_written: bool) -> tuple[str, bool]:
    """The unit demand and capacity are shown in (the check's ``unit``, else the display's),
    and whether it is usable. ``check_written``: test that the display's unit can be written."""
    ok = True
    unit = display_unit_for(display, dval)
    if check_written and "unit" not in raw and not _unit_fits(unit, dval):
        problems.add(base + ("demand",), f"demand {demand.source!r} is {describe(dval)}, a unit that cannot be "
                                         "written down (powers must be whole numbers or simple fractions)")
        ok = False
    if isinstance(raw.get("unit"), str):
        try:
            u = parse_unit(raw["unit"]) if raw["unit"].strip() else ureg.Unit("")
            if u.dimensionality != dval.dimensionality:
                problems.add(base + ("unit",), f"unit {raw['unit']!r} does not fit {describe(dval)}")
                ok = False
            unit = normalise_unit(raw["unit"])
        except QuantityTextError as exc:
            problems.add(base + ("unit",), f"unit {exc}")
            ok = False
        except Exception as exc:  # pint raises many types for odd unit text
            problems.add(base + ("unit",), f"{raw['unit']!r} is not a unit pint knows ({exc})")
            ok = False
    return unit, ok


def _unit_fits(unit: str, q: pint.Quantity) -> bool:
    """Whether numbers of ``q`` can be given in ``unit`` (the text of a unit, as a check stores it)."""
    try:
        return bool(Q_(1.0, unit).dimensionality == q.dimensionality)
    except Exception:  # pint raises many types for text that is no unit
        return False


def _message_values(message: tuple[MessagePart, ...], dval: pint.Quantity, cval: pint.Quantity, base: Key,
                    problems: Problems[RuleSetError], params: Mapping[str, Parameter], definitions: Definitions) -> bool:
    """Whether every placeholder of the message evaluates (a formatted one to a number)."""
    ok = True
    extra = {"demand": dval, "capacity": cval, "ratio": Q_(np.array([0.5]), "")}
    for part in message:
        if part.expr is None:
            continue
        try:
            v = part.expr.evaluate(Scope(placeholder, params, definitions.usable, extra))
        except ExpressionError as exc:
            problems.add(base + ("message",), f"message {{{part.expr.source}}}: {exc}")
            ok = False
            continue
        if part.spec and not isinstance(v, pint.Quantity):
            problems.add(base + ("message",), f"message {{{part.expr.source}:{part.spec}}}: a format "
                                              "applies to numbers only")
            ok = False
    return ok


def parse_message(text: str, names: set[str]) -> tuple[MessagePart, ...]:
    """A message's literal text and ``{expression:format}`` placeholders (``{{`` and ``}}`` are braces)."""
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
            _check_format(spec)
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


def _check_format(spec: str) -> None:
    """A number format of a message placeholder (.3g, .2%), within the size limits."""
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
