"""Curves as IFC defines them: SameSense / SenseAgreement, trims by parameter (radians or degrees)
or by point, in closed profiles and in curved member axes; each length and area against a hand
value and against ifcopenshell's geometry kernel (ifcopenshell.geom, here only)."""

from __future__ import annotations

import math
from typing import Any

import ifcopenshell
import ifcopenshell.geom
import numpy as np
import pytest
from scipy.special import ellipe

from modelcheck.ifc.curves import CurveError, curve_length
from modelcheck.ifc.index import build_index
from modelcheck.ifc.profiles import section_of
from modelcheck.ifc.reader import read_members
from modelcheck.testing.author import ModelBuilder

DEG = math.pi / 180.0


# ------------------------------------------------------------------------------ building blocks
def degree_model(schema: str = "IFC4") -> ModelBuilder:
    """A millimetre model whose PLANEANGLEUNIT is the degree (a conversion-based unit of π/180 rad)."""
    mb = ModelBuilder(schema=schema, units="mm")
    f = mb.f
    ua = f.by_type("IfcUnitAssignment")[0]
    radian = next(u for u in ua.Units if u.is_a("IfcSIUnit") and u.UnitType == "PLANEANGLEUNIT")
    degree = f.createIfcConversionBasedUnit(
        f.createIfcDimensionalExponents(0, 0, 0, 0, 0, 0, 0), "PLANEANGLEUNIT", "DEGREE",
        f.createIfcMeasureWithUnit(f.create_entity("IfcPlaneAngleMeasure", DEG), radian))
    ua.Units = [u for u in ua.Units if u != radian] + [degree]
    return mb


def p2(f: Any, x: float, y: float) -> Any:
    return f.createIfcCartesianPoint((float(x), float(y)))


def p3(f: Any, x: float, y: float, z: float) -> Any:
    return f.createIfcCartesianPoint((float(x), float(y), float(z)))


def line2(f: Any, x: float, y: float, dx: float, dy: float) -> Any:
    return f.createIfcLine(p2(f, x, y), f.createIfcVector(f.createIfcDirection((float(dx), float(dy))), 1.0))


def line3(f: Any, origin: tuple[float, float, float], d: tuple[float, float, float]) -> Any:
    return f.createIfcLine(p3(f, *origin), f.createIfcVector(f.createIfcDirection(d), 1.0))


def par(f: Any, v: float) -> list[Any]:
    return [f.createIfcParameterValue(float(v))]


def seg(f: Any, curve: Any, same_sense: bool = True) -> Any:
    return f.createIfcCompositeCurveSegment("CONTINUOUS", same_sense, curve)


def fine() -> Any:
    """Kernel settings with a fine tessellation (a deflection of 1e-5 m and 0.01 rad)."""
    st = ifcopenshell.geom.settings()
    st.set("mesher-linear-deflection", 1e-5)
    st.set("mesher-angular-deflection", 0.01)
    return st


def kernel_length(curve: Any, unit: float = 1000.0) -> float:
    """Length of the kernel's tessellation of a curve, in the file's unit (the kernel works in m)."""
    g = ifcopenshell.geom.create_shape(fine(), curve)
    v = np.array(g.verts, dtype=float).reshape(-1, 3)
    e = np.array(g.edges, dtype=int).reshape(-1, 2)
    return float(np.linalg.norm(v[e[:, 1]] - v[e[:, 0]], axis=1).sum()) * unit


def kernel_area(f: Any, profile: Any, unit: float = 1000.0) -> float:
    """Area of a profile from the kernel: the volume of a 1000-unit extrusion of it, divided by 1000."""
    solid = f.createIfcExtrudedAreaSolid(profile, f.createIfcAxis2Placement3D(p3(f, 0, 0, 0), None, None),
                                         f.createIfcDirection((0.0, 0.0, 1.0)), 1000.0)
    g = ifcopenshell.geom.create_shape(fine(), solid)
    v = np.array(g.verts, dtype=float).reshape(-1, 3)
    t = np.array(g.faces, dtype=int).reshape(-1, 3)
    vol = np.einsum("ij,ij->i", v[t[:, 0]], np.cross(v[t[:, 1]], v[t[:, 2]])).sum() / 6.0
    return abs(vol) * unit**3 / 1000.0


