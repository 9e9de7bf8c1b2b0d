"""What a section's name designates: the nominal wall of a hollow section (``named_wall``), and
the root radius of a shipped shape-table I, channel or tee section (``named_root``).

An exporter may leave a rolled section's FilletRadius out; its name (W12X40, IPE 240) still
designates a table row whose root radius the slenderness classification needs, where the
section's depth, width and thicknesses are the row's.

The wall thickness a hollow section's designation names:

A hollow section's name often states its nominal size: ``HSS6X6X3/8`` (AISC, inches),
``HSS6.625X.280`` (round), ``HSS152.4X152.4X9.5`` (AISC, millimetres), ``SHS 150x150x6``,
``RHS 200x100x8``, ``CHS 168.3x6.3`` or ``CHS 168,3x6,3`` (EN). Its last number is the nominal
wall thickness. A design code may reckon with another wall than the one the model draws (AISC
360-16 B4.2 takes 0.93 of the nominal wall of most hollow sections), and the model may draw the
nominal wall or the design wall: the name tells which.

A designation may stand anywhere in the name (``Level 2 HSS6X6X3/8``, ``Tube:HSS6X6X3/8``). It is
read only where it describes the section it names: its first number must be an
outside dimension of the section (the diameter, or the depth or the width) within
``MATCH_TOLERANCE``, read in inches or in millimetres (whichever fits; a fraction is inches), and
the section's own wall must lie between ``WALL_BAND`` times the named wall. Otherwise the name
says nothing here (NaN): a section whose name and geometry disagree keeps its own wall.

Example::

    >>> import numpy as np
    >>> w = named_wall(np.array(["HSS6X6X3/8"], dtype=object), np.array(["rect-tube"], dtype=object),
    ...                np.array([0.1524]), np.array([0.1524]), np.array([np.nan]), np.array([0.00886]))
    >>> round(float(w[0]) / 0.0254, 4)
    0.375
"""

from __future__ import annotations

import math
import re
from collections.abc import Callable
from typing import Any

import numpy as np
import pandas as pd

from modelcheck.common.vocabulary import Shape

#: an outside dimension read from a name agrees with the section's within this share
MATCH_TOLERANCE = 0.02
#: the section's own wall, as a share of the named wall, for the name to describe it: a design
#: wall is 0.93 of the nominal one (AISC 360-16 B4.2), a rounded one a little more or less
WALL_BAND = (0.90, 1.02)

_INCH = 0.0254
_MM = 0.001
_NUMBER = r"(\d+-\d+/\d+|\d+/\d+|\d*\.\d+|\d+\.?)"
#: two or three numbers joined by X, anywhere in the name (after HSS, SHS, RHS, CHS, Ø, a family
#: name, ...); the last is the wall. No digit, point or X may follow (HSS6X6X3/8 A500 is read,
#: HSS6X6X3/8X4 is not).
_DESIGNATION = re.compile(r"(?<![\d./])" + _NUMBER + r"(?:\s*X\s*" + _NUMBER + r"){1,2}(?![\dX./])")
_DECIMAL_COMMA = re.compile(r"(?<=\d),(?=\d)")


def _number(text: str) -> tuple[float, bool]:
    """(value, is a fraction) of one number of a designation: 3/8, 3-1/2, .280, 6.625, 6."""
    if "/" in text:
        whole, _, frac = text.rpartition("-")
        num, den = frac.split("/")
        if float(den) == 0:
            return math.nan, True
        return (float(whole) if whole else 0.0) + float(num) / float(den), True
    return float(text), False


def _designations(name: str) -> list[tuple[list[float], bool]]:
    """The numbers of each designation in ``name``, in order, and whether any is a fraction."""
    text = _DECIMAL_COMMA.sub(".", name.upper().replace("×", "X").replace("*", "X"))
    out = []
    for m in _DESIGNATION.finditer(text):
        values = [_number(p) for p in re.findall(_NUMBER, m.group(0))]
        out.append(([v for v, _ in values], any(f for _, f in values)))
    return out


def wall_of(name: Any, shape: Any, outsides: tuple[float, ...], t: float) -> float:
    """The nominal wall [m] ``name`` states for a hollow section of ``shape`` with these outside
    dimensions [m] (diameter; or depth and width) and wall ``t`` [m]; NaN where it states none
    that describes this section."""
    if shape not in (Shape.RECT_TUBE, Shape.ROUND_TUBE) or not isinstance(name, str) or not math.isfinite(t):
        return math.nan
    for numbers, fraction in _designations(name):   # the first that describes this section
        first, wall = numbers[0], numbers[-1]
        for unit in ((_INCH,) if fraction else (_INCH, _MM)):
            size = first * unit
            if any(math.isfinite(o) and o > 0 and abs(size - o) <= MATCH_TOLERANCE * o for o in outsides):
                named = wall * unit
                if named > 0 and WALL_BAND[0] * named <= t <= WALL_BAND[1] * named:
                    return named
    return math.nan


