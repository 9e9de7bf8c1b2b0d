"""Section properties of IFC profile classes against outside references.

References: sectionproperties (PyPI; its geometric analysis of the same geometry built with
its own library or with shapely), published section tables (EN 10365, EN 10056-1, EN 10055,
EN 10210, EN 10219, AISC Shapes Database; values from memory, as marked), and ifcopenshell's
geometry kernel (volume ÷ depth of an extruded solid).
"""

from __future__ import annotations

import math

import ifcopenshell
import ifcopenshell.geom
import ifcopenshell.util.shape
import pytest
import shapely
from sectionproperties.analysis import Section
from sectionproperties.pre.geometry import Geometry
from sectionproperties.pre.library import (
    angle_section,
    cee_section,
    channel_section,
    circular_hollow_section,
    circular_section,
    elliptical_section,
    i_section,
    mono_i_section,
    rectangular_hollow_section,
    rectangular_section,
    tapered_flange_channel,
    tapered_flange_i_section,
    tee_section,
)
from shapely import affinity
from shapely.geometry import LineString, Point, Polygon, box
from shapely.ops import unary_union

from modelcheck.ifc.outline import Moments
from modelcheck.ifc.profiles import PROFILE_FUNCTIONS, ProfileSection, UnsupportedProfile, section_of

N_R = 48  # points per radius in sectionproperties' polygonised arcs
QUAD = 128  # shapely: segments per quarter circle


# ---------------------------------------------------------------------------------------------
# helpers
# ---------------------------------------------------------------------------------------------


def sp_props(geom: Geometry) -> tuple[float, float]:
    """(area, least principal radius of gyration) by sectionproperties' geometric analysis."""
    mesh = geom.create_mesh(mesh_sizes=[0])  # coarsest mesh: geometric properties are exact
    sec = Section(mesh)
    sec.calculate_geometric_properties()
    return float(sec.get_area()), float(min(sec.get_rp()))


def poly_props(poly: Polygon) -> tuple[float, float]:
    # boolean unions leave vertices 1e-15 apart, which the mesher does not survive
    return sp_props(Geometry(shapely.remove_repeated_points(poly, 1e-9 * math.sqrt(poly.area))))


def assert_matches(sec: ProfileSection, ref: tuple[float, float], rel: float = 0.005) -> None:
    area, r_min = ref
    assert sec.area == pytest.approx(area, rel=rel)
    assert sec.r_min == pytest.approx(r_min, rel=rel)


def fillet_patch(corner: tuple[float, float], da: tuple[float, float], db: tuple[float, float],
                 r: float) -> Polygon:
    """The r × r square at a right-angled corner (spanned by unit directions da, db) minus the
    disc of radius r tangent to both edges: what a fillet adds (re-entrant corner) or an edge
    radius removes (salient corner)."""
    x, y = corner
    sq = Polygon([(x, y), (x + r * da[0], y + r * da[1]),
                  (x + r * (da[0] + db[0]), y + r * (da[1] + db[1])), (x + r * db[0], y + r * db[1])])
    centre = Point(x + r * (da[0] + db[0]), y + r * (da[1] + db[1]))
    return sq.difference(centre.buffer(r, quad_segs=QUAD))


@pytest.fixture
def f4() -> ifcopenshell.file:
    return ifcopenshell.file(schema="IFC4")


def pt(f: ifcopenshell.file, x: float, y: float):
    return f.createIfcCartesianPoint((float(x), float(y)))


def place(f: ifcopenshell.file, x: float, y: float, angle_deg: float = 0.0):
    a = math.radians(angle_deg)
    return f.createIfcAxis2Placement2D(pt(f, x, y), f.createIfcDirection((math.cos(a), math.sin(a))))


# ---------------------------------------------------------------------------------------------
# every parametric class against sectionproperties
# ---------------------------------------------------------------------------------------------


def test_circle(f4):
    s = section_of(f4.createIfcCircleProfileDef("AREA", "RD30", place(f4, 5, 7, 30), 15.0))
    assert_matches(s, sp_props(circular_section(d=30.0, n=512)))  # sectionproperties
    assert (s.shape, s.dims, s.name) == ("round-bar", {"d": 30.0}, "RD30")


def test_circle_hollow(f4):
    s = section_of(f4.createIfcCircleHollowProfileDef("AREA", None, None, 84.15, 6.3))
    assert_matches(s, sp_props(circular_hollow_section(d=168.3, t=6.3, n=512)))  # sectionproperties
    assert s.shape == "round-tube" and s.dims == {"d": 168.3, "t": 6.3}


@pytest.mark.parametrize(("b", "h", "family"), [(40.0, 40.0, "square-bar"), (100.0, 12.0, "flat-bar")])
def test_rectangle(f4, b, h, family):
    s = section_of(f4.createIfcRectangleProfileDef("AREA", None, place(f4, 3, 4, 20), b, h))
    assert_matches(s, sp_props(rectangular_section(d=h, b=b)))  # sectionproperties
    assert s.shape == family and s.dims == {"b": b, "h": h}


def test_rounded_rectangle(f4):
    s = section_of(f4.createIfcRoundedRectangleProfileDef("AREA", None, None, 80.0, 50.0, 12.0))
    rounded = box(-28.0, -13.0, 28.0, 13.0).buffer(12.0, quad_segs=QUAD)  # Minkowski sum with a disc
    assert_matches(s, poly_props(rounded))  # sectionproperties on a shapely polygon
    assert s.shape == "flat-bar"


def test_rectangle_hollow(f4):
    s = section_of(f4.createIfcRectangleHollowProfileDef("AREA", None, None, 120.0, 80.0, 5.0, 5.0, 10.0))
    ref = rectangular_hollow_section(d=80.0, b=120.0, t=5.0, r_out=10.0, n_r=N_R, r_in=5.0)
    assert_matches(s, sp_props(ref))  # sectionproperties
    assert s.shape == "rect-tube" and s.dims == {"b": 120.0, "h": 80.0, "t": 5.0}


