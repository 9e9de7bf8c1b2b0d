"""Column contracts of the three tables that flow through the pipeline.

The member table's columns, their units and what each holds are rows of
``modelcheck.common.vocabulary``; the tuples here are read from it.

Numbers are floats in SI base units (m, m², N, Pa, 1/K); a value the model does not hold is
NaN, and its ``*_source`` column is None. Every numeric column that comes from the model has a
sibling ``<name>_source`` column saying where it came from.

Text is one thing everywhere: an object column holding ``str`` or None, never NaN. pandas (3 and
later) infers its own string dtype from texts, and that dtype holds a missing text as NaN, which
a reporter then prints as ``nan`` or hands to a text function as a float; so every table is made
with ``text_column`` / ``frame_of`` (texts kept as objects, None for missing) and tables are
stacked with ``concat_rows`` (a column some of them lack is None there, not NaN).
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence
from typing import Any, cast

import numpy as np
import pandas as pd

from modelcheck.common import vocabulary

#: identity columns of the member table (strings or None)
IDENTITY_COLUMNS: tuple[str, ...] = vocabulary.columns_of("identity")

#: numeric columns with a provenance sibling ``<col>_source``: column -> SI unit ('' for a ratio)
QUANTITY_COLUMNS: dict[str, str] = {q.column: q.unit for q in vocabulary.quantities()
                                    if q.column is not None and q.provenance}

#: other section columns: profile name (IfcProfileDef.ProfileName), IFC profile class, shape
#: family (``vocabulary.SHAPES``; None if unknown), then the dimensions d h b tf tw t [m] (NaN
#: where the shape has none)
SECTION_COLUMNS: tuple[str, ...] = vocabulary.columns_of("section")
#: material columns: name as in the model, category (steel, stainless, aluminium), library grade
MATERIAL_COLUMNS: tuple[str, ...] = vocabulary.columns_of("material")

#: warnings: a list[str] per member (object column)
WARNINGS = "warnings"

#: values the model gives but the reader does not use: a tuple of (column, reason) pairs per
#: member (an empty tuple where there is none). ``column`` is a quantity column ("E", "length",
#: "net_area") or "section" (a rejected section: its area, radius of gyration and dimensions);
#: ``reason`` says what was found, where, and why it was not used. A missing value with a
#: reason here is reported with that reason, not as absent.
REJECTED = "rejected"

#: the member columns whose value comes from the member's section
SECTION_VALUE_COLUMNS: frozenset[str] = frozenset(q.column for q in vocabulary.quantities()
                                                  if q.column is not None and q.of_section)


#: the element's entity id (#n) in its model file: lets later stages skip a GlobalId look-up
ENTITY_ID = "entity_id"


def member_columns() -> list[str]:
    cols = list(IDENTITY_COLUMNS) + list(SECTION_COLUMNS) + list(MATERIAL_COLUMNS)
    for q in QUANTITY_COLUMNS:
        cols += [q, f"{q}_source"]
    return cols + [WARNINGS, REJECTED, ENTITY_ID]


#: the forces table: one row per member × load case, tension positive, newtons
FORCE_COLUMNS: tuple[str, ...] = ("model", "global_id", "load_case", "axial_force", "source")

#: the results table: one row per member × check × load case; ``missing`` holds the inputs an
#: unchecked row lacks (a list of texts; an empty tuple where it lacks none)
RESULT_COLUMNS: tuple[str, ...] = (
    "model", "global_id", "ifc_class", "name", "tag", "check", "load_case", "status",
    "demand", "capacity", "unit", "ratio", "missing", "message", "demand_source", "capacity_source",
)


def empty_forces() -> pd.DataFrame:
    return pd.DataFrame({
        "model": pd.Series(dtype=object), "global_id": pd.Series(dtype=object),
        "load_case": pd.Series(dtype=object), "axial_force": pd.Series(dtype=float),
        "source": pd.Series(dtype=object),
    })


#: result statuses, worst first: a member's status is the worst of its results
STATUS_RANK: dict[str, int] = {"fail": 0, "unchecked": 1, "pass": 2}


def records(frame: pd.DataFrame) -> list[dict[str, Any]]:
    """The rows of a table (its column names are texts) as dicts: ``frame.to_dict("records")``."""
    return cast(list[dict[str, Any]], frame.to_dict("records"))


def text_column(values: Iterable[Any] | np.ndarray | pd.Series, index: Any = None) -> pd.Series:
    """An object Series of ``values`` with None wherever a value is missing (None, NaN, pd.NA).

    The one way text enters a table: pandas would otherwise infer its string dtype, whose
    missing value is NaN."""
    if isinstance(values, pd.Series):
        arr = values.to_numpy(dtype=object, na_value=None)   # type: ignore[call-overload]  # pandas-stubs leave out na_value=None, which pandas takes
        index = values.index if index is None else index
    else:
        # one object per row, whatever it is (np.asarray would make a list of tuples 2-D)
        arr = (values.astype(object, copy=False) if isinstance(values, np.ndarray)
               else np.fromiter(values, dtype=object))
    missing = pd.isna(arr) if arr.size else np.zeros(0, dtype=bool)
    if missing.any():
        arr = arr.copy()
        arr[missing] = None
    return pd.Series(arr, index=index, dtype=object)


def frame_of(columns: dict[str, pd.Series | np.ndarray | Sequence[Any]]) -> pd.DataFrame:
    """A DataFrame of equally long columns (index 0..n-1), each kept as its own block.

    Numbers (and booleans) stay numbers. An object array or Series is kept as it is, as objects
    (the caller's texts: ``str`` or None); any other column (a list, a Series of pandas' string
    dtype) goes through ``text_column``. Nothing is left to pandas' inference, which would turn
    texts into its string dtype and a missing text into NaN. ``pd.DataFrame(dict)`` would also
    consolidate the columns of one dtype into a 2-D block: a copy of every object column, which
    for a large results table costs more than making the columns."""
    if not columns:
        return pd.DataFrame()
    series = []
    for values in columns.values():
        if isinstance(values, pd.Series) and (values.dtype.kind in "fiub" or values.dtype == object):
            series.append(values.reset_index(drop=True))
        elif isinstance(values, np.ndarray) and values.dtype.kind in "fiub":
            series.append(pd.Series(values))
        elif isinstance(values, np.ndarray) and values.dtype == object:
            series.append(pd.Series(values, dtype=object))
        else:
            series.append(text_column(values).reset_index(drop=True))
    return pd.concat(series, axis=1, keys=list(columns))


def concat_rows(frames: Sequence[pd.DataFrame]) -> pd.DataFrame:
    """The rows of ``frames`` one after another (index 0..n-1).

    A column some frames lack is None in their rows (pd.concat would make it NaN), and a text
    column stays objects with None for missing."""
    frames = list(frames)
    if len(frames) == 1:
        return frames[0].reset_index(drop=True)
    columns: list[str] = []
    for f in frames:
        columns += [c for c in f.columns if c not in columns]
    filled = [f if all(c in f.columns for c in columns) else
              f.assign(**{c: pd.Series([None] * len(f), index=f.index, dtype=object)
                          for c in columns if c not in f.columns})[columns]
              for f in frames]
    out = pd.concat(filled, ignore_index=True)
    for c in out.columns:
        if out[c].dtype != object and out[c].dtype.kind not in "fiubmM" and not isinstance(
                out[c].dtype, pd.CategoricalDtype):
            out[c] = text_column(out[c])
    return out
