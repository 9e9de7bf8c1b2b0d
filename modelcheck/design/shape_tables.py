"""Shape-table rows computed from their nominal dimensions by modelcheck's own profile functions.

A row of ``rulesets/shapes-aisc.csv`` or ``rulesets/shapes-en.csv`` holds the nominal
dimensions of its section (the dimension standard's depth, width, thicknesses and radii) and the
area ``A`` and least radius of gyration ``r_min`` computed from them: each row becomes the IFC
profile of its shape (IfcIShapeProfileDef, IfcLShapeProfileDef, IfcRectangleHollowProfileDef,
IfcCircleHollowProfileDef) and :func:`modelcheck.ifc.profiles.section_of` integrates its exact
outline (lines and circular arcs), as for any member of a model. The published property values,
where known, stand beside them (``A_pub``, ``r_min_pub``); the tests hold every row to both.

Radii, by shape: ``r`` is the root (web-to-flange or leg-to-leg) radius of I and L sections and
the outside corner radius of rectangular hollow sections; ``r2`` is the toe radius of an angle and
the inside corner radius of a rectangular hollow section. A blank radius is a sharp corner.

``python -m modelcheck.design.shape_tables`` rewrites the A and r_min columns of the shipped
tables from their dimensions (four significant figures) after a dimension is edited.

Example::

    >>> props = computed_properties("shapes-en.csv")
    >>> round(props["IPE 200"][0], 2)      # cm², EN 10365 prints 28.5
    28.48
"""

from __future__ import annotations

import csv
import io
import re
import sys
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

from modelcheck.common.data import data_path
from modelcheck.common.errors import RuleSetError
from modelcheck.common.vocabulary import Shape

#: the shipped shape tables
TABLES: tuple[str, ...] = ("shapes-aisc.csv", "shapes-en.csv")

#: a column header: a name, then its unit in brackets ('A [in2]'); stock.toml's tables read it too
HEADER_RE = re.compile(r"\s*([A-Za-z_][A-Za-z_0-9]*)\s*(?:\[(.+)\])?\s*\Z")
_DIMENSIONS = ("h", "b", "tf", "tw", "t", "d", "r", "r2")
#: the shape families a row can have (a profile function each, in ``_profile``)
TABLE_SHAPES: tuple[str, ...] = (Shape.I_SECTION, Shape.ANGLE, Shape.RECT_TUBE, Shape.ROUND_TUBE, Shape.ROUND_BAR,
                                 Shape.SQUARE_BAR, Shape.FLAT_BAR)


@dataclass(frozen=True)
class TableRow:
    """One row of a shape table as written: its texts by column, and the file line."""

    line: int
    values: Mapping[str, str]

    def number(self, column: str) -> float | None:
        text = self.values.get(column, "").strip()
        return float(text) if text else None


@dataclass(frozen=True)
class ShapeTable:
    """A shape table as written: the comment lines, the header, the unit of each column, the rows."""

    name: str
    comments: tuple[str, ...]
    header: tuple[str, ...]
    units: Mapping[str, str]          # column name -> unit text ('' for text columns)
    rows: tuple[TableRow, ...]


def read_table(name: str) -> ShapeTable:
    """A shipped shape table's text, column by column (numbers stay text: their digits tell
    their rounding)."""
    path = data_path(name)
    try:
        lines = path.read_text(encoding="utf-8").splitlines()
    except (OSError, UnicodeDecodeError) as exc:
        raise RuleSetError(f"shape table cannot be read: {exc}", path=str(path)) from exc
    comments = tuple(line for line in lines if line.lstrip().startswith("#"))
    body = [(no, line) for no, line in enumerate(lines, 1) if line.strip() and not line.lstrip().startswith("#")]
    if not body:
        raise RuleSetError("shape table has no header", path=str(path))
    records = list(csv.reader([line for _, line in body]))
    header = tuple(records[0])
    names: list[str] = []
    units: dict[str, str] = {}
    for h in header:
        m = HEADER_RE.match(h)
        if not m:
            raise RuleSetError(f"column {h!r}: write a name and an optional [unit]", path=str(path),
                               where=str(body[0][0]))
        names.append(m.group(1))
        units[m.group(1)] = (m.group(2) or "").strip()
    rows = tuple(TableRow(no, dict(zip(names, rec, strict=True))) for (no, _), rec in zip(body[1:], records[1:],
                                                                                         strict=True))
    return ShapeTable(name=name, comments=comments, header=header, units=units, rows=rows)


