"""Robustness corpus, hostile models: inputs that must never give a wrong pass or an internal error.

One test per class of hostile input: incoherent unit assignments, capacities and demands that are
no usable number, signed demands of a check without a condition, implausible geometry (exporter
slips among them), an entity name defined twice, a composite curve that is part of itself, units
dividing by zero, a syntax error only ``--annotate`` meets, stock ranges that overflow, outlines
of very many points. Each asserts the exit code, one line naming where (file, line, GlobalId),
no traceback, no ``pass`` for a member that was not verified, and the inputs byte-for-byte
unchanged (``tests/corpus.py`` hashes them around every run). Inputs are built in code.
"""

from __future__ import annotations

import math
import re
import resource
import textwrap
from pathlib import Path
from typing import Any

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from modelcheck.ifc.outline import MAX_OUTLINE_POINTS, crossing_edges
from modelcheck.testing.author import ModelBuilder
from tests.corpus import (
    good_builder,
    line_of_entity,
    member_ids,
    members_by_name,
    profile_position,
    results_by_member,
    run_inprocess,
    run_process,
    write_model,
)
from tests.corpus import run_check_json as check
from tests.helpers import axial_force

FORCE = axial_force(20000.0)


def model_warnings(doc: dict[str, Any]) -> list[str]:
    return [w for m in doc["models"] for w in m["warnings"]]


def member_warnings(capsys: Any, path: Path) -> dict[str, list[str]]:
    """Name -> the warnings ``modelcheck members`` gives for each member."""
    return {name: m["warnings"] for name, m in members_by_name(capsys, path).items()}


def statuses_of(doc: dict[str, Any], gid: str) -> set[str]:
    return {r["status"] for r in results_by_member(doc).get(gid, [])}


def one_error_line(out: Any, *fragments: str) -> str:
    """Exactly one stderr line, the error, holding every fragment."""
    assert len(out.lines) == 1, out.stderr
    line = out.errors[0]
    for frag in fragments:
        assert frag in line, (frag, line)
    return line


# ------------------------------------------------------------------------------ unit assignment
def _units_of(mb: ModelBuilder) -> Any:
    return mb.project.UnitsInContext


def _replace_unit(mb: ModelBuilder, utype: str, new: Any) -> None:
    ua = _units_of(mb)
    ua.Units = [u for u in ua.Units if getattr(u, "UnitType", None) != utype] + [new]


def _conversion(mb: ModelBuilder, utype: str, factor: float, of: Any) -> Any:
    f = mb.f
    measure = {"LENGTHUNIT": "IfcLengthMeasure", "FORCEUNIT": "IfcForceMeasure"}.get(utype, "IfcReal")
    mwu = f.createIfcMeasureWithUnit(f.create_entity(measure, factor), of)
    return f.createIfcConversionBasedUnit(f.createIfcDimensionalExponents(1, 0, 0, 0, 0, 0, 0), utype, "ODD", mwu)