def test_i_shape(f4):
    s = section_of(f4.createIfcIShapeProfileDef("AREA", None, None, 150.0, 300.0, 7.1, 10.7, 15.0))
    assert_matches(s, sp_props(i_section(d=300.0, b=150.0, t_f=10.7, t_w=7.1, r=15.0, n_r=N_R)))  # sectionproperties
    assert s.shape == "I" and s.dims == {"h": 300.0, "b": 150.0, "tw": 7.1, "tf": 10.7, "r_root": 15.0}


def test_i_shape_flange_edge_radius(f4):
    s = section_of(f4.createIfcIShapeProfileDef("AREA", None, None, 150.0, 300.0, 7.1, 10.7, 15.0, 5.0, 0.0))
    ref = tapered_flange_i_section(d=300.0, b=150.0, t_f=10.7, t_w=7.1, r_r=15.0, r_f=5.0, alpha=0.0, n_r=N_R)
    assert_matches(s, sp_props(ref))  # sectionproperties


def test_i_shape_sloped_flanges_in_degrees(f4):
    # IPN-like taper of 14 %; FlangeThickness is taken b/4 from the tip, sectionproperties takes it
    # halfway between tip and web face, i.e. tw/4 further in: t_sp = tf - (tw/4)·tan(alpha)
    k, tw, tf = 0.14, 10.8, 16.2
    alpha = math.degrees(math.atan(k))
    p = f4.createIfcIShapeProfileDef("AREA", None, None, 125.0, 300.0, tw, tf, 10.8, 6.5, alpha)
    s = section_of(p, angle_factor=math.pi / 180)
    ref = tapered_flange_i_section(d=300.0, b=125.0, t_f=tf - tw / 4 * k, t_w=tw, r_r=10.8, r_f=6.5, alpha=alpha, n_r=N_R)
    assert_matches(s, sp_props(ref))  # sectionproperties


def test_asymmetric_i_shape_ifc4(f4):
    p = f4.createIfcAsymmetricIShapeProfileDef("AREA", None, None, 200.0, 400.0, 9.0, 16.0, 12.0,
                                               120.0, 11.0, 12.0)
    s = section_of(p)
    ref = mono_i_section(d=400.0, b_t=120.0, b_b=200.0, t_ft=11.0, t_fb=16.0, t_w=9.0, r=12.0, n_r=N_R)
    assert_matches(s, sp_props(ref))  # sectionproperties
    assert s.shape == "I" and s.dims == {"h": 400.0, "b": 200.0, "tw": 9.0, "tf": 11.0, "r_root": 12.0}


def test_asymmetric_i_shape_ifc2x3():
    f = ifcopenshell.file(schema="IFC2X3")
    # IFC2X3: OverallWidth / FlangeThickness / FilletRadius are the bottom flange's
    p = f.createIfcAsymmetricIShapeProfileDef("AREA", None, place(f, 0, 0), 200.0, 400.0, 9.0, 16.0, 12.0,
                                              120.0, 11.0, 12.0, None)
    ref = mono_i_section(d=400.0, b_t=120.0, b_b=200.0, t_ft=11.0, t_fb=16.0, t_w=9.0, r=12.0, n_r=N_R)
    assert_matches(section_of(p), sp_props(ref))  # sectionproperties


def test_asymmetric_i_shape_ifc2x3_top_thickness_defaults_to_bottom():
    f = ifcopenshell.file(schema="IFC2X3")
    p = f.createIfcAsymmetricIShapeProfileDef("AREA", None, place(f, 0, 0), 200.0, 400.0, 9.0, 16.0, 0.0,
                                              120.0, None, None, None)
    ref = mono_i_section(d=400.0, b_t=120.0, b_b=200.0, t_ft=16.0, t_fb=16.0, t_w=9.0, r=0.0, n_r=N_R)
    assert_matches(section_of(p), sp_props(ref))  # sectionproperties


def test_l_shape_unequal(f4):
    s = section_of(f4.createIfcLShapeProfileDef("AREA", None, None, 150.0, 90.0, 10.0, 12.0, 6.0))
    ref = angle_section(d=150.0, b=90.0, t=10.0, r_r=12.0, r_t=6.0, n_r=N_R)
    assert_matches(s, sp_props(ref))  # sectionproperties (principal axes)
    assert s.shape == "L" and s.dims == {"h": 150.0, "b": 90.0, "t": 10.0}


def test_l_shape_ifc2x3_without_width():
    f = ifcopenshell.file(schema="IFC2X3")
    # Width omitted: an equal angle; IFC2X3's trailing CentreOfGravity attributes are ignored
    p = f.createIfcLShapeProfileDef("AREA", None, place(f, 0, 0), 80.0, None, 8.0, 10.0, 5.0, None, 22.6, 22.6)
    ref = angle_section(d=80.0, b=80.0, t=8.0, r_r=10.0, r_t=5.0, n_r=N_R)
    assert_matches(section_of(p), sp_props(ref))  # sectionproperties


def test_t_shape(f4):
    s = section_of(f4.createIfcTShapeProfileDef("AREA", None, None, 120.0, 100.0, 9.0, 13.0, 10.0))
    assert_matches(s, sp_props(tee_section(d=120.0, b=100.0, t_f=13.0, t_w=9.0, r=10.0, n_r=N_R)))  # sectionproperties
    assert s.shape == "T" and s.dims == {"h": 120.0, "b": 100.0, "tw": 9.0, "tf": 13.0, "r_root": 10.0}


def test_t_shape_edge_radii(f4):
    h, b, tw, tf, r1, r2, r3 = 120.0, 100.0, 9.0, 13.0, 10.0, 5.0, 3.0
    s = section_of(f4.createIfcTShapeProfileDef("AREA", None, None, h, b, tw, tf, r1, r2, r3))
    tee = Polygon([(-tw / 2, -h / 2), (tw / 2, -h / 2), (tw / 2, h / 2 - tf), (b / 2, h / 2 - tf), (b / 2, h / 2),
                   (-b / 2, h / 2), (-b / 2, h / 2 - tf), (-tw / 2, h / 2 - tf)])
    add = [fillet_patch((sx * tw / 2, h / 2 - tf), (sx, 0), (0, -1), r1) for sx in (1, -1)]
    cut = [fillet_patch((sx * b / 2, h / 2 - tf), (-sx, 0), (0, 1), r2) for sx in (1, -1)]
    cut += [fillet_patch((sx * tw / 2, -h / 2), (-sx, 0), (0, 1), r3) for sx in (1, -1)]
    ref = unary_union([tee, *add]).difference(unary_union(cut))
    assert_matches(s, poly_props(ref))  # sectionproperties on a shapely polygon


