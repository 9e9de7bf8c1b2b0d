"""Hollow sections under steel-asd-us: the gross area with the design wall thickness.

AISC 360-16 B4.2 (from memory): the design wall thickness t of HSS is 0.93 times the nominal wall
tnom, except for HSS made to ASTM A1085 or A1065, whose design wall is tnom. The AISC Manual's
tables of HSS properties are computed with that wall. A model may draw the nominal wall or the
design wall; the section's name (HSS6X6X3/8) tells which. Every expected value below comes from
those rules, from the Manual's published areas, or from the sharp-cornered tube's area 2t(h + b) -
4t² (plane geometry), never from the rule file.
"""

from __future__ import annotations

import json
import math
from pathlib import Path
from typing import Any

import numpy as np
import pytest

from modelcheck.design.designations import named_wall, wall_of
from modelcheck.rules.engine import run_checks
from modelcheck.rules.ruleset import load_ruleset
from modelcheck.testing.author import ModelBuilder
from tests.helpers import IN, KIP, KSI, axial_force, run_modelcheck
from tests.tables import force_table
from tests.tables import member_table as members

#: AISC 360-16 B4.2 (from memory): design wall / nominal wall of an ERW (e.g. ASTM A500) HSS
B42 = 0.93
#: ASTM A500 Gr. C rectangular HSS: Fy = 50 ksi, Fu = 62 ksi; E = 29,000 ksi (AISC Manual Table 2-4,
#: AISC 360-16 Symbols; from memory)
A500 = {"E": 29000 * KSI, "Fy": 50 * KSI, "Fu": 62 * KSI, "material": "ASTM A500 Gr C"}


def sharp_rect_area(h: float, b: float, t: float) -> float:
    """A rectangular tube with sharp corners: the outline less the hole (plane geometry)."""
    return h * b - (h - 2 * t) * (b - 2 * t)


def round_area(d: float, t: float) -> float:
    """A round tube: pi/4 (d² - (d - 2t)²) = pi t (d - t) (plane geometry)."""
    return math.pi * t * (d - t)


def tube(name: str, h_in: float, b_in: float, t_in: float, **kw: Any) -> dict[str, Any]:
    h, b, t = h_in * IN, b_in * IN, t_in * IN
    return {"shape": "rect-tube", "section_name": name, "h": h, "b": b, "t": t,
            "area": sharp_rect_area(h, b, t), "r_min": 0.39 * h, "length": 120 * IN, **A500, **kw}


def pipe(name: str, d_in: float, t_in: float, **kw: Any) -> dict[str, Any]:
    d, t = d_in * IN, t_in * IN
    return {"shape": "round-tube", "section_name": name, "d": d, "t": t, "area": round_area(d, t),
            "r_min": 0.34 * d, "length": 120 * IN, **A500, **kw}


def gross_areas(*rows: dict[str, Any]) -> list[float]:
    """Ag [in²] of each member under steel-asd-us: the force over the tension-yield demand."""
    m = members(*rows)
    res = run_checks(load_ruleset("steel-asd-us"), m, force_table(*((f"G{i}", "LC1", 100 * KIP)
                                                                      for i in range(len(rows)))))
    res = res[res.check == "tension-yield"].sort_values("global_id")
    assert list(res.unit) == ["ksi"] * len(rows)
    return [100 / f for f in res.demand]


# --- what a name states --------------------------------------------------------------------------

