"""Rule-set files: find, read and validate them, and hold them as frozen values.

A rule set is a TOML file (its syntax: ``rulesets/SYNTAX.md``). Loading checks everything an
engineer can get wrong before any member is touched: TOML syntax, unknown keys and names, unsafe
expressions, units, and dimensions — each expression is evaluated once on a one-member
placeholder with unit-ful values, so a demand in ksi against a capacity in inches, or a
misspelt name, fails here with file, line and check id.

The values are defined in :mod:`modelcheck.rules.values`, the reading of a file's tables in
:mod:`modelcheck.rules.parse`; this module finds a rule set by name or path and loads it.

Example::

    >>> rs = load_ruleset("steel-asd-us")
    >>> rs.check("tension-yield").capacity.source
    'Fy / Omega_t'
"""

from __future__ import annotations

import tomllib
from pathlib import Path

import numpy as np
import pint

from modelcheck.common.errors import RuleSetError
from modelcheck.common.units import Q_
from modelcheck.rules.expr import ExpressionError, Value
from modelcheck.rules.names import MEMBER_QUANTITIES
from modelcheck.rules.parse import parse_ruleset
from modelcheck.rules.parse.tables import NAME_RE
from modelcheck.rules.scope import Scope, placeholder
from modelcheck.rules.values import Check, Definition, MessagePart, Parameter, RuleSet

# the values of a rule set are named here too: a caller needs this module alone
__all__ = [
    "Check", "Definition", "MessagePart", "Parameter", "RuleSet", "RuleSetErrors", "Scope", "list_rulesets",
    "load_ruleset", "parse_ruleset", "resolve_ruleset", "ruleset_warnings", "shipped_names",
    "validate_ruleset_file",
]

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
    if NAME_RE.match(text.replace("-", "_")) and shipped.is_file() and text in shipped_names():
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
                return placeholder(name)
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