def _length_cases() -> dict[str, Any]:
    """LENGTHUNIT assignments no number of the model can be read with: the model is unreadable."""
    def two_sizes(mb: ModelBuilder) -> None:   # MILLI METRE and METRE: 'the last one wins' would be a guess
        _units_of(mb).Units = list(_units_of(mb).Units) + [mb.f.createIfcSIUnit(None, "LENGTHUNIT", None, "METRE")]

    def second(mb: ModelBuilder) -> None:
        _replace_unit(mb, "LENGTHUNIT", mb.f.createIfcSIUnit(None, "LENGTHUNIT", None, "SECOND"))

    def degree(mb: ModelBuilder) -> None:       # a plane angle, 0.0174533 rad (common practice)
        rad = mb.f.createIfcSIUnit(None, "PLANEANGLEUNIT", None, "RADIAN")
        _replace_unit(mb, "LENGTHUNIT", _conversion(mb, "LENGTHUNIT", 0.0174533, rad))

    def zero(mb: ModelBuilder) -> None:
        metre = mb.f.createIfcSIUnit(None, "LENGTHUNIT", None, "METRE")
        _replace_unit(mb, "LENGTHUNIT", _conversion(mb, "LENGTHUNIT", 0.0, metre))

    def negative(mb: ModelBuilder) -> None:     # an inch written as -0.0254 m
        metre = mb.f.createIfcSIUnit(None, "LENGTHUNIT", None, "METRE")
        _replace_unit(mb, "LENGTHUNIT", _conversion(mb, "LENGTHUNIT", -0.0254, metre))

    def factor_in_seconds(mb: ModelBuilder) -> None:   # an 'inch' whose factor is 0.0254 s
        sec = mb.f.createIfcSIUnit(None, "TIMEUNIT", None, "SECOND")
        _replace_unit(mb, "LENGTHUNIT", _conversion(mb, "LENGTHUNIT", 0.0254, sec))

    def cycle(mb: ModelBuilder) -> None:       # a foot of 12 inches, an inch of 1/12 foot: no size at all
        f = mb.f
        dims = f.createIfcDimensionalExponents(1, 0, 0, 0, 0, 0, 0)
        foot = f.createIfcConversionBasedUnit(dims, "LENGTHUNIT", "FOOT", None)
        inch = f.createIfcConversionBasedUnit(dims, "LENGTHUNIT", "INCH",
                                              f.createIfcMeasureWithUnit(f.createIfcLengthMeasure(1 / 12), foot))
        foot.ConversionFactor = f.createIfcMeasureWithUnit(f.createIfcLengthMeasure(12.0), inch)
        _replace_unit(mb, "LENGTHUNIT", foot)

    def long_chain(mb: ModelBuilder) -> None:  # 2,000 units each of 1 of the one before: not a cycle
        unit = mb.f.createIfcSIUnit(None, "LENGTHUNIT", "MILLI", "METRE")
        for i in range(2000):
            unit = _conversion(mb, "LENGTHUNIT", 1.0, unit)
            unit.Name = f"U{i}"
        _replace_unit(mb, "LENGTHUNIT", unit)

    return {"two sizes": (two_sizes, "assigned twice"), "a second": (second, "not of the dimension"),
            "a cycle": (cycle, "refers to itself"), "a long chain": (long_chain, "defined through more than 16"),
            "a degree": (degree, "not of the dimension"), "factor zero": (zero, "not a positive finite"),
            "factor negative": (negative, "not a positive finite"),
            "factor in seconds": (factor_in_seconds, "not of the dimension")}


LENGTH_CASES = _length_cases()


@pytest.mark.parametrize("case", list(LENGTH_CASES))
def test_an_incoherent_length_unit_makes_the_model_unreadable(capsys, tmp_path, case):
    edit, fragment = LENGTH_CASES[case]
    mb = good_builder()
    edit(mb)
    path = write_model(mb, tmp_path / "units.ifc")
    out = check(capsys, path)
    assert out.code == 2
    line = one_error_line(out, str(path), "LENGTHUNIT", fragment)
    assert re.search(r"#\d+", line), line          # the unit entity is named
    assert not out.json()["results"]               # nothing passed, nothing checked on a guess


def test_a_force_unit_assigned_twice_leaves_forces_from_the_model_unchecked(capsys, tmp_path):
    # N and kN as the FORCEUNIT: 20000 could be 20 kN or 20 MN; no force is taken, each member says why
    mb = good_builder()
    _units_of(mb).Units = list(_units_of(mb).Units) + [mb.f.createIfcSIUnit(None, "FORCEUNIT", "KILO", "NEWTON")]
    path = write_model(mb, tmp_path / "force-units.ifc")
    out = check(capsys, path)
    doc = out.json()
    assert out.code == 1 and out.lines == [], out.stderr   # nothing could be checked: exit 1
    ids = member_ids(mb)
    for gid in ids.values():   # every check of the shipped rule set needs the force (its 'when' at least)
        assert statuses_of(doc, gid) == {"unchecked"}
    text = " ".join(model_warnings(doc))
    assert "FORCEUNIT" in text and "assigned twice" in text
    assert all(gid in text for gid in ids.values())     # each member's force named by its GlobalId


def test_an_area_unit_of_the_wrong_dimension_is_not_used_for_quantities(capsys, tmp_path):
    # AREAUNIT a cubic metre: the quantity set's area is not read; the profile's area is used
    mb = good_builder()
    _replace_unit(mb, "AREAUNIT", mb.f.createIfcSIUnit(None, "AREAUNIT", None, "CUBIC_METRE"))
    steel = mb.f.by_type("IfcMaterial")[0]
    rod = mb.f.createIfcCircleProfileDef("AREA", "RD16", profile_position(mb), 8.0)
    mb.member("IfcMember", name="Q1", tag="Q1", profile=rod, material=steel, length=2000.0,
              qto={"Length": 2000.0, "CrossSectionArea": 201.06}, psets=FORCE)
    path = write_model(mb, tmp_path / "area-unit.ifc")
    warns = member_warnings(capsys, path)["Q1"]
    assert any("AREAUNIT" in w and "not usable" in w for w in warns), warns