def test_u_shape(f4):
    s = section_of(f4.createIfcUShapeProfileDef("AREA", None, None, 200.0, 80.0, 6.0, 10.0, 9.0))
    assert_matches(s, sp_props(channel_section(d=200.0, b=80.0, t_f=10.0, t_w=6.0, r=9.0, n_r=N_R)))  # sectionproperties
    assert s.shape == "U" and s.dims == {"h": 200.0, "b": 80.0, "tw": 6.0, "tf": 10.0, "r_root": 9.0}


def test_u_shape_sloped_flanges(f4):
    # FlangeThickness at b/2 from the tip; sectionproperties takes it halfway between tip and web
    # face, tw/2 further out: t_sp = tf - (tw/2)·tan(alpha)
    k, tw, tf = 0.08, 8.5, 11.5
    p = f4.createIfcUShapeProfileDef("AREA", None, None, 200.0, 75.0, tw, tf, 11.5, 6.0, math.atan(k))
    ref = tapered_flange_channel(d=200.0, b=75.0, t_f=tf - tw / 2 * k, t_w=tw, r_r=11.5, r_f=6.0,
                                 alpha=math.degrees(math.atan(k)), n_r=N_R)
    assert_matches(section_of(p), sp_props(ref))  # sectionproperties


def test_c_shape(f4):
    s = section_of(f4.createIfcCShapeProfileDef("AREA", None, None, 200.0, 75.0, 2.0, 20.0, 3.0))
    ref = cee_section(d=200.0, b=75.0, l=20.0, t=2.0, r_out=5.0, n_r=N_R)
    assert_matches(s, sp_props(ref))  # sectionproperties
    assert s.shape == "C" and s.dims == {"h": 200.0, "b": 75.0, "t": 2.0}


def test_z_shape(f4):
    h, b, tw, tf, r1, r2 = 160.0, 65.0, 8.5, 11.0, 11.0, 6.0
    s = section_of(f4.createIfcZShapeProfileDef("AREA", None, None, h, b, tw, tf, r1, r2))
    w = tw / 2
    zed = Polygon([(-w, -h / 2), (b, -h / 2), (b, -h / 2 + tf), (w, -h / 2 + tf), (w, h / 2), (-b, h / 2),
                   (-b, h / 2 - tf), (-w, h / 2 - tf)])
    add = [fillet_patch((w, -h / 2 + tf), (1, 0), (0, 1), r1), fillet_patch((-w, h / 2 - tf), (-1, 0), (0, -1), r1)]
    cut = [fillet_patch((b, -h / 2 + tf), (-1, 0), (0, -1), r2), fillet_patch((-b, h / 2 - tf), (1, 0), (0, 1), r2)]
    ref = unary_union([zed, *add]).difference(unary_union(cut))
    assert_matches(s, poly_props(ref))  # sectionproperties on a shapely polygon (inclined minor axis)
    assert s.shape == "Z"


def test_ellipse(f4):
    s = section_of(f4.createIfcEllipseProfileDef("AREA", None, place(f4, 1, 2, 45), 60.0, 25.0))
    assert_matches(s, sp_props(elliptical_section(d_x=120.0, d_y=50.0, n=512)))  # sectionproperties
    assert s.shape == "ellipse" and s.dims == {"b": 120.0, "h": 50.0}


def test_trapezium(f4):
    s = section_of(f4.createIfcTrapeziumProfileDef("AREA", None, None, 100.0, 40.0, 60.0, 70.0))
    ref = Polygon([(0, 0), (100, 0), (110, 60), (70, 60)])
    assert_matches(s, poly_props(ref))  # sectionproperties on a shapely polygon
    assert s.dims == {"b": 110.0, "h": 60.0}


# ---------------------------------------------------------------------------------------------
# published section tables (the tables' own root and toe radii)
# ---------------------------------------------------------------------------------------------


def test_en10365_ipe200(f4):
    s = section_of(f4.createIfcIShapeProfileDef("AREA", "IPE200", None, 100.0, 200.0, 5.6, 8.5, 12.0))
    assert s.area == pytest.approx(2850.0, rel=0.005)  # EN 10365: IPE 200, A = 28.5 cm² (from memory)
    assert s.r_min == pytest.approx(22.4, rel=0.005)  # EN 10365: IPE 200, iz = 2.24 cm (from memory)


def test_en10365_hea200(f4):
    s = section_of(f4.createIfcIShapeProfileDef("AREA", "HEA200", None, 200.0, 190.0, 6.5, 10.0, 18.0))
    assert s.area == pytest.approx(5380.0, rel=0.005)  # EN 10365: HE 200 A, A = 53.8 cm² (from memory)
    assert s.r_min == pytest.approx(49.8, rel=0.005)  # EN 10365: HE 200 A, iz = 4.98 cm (from memory)


def test_en10365_ipn200_tapered(f4):
    p = f4.createIfcIShapeProfileDef("AREA", "IPN200", None, 90.0, 200.0, 7.5, 11.3, 7.5, 4.5, math.atan(0.14))
    s = section_of(p)
    assert s.area == pytest.approx(3340.0, rel=0.005)  # EN 10365: IPN 200 (14 % taper), A = 33.4 cm² (from memory)
    assert s.r_min == pytest.approx(18.7, rel=0.01)  # EN 10365: IPN 200, iz = 1.87 cm (from memory)


