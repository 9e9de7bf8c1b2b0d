"""Reporters of the member inventory (`modelcheck members`): rich table, JSON contract, CSV."""

from __future__ import annotations

import math
from typing import Any

import pandas as pd

from modelcheck.report.quantities import DisplayUnits
from modelcheck.table import REJECTED

CAUTION = ("modelcheck screens models for data and axial-stress problems; it does not replace design "
           "and checking by a licensed engineer under the governing local code.")


def _s(v: Any) -> Any:
    """None for NaN / pandas missing values, else the value."""
    if v is None:
        return None
    if isinstance(v, float) and math.isnan(v):
        return None
    return v


def _ratio(value: Any, source: Any) -> dict[str, Any] | None:
    """A plain number (no unit) as a JSON quantity, or None where the model holds none."""
    if value is None or not math.isfinite(float(value)):
        return None
    return {"value": float(f"{float(value):.6g}"), "unit": "", "source": str(source or "")}


def member_dicts(members: pd.DataFrame, forces: pd.DataFrame | None, units: DisplayUnits,
                 capacity: pd.DataFrame | None = None) -> list[dict[str, Any]]:
    """Members as dicts of the JSON contract (README: 'members JSON')."""
    force_map: dict[str, dict[str, Any]] = {}
    if forces is not None and len(forces):
        ff = units.convert("force", 1.0)
        for gid, case, val, src in zip(forces["global_id"], forces["load_case"], forces["axial_force"],
                                       forces["source"], strict=True):
            # a force with no value (doubtful analysis end forces) is null: the reason is in the messages
            force_map.setdefault(gid, {})[str(case)] = None if not math.isfinite(val) else {
                "value": float(f"{val * ff:.6g}"), "unit": units.unit("force"), "source": src}
    cap_map: dict[str, dict[str, Any]] = {}
    if capacity is not None and len(capacity):
        for rec in capacity.to_dict("records"):
            cap_map[rec["global_id"]] = {k: v for k, v in rec.items() if k != "global_id"}
    out = []
    q = units.q
    for rec in members.to_dict("records"):
        material = None
        if rec["material"] is not None or any(_s(rec[k]) is not None for k in ("E", "Fy", "Fu")):
            material = {"name": rec["material"], "category": rec["material_category"],
                        "grade": rec["material_grade"],
                        "E": q("E", rec["E"], rec["E_source"]), "Fy": q("Fy", rec["Fy"], rec["Fy_source"]),
                        "Fu": q("Fu", rec["Fu"], rec["Fu_source"]),
                        "alpha": q("alpha", rec["alpha"], rec["alpha_source"])}
        item = {
            "global_id": rec["global_id"], "ifc_class": rec["ifc_class"],
            "predefined_type": _s(rec["predefined_type"]), "object_type": _s(rec["object_type"]),
            "name": _s(rec["name"]), "tag": _s(rec["tag"]), "storey": _s(rec["storey"]),
            "type_name": _s(rec["type_name"]),
            "section": {"name": _s(rec["section_name"]), "profile_type": _s(rec["profile_type"]),
                        "shape": _s(rec["shape"]),
                        "area": q("area", rec["area"], rec["area_source"]),
                        "r_min": q("r_min", rec["r_min"], rec["r_min_source"]),
                        "net_area": q("area", rec.get("net_area", math.nan), rec.get("net_area_source")),
                        "shear_lag_factor": _ratio(rec.get("shear_lag", math.nan), rec.get("shear_lag_source"))},
            "length": q("length", rec["length"], rec["length_source"]),
            "material": material,
            "axial_force": force_map.get(rec["global_id"], {}),
            "warnings": list(rec["warnings"] or []),
        }
        if rec["global_id"] in cap_map:
            item["capacity"] = cap_map[rec["global_id"]]
        out.append(item)
    return out


def members_csv(members: pd.DataFrame, units: DisplayUnits) -> pd.DataFrame:
    """A flat table for spreadsheets: one row per member, values in display units."""
    df = members.copy()
    for col in ("area", "r_min", "length", "E", "Fy", "Fu", "alpha", "net_area"):
        if col not in df.columns:
            continue
        kind = "area" if col == "net_area" else col
        df[col] = df[col] * units.convert(kind, 1.0)
        df = df.rename(columns={col: f"{col} [{units.unit(kind)}]"})
    for col in ("d", "h", "b", "tf", "tw", "t"):
        df[col] = df[col] * units.convert("small_length", 1.0)
        df = df.rename(columns={col: f"{col} [{units.unit('small_length')}]"})
    df["warnings"] = df["warnings"].map(lambda w: " | ".join(w or []))
    # what the reader did not use is in the warnings, in words; its (column, reason) pairs are not
    # a spreadsheet value
    return df.drop(columns=[c for c in (REJECTED,) if c in df.columns])


def members_table(members: pd.DataFrame, units: DisplayUnits, title: str) -> Any:
    """A rich Table of the members of one model. Every text goes in as a ``Text`` (a name, a
    header unit such as ``A [mm²]``: never read as markup); numbers in plain decimals."""
    from rich.table import Table
    from rich.text import Text

    from modelcheck.report.text import MAX_LINE, plain, shown

    t = Table(title=Text(shown(title, MAX_LINE)), title_justify="left", header_style="bold")
    for col, just in (("GlobalId", "left"), ("Class", "left"), ("Name / tag", "left"), ("Section", "left"),
                      (f"A [{units.unit('area')}]", "right"), (f"r min [{units.unit('r_min')}]", "right"),
                      (f"L [{units.unit('length')}]", "right"), ("Material", "left"),
                      (f"Fy [{units.unit('Fy')}]", "right"), ("Notes", "left")):
        t.add_column(Text(_unit_header(col)), justify=just, overflow="fold")  # type: ignore[arg-type]

    def num(v: float, q: str) -> str:
        return "—" if v is None or not math.isfinite(v) else plain(units.convert(q, v))

    def text(v: Any) -> str | None:   # the model's text: control characters escaped, long texts cut
        v = _s(v)
        return shown(v) if v is not None and str(v).strip() else None

    none = Text("—", style="red")   # no section or material: an em dash, as every missing text
    for rec in members.to_dict("records"):
        label = " / ".join(x for x in (text(rec["name"]), text(rec["tag"])) if x)
        sec = text(rec["section_name"]) or (text(rec["profile_type"]) or "").removeprefix("Ifc").removesuffix(
            "ProfileDef")
        material = text(rec["material"])
        warn = rec["warnings"] or []
        t.add_row(Text(shown(rec["global_id"])), Text(shown(rec["ifc_class"]).removeprefix("Ifc")), Text(label or "—"),
                  Text(sec) if sec else none, num(rec["area"], "area"), num(rec["r_min"], "r_min"),
                  num(rec["length"], "length"), Text(material) if material else none, num(rec["Fy"], "Fy"),
                  Text(f"{len(warn)} warning(s)", style="yellow") if warn else "")
    return t


def _unit_header(text: str) -> str:
    """A header with its unit written as pint's short symbol: 'A [mm**2]' -> 'A [mm²]'."""
    if "[" not in text:
        return text
    head, unit = text[:-1].split("[", 1)
    from modelcheck.units import ureg

    try:
        return f"{head}[{ureg.Unit(unit):~P}]"
    except (ValueError, AttributeError, TypeError, KeyError):
        return text
