"""Hand-built check runs for the reporter tests (no model file, no rule engine).

Numbers are chosen so that ratio = demand / capacity holds on every row (the definition of the
demand/capacity ratio, common practice).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import pandas as pd

from modelcheck.common.table import RESULT_COLUMNS
from modelcheck.core.model import REPORT_MEMBER_COLUMNS, CheckRun, ModelData

# IFC GlobalIds are 22 characters of the base-64 alphabet 0-9 A-Z a-z _ $ (IFC standard)
GID_A = "0aaaaaaaaaaaaaaaaaaaaA"
GID_B = "0bbbbbbbbbbbbbbbbbbbbB"
GID_C = "0cccccccccccccccccccc$"
GID_D = "0dddddddddddddddddddd_"
NASTY = '<b>Rod & "1"</b> \'x\''


@dataclass(frozen=True)
class FakeRuleset:
    name: str = "demo-asd"
    path: str = "rulesets/demo-asd.toml"
    basis: str = "AISC 360-16, ASD"
    units: str = "SI"


def result_row(model: str, gid: str, check: str, case: str | None, demand: float | None,
               capacity: float | None, *, unit: str = "MPa", ifc_class: str = "IfcMember",
               name: str | None = None, tag: str | None = None, missing: list[str] | None = None,
               message: str = "") -> dict[str, object]:
    if demand is None or capacity is None:
        status, ratio = "unchecked", math.nan
    else:
        ratio = demand / capacity
        status = "fail" if ratio > 1.0 else "pass"
    return {"model": model, "global_id": gid, "ifc_class": ifc_class, "name": name, "tag": tag,
            "check": check, "load_case": case, "status": status,
            "demand": math.nan if demand is None else demand,
            "capacity": math.nan if capacity is None else capacity, "unit": unit, "ratio": ratio,
            "missing": list(missing or []), "message": message,
            "demand_source": "table:loads.csv" if demand is not None else None,
            "capacity_source": "ruleset" if capacity is not None else None}


def member_row(model: str, gid: str, *, name: str | None = None, storey: str = "Level 1",
               section: str | None = "RD20", material: str | None = "S235") -> dict[str, object]:
    row: dict[str, object] = {c: None for c in REPORT_MEMBER_COLUMNS}
    row.update({"model": model, "global_id": gid, "ifc_class": "IfcMember", "name": name,
                "storey": storey, "section_name": section, "profile_type": "IfcCircleProfileDef",
                "material": material})
    for c in ("area", "r_min", "length", "d", "h", "b", "t", "tf", "tw", "E", "Fy", "Fu", "alpha"):
        row[c] = math.nan
    return row


def results_frame(rows: list[dict[str, object]]) -> pd.DataFrame:
    if not rows:
        return pd.DataFrame({c: pd.Series(dtype=object) for c in RESULT_COLUMNS})
    return pd.DataFrame(rows, columns=list(RESULT_COLUMNS))


def make_run(*, model: str = "models/tower_A.ifc", broken: str | None = "models/broken.ifc",
             b_demand: float = 150.0, d_demand: float = 30.0) -> CheckRun:
    """A run over one readable model (4 members) and, optionally, one unreadable model.

    Member A passes both checks, B fails axial stress in LC2 (150/120 = 1.25 by default), C lacks
    its section area (unchecked), D has a name full of XML/HTML special characters and passes.
    """
    rows = [
        result_row(model, GID_A, "axial_stress", "LC1", 60.0, 120.0, name="Hanger H1", tag="H1"),
        result_row(model, GID_A, "axial_stress", "LC2", 90.0, 120.0, name="Hanger H1", tag="H1"),
        result_row(model, GID_A, "slenderness", None, 150.0, 300.0, unit="", name="Hanger H1", tag="H1"),
        result_row(model, GID_B, "axial_stress", "LC1", 96.0, 120.0, name="Hanger H2"),
        result_row(model, GID_B, "axial_stress", "LC2", b_demand, 120.0, name="Hanger H2",
                   message="tension"),
        result_row(model, GID_B, "slenderness", None, 240.0, 300.0, unit="", name="Hanger H2"),
        result_row(model, GID_C, "axial_stress", "LC1", None, None, name="Hanger H3",
                   missing=["area (profile, Qto_MemberBaseQuantities.CrossSectionArea)"]),
        result_row(model, GID_C, "slenderness", None, None, None, unit="", name="Hanger H3",
                   missing=["r_min (profile)"]),
        result_row(model, GID_D, "axial_stress", "LC1", d_demand, 120.0, name=NASTY),
    ]
    members = pd.DataFrame([member_row(model, GID_A, name="Hanger H1"),
                            member_row(model, GID_B, name="Hanger H2", storey="Level 2"),
                            member_row(model, GID_C, name="Hanger H3", section=None),
                            member_row(model, GID_D, name=NASTY, material=NASTY)],
                           columns=list(REPORT_MEMBER_COLUMNS))
    models = [ModelData(path=model, schema="IFC4", member_count=4)]
    if broken is not None:
        models.append(ModelData(path=broken, error=f"{broken}: not an IFC-SPF file (it does not start "
                                                   "with ISO-10303-21)"))
    return CheckRun(FakeRuleset(), models, results_frame(rows), members, [])