def test_en10365_upn200_tapered(f4):
    p = f4.createIfcUShapeProfileDef("AREA", "UPN200", None, 200.0, 75.0, 8.5, 11.5, 11.5, 6.0, math.atan(0.08))
    s = section_of(p)
    assert s.area == pytest.approx(3220.0, rel=0.005)  # EN 10365: UPN 200 (8 % taper), A = 32.2 cm² (from memory)
    assert s.r_min == pytest.approx(21.4, rel=0.01)  # EN 10365: UPN 200, iz = 2.14 cm (from memory)


def test_aisc_w8x31():
    f = ifcopenshell.file(schema="IFC2X3")  # IFC2X3: no FlangeEdgeRadius / FlangeSlope attributes
    # fillet from the database's k_des = 0.829 in: r = k_des - tf
    p = f.createIfcIShapeProfileDef("AREA", "W8X31", place(f, 0, 0), 7.995, 8.0, 0.285, 0.435, 0.829 - 0.435)
    s = section_of(p)
    assert s.area == pytest.approx(9.13, rel=0.005)  # AISC Shapes Database v15: W8X31, A = 9.13 in² (from memory)
    assert s.r_min == pytest.approx(2.02, rel=0.005)  # AISC Shapes Database v15: W8X31, ry = 2.02 in (from memory)


def test_en10056_equal_angle(f4):
    s = section_of(f4.createIfcLShapeProfileDef("AREA", "L100x100x10", None, 100.0, 100.0, 10.0, 12.0, 6.0))
    assert s.area == pytest.approx(1920.0, rel=0.005)  # EN 10056-1: L 100x100x10, A = 19.2 cm² (from memory)
    assert s.r_min == pytest.approx(19.5, rel=0.005)  # EN 10056-1: L 100x100x10, iv = 1.95 cm (from memory)


def test_en10055_tee_tapered(f4):
    # T 100: 2 % taper on flange and web, r1 = 11, r2 = 5.5, r3 = 3
    p = f4.createIfcTShapeProfileDef("AREA", "T100", None, 100.0, 100.0, 11.0, 11.0, 11.0, 5.5, 3.0,
                                     math.atan(0.02), math.atan(0.02))
    s = section_of(p)
    assert s.area == pytest.approx(2090.0, rel=0.01)  # EN 10055: T 100, A = 20.9 cm² (from memory)
    assert s.r_min == pytest.approx(20.6, rel=0.01)  # EN 10055: T 100, iz = 2.06 cm (from memory)


def test_en10210_chs(f4):
    s = section_of(f4.createIfcCircleHollowProfileDef("AREA", "CHS168.3x8", None, 168.3 / 2, 8.0))
    assert s.area == pytest.approx(4030.0, rel=0.005)  # EN 10210-2: CHS 168.3x8.0, A = 40.3 cm² (from memory)
    assert s.r_min == pytest.approx(56.7, rel=0.005)  # EN 10210-2: CHS 168.3x8.0, i = 5.67 cm (from memory)


def test_en10219_shs(f4):
    # cold-formed, T ≤ 6 mm: ro = 2T, ri = T
    s = section_of(f4.createIfcRectangleHollowProfileDef("AREA", "SHS100x5", None, 100.0, 100.0, 5.0, 5.0, 10.0))
    assert s.area == pytest.approx(1840.0, rel=0.005)  # EN 10219-2: SHS 100x100x5, A = 18.4 cm² (from memory)
    assert s.r_min == pytest.approx(38.4, rel=0.005)  # EN 10219-2: SHS 100x100x5, i = 3.84 cm (from memory)


# ---------------------------------------------------------------------------------------------
# ifcopenshell's geometry kernel: volume ÷ depth of an extruded solid
# ---------------------------------------------------------------------------------------------


def kernel_area(f: ifcopenshell.file, profile, depth: float = 1000.0) -> float:
    solid = f.createIfcExtrudedAreaSolid(
        profile, f.createIfcAxis2Placement3D(f.createIfcCartesianPoint((0.0, 0.0, 0.0))),
        f.createIfcDirection((0.0, 0.0, 1.0)), depth,
    )
    shape = ifcopenshell.geom.create_shape(ifcopenshell.geom.settings(), solid)
    return ifcopenshell.util.shape.get_volume(shape) / depth


KERNEL_CASES = [
    ("IfcIShapeProfileDef", ("AREA", None, None, 100.0, 200.0, 5.6, 8.5, 12.0, 3.0)),
    ("IfcAsymmetricIShapeProfileDef", ("AREA", None, None, 150.0, 300.0, 8.0, 12.0, 10.0, 100.0, 10.0, 8.0)),
    ("IfcLShapeProfileDef", ("AREA", None, None, 100.0, 60.0, 8.0, 10.0, 5.0)),
    ("IfcTShapeProfileDef", ("AREA", None, None, 100.0, 120.0, 10.0, 12.0, 10.0, 5.0, 3.0)),
    ("IfcUShapeProfileDef", ("AREA", None, None, 200.0, 75.0, 8.5, 11.5, 11.5, 6.0)),
    ("IfcCShapeProfileDef", ("AREA", None, None, 200.0, 75.0, 2.0, 20.0, 3.0)),
    ("IfcZShapeProfileDef", ("AREA", None, None, 100.0, 55.0, 6.5, 8.0, 8.0, 4.5)),
    ("IfcRectangleHollowProfileDef", ("AREA", None, None, 100.0, 50.0, 5.0, 5.0, 10.0)),
    ("IfcCircleHollowProfileDef", ("AREA", None, None, 50.0, 5.0)),
    ("IfcEllipseProfileDef", ("AREA", None, None, 60.0, 30.0)),
    ("IfcTrapeziumProfileDef", ("AREA", None, None, 100.0, 60.0, 50.0, -10.0)),
]


@pytest.mark.parametrize(("cls", "args"), KERNEL_CASES, ids=[c for c, _ in KERNEL_CASES])
def test_against_geometry_kernel(f4, cls, args):
    p = f4.create_entity(cls, *args)
    assert section_of(p).area == pytest.approx(kernel_area(f4, p), rel=0.02)  # ifcopenshell.geom


