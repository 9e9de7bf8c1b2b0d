"""Name resolution for evaluating a rule set's expressions, shared by the loader and the engine.

A :class:`Scope` resolves a name to extra values, a parameter, a definition (evaluated when
first used) or a member value. The loader evaluates every expression once on a one-member
placeholder (:func:`placeholder`) to find unknown names and dimension mismatches before any
model is read.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping

import numpy as np

from modelcheck.common.units import Q_
from modelcheck.rules.expr import ExpressionError, Text, Value, unknown_name_message
from modelcheck.rules.names import MEMBER_QUANTITIES, TEXT_NAMES
from modelcheck.rules.values import Definition, Parameter


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


def placeholder(name: str) -> Value:
    """A one-member placeholder of a member value (unit-ful) or a text; ExpressionError for any other name."""
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

