"""Member and force tables built by hand for the engine, rating, suggestion and rule-set tests."""

from __future__ import annotations

from typing import Any

import numpy as np
import pandas as pd

from modelcheck.common.table import member_columns

#: what every hand-built member has unless a row says otherwise
DEFAULTS: dict[str, Any] = {"model": "m.ifc", "ifc_class": "IfcMember", "name": "Member",
                            "material_category": "steel", "alpha": np.nan}


def member_table(*rows: dict[str, Any], defaults: dict[str, Any] | None = None) -> pd.DataFrame:
    """One row per dict: every member-table column present (None unless given), GlobalIds G0, G1, …;
    extra keys become extra columns."""
    data = []
    for i, row in enumerate(rows):
        full: dict[str, Any] = {c: None for c in member_columns()}
        full.update(DEFAULTS if defaults is None else defaults)
        full["global_id"] = f"G{i}"
        full.update(row)
        full["warnings"] = []
        data.append(full)
    return pd.DataFrame(data, columns=list(dict.fromkeys(member_columns() + [k for r in data for k in r])))


def force_table(*rows: tuple[str, str, float], model: str | None = "m.ifc") -> pd.DataFrame:
    """A forces table as the join hands it to the engine: one row per (GlobalId, load case, axial
    force in N), every row of ``model`` and from the source "test"."""
    return pd.DataFrame({"model": [model] * len(rows), "global_id": [r[0] for r in rows],
                         "load_case": [r[1] for r in rows], "axial_force": [float(r[2]) for r in rows],
                         "source": ["test"] * len(rows)})


def members_of(path: str, *elements: Any) -> pd.DataFrame:
    """The identifying columns of the member table the reader would give for these written
    elements of the model at ``path`` (model, global_id, tag, ifc_class, name), built by hand."""
    return pd.DataFrame({"model": [path] * len(elements), "global_id": [e.GlobalId for e in elements],
                         "tag": [getattr(e, "Tag", None) for e in elements],
                         "ifc_class": [e.is_a() for e in elements], "name": [e.Name for e in elements]})