def test_arbitrary_composite_curve_against_geometry_kernel(f4):
    p = f4.createIfcArbitraryClosedProfileDef("AREA", None, stadium_curve(f4, trims="point"))
    assert section_of(p).area == pytest.approx(kernel_area(f4, p), rel=0.02)  # ifcopenshell.geom


# ---------------------------------------------------------------------------------------------
# arbitrary, derived, composite and centre-line profiles
# ---------------------------------------------------------------------------------------------


def test_arbitrary_polyline(f4):
    pts = [(0, 0), (100, 0), (100, 10), (10, 10), (10, 60), (0, 60), (0, 0)]
    p = f4.createIfcArbitraryClosedProfileDef("AREA", "plate L", f4.createIfcPolyline([pt(f4, *q) for q in pts]))
    s = section_of(p)
    assert_matches(s, sp_props(angle_section(d=60.0, b=100.0, t=10.0, r_r=0.0, r_t=0.0, n_r=1)))  # sectionproperties
    assert (s.shape, s.dims, s.name) == ("arbitrary", {}, "plate L")


def test_arbitrary_polyline_clockwise_and_unclosed(f4):
    # clockwise, last point not repeated: the closing edge is implied
    pts = [(0, 0), (0, 60), (10, 60), (10, 10), (100, 10), (100, 0)]
    p = f4.createIfcArbitraryClosedProfileDef("AREA", None, f4.createIfcPolyline([pt(f4, *q) for q in pts]))
    assert_matches(section_of(p), sp_props(angle_section(d=60.0, b=100.0, t=10.0, r_r=0.0, r_t=0.0, n_r=1)))  # sectionproperties


def test_indexed_poly_curve_with_arcs(f4):
    # 80 x 50 rectangle with 12 mm corner arcs, each arc given by three points
    b, h, r = 80.0, 50.0, 12.0
    c = r * (1 - math.cos(math.pi / 4))
    coords = [
        (-b / 2 + r, -h / 2), (b / 2 - r, -h / 2), (b / 2 - c, -h / 2 + c), (b / 2, -h / 2 + r),
        (b / 2, h / 2 - r), (b / 2 - c, h / 2 - c), (b / 2 - r, h / 2), (-b / 2 + r, h / 2),
        (-b / 2 + c, h / 2 - c), (-b / 2, h / 2 - r), (-b / 2, -h / 2 + r), (-b / 2 + c, -h / 2 + c),
    ]
    plist = f4.createIfcCartesianPointList2D(coords)
    segs = [
        f4.createIfcLineIndex((1, 2)), f4.createIfcArcIndex((2, 3, 4)), f4.createIfcLineIndex((4, 5)),
        f4.createIfcArcIndex((5, 6, 7)), f4.createIfcLineIndex((7, 8)), f4.createIfcArcIndex((8, 9, 10)),
        f4.createIfcLineIndex((10, 11)), f4.createIfcArcIndex((11, 12, 1)),
    ]
    p = f4.createIfcArbitraryClosedProfileDef("AREA", None, f4.createIfcIndexedPolyCurve(plist, segs, False))
    ref = box(-b / 2 + r, -h / 2 + r, b / 2 - r, h / 2 - r).buffer(r, quad_segs=QUAD)
    assert_matches(section_of(p), poly_props(ref))  # sectionproperties on a shapely polygon


def test_indexed_poly_curve_without_segments(f4):
    plist = f4.createIfcCartesianPointList2D([(0.0, 0.0), (30.0, 0.0), (30.0, 20.0), (0.0, 20.0)])
    p = f4.createIfcArbitraryClosedProfileDef("AREA", None, f4.createIfcIndexedPolyCurve(plist, None, False))
    assert_matches(section_of(p), sp_props(rectangular_section(d=20.0, b=30.0)))  # sectionproperties


def stadium_curve(f: ifcopenshell.file, trims: str):
    """Composite curve: two straight edges and two half circles (radius 20, centres 50 apart).

    trims: "point" (IfcCartesianPoint), "radian" or "degree" (IfcParameterValue)."""
    r, half = 20.0, 25.0
    pos = [f.createIfcAxis2Placement2D(pt(f, sx * half, 0.0)) for sx in (1, -1)]
    circles = [f.createIfcCircle(p, r) for p in pos]
    deg = 180 / math.pi if trims == "degree" else 1.0

    def arc(c, a0, a1, p0, p1):
        if trims == "point":
            t1, t2 = [pt(f, *p0)], [pt(f, *p1)]
        else:
            t1, t2 = [f.createIfcParameterValue(a0 * deg)], [f.createIfcParameterValue(a1 * deg)]
        return f.createIfcTrimmedCurve(c, t1, t2, True, "CARTESIAN" if trims == "point" else "PARAMETER")

    line = f.createIfcLine(pt(f, 0, 0), f.createIfcVector(f.createIfcDirection((1.0, 0.0)), 1.0))
    bottom = f.createIfcTrimmedCurve(line, [pt(f, -half, -r)], [pt(f, half, -r)], True, "CARTESIAN")
    top = f.createIfcPolyline([pt(f, half, r), pt(f, -half, r)])
    right = arc(circles[0], -math.pi / 2, math.pi / 2, (half, -r), (half, r))
    # the left half circle is given clockwise and used reversed (SameSense False)
    left = f.createIfcTrimmedCurve(
        circles[1],
        [pt(f, -half, -r)] if trims == "point" else [f.createIfcParameterValue(-math.pi / 2 * deg)],
        [pt(f, -half, r)] if trims == "point" else [f.createIfcParameterValue(math.pi / 2 * deg)],
        False, "CARTESIAN" if trims == "point" else "PARAMETER",
    )
    segs = [f.createIfcCompositeCurveSegment("CONTINUOUS", True, bottom),
            f.createIfcCompositeCurveSegment("CONTINUOUS", True, right),
            f.createIfcCompositeCurveSegment("CONTINUOUS", True, top),
            f.createIfcCompositeCurveSegment("CONTINUOUS", False, left)]
    return f.createIfcCompositeCurve(segs, False)


STADIUM = LineString([(-25.0, 0.0), (25.0, 0.0)]).buffer(20.0, quad_segs=QUAD)