def _per_section(shapes: np.ndarray, of: tuple[str, ...], columns: list[np.ndarray],
                 value: Callable[..., float]) -> np.ndarray:
    """``value(name, shape, *numbers)`` per member whose shape is one ``of``, NaN for the others;
    computed once per distinct (section name, shape, numbers): members share few sections."""
    out = np.full(len(shapes), np.nan)
    rows = np.flatnonzero(np.isin(shapes, np.asarray(of, dtype=object)))
    if not len(rows):
        return out
    picked = [np.asarray(c)[rows] for c in columns]
    codes, distinct = pd.MultiIndex.from_arrays(picked).factorize()   # NaN equal to NaN here
    found = np.array([value(*key) for key in distinct], dtype=float)
    out[rows] = found[codes]
    return out


def named_wall(names: np.ndarray, shapes: np.ndarray, h: np.ndarray, b: np.ndarray, d: np.ndarray,
               t: np.ndarray) -> np.ndarray:
    """Per member, the nominal wall thickness [m] its section name states (``wall_of``), NaN
    where it states none."""
    def wall(name: Any, shape: Any, hh: float, bb: float, dd: float, tt: float) -> float:
        return wall_of(name, shape, (dd,) if shape == Shape.ROUND_TUBE else (hh, bb), tt)

    return _per_section(shapes, (Shape.RECT_TUBE, Shape.ROUND_TUBE), [names, shapes, h, b, d, t], wall)


# ---------------------------------------------------------------------------------------------
# the root radius of a shape-table section a name designates

#: the shapes whose root radius a shape table gives (``stock`` reads it into ``r_root``)
_ROOTED = (Shape.I_SECTION, Shape.CHANNEL_U, Shape.TEE)
#: dimensions of the section that must agree with the designated table row
_ROW_DIMS = ("h", "b", "tf", "tw")


def _compact(text: str) -> str:
    return re.sub(r"\s+", "", text.upper().replace("×", "X"))


def _rooted_rows() -> tuple[re.Pattern[str], dict[str, tuple[str, dict[str, float], float]]]:
    """One pattern finding any designation of the shipped shape tables' I, channel and tee rows in a
    compacted name, and for each its (shape, dimensions, root radius) in SI."""
    global _ROWS
    if _ROWS is None:
        from modelcheck.design.shape_tables import TABLES
        from modelcheck.design.stock import load_shapes

        rows: dict[str, tuple[str, dict[str, float], float]] = {}
        for table in TABLES:
            df = load_shapes(table)
            for rec in df[df["shape"].isin(_ROOTED)].to_dict("records"):
                if math.isfinite(rec["r_root"]):
                    rows[_compact(str(rec["designation"]))] = (
                        str(rec["shape"]), {k: float(rec[k]) for k in _ROW_DIMS}, float(rec["r_root"]))
        keys = sorted(rows, key=len, reverse=True)   # the longest first: W12X40 before W12X4
        pattern = re.compile("|".join(f"(?<![A-Z0-9.]){re.escape(k)}(?![0-9.X/])" for k in keys) or r"(?!)")
        _ROWS = (pattern, rows)
    return _ROWS


_ROWS: tuple[re.Pattern[str], dict[str, tuple[str, dict[str, float], float]]] | None = None


def table_root_of(name: Any, shape: Any, dims: dict[str, float]) -> float:
    """The root radius [m] of the shipped shape-table section that ``name`` designates (W12X40,
    IPE 240, anywhere in the name), where the section is of that shape and its depth, width and
    thicknesses (``dims``, m) agree with the table's within ``MATCH_TOLERANCE``; NaN otherwise."""
    if shape not in _ROOTED or not isinstance(name, str):
        return math.nan
    pattern, rows = _rooted_rows()
    for m in pattern.finditer(_compact(name)):
        row_shape, row_dims, root = rows[m.group(0)]
        if row_shape == shape and all(
                math.isfinite(dims.get(k, math.nan)) and abs(dims[k] - v) <= MATCH_TOLERANCE * v
                for k, v in row_dims.items()):
            return root
    return math.nan


def named_root(names: np.ndarray, shapes: np.ndarray, h: np.ndarray, b: np.ndarray, tf: np.ndarray,
               tw: np.ndarray) -> np.ndarray:
    """Per member, the root radius [m] of the shape-table section its name designates
    (``table_root_of``), NaN where none."""
    def root(name: Any, shape: Any, *dims: float) -> float:
        return table_root_of(name, shape, dict(zip(_ROW_DIMS, dims, strict=True)))

    return _per_section(shapes, _ROOTED, [names, shapes, h, b, tf, tw], root)