# ------------------------------------------------------------------------------ closed profiles
def exporter_rectangle(f: Any) -> Any:
    """A 750 × 250 rectangle as some exporters write it: four IfcTrimmedCurves of two IfcLines,
    trimmed by parameters written low to high, the flag saying which way each piece runs
    (SenseAgreement .F.: backwards), and one segment used reversed (SameSense .F.)."""
    bottom_top = line2(f, 0, 0, 1, 0)          # y = 0, along +x
    sides = line2(f, 0, 0, 0, 1)               # x = 0, along +y
    top_line = line2(f, 0, 250, 1, 0)
    right_line = line2(f, 750, 0, 0, 1)
    edges = [
        seg(f, f.createIfcTrimmedCurve(bottom_top, par(f, 0), par(f, 750), True, "PARAMETER")),   # (0,0)→(750,0)
        # (750,0)→(750,250), written as the reverse of a backwards piece
        seg(f, f.createIfcTrimmedCurve(right_line, par(f, 0), par(f, 250), False, "PARAMETER"), False),
        seg(f, f.createIfcTrimmedCurve(top_line, par(f, 0), par(f, 750), False, "PARAMETER")),    # (750,250)→(0,250)
        seg(f, f.createIfcTrimmedCurve(sides, par(f, 0), par(f, 250), False, "PARAMETER")),       # (0,250)→(0,0)
    ]
    return f.createIfcCompositeCurve(edges, False)


def test_a_closed_profile_of_backwards_trimmed_lines_is_read():
    """Read in the order written, the pieces leave a gap of √(750² + 250²) = 790.569 after the first."""
    f = ifcopenshell.file(schema="IFC4")
    prof = f.createIfcArbitraryClosedProfileDef("AREA", "R750x250", exporter_rectangle(f))
    s = section_of(prof)
    assert s.area == pytest.approx(750 * 250, rel=1e-12)               # b·h (common practice)
    assert s.r_min == pytest.approx(250 / math.sqrt(12), rel=1e-12)    # r = h/√12 (common practice)
    assert s.area == pytest.approx(kernel_area(f, prof, unit=1.0), rel=1e-9)   # ifcopenshell.geom


def stadium(f: Any, trims: str, deg: float) -> Any:
    """Two straight edges 50 long and two half circles of radius 20: the right half circle given
    clockwise (SenseAgreement .F., Trim1 at +90°, Trim2 at −90°) and used reversed (SameSense
    .F.); the left one counter-clockwise; trims by parameter (in ``deg`` units per radian) or by
    point; the straight edges as trimmed lines written backwards (SenseAgreement .F.)."""
    r, half = 20.0, 25.0
    right = f.createIfcCircle(f.createIfcAxis2Placement2D(p2(f, half, 0), None), r)
    left = f.createIfcCircle(f.createIfcAxis2Placement2D(p2(f, -half, 0), None), r)

    def trim(circle: Any, a0: float, a1: float, pt0: tuple[float, float], pt1: tuple[float, float],
             sense: bool) -> Any:
        if trims == "point":
            return f.createIfcTrimmedCurve(circle, [p2(f, *pt0)], [p2(f, *pt1)], sense, "CARTESIAN")
        return f.createIfcTrimmedCurve(circle, par(f, a0 * deg), par(f, a1 * deg), sense, "PARAMETER")

    base = line2(f, -half, -r, 1, 0)
    top = line2(f, -half, r, 1, 0)
    segs = [
        seg(f, f.createIfcTrimmedCurve(base, par(f, 0), par(f, 2 * half), True, "PARAMETER")),
        seg(f, trim(right, math.pi / 2, -math.pi / 2, (half, r), (half, -r), False), False),
        seg(f, f.createIfcTrimmedCurve(top, par(f, 0), par(f, 2 * half), False, "PARAMETER")),
        seg(f, trim(left, math.pi / 2, 3 * math.pi / 2, (-half, r), (-half, -r), True)),
    ]
    return f.createIfcCompositeCurve(segs, False)