def test_an_unusable_plane_angle_unit_is_never_read_as_the_radian(capsys, tmp_path):
    # PLANEANGLEUNIT a METRE: an I-section's flange slope cannot be read (the radian is IFC's
    # default only where no unit is stated); a section without angles is read as usual
    mb = good_builder()
    _replace_unit(mb, "PLANEANGLEUNIT", mb.f.createIfcSIUnit(None, "PLANEANGLEUNIT", None, "METRE"))
    steel = mb.f.by_type("IfcMaterial")[0]
    ipe = mb.f.createIfcIShapeProfileDef("AREA", "IPN200", profile_position(mb), 90.0, 200.0, 7.5, 11.3, 7.5,
                                         4.5, 0.14)   # a tapered flange: 14 % slope (in radians here)
    mb.member("IfcMember", name="I1", tag="I1", profile=ipe, material=steel, length=3000.0, psets=FORCE)
    path = write_model(mb, tmp_path / "angle-unit.ifc")
    warns = member_warnings(capsys, path)
    assert any("FlangeSlope" in w and "PLANEANGLEUNIT is not usable" in w for w in warns["I1"]), warns["I1"]
    assert warns["H1"] == []
    doc = check(capsys, path).json()
    assert any("PLANEANGLEUNIT" in w and "not usable" in w for w in model_warnings(doc))
    assert statuses_of(doc, member_ids(mb)["I1"]) == {"unchecked"}
    assert all("nan" not in w.lower().replace("n/a", "") for w in model_warnings(doc) + warns["I1"])


# ------------------------------------------------------------------------- capacity and demand
RULES_HEAD = """\
[ruleset]
name = "hostile"
basis = "test"
units = "SI"

[parameters]
Omega = 1.67
"""


def _rules(tmp_path: Path, name: str, check_text: str, parameters: str = "") -> Path:
    path = tmp_path / f"{name}.toml"
    path.write_text(RULES_HEAD + parameters + "\n[[check]]\n" + textwrap.dedent(check_text), encoding="utf-8")
    return path


@pytest.fixture(scope="module")
def two_hangers(tmp_path_factory: Any) -> tuple[Path, dict[str, str]]:
    """H1 in tension (+20 kN), H2 in compression (−20 kN): a 20 mm round bar each."""
    mb = ModelBuilder(schema="IFC4", units="mm")
    steel = mb.material("S355", category="steel", E=210000.0, Fy=355.0, Fu=490.0)
    for name, p in (("H1", 20000.0), ("H2", -20000.0)):
        rod = mb.f.createIfcCircleProfileDef("AREA", "RD20", profile_position(mb), 10.0)
        mb.member("IfcMember", name=name, tag=name, profile=rod, material=steel, length=2400.0,
                  psets=axial_force(p))
    path = write_model(mb, tmp_path_factory.mktemp("hangers") / "hangers.ifc")
    return path, member_ids(mb)


#: capacities that are no capacity: a rule (or a value) gone wrong; '+ 0 * Fy' keeps them per member
BAD_CAPACITIES = {
    "zero": "0 [MPa] + 0 * Fy",
    "negative": "-Fy / Omega",
    "infinite": "Fy * exp(1000)",
    "not a number": "Fy * 0 / 0",
}


@pytest.mark.parametrize("case", list(BAD_CAPACITIES))
def test_a_capacity_that_is_not_a_positive_finite_value_never_passes(capsys, tmp_path, two_hangers, case):
    model, ids = two_hangers
    rules = _rules(tmp_path, "cap", f"""\
        id = "stress"
        when = "P > 0"
        demand = "P / A"
        capacity = "{BAD_CAPACITIES[case]}"
        unit = "MPa"
        """)
    out = check(capsys, model, extra=("--rules", str(rules)), inputs=(rules,))
    # nothing could be checked: exit 1; no numpy warning either
    assert out.code == 1 and out.lines == [], out.stderr
    rows = out.json()["results"]
    assert rows and {r["status"] for r in rows} == {"unchecked"}
    for r in rows:
        # H1's demand 20 kN / 314.16 mm² = 63.66 MPa would pass a negative capacity (πd²/4, d = 20 mm)
        assert "capacity is not a positive finite value" in r["message"], r["message"]
        assert "nan" not in r["message"].replace("n/a", "")


