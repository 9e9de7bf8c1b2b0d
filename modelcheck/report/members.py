"""Reporters of the member inventory (`modelcheck members`): rich table, JSON contract, CSV."""

from __future__ import annotations

import math
from typing import Any

import pandas as pd

from modelcheck.common.table import REJECTED, records
from modelcheck.common.vocabulary import quantities, quantity_object
from modelcheck.report.quantities import DisplayUnits
from modelcheck.report.text import CAUTION  # noqa: F401  (every report's closing caution; read from here too)

#: a quantity column's label in a table header ('r min')
LABEL: dict[str, str] = {q.column: q.label for q in quantities() if q.column is not None}


def _s(v: Any) -> Any:
    """None for NaN / pandas missing values, else the value."""
    if v is None:
        return None
    if isinstance(v, float) and math.isnan(v):
        return None
    return v


def _ratio(value: Any, source: Any) -> dict[str, Any] | None:
    """A plain number (no unit) as a JSON quantity, or None where the model holds none."""
    return None if value is None else quantity_object(float(value), "", source)


def member_dicts(members: pd.DataFrame, forces: pd.DataFrame | None, units: DisplayUnits,
                 capacity: pd.DataFrame | None = None) -> list[dict[str, Any]]:
    """Members as dicts of the JSON contract (README: 'members JSON')."""
    force_map: dict[str, dict[str, Any]] = {}
    if forces is not None and len(forces):
        ff = units.convert("force", 1.0)
        for gid, case, val, src in zip(forces["global_id"], forces["load_case"], forces["axial_force"],
                                       forces["source"], strict=True):
            # a force with no value (doubtful analysis end forces) is null: the reason is in the messages
            force_map.setdefault(gid, {})[str(case)] = None if not math.isfinite(val) else quantity_object(
                val * ff, units.unit("force"), src)
    cap_map: dict[str, dict[str, Any]] = {}
    if capacity is not None and len(capacity):
        for rec in records(capacity):
            cap_map[rec["global_id"]] = {k: v for k, v in rec.items() if k != "global_id"}
    out = []
    q = units.q
    for rec in records(members):
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


def members_csv(members: pd.DataFrame, units: DisplayUnits, capacity: pd.DataFrame | None = None) -> pd.DataFrame:
    """A flat table for spreadsheets: one row per member, values in display units; with
    ``capacity`` (``design.rating.rate_members``, one row per member in the same order) the
    allowable tension and compression forces, each with its governing check and note."""
    df = members.copy()
    if capacity is not None:
        cap = capacity.reset_index(drop=True)
        unit = units.unit("force")
        for direction in ("tension", "compression"):
            df[f"{direction}_allowable [{unit}]"] = [
                float(q["value"]) if isinstance(q, dict) and q.get("value") is not None else math.nan
                for q in cap[direction]]
            df[f"{direction}_check"] = [_s(v) for v in cap[f"{direction}_check"]]
            df[f"{direction}_note"] = [_s(v) for v in cap[f"{direction}_note"]]
    for q in quantities():   # each quantity with a unit in its display unit, named in the header
        if q.column is None or q.column not in df.columns or not q.display.si:
            continue
        df[q.column] = df[q.column] * units.convert(q.column, 1.0)
        df = df.rename(columns={q.column: f"{q.column} [{units.unit(q.column)}]"})
    df["warnings"] = df["warnings"].map(lambda w: " | ".join(w or []))
    # what the reader did not use is in the warnings, in words; its (column, reason) pairs are not
    # a spreadsheet value
    return df.drop(columns=[c for c in (REJECTED,) if c in df.columns])