@pytest.mark.parametrize(("name", "shape", "outsides", "t", "expected"), [
    # AISC Manual designations (inches; common practice): depth X width X wall, diameter X wall
    ("HSS6X6X3/8", "rect-tube", (6 * IN, 6 * IN), 0.375 * IN, 0.375 * IN),
    ("HSS6X6X3/8", "rect-tube", (6 * IN, 6 * IN), 0.349 * IN, 0.375 * IN),      # drawn with tdes
    ("HSS6X4X3/8", "rect-tube", (4 * IN, 6 * IN), 0.375 * IN, 0.375 * IN),      # depth is the model's YDim
    ("HSS 3-1/2 x 3-1/2 x 1/4", "rect-tube", (3.5 * IN, 3.5 * IN), 0.25 * IN, 0.25 * IN),
    ("HSS6.625X.280", "round-tube", (6.625 * IN,), 0.280 * IN, 0.280 * IN),
    ("HSS6.625X0.280 A500 Gr C", "round-tube", (6.625 * IN,), 0.260 * IN, 0.280 * IN),
    # a designation inside a longer name (an exporter's family and type names; common practice)
    ("HSS-Hollow Structural Section:HSS6X6X3/8", "rect-tube", (6 * IN, 6 * IN), 0.349 * IN, 0.375 * IN),
    ("Level 2 brace HSS6X6X3/8", "rect-tube", (6 * IN, 6 * IN), 0.349 * IN, 0.375 * IN),
    ("2x HSS6X6X3/8", "rect-tube", (6 * IN, 6 * IN), 0.349 * IN, 0.375 * IN),
    # metric AISC and EN 10219 / 10210 designations (millimetres; common practice)
    ("HSS152.4X152.4X9.5", "rect-tube", (0.1524, 0.1524), 0.0095, 0.0095),
    ("SHS 80x80x4", "rect-tube", (0.080, 0.080), 0.004, 0.004),
    ("RHS 200×100×8", "rect-tube", (0.200, 0.100), 0.008, 0.008),
    ("CHS 168,3x6,3", "round-tube", (0.1683,), 0.0063, 0.0063),
    # no wall in the name, a name of another size, a wall the name does not describe, not a tube
    ("Pipe6STD", "round-tube", (6.625 * IN,), 0.280 * IN, math.nan),
    ("HSS8X8X3/8", "rect-tube", (6 * IN, 6 * IN), 0.375 * IN, math.nan),
    ("HSS6X6X3/8", "rect-tube", (6 * IN, 6 * IN), 0.5 * IN, math.nan),
    ("HSS6X6X3/8", "rect-tube", (6 * IN, 6 * IN), 0.30 * IN, math.nan),
    ("HSS6X6X3/8X2", "rect-tube", (6 * IN, 6 * IN), 0.375 * IN, math.nan),
    ("HSS6X6X3/8", "I", (6 * IN, 6 * IN), 0.375 * IN, math.nan),
    ("HSS6X6X3/0", "rect-tube", (6 * IN, 6 * IN), 0.375 * IN, math.nan),
    (None, "rect-tube", (6 * IN, 6 * IN), 0.375 * IN, math.nan),
])
def test_the_wall_a_name_states(name: Any, shape: str, outsides: tuple[float, ...], t: float,
                                expected: float) -> None:
    got = wall_of(name, shape, outsides, t)
    if math.isnan(expected):
        assert math.isnan(got)
    else:
        assert got == pytest.approx(expected, rel=1e-9)


def test_named_wall_per_member() -> None:
    names = np.array(["HSS6X6X3/8", "W8X31", "HSS6X6X3/8", None], dtype=object)
    shapes = np.array(["rect-tube", "I", "rect-tube", "rect-tube"], dtype=object)
    six = np.full(4, 6 * IN)
    out = named_wall(names, shapes, six, six, np.full(4, np.nan), np.array([0.375, 0.4, 0.349, 0.375]) * IN)
    assert out[0] == pytest.approx(0.375 * IN) and out[2] == pytest.approx(0.375 * IN)
    assert np.isnan(out[1]) and np.isnan(out[3])


# --- the gross area the checks use -----------------------------------------------------------

def test_a_nominal_wall_is_reduced_to_the_design_wall() -> None:
    nominal, design = gross_areas(tube("HSS6X6X3/8", 6, 6, 0.375), tube("HSS6X6X3/8", 6, 6, B42 * 0.375))
    # B4.2: the same 6 x 6 outline with t = 0.93 x 3/8 in (sharp corners)
    expected = sharp_rect_area(6, 6, B42 * 0.375)
    assert nominal == pytest.approx(expected, rel=1e-6)
    # a model that already draws the design wall keeps its own area: no second reduction
    assert design == pytest.approx(expected, rel=1e-6)


def test_round_hss_design_wall() -> None:
    (ag,) = gross_areas(pipe("HSS6.625X.280", 6.625, 0.280))
    assert ag == pytest.approx(round_area(6.625, B42 * 0.280), rel=1e-6)
    # AISC Manual Table 1-13 (from memory): HSS6.625X.280, tdes = 0.260 in, A = 5.20 in²
    assert ag == pytest.approx(5.20, abs=0.01)


def test_a1085_and_a1065_use_the_nominal_wall() -> None:
    # B4.2 (from memory): HSS to ASTM A1085 (and A1065) are designed with t = tnom
    got = gross_areas(tube("HSS6X6X3/8", 6, 6, 0.375, material="ASTM A1085"),
                      pipe("HSS20X.500", 20, 0.5, material="A1065 Gr 50"))
    assert got == pytest.approx([sharp_rect_area(6, 6, 0.375), round_area(20, 0.5)], rel=1e-6)