@pytest.mark.parametrize("demand", ["P / A * exp(1000)", "P / A * 0 / 0"])
def test_a_demand_that_is_not_finite_never_passes(capsys, tmp_path, two_hangers, demand):
    model, _ = two_hangers
    rules = _rules(tmp_path, "dem", f"""\
        id = "stress"
        when = "P > 0"
        demand = "{demand}"
        capacity = "Fy / Omega"
        """)
    out = check(capsys, model, extra=("--rules", str(rules)), inputs=(rules,))
    rows = out.json()["results"]
    assert out.code == 1 and rows and {r["status"] for r in rows} == {"unchecked"}   # nothing could be checked
    assert all("demand is not a finite number" in r["message"] for r in rows)


def test_a_signed_demand_without_when_never_passes_by_being_negative(capsys, tmp_path, two_hangers):
    model, ids = two_hangers
    rules = _rules(tmp_path, "signed", """\
        id = "stress"
        demand = "P / A"
        capacity = "Fy / Omega"
        unit = "MPa"
        """)
    out = run_inprocess(capsys, ["rules", "validate", str(rules)], inputs=[rules])
    assert out.code == 0
    assert len(out.lines) == 1 and out.lines[0].startswith(f"{rules}:") and "negative" in out.lines[0], out.stderr
    out = check(capsys, model, extra=("--rules", str(rules)), inputs=(rules,))
    doc = out.json()
    # H1: +63.66 MPa against 355/1.67 = 212.6 MPa passes; H2's −63.66 MPa is not compared
    assert statuses_of(doc, ids["H1"]) == {"pass"}
    assert statuses_of(doc, ids["H2"]) == {"unchecked"}
    h2 = results_by_member(doc)[ids["H2"]][0]
    assert "demand is negative" in h2["message"] and "magnitude" in h2["message"]


def test_magnitude_compares_the_size_of_a_signed_demand(capsys, tmp_path, two_hangers):
    model, ids = two_hangers
    rules = _rules(tmp_path, "magnitude", """\
        id = "stress"
        demand = "P / A"
        capacity = "50 [MPa] + 0 * Fy"
        unit = "MPa"
        magnitude = true
        """)
    out = run_inprocess(capsys, ["rules", "validate", str(rules)], inputs=[rules])
    assert out.code == 0 and out.lines == [], out.stderr
    doc = check(capsys, model, extra=("--rules", str(rules)), inputs=(rules,)).json()
    # |±20 kN| / 314.16 mm² = 63.66 MPa > 50 MPa: both fail (πd²/4 for d = 20 mm)
    for name in ("H1", "H2"):
        (row,) = results_by_member(doc)[ids[name]]
        assert row["status"] == "fail"
        assert row["demand"]["value"] == pytest.approx(63.662, rel=1e-4)
        assert row["demand"]["source"] == "|P / A|"


# ---------------------------------------------------------------------------- plausible geometry
@pytest.fixture(scope="module")
def slips(tmp_path_factory: Any) -> tuple[Path, dict[str, str]]:
    """Members whose geometry an exporter got wrong, in an inch model (ModelBuilder 'inch-kip'):

    * COL: a 6 × 4 in rectangular bar (24 in²) whose quantity set says 46.77 in its AREAUNIT,
      square feet here (6735 in²): an in²/ft² slip;
    * WALL: a 1850 × 1000 mm profile drawn in elevation and extruded 50 mm (2 in here);
    * STUB: a 12 in square bar 6 in long: a section larger than its length;
    * HAIR: a 0.002 in (0.05 mm) round bar: thinner than any bar;
    * SHORT: a 1 in round bar 0.02 in (0.5 mm) long;
    * OK: a 1 in round bar 96 in long, checked as usual.
    """
    mb = ModelBuilder(schema="IFC4", units="inch-kip")
    f = mb.f
    # square feet as the area unit (the usual slip: areas written in another unit than lengths)
    sqm = f.createIfcSIUnit(None, "AREAUNIT", None, "SQUARE_METRE")
    sqft = mb._conv("AREAUNIT", "SQUARE FOOT", 0.09290304, sqm, (2, 0, 0, 0, 0, 0, 0))
    _replace_unit(mb, "AREAUNIT", sqft)
    steel = mb.material("A36", category="steel", E=29000.0, Fy=36.0, Fu=58.0)
    force = axial_force(10.0)

    def rect(name: str, b: float, h: float) -> Any:
        return f.createIfcRectangleProfileDef("AREA", name, profile_position(mb), b, h)

    def rod(name: str, d: float) -> Any:
        return f.createIfcCircleProfileDef("AREA", name, profile_position(mb), d / 2)

    mb.member("IfcColumn", name="COL", tag="COL", profile=rect("FL6x4", 6.0, 4.0), material=steel, length=120.0,
              qto={"CrossSectionArea": 46.77}, psets=force)
    mb.member("IfcMember", name="WALL", tag="WALL", profile=rect("ELEV", 1850 / 25.4, 1000 / 25.4), material=steel,
              length=2.0, axis=False, psets=force)
    mb.member("IfcMember", name="STUB", tag="STUB", profile=rect("SQ12", 12.0, 12.0), material=steel, length=6.0,
              psets=force)
    mb.member("IfcMember", name="HAIR", tag="HAIR", profile=rod("RD0.002", 0.002), material=steel, length=96.0,
              psets=force)
    mb.member("IfcMember", name="SHORT", tag="SHORT", profile=rod("RD1", 1.0), material=steel, length=0.02,
              psets=force)
    mb.member("IfcMember", name="OK", tag="OK", profile=rod("RD1", 1.0), material=steel, length=96.0, psets=force)
    path = write_model(mb, tmp_path_factory.mktemp("slips") / "slips.ifc")
    return path, member_ids(mb) | {m.Name: m.GlobalId for m in f.by_type("IfcColumn")}