@pytest.mark.parametrize(("trims", "deg"), [("point", 1.0), ("radian", 1.0), ("degree", 1 / DEG)])
def test_a_stadium_with_reversed_arcs_and_lines(trims, deg):
    f = (degree_model() if trims == "degree" else ModelBuilder(units="mm")).f   # the kernel reads the units
    prof = f.createIfcArbitraryClosedProfileDef("AREA", None, stadium(f, trims, deg))
    s = section_of(prof, angle_factor=1.0 if trims != "degree" else DEG)
    hand = 50 * 40 + math.pi * 20**2   # rectangle + two half circles (common practice)
    assert s.area == pytest.approx(hand, rel=1e-12)
    # I_min about the long axis: 50·40³/12 + π·20⁴/4 (rectangle and circle, common practice)
    assert s.r_min == pytest.approx(math.sqrt((50 * 40**3 / 12 + math.pi * 20**4 / 4) / hand), rel=1e-12)
    assert s.area == pytest.approx(kernel_area(f, prof), rel=1e-4)   # ifcopenshell.geom (facets)


def test_a_gap_that_no_sense_closes_is_still_refused():
    f = ifcopenshell.file(schema="IFC4")
    curve = exporter_rectangle(f)
    curve.Segments[2].ParentCurve.Trim2 = par(f, 500)   # the top edge stops 250 short
    with pytest.raises(ValueError, match="not closed"):
        section_of(f.createIfcArbitraryClosedProfileDef("AREA", None, curve))


# ------------------------------------------------------------------------------ curved axes
def axis_member(mb: ModelBuilder, name: str, curve: Any, *, body_length: float | None = None) -> Any:
    """An HEA-like member (a 200 × 10 flat, to keep the section simple) whose Axis is ``curve``."""
    f = mb.f
    steel = mb.material("S355", category="steel", E=210000.0, Fy=355.0, Fu=490.0)
    flat = f.createIfcRectangleProfileDef("AREA", "FL200x10", None, 200.0, 10.0)
    el = mb.member("IfcMember", name=name, profile=flat, material=steel, length=body_length, axis=False,
                   body="extrusion" if body_length else None)
    axis = f.createIfcShapeRepresentation(mb.axis_ctx, "Axis", "Curve3D", [curve])
    if el.Representation is None:
        el.Representation = f.createIfcProductDefinitionShape(None, None, [axis])
    else:
        el.Representation.Representations = [axis, *el.Representation.Representations]
    return el


def quarter_circle(f: Any, sense: bool, t1: float, t2: float) -> Any:
    circle = f.createIfcCircle(f.createIfcAxis2Placement3D(p3(f, 0, 0, 0), None, None), 5000.0)
    return f.createIfcTrimmedCurve(circle, par(f, t1), par(f, t2), sense, "PARAMETER")


def bend_composite(f: Any) -> Any:
    """Straight up 3000, a quarter bend of radius 1000 in the xz plane, straight along x 2000.
    The bend is written clockwise from its far end (SenseAgreement .F.) and used reversed
    (SameSense .F.); the last leg is a line along −x trimmed 0..2000 and flagged backwards."""
    up = f.createIfcTrimmedCurve(line3(f, (0, 0, 0), (0.0, 0.0, 1.0)), par(f, 0), par(f, 3000), True, "PARAMETER")
    centre = f.createIfcAxis2Placement3D(p3(f, 1000, 0, 3000), f.createIfcDirection((0.0, 1.0, 0.0)),
                                         f.createIfcDirection((-1.0, 0.0, 0.0)))
    bend = f.createIfcTrimmedCurve(f.createIfcCircle(centre, 1000.0), par(f, 90), par(f, 0), False, "PARAMETER")
    back = f.createIfcTrimmedCurve(line3(f, (3000, 0, 4000), (-1.0, 0.0, 0.0)), par(f, 0), par(f, 2000),
                                   False, "PARAMETER")
    return f.createIfcCompositeCurve([seg(f, up), seg(f, bend, False), seg(f, back)], False)


def indexed_bend(f: Any) -> Any:
    """IfcIndexedPolyCurve in 3D: 2000 up, a quarter arc of radius 1500 (three points), 1000 along x."""
    r, c = 1500.0, math.cos(math.pi / 4)
    pts = [(0.0, 0.0, 0.0), (0.0, 0.0, 2000.0), (r * (1 - c), 0.0, 2000.0 + r * c), (r, 0.0, 2000.0 + r),
           (r + 1000.0, 0.0, 2000.0 + r)]
    return f.createIfcIndexedPolyCurve(f.createIfcCartesianPointList3D(pts),
                                       [f.createIfcLineIndex((1, 2)), f.createIfcArcIndex((2, 3, 4)),
                                        f.createIfcLineIndex((4, 5))], False)


