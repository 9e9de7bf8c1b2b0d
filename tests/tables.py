"""Member tables built by hand for the engine, rating and suggestion tests."""

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