def test_exporter_slips_are_flagged_with_their_values_and_not_used(capsys, slips):
    path, ids = slips
    warns = member_warnings(capsys, path)
    # COL: 46.77 ft² = 6735 in² (144 in² per ft², common practice) does not fit in a 6 × 4 in outline
    col = " ".join(warns["COL"])
    assert "CrossSectionArea" in col and "not used" in col and re.search(r"4\.345\d*e\+06 mm²", col), col
    assert "152.4 × 101.6 mm" in col, col
    # WALL: 1850 × 1000 mm against 50.8 mm of extrusion; STUB: 304.8 mm against 152.4 mm
    assert any("larger than the member's length 50.8 mm" in w and "1850" in w for w in warns["WALL"]), warns["WALL"]
    assert any("larger than the member's length 152.4 mm" in w and "304.8" in w for w in warns["STUB"]), warns["STUB"]
    assert any("0.0508 mm" in w and "under 0.1 mm" in w for w in warns["HAIR"]), warns["HAIR"]
    assert any("0.000508 m" in w and "not plausible" in w for w in warns["SHORT"]), warns["SHORT"]
    assert warns["OK"] == []

    out = check(capsys, path)
    assert out.code in (0, 1), out.stderr
    doc = out.json()
    # COL is checked on its profile's 24 in² (6 × 4 in), never on the quantity set's area
    col_rows = [r for r in results_by_member(doc)[ids["COL"]] if r["check"] == "tension-yield"]
    assert col_rows and col_rows[0]["status"] == "pass"
    assert col_rows[0]["demand"]["value"] == pytest.approx(10.0 / 24.0, rel=1e-4)   # ksi = kip / in²
    for name in ("WALL", "STUB", "HAIR"):      # no section: nothing is checked on a wrong number
        assert statuses_of(doc, ids[name]) == {"unchecked"}, name
    # SHORT: the stress needs no length and is checked; what needs L (PL/AE) is not (a round bar
    # in tension has no L/r check at all: AISC 360-16 D1 user note)
    short = {r["check"]: r["status"] for r in results_by_member(doc)[ids["SHORT"]]}
    assert short["elongation"] == "unchecked" and "slenderness-tension" not in short, short
    assert statuses_of(doc, ids["OK"]) <= {"pass", "fail"}


def test_a_radius_of_gyration_its_outline_cannot_have_is_not_used(capsys, tmp_path):
    # Pset_ProfileMechanical beside a 20 mm bar: its area matches, its moments (a slip by 10⁶) give
    # r = 5000 mm; r_min ≤ d/2 for any section within d (the variance bound) — not used
    mb = good_builder()
    mm = mb.f.createIfcSIUnit(None, "LENGTHUNIT", "MILLI", "METRE")
    _units_of(mb).Units = list(_units_of(mb).Units) + [mb._derived("MOMENTOFINERTIAUNIT", [(mm, 4)])]
    steel = mb.f.by_type("IfcMaterial")[0]
    rod = mb.f.createIfcCircleProfileDef("AREA", "RD20", profile_position(mb), 10.0)
    mb.member("IfcMember", name="R1", tag="R1", profile=rod, material=steel, length=2400.0, psets={
        "Pset_ProfileMechanical": {"CrossSectionArea": ("IfcAreaMeasure", 314.159),
                                   "MomentOfInertiaY": ("IfcMomentOfInertiaMeasure", 7853.98e6 * 1e6),
                                   "MomentOfInertiaZ": ("IfcMomentOfInertiaMeasure", 7853.98e6 * 1e6)},
        **FORCE})
    path = write_model(mb, tmp_path / "r.ifc")
    warns = member_warnings(capsys, path)["R1"]
    assert any("radius of gyration" in w and "not used" in w for w in warns), warns