@pytest.mark.parametrize(("trims", "factor"), [("point", 1.0), ("radian", 1.0), ("degree", math.pi / 180)])
def test_composite_curve_of_trimmed_lines_and_circles(f4, trims, factor):
    p = f4.createIfcArbitraryClosedProfileDef("AREA", None, stadium_curve(f4, trims))
    assert_matches(section_of(p, angle_factor=factor), poly_props(STADIUM))  # sectionproperties on shapely


@pytest.mark.parametrize("schema", ["IFC2X3", "IFC4X3"])
def test_composite_curve_in_other_schemas(schema):
    f = ifcopenshell.file(schema=schema)
    p = f.createIfcArbitraryClosedProfileDef("AREA", None, stadium_curve(f, "degree"))
    assert_matches(section_of(p, angle_factor=math.pi / 180), poly_props(STADIUM))  # sectionproperties on shapely


def test_parameter_trims_in_degrees_read_as_radians_are_refused(f4):
    p = f4.createIfcArbitraryClosedProfileDef("AREA", None, stadium_curve(f4, "degree"))
    with pytest.raises(UnsupportedProfile, match="not closed"):
        section_of(p)  # angle_factor 1.0 with degree trims: the arcs do not meet the lines


def test_circle_and_ellipse_as_outer_curve(f4):
    circle = f4.createIfcCircle(place(f4, 10, 10), 25.0)
    s = section_of(f4.createIfcArbitraryClosedProfileDef("AREA", None, circle))
    assert_matches(s, sp_props(circular_section(d=50.0, n=512)))  # sectionproperties
    ell = f4.createIfcEllipse(place(f4, -5, 3, 30), 40.0, 15.0)
    s = section_of(f4.createIfcArbitraryClosedProfileDef("AREA", None, ell))
    assert_matches(s, sp_props(elliptical_section(d_x=80.0, d_y=30.0, n=512)))  # sectionproperties


def test_trimmed_ellipse_arc(f4):
    # half ellipse (semi-axes 40 along x, 15 along y) closed by its major axis
    ell = f4.createIfcEllipse(place(f4, 0, 0), 40.0, 15.0)
    arc = f4.createIfcTrimmedCurve(ell, [pt(f4, 40, 0)], [pt(f4, -40, 0)], True, "CARTESIAN")
    chord = f4.createIfcPolyline([pt(f4, -40, 0), pt(f4, 40, 0)])
    curve = f4.createIfcCompositeCurve([f4.createIfcCompositeCurveSegment("CONTINUOUS", True, arc),
                                        f4.createIfcCompositeCurveSegment("CONTINUOUS", True, chord)], False)
    s = section_of(f4.createIfcArbitraryClosedProfileDef("AREA", None, curve))
    full = affinity.scale(Point(0, 0).buffer(1.0, quad_segs=QUAD), 40.0, 15.0, origin=(0, 0))
    ref = full.intersection(box(-50, 0, 50, 20))
    assert_matches(s, poly_props(ref))  # sectionproperties on a shapely polygon


def test_arbitrary_with_voids(f4):
    outer = f4.createIfcPolyline([pt(f4, *q) for q in [(0, 0), (120, 0), (120, 80), (0, 80), (0, 0)]])
    hole1 = f4.createIfcCircle(place(f4, 35, 40), 20.0)
    hole2 = f4.createIfcPolyline([pt(f4, *q) for q in [(70, 20), (100, 20), (100, 60), (70, 60), (70, 20)]])
    s = section_of(f4.createIfcArbitraryProfileDefWithVoids("AREA", None, outer, [hole1, hole2]))
    ref = box(0, 0, 120, 80).difference(Point(35, 40).buffer(20.0, quad_segs=QUAD)).difference(box(70, 20, 100, 60))
    assert_matches(s, poly_props(ref))  # sectionproperties on a shapely polygon


def angle_polygon() -> Polygon:
    return Polygon([(-50, -30), (50, -30), (50, -22), (-42, -22), (-42, 30), (-50, 30)])


def test_derived_non_uniform_scale_and_rotation(f4):
    parent = f4.createIfcLShapeProfileDef("AREA", "L", None, 60.0, 100.0, 8.0)
    a = math.radians(30)
    op = f4.createIfcCartesianTransformationOperator2DnonUniform(
        f4.createIfcDirection((math.cos(a), math.sin(a))), None, pt(f4, 15, -4), 1.5, 0.6)
    s = section_of(f4.createIfcDerivedProfileDef("AREA", None, parent, op, None))
    ref = affinity.rotate(affinity.scale(angle_polygon(), 1.5, 0.6, origin=(0, 0)), 30, origin=(0, 0))
    assert_matches(s, poly_props(affinity.translate(ref, 15, -4)))  # sectionproperties on shapely
    assert s.shape == "arbitrary" and s.dims == {}
    assert s.moments is not None and s.moments.centroid == pytest.approx(
        (ref.centroid.x + 15, ref.centroid.y - 4), abs=1e-6)  # shapely centroid


def test_derived_mirror_by_axis2_keeps_family_and_scales_dims(f4):
    parent = f4.createIfcLShapeProfileDef("AREA", "L100x60x8", None, 60.0, 100.0, 8.0)
    # Axis2 opposite to Axis1 turned +90°: a mirror about the x axis, uniform scale 2
    op = f4.createIfcCartesianTransformationOperator2D(
        f4.createIfcDirection((1.0, 0.0)), f4.createIfcDirection((0.0, -1.0)), pt(f4, 0, 0), 2.0)
    s = section_of(f4.createIfcDerivedProfileDef("AREA", None, parent, op, None))
    ref = affinity.scale(angle_polygon(), 2.0, -2.0, origin=(0, 0))
    assert_matches(s, poly_props(ref))  # sectionproperties on shapely
    assert s.shape == "L" and s.dims == {"h": 120.0, "b": 200.0, "t": 16.0} and s.name == "L100x60x8"
    assert s.moments is not None and s.moments.centroid[1] == pytest.approx(-2 * angle_polygon().centroid.y)  # shapely


