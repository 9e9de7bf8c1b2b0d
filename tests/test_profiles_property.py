"""Property tests of the exact moment integrator and the parametric profile functions.

References: shapely (area and centroid of finely discretised outlines, built independently
with boolean operations) and sectionproperties (least principal radius of gyration).
"""

from __future__ import annotations

import math

import ifcopenshell
import pytest
import shapely
from hypothesis import HealthCheck, assume, given, settings
from hypothesis import strategies as st
from sectionproperties.analysis import Section
from sectionproperties.pre.geometry import Geometry
from shapely.geometry import Point, Polygon, box
from shapely.ops import unary_union

from modelcheck.ifc.outline import Arc, Line, loop_moments, rounded_polygon
from modelcheck.ifc.profiles import UnsupportedProfile, section_of

QUAD = 128
FAST = settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
SLOW = settings(max_examples=8, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])

FILE = ifcopenshell.file(schema="IFC4")


def discretise(segments, per_radian: int = 400, per_arc: int = 2) -> Polygon:
    pts = []
    for s in segments:
        if isinstance(s, Line):
            pts.append(s.start)
        else:
            n = max(per_arc, int(abs(s.sweep) * per_radian))
            pts.extend(s.point(s.t0 + s.sweep * i / n) for i in range(n))
    return Polygon(pts)


def fillet_patch(corner, da, db, r: float) -> Polygon:
    """r × r square at a right-angled corner minus the disc tangent to both edges."""
    x, y = corner
    sq = Polygon([(x, y), (x + r * da[0], y + r * da[1]),
                  (x + r * (da[0] + db[0]), y + r * (da[1] + db[1])), (x + r * db[0], y + r * db[1])])
    return sq.difference(Point(x + r * (da[0] + db[0]), y + r * (da[1] + db[1])).buffer(r, quad_segs=QUAD))


def i_polygon(b: float, h: float, tw: float, tf: float, r: float) -> Polygon:
    """I section with root fillets, from rectangles and fillet patches (shapely)."""
    parts = [box(-b / 2, -h / 2, b / 2, -h / 2 + tf), box(-b / 2, h / 2 - tf, b / 2, h / 2),
             box(-tw / 2, -h / 2, tw / 2, h / 2)]
    if r > 0:
        for sx in (1, -1):
            parts.append(fillet_patch((sx * tw / 2, -h / 2 + tf), (sx, 0), (0, 1), r))
            parts.append(fillet_patch((sx * tw / 2, h / 2 - tf), (sx, 0), (0, -1), r))
    return unary_union(parts)


def sp_r_min(poly: Polygon) -> float:
    # boolean unions leave vertices 1e-15 apart, which the mesher does not survive
    poly = shapely.remove_repeated_points(poly, 1e-9 * math.sqrt(poly.area))
    sec = Section(Geometry(poly).create_mesh(mesh_sizes=[0]))
    sec.calculate_geometric_properties()
    return float(min(sec.get_rp()))


# ---------------------------------------------------------------------------------------------
# the integrator
# ---------------------------------------------------------------------------------------------

coord = st.floats(-1000, 1000, allow_nan=False)


@FAST
@given(
    cx=coord, cy=coord,
    ux=st.floats(1, 50), uy=st.floats(-50, 50), vx=st.floats(-50, 50), vy=st.floats(1, 50),
    t0=st.floats(-7, 7), sweep=st.floats(0.05, 2 * math.pi) | st.floats(-2 * math.pi, -0.05),
)
def test_conic_arc_closed_by_its_chord_matches_discretisation(cx, cy, ux, uy, vx, vy, t0, sweep):
    assume(abs(ux * vy - uy * vx) > 1.0)  # a real ellipse
    arc = Arc((cx, cy), (ux, uy), (vx, vy), t0, sweep)
    loop = [arc, Line(arc.end, arc.start)]
    m = loop_moments(loop).positive()
    poly = discretise(loop, per_radian=2000, per_arc=2000)
    assume(poly.is_valid)
    assert m.a == pytest.approx(poly.area, rel=1e-5, abs=1e-6)  # shapely
    assert m.centroid == pytest.approx((poly.centroid.x, poly.centroid.y), abs=1e-4 * max(1.0, math.sqrt(m.a)))  # shapely


corner_r = st.floats(0.0, 1.0)