# ----------------------------------------------------------------------------- unreadable models
def test_an_entity_name_defined_twice_names_both_lines(capsys, tmp_path):
    good = write_model(good_builder(), tmp_path / "source.ifc")
    lines = good.read_text(encoding="ascii").splitlines()
    no = next(i for i, ln in enumerate(lines) if "IFCCIRCLEPROFILEDEF" in ln)
    eid = lines[no].split("=", 1)[0]
    # a second #N: the parser keeps one of them and only logs it
    lines.insert(no + 1, f"{eid}=IFCCIRCLEPROFILEDEF(.AREA.,'RD99',$,99.);")
    path = tmp_path / "twice.ifc"
    path.write_text("\n".join(lines) + "\n", encoding="ascii")
    out = check(capsys, path, good)
    assert out.code == 2
    one_error_line(out, str(path), f"entity {eid} is defined twice", f"lines {no + 1} and {no + 2}")
    doc = out.json()
    assert {r["model"] for r in doc["results"]} == {str(good)}   # the good model is still checked


def _self_composite(path: Path) -> tuple[Path, str]:
    """A model whose member C1 has an outline curve that is a segment of itself."""
    mb = good_builder()
    f = mb.f
    pts = [f.createIfcCartesianPoint(c) for c in [(0.0, 0.0), (10.0, 0.0), (10.0, 10.0), (0.0, 10.0), (0.0, 0.0)]]
    seg = f.createIfcCompositeCurveSegment("CONTINUOUS", True, f.createIfcPolyline(pts))
    curve = f.createIfcCompositeCurve([seg], False)
    seg.ParentCurve = curve
    prof = f.createIfcArbitraryClosedProfileDef("AREA", "CC", curve)
    mb.member("IfcMember", name="C1", tag="C1", profile=prof, material=f.by_type("IfcMaterial")[0], length=2400.0,
              psets=FORCE)
    write_model(mb, path)
    return path, member_ids(mb)["C1"]


def _limited(seconds: int = 60, memory: int = 2 << 30) -> Any:
    """A preexec_fn bounding the CPU time and the address space of a test's child process."""
    def limit() -> None:
        resource.setrlimit(resource.RLIMIT_CPU, (seconds, seconds))
        resource.setrlimit(resource.RLIMIT_AS, (memory, memory))
    return limit


@pytest.mark.parametrize("jobs", ["1", "2"])
def test_a_composite_curve_that_is_part_of_itself_costs_its_member_only(tmp_path, jobs):
    bad, gid = _self_composite(tmp_path / "cycle.ifc")
    good = write_model(good_builder(), tmp_path / "good.ifc")
    r = run_process(["check", str(bad), str(good), "--jobs", jobs, "--no-config", "--format", "json"], [bad, good],
                    timeout=120, preexec_fn=_limited())
    assert r.code in (0, 1), r.stderr
    import json

    doc = json.loads(r.stdout)
    assert {r_["model"] for r_ in doc["results"]} == {str(bad), str(good)}   # the batch goes on
    assert statuses_of(doc, gid) == {"unchecked"}
    out = run_process(["members", str(bad), "--format", "json"], inputs=[bad], timeout=120)
    (c1,) = [m for m in json.loads(out.stdout)["models"][0]["members"] if m["name"] == "C1"]
    assert any("segment of itself" in w for w in c1["warnings"]), c1["warnings"]