def many_point_polyline(f: Any) -> Any:
    """24 points on an arc of radius 4000 over 60°, lifted 100 per step (a ramp stringer)."""
    pts = [p3(f, 4000 * math.cos(i * DEG * 60 / 23), 4000 * math.sin(i * DEG * 60 / 23), 100.0 * i)
           for i in range(24)]
    return f.createIfcPolyline(pts)


def half_ellipse(f: Any) -> Any:
    ell = f.createIfcEllipse(f.createIfcAxis2Placement3D(p3(f, 0, 0, 0), None, None), 6000.0, 3000.0)
    return f.createIfcTrimmedCurve(ell, [p3(f, 6000, 0, 0)], [p3(f, -6000, 0, 0)], True, "CARTESIAN")


# hand values (mm)
CHORD = 2 * 4000 * math.sin(60 * DEG / 23 / 2)
AXES: dict[str, tuple[Any, float, str]] = {
    # R·θ = 5000 · π/2 (common practice)
    "quarter": (lambda f: quarter_circle(f, True, 0, 90), 5000 * math.pi / 2, "R·θ"),
    # the same quarter run clockwise from 90° to 0°
    "quarter-clockwise": (lambda f: quarter_circle(f, False, 90, 0), 5000 * math.pi / 2, "R·θ"),
    # clockwise from 0° to 90°: the other three quarters
    "three-quarters": (lambda f: quarter_circle(f, False, 0, 90), 5000 * 3 * math.pi / 2, "R·θ"),
    # 3000 + 1000 · π/2 + 2000 (common practice)
    "composite": (bend_composite, 3000 + 1000 * math.pi / 2 + 2000, "lines + R·θ"),
    # 2000 + 1500 · π/2 + 1000 (common practice)
    "indexed": (indexed_bend, 2000 + 1500 * math.pi / 2 + 1000, "lines + R·θ"),
    # 23 chords 2R sin(Δ/2) with a rise of 100 each: √(c² + 100²) (Pythagoras)
    "polyline": (many_point_polyline, 23 * math.hypot(CHORD, 100.0), "chords"),
    # half an ellipse: 2·a·E(m), m = 1 − b²/a² (complete elliptic integral of the second kind, scipy)
    "half-ellipse": (half_ellipse, 2 * 6000 * float(ellipe(1 - (3000 / 6000) ** 2)), "a·E(m)"),
}


@pytest.mark.parametrize("name", list(AXES))
def test_a_curved_axis_gets_its_exact_length(tmp_path, name):
    build, hand, _ = AXES[name]
    mb = degree_model()
    curve = build(mb.f)
    axis_member(mb, name, curve)
    assert curve_length(curve, DEG) == pytest.approx(hand, rel=1e-10)
    assert hand == pytest.approx(kernel_length(curve), rel=1e-4)   # ifcopenshell.geom: chords of its arcs
    path = tmp_path / "axes.ifc"
    mb.write(str(path))
    m = read_members(build_index(str(path))).frame.set_index("name").loc[name]
    assert m["length"] == pytest.approx(hand / 1000, rel=1e-10)
    # measured along the curve, and named as curved: the checks take it as a straight member
    assert m["length_source"].startswith("Axis, not straight (") and m["length_source"].endswith(
        " longer than between its ends)")
    assert not any(w.startswith("Axis not measured") for w in m["warnings"])
    assert [w for w in m["warnings"] if w.startswith("curved: ")] == [
        f"curved: its length {hand:.6g} mm is from {m['length_source']}; the checks take it as a straight "
        "member of that length"]
    if name == "quarter":   # R·π/2 against the chord R·√2: π / (2√2) − 1 = 11.07 % (hand value)
        assert m["length_source"] == "Axis, not straight (11.07% longer than between its ends)"


def test_a_straight_axis_of_several_points_is_not_named_curved(tmp_path):
    # three points on one line, and a line trimmed by parameters: straight, whatever the curve type
    mb = degree_model()
    f = mb.f
    axis_member(mb, "three-points", f.createIfcPolyline([p3(f, 0, 0, 0), p3(f, 0, 0, 1200), p3(f, 0, 0, 3000)]))
    path = tmp_path / "straight.ifc"
    mb.write(str(path))
    m = read_members(build_index(str(path))).frame.set_index("name").loc["three-points"]
    assert m["length"] == pytest.approx(3.0, rel=1e-12) and m["length_source"] == "Axis"
    assert not any(w.startswith("curved: ") for w in m["warnings"])