def members_table(members: pd.DataFrame, units: DisplayUnits, title: str, width: int = 100,
                  details: bool = False, capacity: pd.DataFrame | None = None) -> Any:
    """The members of one model as the console shows them, fitted to ``width`` columns without
    breaking a word (``report.console.fitted_table``).

    The compact layout: member (tag, else name, else GlobalId), section, A, r min, L, material,
    Fy, notes (and the tension and compression ratings with ``capacity``). The wide one
    (``details``) adds name, GlobalId, class, storey, E, Fu and the source of each value; where its
    columns do not fit side by side, each member takes two wrapped lines instead. Every text goes
    in as a ``Text`` (a name, a header unit such as ``A [mm²]``: never read as markup); numbers
    in plain decimals."""
    from rich.table import Table
    from rich.text import Text

    from modelcheck.report.console import member_label
    from modelcheck.report.fitting import _fit, _limits, fitted_table
    from modelcheck.report.text import MAX_LINE, plain, shown

    def text(v: Any) -> str | None:   # the model's text: control characters escaped, long texts cut
        v = _s(v)
        return shown(str(v).strip()) if v is not None and str(v).strip() else None

    def nums(col: str, kind: str) -> list[str]:
        if col not in members.columns:
            return ["—"] * len(members)
        factor = units.convert(kind, 1.0)
        values = pd.to_numeric(members[col], errors="coerce").astype(float) * factor
        return [plain(v) if math.isfinite(v) else "—" for v in values]

    def header(name: str, kind: str) -> str:
        return _unit_header(f"{name} [{units.unit(kind)}]")

    def labelled(column: str) -> str:   # a quantity's label with its display unit: 'r min [mm]'
        return header(LABEL[column], column)

    recs = records(members)
    cols: dict[str, list[str]] = {
        "Member": [member_label(r.get("name"), r.get("tag"), r["global_id"]) for r in recs],
        "Name": [text(r.get("name")) or "—" for r in recs],
        "GlobalId": [shown(r["global_id"]) for r in recs],
        "Class": [shown(r["ifc_class"]).removeprefix("Ifc") for r in recs],
        "Storey": [text(r.get("storey")) or "—" for r in recs],
        "Section": [text(r.get("section_name")) or (text(r.get("profile_type")) or "").removeprefix("Ifc")
                    .removesuffix("ProfileDef") or "—" for r in recs],
        **{labelled(c): nums(c, c) for c in ("area", "r_min", "length")},
        "Material": [text(r.get("material")) or "—" for r in recs],
        **{labelled(c): nums(c, c) for c in ("E", "Fy", "Fu")},
        "Notes": [f"{len(r['warnings'])} warning" + ("s" if len(r["warnings"]) > 1 else "") if r.get("warnings")
                  else "" for r in recs],
        "Sources": [_sources(r) for r in recs],
    }
    rating_cols: list[str] = []
    if capacity is not None:
        by_id = {rec["global_id"]: rec for rec in records(capacity)}
        for direction, head in (("tension", "T"), ("compression", "C")):
            name = header(head, "force")
            rating_cols.append(name)
            cols[name] = [_rating(by_id.get(r["global_id"], {}).get(direction)) for r in recs]
    order = (["Member", "Name", "GlobalId", "Class", "Storey", "Section", labelled("area"), labelled("r_min"),
              labelled("length"), "Material", labelled("E"), labelled("Fy"), labelled("Fu"), *rating_cols,
              "Notes", "Sources"] if details
             else ["Member", "Section", labelled("area"), labelled("r_min"), labelled("length"), "Material",
                   labelled("Fy"), *rating_cols, "Notes"])
    missing_style = {"Section", "Material"}
    columns = [(c, "right" if "[" in c else "left", cols[c]) for c in order]
    rows = [[Text(cols[c][i], style="red" if c in missing_style and cols[c][i] == "—"
                  else "yellow" if c == "Notes" else "") for c in order] for i in range(len(recs))]
    title_text = shown(title, MAX_LINE)
    caption = ("T, C: the allowable tension and compression force (buckling included); "
               "none: no rating, the reason below the table") if capacity is not None else None
    if _fit(*_limits(columns), width) is None:
        grid = Table.grid(padding=(0, 2, 0, 0))
        grid.title, grid.title_justify = Text(title_text, style="bold"), "left"
        if caption:
            grid.caption, grid.caption_justify = Text(caption), "left"
        grid.add_column(no_wrap=True)
        grid.add_column(ratio=1)
        for i in range(len(recs)):
            line = " · ".join(f"{c} {cols[c][i]}" for c in order[1:-1] if cols[c][i])
            grid.add_row(Text(cols["Member"][i]),
                         Text.assemble(line, "\n", (f"sources: {cols['Sources'][i]}", "dim")) if details
                         else Text(line))
        return grid
    return fitted_table(title_text, columns, rows, width, caption)


def _sources(rec: dict[str, Any]) -> str:
    """Where each value of a member came from, values of one source together: 'A, r min: IfcCircleProfileDef #55;
    L: Axis; E, Fy, Fu: rulesets/materials.toml: EN 10025 S355'."""
    groups: dict[str, list[str]] = {}
    for key in ("area", "r_min", "length", "E", "Fy", "Fu"):
        label = LABEL[key]
        src = _s(rec.get(f"{key}_source"))
        if src is not None and str(src).strip():
            groups.setdefault(str(src).strip(), []).append(label)
    from modelcheck.report.text import shown

    return "; ".join(f"{', '.join(labels)}: {shown(src)}" for src, labels in groups.items()) or "—"


def _rating(q: Any) -> str:
    """A rating of ``rate_members`` (a quantity dict, or None: no rating) as a table cell."""
    from modelcheck.report.text import plain

    if isinstance(q, dict) and q.get("value") is not None and math.isfinite(float(q["value"])):
        return plain(float(q["value"]))
    return "none"


def member_notes(members: pd.DataFrame, capacity: pd.DataFrame | None = None) -> list[tuple[str, str]]:
    """(who, text) lines printed under the members table: each member's warnings and, with
    ``capacity``, why a direction has no rating or what fails at any force. Who: the member's
    tag or name with its GlobalId."""
    from modelcheck.report.console import member_label

    notes: dict[str, dict[str, Any]] = {}
    if capacity is not None and len(capacity):
        notes = {rec["global_id"]: rec for rec in records(capacity)}
    out: list[tuple[str, str]] = []
    for rec in records(members):
        gid = str(rec["global_id"])
        label = member_label(rec.get("name"), rec.get("tag"), gid)
        who = label if label == gid else f"{label} ({gid})"
        out += [(who, str(w)) for w in rec.get("warnings") or []]
        cap = notes.get(gid, {})
        for direction in ("tension", "compression"):
            note = _s(cap.get(f"{direction}_note"))
            if note is not None:
                rated = isinstance(cap.get(direction), dict)
                out.append((who, f"{direction} rating: {note}" if rated else f"no {direction} rating: {note}"))
    return out


def _unit_header(text: str) -> str:
    """A header with its unit written as pint's short symbol: 'A [mm**2]' -> 'A [mm²]'."""
    if "[" not in text:
        return text
    head, unit = text[:-1].split("[", 1)
    from modelcheck.common.units import ureg

    try:
        return f"{head}[{ureg.Unit(unit):~P}]"
    except (ValueError, AttributeError, TypeError, KeyError):
        return text
