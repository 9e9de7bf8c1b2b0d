"""A loaded rule set as frozen values: the rule set, its checks, parameters and definitions,
and the units it shows its numbers in.

:mod:`modelcheck.rules.ruleset` loads them from a file (through :mod:`modelcheck.rules.parse`);
the engine (:mod:`modelcheck.rules.engine`) evaluates them.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field, replace
from types import MappingProxyType
from typing import Any

import pint

from modelcheck.common.units import Q_, ureg
from modelcheck.common.vocabulary import RULESET_DISPLAY
from modelcheck.rules.expr import Expression
from modelcheck.rules.select import Selector

# ---------------------------------------------------------------------------------------------
# display units

#: [display] key -> an SI unit of that dimension (``vocabulary.RULESET_DISPLAY``)
DISPLAY_DIMENSIONS: Mapping[str, str] = MappingProxyType({k.key: k.display.si for k in RULESET_DISPLAY})

#: system -> [display] key -> its default unit
DEFAULT_DISPLAY: Mapping[str, Mapping[str, str]] = MappingProxyType({
    system: MappingProxyType({k.key: k.display.unit(system) for k in RULESET_DISPLAY}) for system in ("US", "SI")})

#: [display] key -> the dimensionality of its units
DISPLAY_DIMENSIONALITY: Mapping[str, Any] = MappingProxyType(
    {key: ureg.Unit(si).dimensionality for key, si in DISPLAY_DIMENSIONS.items()})


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

            >>> from modelcheck.rules.ruleset import load_ruleset
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


def display_unit_for(display: Mapping[str, str], q: pint.Quantity | pint.Unit) -> str:
    dim = q.dimensionality
    for key, d in DISPLAY_DIMENSIONALITY.items():
        if d == dim:
            return display[key]
    try:
        return f"{Q_(1.0, q.units if isinstance(q, pint.Quantity) else q).to_base_units().units:~}"
    except OverflowError:  # a unit raised so high that its size in base units is no float
        return str(dim)