def test_a_syntax_error_only_annotate_reads_is_one_line_before_any_report(capsys, tmp_path):
    good = write_model(good_builder(), tmp_path / "source.ifc")
    text = good.read_text(encoding="ascii")
    # the project's origin point: no check reads it, the annotated copy writes every entity
    origin = re.search(r"^(#\d+)=IFCCARTESIANPOINT\(\(0\.,0\.,0\.\)\);$", text, re.MULTILINE)
    assert origin is not None
    path = tmp_path / "bad-number.ifc"
    path.write_text(text.replace(origin.group(0), f"{origin.group(1)}=IFCCARTESIANPOINT((1.2.3,0.,0.));", 1),
                    encoding="ascii")
    no = line_of_entity(path, int(origin.group(1)[1:]))
    out_dir = tmp_path / "out"
    out_dir.mkdir()
    out = run_inprocess(capsys, ["check", str(path), "--jobs", "1", "--no-config", "--format", "json",
                                 "--output", str(out_dir / "report.json"), "--annotate", str(out_dir / "a.ifc")],
                        inputs=[path])
    assert out.code == 2
    one_error_line(out, f"{path}", f"line {no}", "1.2.3")
    assert list(out_dir.iterdir()) == []      # no report that says the run went well, no half copy


# ----------------------------------------------------------------------------- units dividing by 0
@pytest.mark.parametrize("table, where", [
    (b"tag,axial_force [N/0]\nH1,12\n", "row 1"),
    (b"tag,axial_force\nH1,12 kN/0\n", "row 2"),
])
def test_a_unit_dividing_by_zero_in_a_load_table_is_one_line(capsys, tmp_path, table, where):
    model = write_model(good_builder(), tmp_path / "m.ifc")
    loads = tmp_path / "loads.csv"
    loads.write_bytes(table)
    out = check(capsys, model, extra=("--loads", str(loads)), inputs=(loads,))
    assert out.code == 2
    one_error_line(out, str(loads), where, "divides by zero")


def test_a_unit_dividing_by_zero_in_force_is_one_line(capsys):
    out = run_inprocess(capsys, ["size", "--force", "12 kN/0", "--material", "A36", "--shape", "threaded"])
    assert out.code == 2
    one_error_line(out, "--force", "divides by zero")


def test_a_unit_dividing_by_zero_in_a_text_property_leaves_that_member_unchecked(capsys, tmp_path):
    mb = good_builder()
    steel = mb.f.by_type("IfcMaterial")[0]
    rod = mb.f.createIfcCircleProfileDef("AREA", "RD20", profile_position(mb), 10.0)
    mb.member("IfcMember", name="T1", tag="T1", profile=rod, material=steel, length=2400.0,
              psets=axial_force("12 N/0", "IfcText"))
    path = write_model(mb, tmp_path / "text-force.ifc")
    out = check(capsys, path)
    doc = out.json()
    gid = member_ids(mb)["T1"]
    assert out.code in (0, 1) and out.lines == [], out.stderr
    assert "pass" not in {r["status"] for r in results_by_member(doc)[gid] if r["check"] == "tension-yield"}
    assert any(gid in w and "divides by zero" in w for w in model_warnings(doc)), model_warnings(doc)
    assert statuses_of(doc, member_ids(mb)["H1"]) <= {"pass", "fail"}   # the others are checked


# ------------------------------------------------------------------------------------- [stock]
@pytest.mark.parametrize("sizes", [
    '[{ from = "1 mm", to = "1e400 mm", step = "1 mm" }]',
    '[{ from = "1 mm", to = "5 m", step = "1e-400 in" }]',
    '[{ from = "1 mm", to = "1e300 m", step = "1e-300 in" }]',
    '["1e308 km"]',
])
def test_stock_sizes_that_overflow_are_one_line(capsys, tmp_path, sizes):
    rules = tmp_path / "stock.toml"
    rules.write_text(RULES_HEAD + f'\n[stock]\nround = {sizes}\n\n[[check]]\nid = "stress"\nwhen = "P > 0"\n'
                     'demand = "P / A"\ncapacity = "Fy / Omega"\n', encoding="utf-8")
    out = run_inprocess(capsys, ["size", "--force", "12 kN", "--material", "S355", "--shape", "round",
                                 "--rules", str(rules)], inputs=[rules])
    assert out.code == 2
    one_error_line(out, str(rules), "round")


# ----------------------------------------------------------------------------------- outlines
def _outline_model(path: Path, points: list[tuple[float, float]]) -> tuple[Path, str]:
    """A member P1 whose profile is the closed outline through ``points`` (an IfcIndexedPolyCurve)."""
    mb = good_builder()
    f = mb.f
    curve = f.createIfcIndexedPolyCurve(f.createIfcCartesianPointList2D([list(p) for p in points]), None, False)
    prof = f.createIfcArbitraryClosedProfileDef("AREA", "POLY", curve)
    mb.member("IfcMember", name="P1", tag="P1", profile=prof, material=f.by_type("IfcMaterial")[0], length=2400.0,
              psets=FORCE)
    write_model(mb, path)
    return path, member_ids(mb)["P1"]