@FAST
@given(
    n=st.integers(3, 9), radii=st.lists(st.floats(0.0, 0.45), min_size=9, max_size=9),
    spikes=st.lists(st.floats(0.5, 1.0), min_size=9, max_size=9), scale=st.floats(1, 500),
    dx=coord, dy=coord,
)
def test_rounded_star_polygon_matches_discretisation(n, radii, spikes, scale, dx, dy):
    # star-shaped (possibly concave) polygon; radii small against the edges so the fillets fit
    corners = []
    for i in range(n):
        a = 2 * math.pi * i / n
        rho = scale * spikes[i]
        corners.append((dx + rho * math.cos(a), dy + rho * math.sin(a)))
    # radius per corner so that its tangent length r·tan(φ/2) takes at most 45 % of either edge
    rounded = []
    for i, (x, y) in enumerate(corners):
        (ax, ay), (bx, by) = corners[i - 1], corners[(i + 1) % n]
        din, dout = (x - ax, y - ay), (bx - x, by - y)
        phi = abs(math.atan2(din[0] * dout[1] - din[1] * dout[0], din[0] * dout[0] + din[1] * dout[1]))
        room = 0.45 * min(math.hypot(*din), math.hypot(*dout))
        rounded.append((x, y, radii[i] / 0.45 * room / max(math.tan(phi / 2), 1e-9)))
    loop = rounded_polygon(rounded)
    m = loop_moments(loop)
    poly = discretise(loop)
    assert m.a > 0
    assert m.a == pytest.approx(poly.area, rel=1e-4)  # shapely
    assert m.centroid == pytest.approx((poly.centroid.x, poly.centroid.y), abs=1e-4 * scale)  # shapely


@FAST
@given(
    m11=st.floats(-3, 3), m12=st.floats(-3, 3), m21=st.floats(-3, 3), m22=st.floats(-3, 3),
    tx=coord, ty=coord,
)
def test_transforming_moments_equals_integrating_the_transformed_outline(m11, m12, m21, m22, tx, ty):
    det = m11 * m22 - m12 * m21
    assume(abs(det) > 0.05)
    loop = rounded_polygon([(0, 0, 0), (40, 0, 6), (40, 10, 0), (12, 10, 5), (12, 60, 2), (0, 60, 0)])

    def move(p):
        return (m11 * p[0] + m12 * p[1] + tx, m21 * p[0] + m22 * p[1] + ty)

    moved = []
    for s in loop:
        if isinstance(s, Line):
            moved.append(Line(move(s.start), move(s.end)))
        else:
            u = (m11 * s.u[0] + m12 * s.u[1], m21 * s.u[0] + m22 * s.u[1])
            v = (m11 * s.v[0] + m12 * s.v[1], m21 * s.v[0] + m22 * s.v[1])
            moved.append(Arc(move(s.center), u, v, s.t0, s.sweep))
    direct = loop_moments(moved).positive()
    via_tensor = loop_moments(loop).transformed(((m11, m12), (m21, m22)), (tx, ty))
    scale = max(1.0, abs(tx), abs(ty)) ** 2
    # common practice: exact integration of the moved outline (independent path through the code)
    assert via_tensor.a == pytest.approx(direct.a, rel=1e-9)
    for a, b in zip(via_tensor.central(), direct.central(), strict=True):
        assert a == pytest.approx(b, rel=1e-6, abs=1e-9 * scale * direct.a)


# ---------------------------------------------------------------------------------------------
# parametric profiles
# ---------------------------------------------------------------------------------------------

# radius fractions: none, or a visible one (tiny radii only exercise the meshers' round-off)
FRACTION = st.just(0.0) | st.floats(0.05, 0.9)

i_dims = st.tuples(
    st.floats(40, 400),   # b
    st.floats(60, 900),   # h
    st.floats(0.02, 0.3),  # tw / b
    st.floats(0.02, 0.2),  # tf / h
    FRACTION,  # r as a fraction of the room it has
)


def i_profile(b: float, h: float, tw: float, tf: float, r: float):
    return FILE.createIfcIShapeProfileDef("AREA", None, None, b, h, tw, tf, r)


def i_params(d):
    b, h, ftw, ftf, fr = d
    tw, tf = ftw * b, ftf * h
    r = fr * min((b - tw) / 2, h / 2 - tf)
    return b, h, tw, tf, r


@FAST
@given(d=i_dims)
def test_i_area_matches_shapely_and_grows_with_each_dimension(d):
    b, h, tw, tf, r = i_params(d)
    s = section_of(i_profile(b, h, tw, tf, r))
    assert s.area > 0 and s.r_min > 0
    assert s.area == pytest.approx(i_polygon(b, h, tw, tf, r).area, rel=1e-4)  # shapely
    grow = 1.01
    for bigger in ((b * grow, h, tw, tf, r), (b, h * grow, tw, tf, r), (b, h, tw * grow, tf, r),
                   (b, h, tw, tf * grow, r)):
        assume(2 * bigger[3] < bigger[1] and bigger[2] < bigger[0])
        assert section_of(i_profile(*bigger)).area > s.area  # common practice: more steel, more area


