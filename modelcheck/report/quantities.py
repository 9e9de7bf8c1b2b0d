"""Display units and the JSON quantity object ``Q = {"value", "unit", "source"}``.

The display unit of each member quantity per system is a row of ``modelcheck.common.vocabulary``;
the one builder of ``Q`` is ``vocabulary.quantity_object``.

Tables hold SI floats; reporters convert each column once (one factor per column, no per-value
pint arithmetic) into the display system chosen for the report.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from functools import lru_cache
from typing import TYPE_CHECKING, Any

from modelcheck.common.units import Q_
from modelcheck.common.vocabulary import display_kinds, quantity_object

if TYPE_CHECKING:
    from modelcheck.ifc.index import ModelIndex

#: display unit per member-table quantity (and per extra kind: force, stress, small_length), per
#: system (pint-parsable strings), read from ``modelcheck.common.vocabulary``
DISPLAY: dict[str, dict[str, str]] = {
    system: {kind: d.unit(system) for kind, d in display_kinds().items()} for system in ("SI", "US")}
SI_OF: dict[str, str] = {kind: d.si for kind, d in display_kinds().items()}


@lru_cache(maxsize=128)
def factor(si_unit: str, display_unit: str) -> float:
    """Multiply an SI value by this to express it in ``display_unit``."""
    return float(Q_(1.0, si_unit).to(display_unit).magnitude)


@dataclass(frozen=True)
class DisplayUnits:
    system: str = "SI"

    def unit(self, quantity: str) -> str:
        return DISPLAY[self.system][quantity]

    def convert(self, quantity: str, si_value: float) -> float:
        return si_value * factor(SI_OF[quantity], self.unit(quantity))

    def q(self, quantity: str, si_value: float, source: str | None) -> dict[str, Any] | None:
        """The JSON ``Q`` object, or None for a missing value."""
        if si_value is None or not math.isfinite(si_value):
            return None
        return quantity_object(self.convert(quantity, si_value), self.unit(quantity), source)


def system_for_model(idx: ModelIndex) -> str:
    """US customary when the model's length unit is the inch or foot, else SI."""
    try:
        lf = idx.units.factor("LENGTHUNIT")
    except LookupError:
        return "SI"
    return "US" if any(math.isclose(lf, v, rel_tol=1e-6) for v in (0.0254, 0.3048)) else "SI"