@pytest.mark.parametrize("schema", ["IFC2X3", "IFC4X3"])
def test_curved_axes_in_other_schemas(tmp_path, schema):
    mb = degree_model(schema)
    axis_member(mb, "bend", bend_composite(mb.f))
    path = tmp_path / "axes.ifc"
    mb.write(str(path))
    m = read_members(build_index(str(path))).frame.set_index("name").loc["bend"]
    assert m["length"] == pytest.approx((3000 + 1000 * math.pi / 2 + 2000) / 1000, rel=1e-10)  # as above


def test_radian_trims_in_a_radian_file(tmp_path):
    mb = ModelBuilder(units="mm")   # PLANEANGLEUNIT: the radian
    axis_member(mb, "arc", quarter_circle(mb.f, True, 0, math.pi / 2))
    path = tmp_path / "rad.ifc"
    mb.write(str(path))
    m = read_members(build_index(str(path))).frame.set_index("name").loc["arc"]
    assert m["length"] == pytest.approx(5.0 * math.pi / 2, rel=1e-12)   # R·θ (common practice)


def test_an_axis_that_cannot_be_measured_says_so(tmp_path):
    mb = degree_model()
    f = mb.f
    ctrl = [p3(f, 0, 0, 0), p3(f, 1000, 0, 1000), p3(f, 2000, 0, 0)]
    spline = f.createIfcBSplineCurveWithKnots(2, ctrl, "UNSPECIFIED", False, False, (3, 3), (0.0, 1.0), "UNSPECIFIED")
    axis_member(mb, "spline", spline)
    axis_member(mb, "spline-with-body", f.createIfcBSplineCurveWithKnots(
        2, ctrl, "UNSPECIFIED", False, False, (3, 3), (0.0, 1.0), "UNSPECIFIED"), body_length=2400.0)
    path = tmp_path / "spline.ifc"
    mb.write(str(path))
    ms = read_members(build_index(str(path))).frame.set_index("name")
    bare, bodied = ms.loc["spline"], ms.loc["spline-with-body"]
    assert math.isnan(bare["length"]) and bare["length_source"] is None
    assert any("Axis not measured" in w and "IfcBSplineCurveWithKnots" in w for w in bare["warnings"])
    assert bodied["length"] == pytest.approx(2.4)            # the extrusion depth, 2400 mm
    assert any("Axis not measured" in w for w in bodied["warnings"])


def test_a_composite_axis_whose_segments_do_not_join_is_not_measured():
    f = ifcopenshell.file(schema="IFC4")
    a = f.createIfcPolyline([p3(f, 0, 0, 0), p3(f, 0, 0, 1000)])
    b = f.createIfcPolyline([p3(f, 0, 0, 1500), p3(f, 0, 0, 2500)])   # 500 above the end of a
    with pytest.raises(CurveError, match="do not join"):
        curve_length(f.createIfcCompositeCurve([seg(f, a), seg(f, b)], False))


def test_a_profile_swept_along_a_curved_directrix(tmp_path):
    """A curved beam's body: a 200 × 10 flat swept along a quarter circle of radius 5000
    (IfcFixedReferenceSweptAreaSolid): the section from the profile, the length R·θ."""
    mb = degree_model()
    f = mb.f
    steel = mb.material("S355", category="steel", E=210000.0, Fy=355.0, Fu=490.0)
    flat = f.createIfcRectangleProfileDef("AREA", "FL200x10", None, 200.0, 10.0)
    arc = quarter_circle(f, True, 0, 90)
    sweep = f.createIfcFixedReferenceSweptAreaSolid(flat, None, arc, None, None, f.createIfcDirection((0.0, 0.0, 1.0)))
    el = mb.member("IfcBeam", name="curved", material=steel, material_via="direct", body=None, axis=False)
    el.Representation = f.createIfcProductDefinitionShape(None, None, [
        f.createIfcShapeRepresentation(mb.body_ctx, "Body", "AdvancedSweptSolid", [sweep])])
    path = tmp_path / "curved.ifc"
    mb.write(str(path))
    m = read_members(build_index(str(path))).frame.set_index("name").loc["curved"]
    hand = 5000 * math.pi / 2    # R·θ (common practice)
    assert m["length"] == pytest.approx(hand / 1000, rel=1e-10)
    assert m["length_source"] == ("IfcFixedReferenceSweptAreaSolid.Directrix, not straight "
                                  "(11.07% longer than between its ends)")   # π / (2√2) − 1 (hand value)
    assert m["area"] == pytest.approx(2000e-6, rel=1e-12)   # 200 × 10 mm
    # the kernel's solid: its volume over the area is the length (Pappus: the profile is centred
    # on the directrix), to within its facets
    g = ifcopenshell.geom.create_shape(fine(), sweep)
    v = np.array(g.verts, dtype=float).reshape(-1, 3)
    t = np.array(g.faces, dtype=int).reshape(-1, 3)
    vol = abs(np.einsum("ij,ij->i", v[t[:, 0]], np.cross(v[t[:, 1]], v[t[:, 2]])).sum()) / 6.0 * 1e9   # mm³
    assert vol / 2000.0 == pytest.approx(hand, rel=1e-3)   # ifcopenshell.geom


