"""Standard coarse thread series and the tensile-stress area of a threaded rod.

The series (ASME B1.1 UNC, 1/4 in to 4 in; ISO 261/262 coarse, M6 to M64) are data in
``rulesets/threads.toml``; the tensile-stress areas are computed from the published formulas:

* ASME B1.1: ``As = 0.7854 (d - 0.9743 / n)²`` with d in inches and n threads per inch;
* ISO 898-1: ``As = π/4 ((d2 + d3) / 2)² = π/4 (d - 0.9382 P)²`` with d and pitch P in mm.

Example::

    >>> import numpy as np
    >>> area, name = thread_tensile_area(np.array([0.009525, 0.010, 0.011]))
    >>> [str(n) for n in name]
    ['3/8-16 UNC', 'M10', 'None']
"""

from __future__ import annotations

import math
import tomllib
from dataclasses import dataclass
from fractions import Fraction
from functools import lru_cache

import numpy as np

from modelcheck.common.errors import RuleSetError

INCH = 0.0254  # m, exact by definition
#: how far a rod diameter may lie from a series size and still be that size
MATCH_TOLERANCE_M = 0.2e-3


@dataclass(frozen=True)
class ThreadSize:
    """One size of a thread series, SI metres; ``tpi`` only for inch series."""

    designation: str      # "3/8-16 UNC", "M10"
    series: str           # "UNC" or "ISO coarse"
    d_m: float            # nominal (major) diameter
    pitch_m: float        # thread pitch
    tpi: float | None     # threads per inch (inch series)
    As_m2: float          # tensile-stress area


def unc_tensile_area(d_in: float, tpi: float) -> float:
    """ASME B1.1 tensile-stress area [in²] of a Unified thread: 0.7854 (d − 0.9743/n)²."""
    return 0.7854 * (d_in - 0.9743 / tpi) ** 2


def iso_tensile_area(d_mm: float, pitch_mm: float) -> float:
    """ISO 898-1 tensile-stress area [mm²] of a metric thread: π/4 (d − 0.9382 P)²."""
    return math.pi / 4.0 * (d_mm - 0.9382 * pitch_mm) ** 2


def _inch_size(text: str) -> float:
    """'1 1/8' -> 1.125 (inches)."""
    return float(sum(Fraction(part) for part in text.split()))


@lru_cache(maxsize=1)
def _load_series() -> tuple[ThreadSize, ...]:
    from modelcheck.common.data import data_path

    path = data_path("threads.toml")
    try:
        with open(path, "rb") as fh:
            data = tomllib.load(fh)
        sizes: list[ThreadSize] = []
        for size, tpi in data["unc"]:
            d_in = _inch_size(str(size))
            sizes.append(ThreadSize(
                designation=f"{size}-{tpi:g} UNC", series="UNC", d_m=d_in * INCH,
                pitch_m=INCH / float(tpi), tpi=float(tpi),
                As_m2=unc_tensile_area(d_in, float(tpi)) * INCH**2,
            ))
        for size, pitch in data["iso"]:
            d_mm = float(str(size).lstrip("Mm"))
            sizes.append(ThreadSize(
                designation=str(size), series="ISO coarse", d_m=d_mm * 1e-3,
                pitch_m=float(pitch) * 1e-3, tpi=None,
                As_m2=iso_tensile_area(d_mm, float(pitch)) * 1e-6,
            ))
    except (OSError, tomllib.TOMLDecodeError, KeyError, ValueError, TypeError, ZeroDivisionError) as exc:
        raise RuleSetError(f"thread series data cannot be read: {exc}", path=str(path)) from exc
    return tuple(sorted(sizes, key=lambda s: s.d_m))


def thread_series(series: str | None = None) -> tuple[ThreadSize, ...]:
    """All sizes, smallest first; ``series`` "UNC" or "ISO coarse" restricts to one series."""
    sizes = _load_series()
    if series is None:
        return sizes
    return tuple(s for s in sizes if s.series == series)


def thread_tensile_area(
    d_m: np.ndarray, tolerance_m: float = MATCH_TOLERANCE_M,
) -> tuple[np.ndarray, np.ndarray]:
    """Tensile-stress area [m²] and designation of the series size nearest to each diameter.

    ``d_m`` holds rod diameters in metres (NaN where unknown). A diameter more than
    ``tolerance_m`` from every series size gives NaN and None.
    """
    d = np.asarray(d_m, dtype=float).reshape(-1)
    sizes = _load_series()
    nominal = np.array([s.d_m for s in sizes])
    areas = np.array([s.As_m2 for s in sizes])
    names = np.array([s.designation for s in sizes], dtype=object)
    area = np.full(d.shape, np.nan)
    designation = np.full(d.shape, None, dtype=object)
    known = np.isfinite(d)
    if known.any():
        dk = d[known]
        # nearest series size (nominal is sorted): compare both neighbours of the insertion point
        pos = np.clip(np.searchsorted(nominal, dk), 1, len(nominal) - 1)
        left, right = nominal[pos - 1], nominal[pos]
        nearest = np.where(np.abs(dk - left) <= np.abs(right - dk), pos - 1, pos)
        ok = np.abs(nominal[nearest] - dk) <= tolerance_m + 1e-12
        idx = np.flatnonzero(known)
        area[idx[ok]] = areas[nearest[ok]]
        designation[idx[ok]] = names[nearest[ok]]
    return area, designation