@SLOW
@given(d=i_dims)
def test_i_r_min_matches_sectionproperties(d):
    b, h, tw, tf, r = i_params(d)
    s = section_of(i_profile(b, h, tw, tf, r))
    assert s.r_min == pytest.approx(sp_r_min(i_polygon(b, h, tw, tf, r)), rel=0.005)  # sectionproperties


angle_dims = st.tuples(st.floats(30, 250), st.floats(30, 250), st.floats(0.03, 0.25), st.just(0.0) | st.floats(0.05, 1.5),
                       FRACTION)


def angle_polygon(h: float, b: float, t: float, r1: float, r2: float) -> Polygon:
    x0, y0 = -b / 2, -h / 2
    shape = unary_union([box(x0, y0, b / 2, y0 + t), box(x0, y0, x0 + t, h / 2)])
    if r1 > 0:
        shape = shape.union(fillet_patch((x0 + t, y0 + t), (1, 0), (0, 1), r1))
    if r2 > 0:
        shape = shape.difference(fillet_patch((b / 2, y0 + t), (-1, 0), (0, -1), r2))
        shape = shape.difference(fillet_patch((x0 + t, h / 2), (-1, 0), (0, -1), r2))
    return shape


def angle_params(d):
    h, b, ft, fr1, fr2 = d
    t = ft * min(b, h)
    r2 = fr2 * t
    r1 = min(fr1 * t, 0.9 * (min(b, h) - t - r2))
    return h, b, t, max(r1, 0.0), r2


@FAST
@given(d=angle_dims)
def test_angle_area_matches_shapely_and_grows_with_thickness(d):
    h, b, t, r1, r2 = angle_params(d)
    s = section_of(FILE.createIfcLShapeProfileDef("AREA", None, None, h, b, t, r1, r2))
    assert s.area == pytest.approx(angle_polygon(h, b, t, r1, r2).area, rel=1e-4)  # shapely
    thicker = section_of(FILE.createIfcLShapeProfileDef("AREA", None, None, h, b, t * 1.01, r1, r2))
    longer = section_of(FILE.createIfcLShapeProfileDef("AREA", None, None, h * 1.01, b, t, r1, r2))
    assert thicker.area > s.area and longer.area > s.area  # common practice


@SLOW
@given(d=angle_dims)
def test_angle_principal_r_min_matches_sectionproperties(d):
    h, b, t, r1, r2 = angle_params(d)
    s = section_of(FILE.createIfcLShapeProfileDef("AREA", None, None, h, b, t, r1, r2))
    assert s.r_min == pytest.approx(sp_r_min(angle_polygon(h, b, t, r1, r2)), rel=0.005)  # sectionproperties


tube_dims = st.tuples(st.floats(20, 400), st.floats(20, 400), st.floats(0.02, 0.2), FRACTION | st.just(1.0),
                      FRACTION | st.just(1.0))


@FAST
@given(d=tube_dims)
def test_rect_tube_area_matches_shapely(d):
    b, h, ft, fro, fri = d
    t = ft * min(b, h)
    ro = fro * min(b, h) / 2
    ri = fri * (min(b, h) / 2 - t)
    p = FILE.createIfcRectangleHollowProfileDef("AREA", None, None, b, h, t, ri, ro)

    def rounded(w: float, d_: float, r: float):
        if r < 1e-6 * w:  # a radius below shapely's resolution: a sharp corner
            return box(-w / 2, -d_ / 2, w / 2, d_ / 2)
        return box(-w / 2 + r, -d_ / 2 + r, w / 2 - r, d_ / 2 - r).buffer(r, quad_segs=QUAD)

    outer, inner = rounded(b, h, ro), rounded(b - 2 * t, h - 2 * t, ri)
    if not outer.buffer(1e-9 * b).contains(inner):  # shapely: the wall breaks through at a corner
        with pytest.raises(UnsupportedProfile, match="corners"):
            section_of(p)
        return
    s = section_of(p)
    ref = outer.difference(inner)
    # shapely's arcs are chords: each full circle of radius r loses about π r² (2π/n)² / 6 with n
    # chords; in a thin wall the outer and inner losses no longer cancel (geometry of the polygon)
    chord = math.pi * (ro * ro + ri * ri) * (math.pi / (2 * QUAD)) ** 2 / 6
    assert s.area == pytest.approx(ref.area, rel=1e-4, abs=1.5 * chord)  # shapely
    wider = section_of(FILE.createIfcRectangleHollowProfileDef("AREA", None, None, b * 1.01, h, t, ri, ro))
    assert wider.area > s.area  # common practice