def _wavy_circle(n: int, radius: float = 40.0) -> list[tuple[float, float]]:
    """A simple (star-shaped) outline of n points: a circle with a small wave on its radius."""
    t = np.linspace(0.0, 2 * math.pi, n, endpoint=False)
    r = radius * (1 + 0.05 * np.sin(7 * t))
    return list(zip((r * np.cos(t)).tolist(), (r * np.sin(t)).tolist(), strict=True))


def test_an_outline_of_many_points_is_read_in_bounded_time_and_memory(tmp_path):
    # 8,000 points: the n × n crossing test needed gigabytes; 1 GB of address space is plenty now
    path, gid = _outline_model(tmp_path / "many.ifc", _wavy_circle(8000))
    r = run_process(["members", str(path), "--format", "json"], [path], timeout=120,
                    preexec_fn=_limited(60, 1 << 30))
    assert r.code == 0, r.stderr
    import json

    (p1,) = [m for m in json.loads(r.stdout)["models"][0]["members"] if m["name"] == "P1"]
    # the area of a polygon of 8,000 points on r = 40(1 + 0.05 sin 7t) mm: π 40² (1 + 0.05²/2) mm²
    # to within the polygon's chord error (geometry: ∫ r²/2 dt)
    area = p1["section"]["area"]
    assert area["unit"] == "mm**2" and area["value"] == pytest.approx(math.pi * 1600 * (1 + 0.05**2 / 2), rel=1e-4)


def test_an_outline_beyond_the_point_limit_leaves_its_member_unchecked(capsys, tmp_path):
    path, gid = _outline_model(tmp_path / "huge.ifc", _wavy_circle(MAX_OUTLINE_POINTS + 1))
    warns = member_warnings(capsys, path)["P1"]
    assert any(f"{MAX_OUTLINE_POINTS + 1} points" in w and "not read" in w for w in warns), warns
    doc = check(capsys, path).json()
    assert statuses_of(doc, gid) == {"unchecked"}


def _properly_cross(a: Any, b: Any, c: Any, d: Any) -> bool:
    """Segments ab and cd cross at one point inside both (orientation test; geometry, common practice)."""
    def orient(p: Any, q: Any, r: Any) -> float:
        return (q[0] - p[0]) * (r[1] - p[1]) - (q[1] - p[1]) * (r[0] - p[0])
    return orient(a, b, c) * orient(a, b, d) < 0 and orient(c, d, a) * orient(c, d, b) < 0


@settings(max_examples=200, deadline=None)
@given(st.lists(st.tuples(st.integers(-6, 6), st.integers(-6, 6)), min_size=4, max_size=12), st.booleans())
def test_crossing_edges_agrees_with_the_orientation_test_of_every_pair(points, indexed):
    # both ways of finding the candidates: every pair (small outlines), the spatial index (large ones)
    pts = [(float(x), float(y)) for x, y in points]
    n = len(pts)
    pairs = [(i, j) for i in range(n) for j in range(i + 2, n) if not (i == 0 and j == n - 1)
             and _properly_cross(pts[i], pts[(i + 1) % n], pts[j], pts[(j + 1) % n])]
    assert crossing_edges(pts, pairwise=0 if indexed else n) == (min(pairs) if pairs else None)


def test_a_net_area_larger_than_the_gross_area_is_not_used(capsys, tmp_path):
    # 400 mm² net on a 20 mm bar of 314.16 mm² gross (πd²/4): holes take area away, never add it
    mb = good_builder()
    steel = mb.f.by_type("IfcMaterial")[0]
    rod = mb.f.createIfcCircleProfileDef("AREA", "RD20", profile_position(mb), 10.0)
    mb.member("IfcMember", name="N1", tag="N1", profile=rod, material=steel, length=2400.0,
              psets={"MC_NetSection": {"NetArea": ("IfcAreaMeasure", 400.0)}, **FORCE})
    path = write_model(mb, tmp_path / "net.ifc")
    warns = member_warnings(capsys, path)["N1"]
    assert any("net area 400 mm²" in w and "314.159 mm²" in w and "not used" in w for w in warns), warns
    doc = check(capsys, path).json()
    # steel-asd-us's tension-rupture applies only where a net area exists: here none is used
    assert "tension-rupture" not in {r["check"] for r in results_by_member(doc)[member_ids(mb)["N1"]]}