def test_a_tube_whose_name_states_no_wall_takes_its_own_wall_as_nominal() -> None:
    # B4.2 applies to "HSS produced according to other standards": the model's wall is the nominal one
    unnamed, other_size = gross_areas(tube("Brace tube", 6, 6, 0.375), tube("HSS8X8X1/2", 6, 6, 0.5))
    assert unnamed == pytest.approx(sharp_rect_area(6, 6, B42 * 0.375), rel=1e-6)
    # a name that does not describe the section (8 in named, 6 in drawn) says nothing of its wall
    assert other_size == pytest.approx(sharp_rect_area(6, 6, B42 * 0.5), rel=1e-6)


def test_other_sections_keep_the_model_area() -> None:
    w = {"shape": "I", "section_name": "W8X31", "area": 9.13 * IN**2, "r_min": 2.02 * IN,
         "length": 120 * IN, "h": 8 * IN, "b": 8 * IN, "tf": 0.435 * IN, "tw": 0.285 * IN, **A500}
    bar = {"shape": "round-bar", "section_name": "RD1", "d": IN, "area": math.pi / 4 * IN**2,
           "r_min": IN / 4, "length": 60 * IN, **A500}
    assert gross_areas(w, bar) == pytest.approx([9.13, math.pi / 4], rel=1e-9)


def test_the_ec3_rule_set_keeps_the_nominal_wall() -> None:
    # EN 1993-1-1 designs hollow sections with their nominal dimensions (EN 10210 / EN 10219): no B4.2
    m = members({"shape": "rect-tube", "section_name": "SHS 80x80x4", "h": 0.08, "b": 0.08, "t": 0.004,
                 "area": sharp_rect_area(0.08, 0.08, 0.004), "r_min": 0.031, "length": 3.0,
                 "E": 210e9, "Fy": 355e6, "Fu": 470e6, "material": "S355"})
    res = run_checks(load_ruleset("steel-ec3"), m, force_table(("G0", "LC1", 100e3)))
    res = res[res.check == "tension-plastic"]
    assert list(res.unit) == ["MPa"]
    assert float(res.demand.iloc[0]) == pytest.approx(100e3 / sharp_rect_area(0.08, 0.08, 0.004) / 1e6, rel=1e-9)


# --- end to end: an inch model, the Manual's areas --------------------------------------------

def test_a_model_in_inches_against_the_manual(tmp_path: Path) -> None:
    mb = ModelBuilder(schema="IFC4", units="inch-kip")
    f = mb.f
    a500 = mb.material("ASTM A500 Gr C", category="steel", E=29000.0, Fy=50.0, Fu=62.0)
    a1085 = mb.material("ASTM A1085", category="steel", E=29000.0, Fy=50.0, Fu=65.0)
    # corner radii: the Manual's 2 t outside, t inside (AISC Manual Part 1, from memory)
    nominal = f.createIfcRectangleHollowProfileDef("AREA", "HSS6X6X3/8", None, 6.0, 6.0, 0.375, 0.375, 0.75)
    design = f.createIfcRectangleHollowProfileDef("AREA", "HSS6X6X3/8", None, 6.0, 6.0, 0.349, 0.349, 0.698)
    nominal2 = f.createIfcRectangleHollowProfileDef("AREA", "HSS6X6X3/8", None, 6.0, 6.0, 0.375, 0.375, 0.75)
    round_ = f.createIfcCircleHollowProfileDef("AREA", "HSS6.625X.280", None, 3.3125, 0.280)
    for name, prof, mat in (("nominal", nominal, a500), ("design", design, a500), ("a1085", nominal2, a1085),
                            ("round", round_, a500)):
        mb.member(name=name, tag=name, profile=prof, material=mat, length=120.0, psets=axial_force(100.0))
    path = tmp_path / "hss.ifc"
    mb.write(str(path))
    out = tmp_path / "r.json"
    p = run_modelcheck("check", str(path), "--rules", "steel-asd-us", "--format", "json", "--output", str(out),
                       "--no-config")
    assert p.returncode in (0, 1), p.stderr
    rows = [r for r in json.loads(out.read_text(encoding="utf-8"))["results"] if r["check"] == "tension-yield"]
    by = {r["name"]: r for r in rows}
    assert all(r["demand"]["unit"] == "ksi" for r in rows)
    ag = {n: 100 / r["demand"]["value"] for n, r in by.items()}
    # AISC Manual Table 1-12 (from memory): HSS6X6X3/8, tdes = 0.349 in, A = 7.58 in². The nominal wall
    # reduced to the design wall takes a little more off at the rounded corners: within 1 %
    assert ag["nominal"] == pytest.approx(7.58, rel=0.01)
    assert ag["nominal"] <= 7.58
    # drawn with the design wall and the Manual's radii: its own area, the Manual's within rounding
    assert ag["design"] == pytest.approx(7.58, rel=0.005)
    # A1085: the nominal wall, a larger area than the A500 tube's
    assert ag["a1085"] > 8.0
    # AISC Manual Table 1-13 (from memory): HSS6.625X.280, A = 5.20 in²
    assert ag["round"] == pytest.approx(5.20, abs=0.01)
    assert "Ag = 7.5" in by["nominal"]["message"] and by["nominal"]["demand"]["source"] == "P / Ag"


