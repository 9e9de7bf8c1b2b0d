"""Display units and the JSON quantity object ``Q = {"value", "unit", "source"}``.

Tables hold SI floats; reporters convert each column once (one factor per column, no per-value
pint arithmetic) into the display system chosen for the report.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from functools import lru_cache
from typing import Any

from modelcheck.common.units import Q_

#: display unit per member-table quantity, per system (pint-parsable strings)
DISPLAY: dict[str, dict[str, str]] = {
    "SI": {"area": "mm**2", "r_min": "mm", "length": "m", "E": "MPa", "Fy": "MPa", "Fu": "MPa",
           "alpha": "1/K", "force": "kN", "stress": "MPa", "small_length": "mm"},
    "US": {"area": "in**2", "r_min": "in", "length": "ft", "E": "ksi", "Fy": "ksi", "Fu": "ksi",
           "alpha": "1/delta_degF", "force": "kip", "stress": "ksi", "small_length": "in"},
}
SI_OF = {"area": "m**2", "r_min": "m", "length": "m", "E": "Pa", "Fy": "Pa", "Fu": "Pa", "alpha": "1/K",
         "force": "N", "stress": "Pa", "small_length": "m"}


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
        return {"value": _round(self.convert(quantity, si_value)), "unit": self.unit(quantity),
                "source": source or ""}


def _round(x: float, digits: int = 6) -> float:
    """Round to ``digits`` significant figures: stable JSON across platforms, no false precision."""
    if x == 0 or not math.isfinite(x):
        return float(x)
    return float(f"{x:.{digits}g}")


def system_for_model(idx: Any) -> str:
    """US customary when the model's length unit is the inch or foot, else SI."""
    try:
        lf = idx.units.factor("LENGTHUNIT")
    except LookupError:
        return "SI"
    return "US" if any(math.isclose(lf, v, rel_tol=1e-6) for v in (0.0254, 0.3048)) else "SI"
