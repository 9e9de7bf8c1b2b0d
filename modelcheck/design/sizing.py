"""Size a member for an axial force: the smallest stock size that passes every applicable check.

Method: every candidate of the chosen kind (round, square or flat bars of the rule set's stock
series, threaded rods, catalog sections) becomes a row of a synthetic member table with the
chosen material and length; the rule set runs **once** over all of them
(:func:`modelcheck.rules.engine.run_checks`, one load case with the force). The smallest
candidate (by area, then by series order) for which every applicable check passes wins. So a
size passes here exactly when `modelcheck check` would pass it: a required size exactly on a
stock step is kept, and floating-point noise does not bump it (the engine passes a demand within
1 part in 10⁹ of its capacity).

Applicable: without a length, the checks that need L (buckling, slenderness, elongation) cannot
be evaluated; they are listed as not applicable, and the result says so. A check left unchecked
for any other reason (the material lacks Fy, a rod diameter with no standard thread) makes that
candidate ineligible: nothing is passed on missing data.

Required area: for every stress check that applies (demand and capacity in stress units), the
area that brings the check to ratio 1 is |P| / capacity (the area the check divides P by: gross,
body, tensile-stress or net area); the largest over those checks on the selected size is reported
with the check that sets it. For buckling the capacity depends on the section, so the figure is
that of the selected size.

Example::

    >>> from modelcheck.rules.ruleset import load_ruleset
    >>> r = size(load_ruleset("steel-asd-us"), 44482.2, material="A36", shape="round")
    >>> r.selected.designation          # 10 kip on A36: A ≥ 10 × 1.67 / 36 = 0.464 in²
    'round bar 13/16 in'
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any

import numpy as np
import pandas as pd

from modelcheck.common.errors import UsageError
from modelcheck.common.units import Q_, ureg
from modelcheck.common.vocabulary import (
    STOCK_FAMILY,
    STOCK_KIND_NAMES,
    Shape,
    display_kinds,
    quantity_object,
    round_sig,
)
from modelcheck.design import stock

if TYPE_CHECKING:
    from modelcheck.rules.ruleset import RuleSet

SHAPES: tuple[str, ...] = STOCK_KIND_NAMES

#: material used when none is named, by the rule set's units
DEFAULT_MATERIAL: Mapping[str, str] = {"US": "ASTM A36", "SI": "S235"}


# ---------------------------------------------------------------------------------------------
# values


@dataclass(frozen=True)
class CheckLine:
    """One check of the selected size (demand and capacity in the check's display unit)."""

    id: str
    title: str
    clause: str
    status: str
    demand: float
    capacity: float
    unit: str
    ratio: float
    message: str


@dataclass(frozen=True)
class Selection:
    """The chosen size; SI values."""

    designation: str
    family: str
    area: float                        # m², gross (body) area
    area_source: str
    ratio: float                       # governing ratio over every applicable check
    governing_check: str
    stress: float                      # Pa: demand of the governing stress check (nan: none)
    stress_source: str
    elongation: float | None           # m: P L / (A E), with a length only
    tensile_stress_area: float | None  # m², threaded rods only
    r_min: float


@dataclass(frozen=True)
class SizeResult:
    """Everything `modelcheck size` reports; SI values, display units in ``display``."""

    ruleset: str
    ruleset_path: str
    force: float                        # N, tension positive
    material: Mapping[str, Any]         # name, grade, category, E, Fy, Fu (Pa) with sources
    shape: str
    families: tuple[str, ...]
    thickness: float | None             # m
    length: float | None                # m
    required_area: float                # m²
    required_area_check: str
    required_area_basis: str
    selected: Selection
    checks: tuple[CheckLine, ...]
    not_applicable: tuple[tuple[str, str], ...]   # (check id, why)
    stock: str                          # the series used
    candidates: int
    display: Mapping[str, str] = field(default_factory=dict)

    def q(self, kind: str, value: float | None, source: str) -> dict[str, Any] | None:
        """The JSON quantity ``{"value", "unit", "source"}`` of an SI value in the display unit of ``kind``."""
        if value is None or not math.isfinite(value):
            return None
        unit = self.display[kind]
        return quantity_object(float(Q_(value, display_kinds()[kind].si).m_as(unit)), unit, source)

    def to_dict(self) -> dict[str, Any]:
        """The JSON document of `modelcheck size --format json` (README: 'size JSON')."""
        from modelcheck.report.members import CAUTION

        sel = self.selected
        mat = self.material
        return {
            "ruleset": {"name": self.ruleset, "path": self.ruleset_path},
            "force": self.q("force", self.force, "--force"),
            "material": {"name": mat["name"], "grade": mat["grade"], "category": mat["category"],
                         "E": self.q("stress", mat["E"], mat["E_source"] or ""),
                         "Fy": self.q("stress", mat["Fy"], mat["Fy_source"] or ""),
                         "Fu": self.q("stress", mat["Fu"], mat["Fu_source"] or "")},
            "shape": self.shape,
            "families": list(self.families),
            "thickness": self.q("small_length", self.thickness, "--thickness"),
            "length": self.q("length", self.length, "--length"),
            "required_area": self.q("area", self.required_area,
                                    f"|P| / capacity of {self.required_area_check}"),
            "required_area_check": self.required_area_check,
            "required_area_basis": self.required_area_basis,
            "selected": {
                "designation": sel.designation,
                "family": sel.family,
                "area": self.q("area", sel.area, sel.area_source),
                "stress": self.q("stress", sel.stress, sel.stress_source),
                "ratio": round_sig(sel.ratio),
                "governing_check": sel.governing_check,
                "elongation": self.q("small_length", sel.elongation, "P L / (A E)"),
                "tensile_stress_area": self.q("area", sel.tensile_stress_area,
                                              "ASME B1.1 / ISO 898-1 (rulesets/threads.toml)"),
                "r_min": self.q("small_length", sel.r_min, sel.area_source),
            },
            "checks": [{"check": c.id, "title": c.title, "clause": c.clause, "status": c.status,
                        "demand": _qd(c.demand, c.unit), "capacity": _qd(c.capacity, c.unit),
                        "ratio": None if not math.isfinite(c.ratio) else round_sig(c.ratio),
                        "message": c.message} for c in self.checks],
            "not_applicable": [{"check": cid, "reason": why} for cid, why in self.not_applicable],
            "stock": self.stock,
            "candidates": self.candidates,
            "caution": CAUTION,
        }


def _qd(value: float, unit: str) -> dict[str, Any] | None:
    return quantity_object(value, unit, "")


# ---------------------------------------------------------------------------------------------
# inputs


def resolve_material(name: str | None, ruleset: RuleSet) -> dict[str, Any]:
    """Library values of a material name (default by the rule set's units) as member-table values."""
    from modelcheck.materials.library import match_candidates, match_material

    text = name or DEFAULT_MATERIAL.get(getattr(ruleset, "units", "SI"), "S235")
    grade = match_material(text)
    if grade is None:
        found = match_candidates(text)
        if found:
            raise UsageError(f"--material {text!r} matches several grades equally well: "
                             + ", ".join(g.grade for g, _ in found[:6]) + "; name one of them")
        from modelcheck.materials.library import load_library

        known = ", ".join(m.grade for m in load_library().materials)
        raise UsageError(f"--material {text!r} matches no grade of the material library (rulesets/materials.toml); "
                         f"grades: {known}")
    values: dict[str, Any] = {"name": text, "grade": grade.grade, "category": grade.category}
    for key in ("E", "Fy", "Fu", "alpha"):
        v = grade.value(key)
        values[key] = math.nan if v is None else float(v)
        values[f"{key}_source"] = grade.source(key)
    return values


def _round_values(members: pd.DataFrame, grade: str) -> None:
    """The grade's values for round hollow sections (ASTM A500's Fy) on the candidates of that shape."""
    from modelcheck.materials.library import match_material

    lib = match_material(grade)
    if lib is None or not lib.round_values or not len(members):
        return
    rows = (members["shape"] == Shape.ROUND_TUBE).to_numpy()
    for q, v, src, _ in lib.round_values:
        members.loc[rows, q] = v
        members.loc[rows, f"{q}_source"] = src


def _display(ruleset: RuleSet, units: Any) -> dict[str, str]:
    """Display units: the rule set's, or those of a DisplayUnits system when one is given."""
    if units is not None and getattr(units, "system", None) in ("US", "SI"):
        return {"force": units.unit("force"), "stress": units.unit("stress"), "area": units.unit("area"),
                "small_length": units.unit("small_length"), "length": units.unit("length")}
    disp = ruleset.display
    return {"force": disp["force"], "stress": disp["stress"], "area": disp["area"],
            "small_length": disp["length"], "length": "ft" if ruleset.units == "US" else "m"}


def candidates_for(ruleset: RuleSet, shape: str, *, families: tuple[str, ...] | None = None,
                   thickness: float | None = None) -> tuple[pd.DataFrame, str]:
    """The candidate table of one kind for a rule set, and a line naming the series used."""
    series = stock.stock_series(ruleset)
    if shape == "round":
        return stock.round_bars(series), f"{series.origin}: {series.about}"
    if shape == "square":
        return stock.square_bars(series), f"{series.origin}: {series.about}"
    if shape == "flat":
        ts = None if thickness is None else (thickness,)
        return stock.flat_bars(series, ts), f"{series.origin}: {series.about}"
    if shape == "threaded":
        std = "ASME B1.1 UNC" if series.threads == "UNC" else "ISO 261 coarse"
        return stock.threaded_rods(series), f"{std} threads ({series.origin})"
    if shape == "catalog":
        known = stock.catalog_families(series.shapes)
        if families:
            unknown = [f for f in families if f.upper() not in {k.upper() for k in known}]
            if unknown:
                other = "shapes-en.csv" if series.shapes == "shapes-aisc.csv" else "shapes-aisc.csv"
                hint = ""
                if {f.upper() for f in unknown} <= {k.upper() for k in stock.catalog_families(other)}:
                    hint = (f" ({', '.join(unknown)} is in rulesets/{other}; a rule set chooses that table "
                            f"with [stock] series = \"{'SI' if other == 'shapes-en.csv' else 'US'}\")")
                raise UsageError(f"--family {', '.join(unknown)}: not in rulesets/{series.shapes} "
                                 f"(families: {', '.join(known)}){hint}")
        return (stock.catalog_shapes(series.shapes, families or None),
                f"rulesets/{series.shapes} ({', '.join(families) if families else 'all families'})")
    raise UsageError(f"--shape {shape!r}: choose one of {', '.join(SHAPES)}")


# ---------------------------------------------------------------------------------------------
# sizing


def _length_only(missing: Any) -> bool:
    items = list(missing or [])
    return bool(items) and all(str(m).startswith("L:") for m in items)


def size(ruleset: RuleSet, force_si: float, *, material: str | None = None, shape: str | None = None,
         thickness: float | None = None, length: float | None = None, units: Any = None,
         family: str | tuple[str, ...] | None = None) -> SizeResult:
    """The smallest stock size of ``shape`` that carries ``force_si`` newtons (tension positive).

    ``thickness`` (m) fixes a flat bar's thickness; ``length`` (m) makes the checks that need
    L apply (buckling, slenderness, elongation); ``family`` picks catalog families (W, HSS, L,
    IPE, HEA, CHS, RHS, SHS). Raises :class:`UsageError` when nothing in the series passes or
    the inputs do not fit together.
    """
    from modelcheck.rules.engine import run_checks

    families = (family,) if isinstance(family, str) else tuple(family or ())
    if shape is None:
        shape = "catalog" if families else "round"
    if families and shape != "catalog":
        raise UsageError("--family applies to --shape catalog")
    if thickness is not None and shape != "flat":
        raise UsageError("--thickness applies to --shape flat")
    if not math.isfinite(force_si) or force_si == 0:
        raise UsageError("--force must be a non-zero force (tension positive, compression negative)")
    for what, v in (("--thickness", thickness), ("--length", length)):
        if v is not None and not (math.isfinite(v) and v > 0):
            raise UsageError(f"{what} must be a positive length")
    mat = resolve_material(material, ruleset)
    cands, series_text = candidates_for(ruleset, shape, families=families or None, thickness=thickness)
    if not len(cands):
        raise UsageError(f"no {shape} sizes to choose from ({series_text})")
    base = {"ifc_class": "IfcMember", "model": "size", "material": mat["name"],
            "material_category": mat["category"], "material_grade": mat["grade"],
            "length": math.nan if length is None else float(length),
            "length_source": None if length is None else "--length"}
    for key in ("E", "Fy", "Fu", "alpha"):
        base[key] = mat[key]
        base[f"{key}_source"] = mat[f"{key}_source"]
    ids = [f"c{i}" for i in range(len(cands))]
    members = stock.as_members(cands, base=base, ids=ids)
    _round_values(members, mat["grade"])
    forces = pd.DataFrame({"model": "size", "global_id": ids, "load_case": "P",
                           "axial_force": np.full(len(ids), float(force_si)), "source": "--force"})
    results = run_checks(ruleset, members, forces)
    res = results.assign(_c=results["global_id"].str.slice(1).astype(int) if len(results) else pd.Series(dtype=int))
    na = (res["status"] == "unchecked") & res["missing"].map(_length_only) if length is None else \
        pd.Series(False, index=res.index)
    applicable = res[~na]
    per = applicable.groupby("_c")["status"].agg(
        n="size", fails=lambda s: int((s == "fail").sum()), other=lambda s: int((s == "unchecked").sum()))
    eligible = per[(per["n"] > 0) & (per["fails"] == 0) & (per["other"] == 0)]
    what = "tension" if force_si > 0 else "compression"
    if not len(eligible):
        # pandas-stubs type a named aggregation of a grouped column as a Series; it is a DataFrame
        raise UsageError(_no_size_message(ruleset, res, na, per, cands, shape, what, mat, length))   # type: ignore[arg-type]
    best = int(eligible.index.min())   # candidates are sorted by area, then series order
    rows = res[res["_c"] == best]
    cand = cands.iloc[best]
    if cand["shape"] == Shape.ROUND_TUBE:   # the values the selected size was checked with
        first = members.iloc[best]
        mat = {**mat, **{k: first[k] for k in ("Fy", "Fy_source") if k in first.index}}
    return _result(ruleset, force_si, mat, shape, families, thickness, length, rows, na, cand,
                   series_text, len(cands), _display(ruleset, units))


def _no_size_message(ruleset: RuleSet, res: pd.DataFrame, na: pd.Series, per: pd.DataFrame, cands: pd.DataFrame,
                     shape: str, what: str, mat: Mapping[str, Any], length: float | None) -> str:
    kind = STOCK_FAMILY[shape]
    applicable = res[~na]
    if not len(applicable):
        if na.any():
            needs = ", ".join(dict.fromkeys(res.loc[na, "check"]))
            return (f"rule set {ruleset.name}: the checks for a {kind} in {what} ({needs}) need the member "
                    "length; give --length")
        return f"rule set {ruleset.name} has no check that applies to a {kind} in {what}"
    unchecked = applicable[applicable["status"] == "unchecked"]
    if len(unchecked) and (per["other"] > 0).all():
        first = unchecked.iloc[0]
        missing = "; ".join(first["missing"] or []) or str(first["message"])
        return (f"cannot size a {kind} of {mat['grade']} with rule set {ruleset.name}: check {first['check']} "
                f"is not checked for any size ({missing})")
    last = int(per.index.max())
    rows = applicable[applicable["_c"] == last]
    worst = rows.loc[rows["ratio"].fillna(np.inf).idxmax()]   # type: ignore[call-overload]  # pandas-stubs: a label is Hashable
    ratio = worst["ratio"]
    return (f"no {kind} in the series passes {ruleset.name}; the largest, {cands.iloc[last]['designation']}, "
            f"fails {worst['check']}" + (f" (ratio {ratio:.3g})" if math.isfinite(ratio) else ""))


def _result(ruleset: RuleSet, force_si: float, mat: Mapping[str, Any], shape: str, families: tuple[str, ...],
            thickness: float | None, length: float | None, rows: pd.DataFrame, na: pd.Series, cand: pd.Series,
            series_text: str, n_candidates: int, display: dict[str, str]) -> SizeResult:
    rows_na = rows[na.loc[rows.index]]
    rows_ok = rows[~na.loc[rows.index]]
    checks = tuple(CheckLine(id=r["check"], title=r["title"], clause=r["clause"], status=r["status"],
                             demand=float(r["demand"]), capacity=float(r["capacity"]), unit=str(r["unit"]),
                             ratio=float(r["ratio"]), message=str(r["message"]))
                   for r in rows_ok.to_dict("records"))
    not_applicable = tuple((r["check"], "needs the member length L: give --length")
                           for r in rows_na.to_dict("records"))
    gov = max(checks, key=lambda c: c.ratio)
    stress_checks = [c for c in checks if _is_stress(c.unit)]
    area = float(cand["area"])
    stress, stress_src = math.nan, ""
    req, req_check, req_basis = math.nan, "", ""
    if stress_checks:
        sgov = max(stress_checks, key=lambda c: c.ratio)
        stress = float(Q_(sgov.demand, sgov.unit).m_as("Pa"))
        stress_src = f"{ruleset.check(sgov.id).demand_source} ({sgov.id})"
        reqs = [(abs(force_si) / float(Q_(c.capacity, c.unit).m_as("Pa")), c) for c in stress_checks
                if c.capacity > 0]
        if reqs:
            req, c = max(reqs, key=lambda x: x[0])
            req_check = c.id
            check = ruleset.check(c.id)
            basis = ("tensile-stress area As" if "As" in check.inputs else
                     "net area An" if "An" in check.inputs else "gross (body) area")
            req_basis = f"{basis}: |P| / ({check.capacity_source}), {c.id}" + (f" ({c.clause})" if c.clause else "")
    elong = None
    if length is not None and math.isfinite(mat["E"]):
        elong = force_si * length / (area * mat["E"])
    As = float(cand["As"]) if math.isfinite(float(cand["As"])) else None
    return SizeResult(
        ruleset=ruleset.name, ruleset_path=str(ruleset.path), force=float(force_si), material=dict(mat),
        shape=shape, families=families, thickness=thickness, length=length,
        required_area=req, required_area_check=req_check, required_area_basis=req_basis,
        selected=Selection(designation=str(cand["designation"]), family=str(cand["family"]), area=area,
                           area_source=str(cand["source"]), ratio=gov.ratio, governing_check=gov.id,
                           stress=stress, stress_source=stress_src, elongation=elong, tensile_stress_area=As,
                           r_min=float(cand["r_min"])),
        checks=checks, not_applicable=not_applicable, stock=series_text, candidates=n_candidates,
        display=display,
    )


def _is_stress(unit: str) -> bool:
    try:
        return bool(ureg.parse_units(unit).dimensionality == ureg.Unit("Pa").dimensionality) if unit else False
    except Exception:  # pint raises many types for odd unit text; not a stress then
        return False