def test_mirrored_profile(f4):
    parent = f4.createIfcLShapeProfileDef("AREA", "L", place(f4, 10, 0), 60.0, 100.0, 8.0)
    p = f4.createIfcMirroredProfileDef("AREA", None, parent, None, None)
    n_before = len(list(f4))
    s = section_of(p)
    assert len(list(f4)) == n_before  # the derived Operator attribute was not evaluated (it adds entities)
    ref = affinity.scale(affinity.translate(angle_polygon(), 10, 0), -1.0, 1.0, origin=(0, 0))
    assert_matches(s, poly_props(ref))  # sectionproperties on shapely
    assert s.moments is not None and s.moments.centroid[0] == pytest.approx(ref.centroid.x)  # shapely


def test_composite_profile_of_placed_parts(f4):
    # a tee from two rectangles placed by their Position: flange 100 x 12 on a 8 x 88 web
    flange = f4.createIfcRectangleProfileDef("AREA", None, place(f4, 0, 44), 100.0, 12.0)
    web = f4.createIfcRectangleProfileDef("AREA", None, place(f4, 0, -6, 90), 88.0, 8.0)
    s = section_of(f4.createIfcCompositeProfileDef("AREA", "T built-up", [flange, web], None))
    assert_matches(s, sp_props(tee_section(d=100.0, b=100.0, t_f=12.0, t_w=8.0, r=0.0, n_r=1)))  # sectionproperties
    assert s.shape == "composite" and s.name == "T built-up"


def test_center_line_polyline_is_the_mitred_band(f4):
    # centre line of a 100 x 60 x 10 angle: the mitred band is exactly the sharp angle
    curve = f4.createIfcPolyline([pt(f4, 5, 60), pt(f4, 5, 5), pt(f4, 100, 5)])
    s = section_of(f4.createIfcCenterLineProfileDef("AREA", None, curve, 10.0))
    assert_matches(s, sp_props(angle_section(d=60.0, b=100.0, t=10.0, r_r=0.0, r_t=0.0, n_r=1)))  # sectionproperties
    assert s.dims == {"t": 10.0}


def test_center_line_with_tangent_arc(f4):
    # a U-bend: straight, half circle of radius 30, straight; thickness 6
    line = f4.createIfcLine(pt(f4, 0, 0), f4.createIfcVector(f4.createIfcDirection((1.0, 0.0)), 1.0))
    circ = f4.createIfcCircle(place(f4, 50, 0), 30.0)
    segs = [
        f4.createIfcTrimmedCurve(line, [pt(f4, 0, -30)], [pt(f4, 50, -30)], True, "CARTESIAN"),
        f4.createIfcTrimmedCurve(circ, [pt(f4, 50, -30)], [pt(f4, 50, 30)], True, "CARTESIAN"),
        f4.createIfcTrimmedCurve(line, [pt(f4, 50, 30)], [pt(f4, 0, 30)], True, "CARTESIAN"),
    ]
    curve = f4.createIfcCompositeCurve([f4.createIfcCompositeCurveSegment("CONTINUOUS", True, c) for c in segs], False)
    s = section_of(f4.createIfcCenterLineProfileDef("AREA", None, curve, 6.0))
    path = LineString([(0, -30)] + [(50 + 30 * math.sin(a), -30 * math.cos(a))
                                    for a in (i * math.pi / 512 for i in range(513))] + [(0, 30)])
    ref = path.buffer(3.0, cap_style="flat", join_style="mitre")
    assert_matches(s, poly_props(ref))  # sectionproperties on a shapely polygon


def test_moments_are_exposed(f4):
    s = section_of(f4.createIfcRectangleProfileDef("AREA", None, place(f4, 7, -3), 30.0, 20.0))
    assert isinstance(s.moments, Moments)
    assert s.moments.centroid == pytest.approx((7.0, -3.0))  # the Position's location (common practice)


# ---------------------------------------------------------------------------------------------
# schema variants
# ---------------------------------------------------------------------------------------------


@pytest.mark.parametrize("schema", ["IFC2X3", "IFC4", "IFC4X3"])
def test_i_shape_in_every_schema(schema):
    f = ifcopenshell.file(schema=schema)
    p = f.createIfcIShapeProfileDef("AREA", "IPE200", place(f, 0, 0), 100.0, 200.0, 5.6, 8.5, 12.0)
    assert section_of(p).area == pytest.approx(2850.0, rel=0.005)  # EN 10365: IPE 200, A = 28.5 cm² (from memory)


@pytest.mark.parametrize("schema", ["IFC4", "IFC4X3"])
def test_asymmetric_i_shape_sloped_flanges_ifc4_onwards(schema):
    f = ifcopenshell.file(schema=schema)
    k, tw = 0.14, 7.5
    a = math.atan(k)
    # both flanges as IPN 200's: must equal the symmetric IPN
    p = f.createIfcAsymmetricIShapeProfileDef("AREA", None, None, 90.0, 200.0, tw, 11.3, 7.5, 90.0, 11.3, 7.5,
                                              4.5, a, 4.5, a)
    ref = tapered_flange_i_section(d=200.0, b=90.0, t_f=11.3 - tw / 4 * k, t_w=tw, r_r=7.5, r_f=4.5,
                                   alpha=math.degrees(a), n_r=N_R)
    assert_matches(section_of(p), sp_props(ref))  # sectionproperties


# ---------------------------------------------------------------------------------------------
# refusals
# ---------------------------------------------------------------------------------------------