# --- ASTM A500 from the material library: round tubing has its own yield strength -------------

def test_a500_from_the_library_by_the_members_shape(tmp_path: Path) -> None:
    mb = ModelBuilder(schema="IFC4", units="inch-kip")
    f = mb.f
    named = mb.material("ASTM A500 Gr C", category="steel")               # no values: the library's
    own = mb.material("ASTM A500 Gr C", category="steel", Fy=55.0)        # the model's own Fy comes first
    rect = f.createIfcRectangleHollowProfileDef("AREA", "HSS6X6X3/8", None, 6.0, 6.0, 0.349, 0.349, 0.698)
    rnd = f.createIfcCircleHollowProfileDef("AREA", "HSS6.625X.280", None, 3.3125, 0.260)
    rnd2 = f.createIfcCircleHollowProfileDef("AREA", "HSS6.625X.280", None, 3.3125, 0.260)
    for name, prof, mat in (("rect", rect, named), ("round", rnd, named), ("own", rnd2, own)):
        mb.member(name=name, tag=name, profile=prof, material=mat, length=120.0, psets=axial_force(50.0))
    path = tmp_path / "a500.ifc"
    mb.write(str(path))
    out = tmp_path / "m.json"
    p = run_modelcheck("members", str(path), "--format", "json", "--output", str(out))
    assert p.returncode == 0, p.stderr
    fy = {m["name"]: m["material"]["Fy"] for m in json.loads(out.read_text(encoding="utf-8"))["models"][0]["members"]}
    # ASTM A500 Tables 1 and 2 / AISC Manual Table 2-4 (from memory): Grade C, 50 ksi rectangular, 46 ksi round
    assert fy["rect"]["value"] == pytest.approx(50.0) and fy["rect"]["unit"] == "ksi"
    assert fy["round"]["value"] == pytest.approx(46.0) and fy["round"]["source"].endswith("ASTM A500 Gr C (round)")
    assert fy["own"]["value"] == pytest.approx(55.0)
    report = tmp_path / "r.json"
    p = run_modelcheck("check", str(path), "--format", "json", "--output", str(report), "--no-config")
    assert p.returncode in (0, 1), p.stderr
    cap = {r["name"]: r["capacity"]["value"] for r in json.loads(report.read_text(encoding="utf-8"))["results"]
           if r["check"] == "tension-yield"}
    # AISC 360-16 D2(a): Fy / 1.67
    assert cap == pytest.approx({"rect": 50 / 1.67, "round": 46 / 1.67, "own": 55 / 1.67}, rel=1e-4)


def test_size_checks_round_tubing_with_its_own_yield_strength() -> None:
    from modelcheck.design.stock import catalog_shapes

    hss = catalog_shapes("shapes-aisc.csv", ("HSS",))
    areas = [(float(a) / IN**2, str(n), str(s)) for a, n, s in zip(hss["area"], hss["designation"], hss["shape"],
                                                                      strict=True)]
    # a round size that would be the smallest to pass at 48 ksi / 1.67 with a 50 ksi Fy (no size between)
    # but does not pass with the 46 ksi of round A500 Gr C tubing (ASTM A500 Table 1, from memory)
    pick = next((a, n) for a, n, s in areas if s == "round-tube"
                and not any(48 / 50 * a <= b < a for b, _, _ in areas))
    force = pick[0] * 48 / 1.67   # kip: the stress at Fy / 1.67 of 48 ksi on that area
    p = run_modelcheck("size", "--force", f"{force:.4f} kip", "--shape", "catalog", "--family", "HSS",
                       "--material", "A500 Gr C", "--format", "json")
    assert p.returncode == 0, p.stderr
    doc = json.loads(p.stdout)
    chosen = doc["selected"]["designation"]
    assert chosen != pick[1]
    # AISC 360-16 D2(a): f = P / Ag <= Fy / 1.67 with the chosen shape's own Fy
    shape = {n: s for _, n, s in areas}[chosen]
    fy = 46.0 if shape == "round-tube" else 50.0
    assert doc["material"]["Fy"]["value"] == pytest.approx(fy)
    assert force / doc["selected"]["area"]["value"] <= fy / 1.67 * (1 + 1e-6)