def _profile(f: Any, shape: str, dims: Mapping[str, float | None]) -> Any:
    """The IFC profile entity of a row (lengths in the table's unit)."""
    def need(*keys: str) -> list[float]:
        missing = [k for k in keys if dims.get(k) is None]
        if missing:
            raise ValueError(f"a {shape} row needs {', '.join(missing)}")
        return [float(dims[k]) for k in keys]   # type: ignore[arg-type]

    r, r2 = dims.get("r"), dims.get("r2")
    if shape == Shape.I_SECTION:
        h, b, tf, tw = need("h", "b", "tf", "tw")
        return f.createIfcIShapeProfileDef("AREA", None, None, b, h, tw, tf, r)
    if shape == Shape.ANGLE:
        h, b, t = need("h", "b", "t")
        return f.createIfcLShapeProfileDef("AREA", None, None, h, b, t, r, r2)
    if shape == Shape.RECT_TUBE:
        h, b, t = need("h", "b", "t")
        return f.createIfcRectangleHollowProfileDef("AREA", None, None, b, h, t, r2, r)
    if shape == Shape.ROUND_TUBE:
        d, t = need("d", "t")
        return f.createIfcCircleHollowProfileDef("AREA", None, None, d / 2, t)
    if shape == Shape.ROUND_BAR:
        (d,) = need("d")
        return f.createIfcCircleProfileDef("AREA", None, None, d / 2)
    if shape in (Shape.SQUARE_BAR, Shape.FLAT_BAR):
        h, b = need("h", "b")
        return f.createIfcRectangleProfileDef("AREA", None, None, b, h)
    raise ValueError(f"shape {shape!r} has no profile function here ({', '.join(TABLE_SHAPES)})")


def row_properties(shape: str, dims: Mapping[str, float | None], f: Any = None) -> tuple[float, float]:
    """(area, least radius of gyration) of a section from its nominal dimensions, in the
    dimensions' unit (squared for the area)."""
    import ifcopenshell

    from modelcheck.ifc.profiles import section_of

    f = f if f is not None else ifcopenshell.file(schema="IFC4")
    sec = section_of(_profile(f, shape, dims))
    return sec.area, sec.r_min


def computed_properties(name: str) -> dict[str, tuple[float, float]]:
    """designation -> (A, r_min) of every row of a shipped table, in the units of its A and
    r_min columns, computed from the row's dimensions."""
    import ifcopenshell

    from modelcheck.common.units import Q_, parse_unit

    table = read_table(name)
    f = ifcopenshell.file(schema="IFC4")
    length = {table.units[c] for c in _DIMENSIONS if table.units.get(c)}
    if len(length) != 1:
        raise RuleSetError(f"the dimension columns of {name} need one length unit, not {sorted(length)}",
                           path=str(data_path(name)))
    dim_unit = parse_unit(length.pop())
    to_a = float(Q_(1.0, dim_unit**2).m_as(parse_unit(table.units["A"])))
    to_r = float(Q_(1.0, dim_unit).m_as(parse_unit(table.units["r_min"])))
    out: dict[str, tuple[float, float]] = {}
    for row in table.rows:
        dims = {c: row.number(c) for c in _DIMENSIONS if c in row.values}
        try:
            a, r = row_properties(row.values["shape"], dims, f)
        except ValueError as exc:   # UnsupportedProfile is a ValueError
            raise RuleSetError(f"{row.values['designation']}: {exc}", path=str(data_path(name)),
                               where=str(row.line)) from None
        out[row.values["designation"]] = (a * to_a, r * to_r)
    return out


def four_figures(x: float) -> str:
    """A computed property as the tables write it: four significant figures."""
    return f"{float(f'{x:.4g}'):g}" if x < 1e4 else f"{x:.0f}"


def refresh(name: str) -> str:
    """The text of a shipped table with its A and r_min columns computed from its dimensions."""
    path = data_path(name)
    props = computed_properties(name)
    table = read_table(name)
    lines = path.read_text(encoding="utf-8").splitlines()
    names = [(HEADER_RE.match(h) or re.match("(.*)", h)).group(1) for h in table.header]   # type: ignore[union-attr]
    ia, ir = names.index("A"), names.index("r_min")
    for row in table.rows:
        rec = next(csv.reader([lines[row.line - 1]]))
        a, r = props[row.values["designation"]]
        rec[ia], rec[ir] = four_figures(a), four_figures(r)
        buf = io.StringIO()
        csv.writer(buf, lineterminator="").writerow(rec)
        lines[row.line - 1] = buf.getvalue()
    return "\n".join(lines) + "\n"


def main(argv: list[str] | None = None) -> int:
    """Rewrite the shipped tables' A and r_min from their dimensions."""
    for name in (argv or list(TABLES)):
        data_path(name).write_text(refresh(name), encoding="utf-8")
        print(f"rulesets/{name}: A and r_min computed from the nominal dimensions", file=sys.stderr)
    return 0


if __name__ == "__main__":
    raise SystemExit(main(sys.argv[1:]))


__all__ = ["TABLES", "ShapeTable", "TableRow", "computed_properties", "four_figures", "read_table",
           "refresh", "row_properties"]