@pytest.mark.parametrize(("same_sense", "quarters"), [(True, 1), (False, 3)])
def test_an_analysis_member_along_a_circular_edge(tmp_path, same_sense, quarters):
    """An IfcStructuralCurveMember whose edge is an IfcEdgeCurve on a circle of radius 5000 from
    (5000, 0) to (0, 5000): a quarter counter-clockwise (SameSense true), three quarters clockwise."""
    from modelcheck.testing.author_analysis import AnalysisWriter

    mb = degree_model()
    f = mb.f
    an = AnalysisWriter(mb)
    cm = an.curve_member((5000.0, 0.0, 0.0), (0.0, 5000.0, 0.0), name="arch")
    edge = cm.Representation.Representations[0].Items[0]
    circle = f.createIfcCircle(f.createIfcAxis2Placement3D(p3(f, 0, 0, 0), None, None), 5000.0)
    curved = f.createIfcEdgeCurve(edge.EdgeStart, edge.EdgeEnd, circle, same_sense)
    cm.Representation.Representations[0].Items = [curved]
    an.finish()
    path = tmp_path / "arch.ifc"
    mb.write(str(path))
    m = read_members(build_index(str(path))).frame.set_index("name").loc["arch"]
    assert m["length"] == pytest.approx(5.0 * quarters * math.pi / 2, rel=1e-12)   # R·θ (common practice)
    assert m["length_source"].startswith("IfcEdgeCurve #")


@pytest.mark.parametrize("turns", [1e6, 1e300])
def test_a_trim_angle_beyond_any_turn_of_the_conic_is_not_read(tmp_path, turns):
    """A circle trimmed from 0 to a parameter a million turns on, or 1e300 rad (where the
    remainder modulo 2π has lost every digit): no real trim winds so far, so neither the axis nor
    a profile outline built that way is measured; a quarter (π/2) still is (R·θ, common practice)."""
    mb = ModelBuilder(units="mm")   # PLANEANGLEUNIT: the radian
    f = mb.f
    axis_member(mb, "far", quarter_circle(f, True, 0.0, turns * 2 * math.pi + math.pi / 2))
    axis_member(mb, "quarter", quarter_circle(f, True, 0.0, math.pi / 2))
    path = tmp_path / "turns.ifc"
    mb.write(str(path))
    ms = read_members(build_index(str(path))).frame.set_index("name")
    assert math.isnan(ms.loc["far", "length"])
    assert any("beyond ±1,000 turns" in w for w in ms.loc["far", "warnings"]), ms.loc["far", "warnings"]
    assert ms.loc["quarter", "length"] == pytest.approx(5.0 * math.pi / 2, rel=1e-12)  # arc length R·θ, R = 5 m, θ = π/2 (hand value)
    # the same trim in a closed outline: the stadium's left half circle ends that many turns on
    g = ModelBuilder(units="mm").f
    outline = stadium(g, "radian", 1.0)
    left = outline.Segments[3].ParentCurve
    left.Trim2 = par(g, 3 * math.pi / 2 + turns * 2 * math.pi)
    with pytest.raises(ValueError, match="beyond ±1,000 turns"):
        section_of(g.createIfcArbitraryClosedProfileDef("AREA", None, outline))