BAD = [
    ("IfcRectangleProfileDef", ("AREA", None, None, 0.0, 10.0), "XDim"),
    ("IfcRectangleProfileDef", ("AREA", None, None, -5.0, 10.0), "XDim"),
    ("IfcCircleHollowProfileDef", ("AREA", None, None, 10.0, 10.0), "WallThickness"),
    ("IfcRectangleHollowProfileDef", ("AREA", None, None, 100.0, 50.0, 25.0), "WallThickness"),
    ("IfcRectangleHollowProfileDef", ("AREA", None, None, 100.0, 50.0, 5.0, 21.0, 10.0), "InnerFilletRadius"),
    ("IfcRectangleHollowProfileDef", ("AREA", None, None, 20.0, 20.0, 2.5, 0.0, 10.0), "corners"),
    ("IfcRoundedRectangleProfileDef", ("AREA", None, None, 100.0, 50.0, 26.0), "RoundingRadius"),
    ("IfcIShapeProfileDef", ("AREA", None, None, 100.0, 200.0, 5.6, 100.0, 12.0), "fill the depth"),
    ("IfcIShapeProfileDef", ("AREA", None, None, 100.0, 200.0, 120.0, 8.5), "WebThickness"),
    ("IfcIShapeProfileDef", ("AREA", None, None, 100.0, 200.0, 5.6, 8.5, 60.0), "radii"),
    ("IfcIShapeProfileDef", ("AREA", None, None, 100.0, 200.0, 5.6, 8.5, -1.0), "FilletRadius"),
    ("IfcLShapeProfileDef", ("AREA", None, None, 100.0, 100.0, 100.0), "Thickness"),
    ("IfcLShapeProfileDef", ("AREA", None, None, 100.0, 100.0, 10.0, 95.0), "radii"),
    ("IfcUShapeProfileDef", ("AREA", None, None, 200.0, 75.0, 8.5, 11.5, None, None, 8.0), "FlangeSlope"),
    ("IfcCShapeProfileDef", ("AREA", None, None, 200.0, 75.0, 2.0, 120.0), "Girth"),
    ("IfcTShapeProfileDef", ("AREA", None, None, 100.0, 100.0, 110.0, 10.0), "WebThickness"),
    ("IfcZShapeProfileDef", ("AREA", None, None, 100.0, 50.0, 6.0, 60.0), "FlangeThickness"),
]


@pytest.mark.parametrize(("cls", "args", "what"), BAD, ids=[f"{c}-{w}-{i}" for i, (c, _, w) in enumerate(BAD)])
def test_degenerate_data_is_refused(f4, cls, args, what):
    p = f4.create_entity(cls, *args)
    with pytest.raises(UnsupportedProfile, match=what) as err:
        section_of(p)
    assert f"{cls} #{p.id()}" in str(err.value)


class FakeProfile:
    """Duck-typed stand-in: ifcopenshell refuses to store NaN and infinity, a reader may not."""

    def __init__(self, cls: str, **attrs: object) -> None:
        self._cls = cls
        self.__dict__.update(attrs)

    def is_a(self, cls: str | None = None) -> str | bool:
        return self._cls if cls is None else cls == self._cls

    def id(self) -> int:
        return 99


@pytest.mark.parametrize("bad", [float("nan"), float("inf"), "12"])
def test_non_finite_dimensions_are_refused(bad):
    p = FakeProfile("IfcRectangleProfileDef", ProfileType="AREA", ProfileName=None, Position=None, XDim=bad, YDim=10.0)
    with pytest.raises(UnsupportedProfile, match="IfcRectangleProfileDef #99: XDim"):
        section_of(p)


def test_unknown_class_is_named():
    f = ifcopenshell.file(schema="IFC2X3")
    p = f.createIfcCraneRailFShapeProfileDef("AREA", None, place(f, 0, 0), 100.0, 50.0, 5.0, 20.0, 10.0, 12.0,
                                             8.0, 10.0, 5.0)
    with pytest.raises(UnsupportedProfile, match=rf"IfcCraneRailFShapeProfileDef #{p.id()}"):
        section_of(p)
    assert "IfcCraneRailFShapeProfileDef" not in PROFILE_FUNCTIONS


def test_open_profile_is_refused(f4):
    p = f4.createIfcArbitraryOpenProfileDef("CURVE", None, f4.createIfcPolyline([pt(f4, 0, 0), pt(f4, 1, 0)]))
    with pytest.raises(UnsupportedProfile, match="CURVE"):
        section_of(p)


def test_broken_composite_curve_is_refused(f4):
    a = f4.createIfcPolyline([pt(f4, 0, 0), pt(f4, 10, 0), pt(f4, 10, 10)])
    b = f4.createIfcPolyline([pt(f4, 5, 10), pt(f4, 0, 10), pt(f4, 0, 0)])  # starts 5 away from a's end
    curve = f4.createIfcCompositeCurve([f4.createIfcCompositeCurveSegment("CONTINUOUS", True, c) for c in (a, b)], False)
    with pytest.raises(UnsupportedProfile, match="not closed"):
        section_of(f4.createIfcArbitraryClosedProfileDef("AREA", None, curve))


def test_self_crossing_outline_is_refused(f4):
    bow_tie = f4.createIfcPolyline([pt(f4, *q) for q in [(0, 0), (10, 10), (10, 0), (0, 10), (0, 0)]])
    with pytest.raises(UnsupportedProfile, match="crosses itself"):
        section_of(f4.createIfcArbitraryClosedProfileDef("AREA", None, bow_tie))


def test_unsupported_curve_is_named(f4):
    spline = f4.createIfcBSplineCurveWithKnots(
        2, [pt(f4, 0, 0), pt(f4, 1, 1), pt(f4, 2, 0)], "UNSPECIFIED", False, False, [3, 3], [0.0, 1.0], "UNSPECIFIED")
    with pytest.raises(UnsupportedProfile, match="IfcBSplineCurveWithKnots"):
        section_of(f4.createIfcArbitraryClosedProfileDef("AREA", None, spline))


def test_composite_with_an_unsupported_part_is_refused(f4):
    good = f4.createIfcRectangleProfileDef("AREA", None, None, 10.0, 10.0)
    bad = f4.createIfcRectangleProfileDef("AREA", None, None, 10.0, 0.0)
    with pytest.raises(UnsupportedProfile, match=f"#{bad.id()}"):
        section_of(f4.createIfcCompositeProfileDef("AREA", None, [good, bad], None))


def test_every_registered_function_is_documented():
    for name, fn in PROFILE_FUNCTIONS.items():
        assert fn.__doc__ and fn.__doc__.strip(), name  # common practice: the formula's source is in the docstring
