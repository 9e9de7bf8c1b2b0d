"""The member reader: sections, lengths, materials and units from real IFC structures."""

from __future__ import annotations

import math

import pytest

from modelcheck.common.units import Q_
from modelcheck.ifc.index import build_index
from modelcheck.ifc.reader import MemberTable, read_members
from modelcheck.testing.author import ModelBuilder


def members_of(path):
    return read_members(build_index(str(path))).frame.set_index("name")


def _rod_model(units: str, schema: str = "IFC4"):
    """One 1 in (25.4 mm) round bar, 3 m long, A36, in either unit system."""
    mb = ModelBuilder(schema=schema, units=units)
    if units == "mm":
        r, length, e, fy, fu = 12.7, 3000.0, Q_(29000, "ksi").to("MPa").m, Q_(36, "ksi").to("MPa").m, \
            Q_(58, "ksi").to("MPa").m
    else:
        r, length, e, fy, fu = 0.5, 3000.0 / 25.4, 29000.0, 36.0, 58.0
    steel = mb.material("Rod steel", category="steel", E=e, Fy=fy, Fu=fu)
    rod = mb.f.createIfcCircleProfileDef("AREA", "RD1", None, r)
    mb.member("IfcMember", name="rod", tag="R1", profile=rod, material=steel, length=length,
              predefined_type="MEMBER", material_via="direct")
    return mb


@pytest.mark.parametrize("schema", ["IFC2X3", "IFC4", "IFC4X3"])
def test_same_member_in_mm_and_inch_files_gives_same_si_values(tmp_model, schema):
    a = members_of(tmp_model(_rod_model("mm", schema), "mm.ifc")).loc["rod"]
    b = members_of(tmp_model(_rod_model("inch-kip", schema), "in.ifc")).loc["rod"]
    # A = π/4 · (1 in)² = 0.7854 in² (geometry; pint for in² -> m²)
    assert math.isclose(a["area"], Q_(math.pi / 4, "in**2").to("m**2").m, rel_tol=1e-9)
    for col in ("area", "r_min", "length", "E", "Fy", "Fu"):
        assert math.isclose(a[col], b[col], rel_tol=1e-9), col
    assert math.isclose(a["length"], 3.0, rel_tol=1e-12)  # common practice: 3000 mm = 3 m
    assert math.isclose(b["Fy"], Q_(36, "ksi").to("Pa").m, rel_tol=1e-9)  # pint: 36 ksi in Pa


def test_type_inherited_section_and_material(tmp_model):
    mb = ModelBuilder(schema="IFC4", units="mm")
    steel = mb.material("S355", category="steel", E=210000.0, Fy=355.0, Fu=490.0)
    flat = mb.f.createIfcRectangleProfileDef("AREA", "FL60x10", None, 60.0, 10.0)
    typ = mb.member_type(name="Brace FL60x10", profile=flat, material=steel)
    mb.member("IfcMember", name="brace", member_type=typ, material=None, length=2500.0, body=None,
              predefined_type="BRACE")
    m = members_of(tmp_model(mb)).loc["brace"]
    assert math.isclose(m["area"], 600e-6, rel_tol=1e-12)  # 60 × 10 mm = 600 mm² (geometry)
    assert math.isclose(m["r_min"], 0.010 / math.sqrt(12), rel_tol=1e-9)  # rectangle: r = t/√12 (common practice)
    assert "via type" in m["area_source"]
    assert m["material"] == "S355"
    assert math.isclose(m["Fy"], 355e6)
    assert m["type_name"] == "Brace FL60x10"


def test_ifc2x3_mechanical_steel_properties_in_ksi(tmp_model):
    mb = ModelBuilder(schema="IFC2X3", units="inch-kip")
    mat = mb.material("Custom steel", E=29000.0, Fy=50.0, Fu=65.0, alpha=6.5e-6)
    rod = mb.f.createIfcCircleProfileDef("AREA", "RD", None, 0.375)
    mb.member("IfcMember", name="m", profile=rod, material=mat, length=120.0)
    m = members_of(tmp_model(mb)).loc["m"]
    assert math.isclose(m["Fy"], Q_(50, "ksi").to("Pa").m, rel_tol=1e-9)        # pint
    assert math.isclose(m["E"], Q_(29000, "ksi").to("Pa").m, rel_tol=1e-9)      # pint
    assert math.isclose(m["alpha"], Q_(6.5e-6, "1/delta_degF").to("1/K").m, rel_tol=1e-9)  # pint
    assert "IfcMechanicalSteelMaterialProperties" in m["Fy_source"]


def test_library_fills_values_the_model_lacks(tmp_model):
    mb = ModelBuilder(schema="IFC4", units="mm")
    mat = mb.material("ASTM A36")  # name only
    rod = mb.f.createIfcCircleProfileDef("AREA", "RD", None, 10.0)
    mb.member("IfcMember", name="m", profile=rod, material=mat, length=1000.0)
    m = members_of(tmp_model(mb)).loc["m"]
    assert math.isclose(m["Fy"], Q_(36, "ksi").to("Pa").m, rel_tol=1e-6)  # ASTM A36: Fy = 36 ksi (from memory)
    assert math.isclose(m["Fu"], Q_(58, "ksi").to("Pa").m, rel_tol=1e-6)  # ASTM A36: Fu = 58 ksi (from memory)
    assert "materials.toml" in m["Fy_source"]
    assert m["material_grade"] is not None


def test_inconsistent_quantity_is_flagged_with_both_values(tmp_model):
    mb = ModelBuilder(schema="IFC4", units="mm")
    steel = mb.material("S235", category="steel", E=210000.0, Fy=235.0, Fu=360.0)
    rod = mb.f.createIfcCircleProfileDef("AREA", "RD20", None, 10.0)
    mb.member("IfcMember", name="m", profile=rod, material=steel, length=1000.0,
              qto={"CrossSectionArea": 400.0, "Length": 1000.0})
    m = members_of(tmp_model(mb)).loc["m"]
    assert math.isclose(m["area"], math.pi * 100e-6, rel_tol=1e-12)  # πr², r = 10 mm (geometry)
    assert any("inconsistent area" in w and "400" in w and "314.159" in w for w in m["warnings"])


def test_implausible_modulus_is_doubted_not_used(tmp_model):
    mb = ModelBuilder(schema="IFC4", units="inch-kip")
    # 29,000,000 written where the file's unit is ksi: the psi value slipped in
    steel = mb.material("Steel", category="steel", E=29.0e6, Fy=36.0, Fu=58.0)
    rod = mb.f.createIfcCircleProfileDef("AREA", "RD", None, 0.5)
    mb.member("IfcMember", name="m", profile=rod, material=steel, length=100.0)
    m = members_of(tmp_model(mb)).loc["m"]
    assert math.isnan(m["E"])
    assert m["E_source"].startswith("doubted")
    assert any("plausible" in w for w in m["warnings"])


def test_the_member_table_and_its_warnings_are_one_named_value(tmp_model):
    """The model-level warnings travel beside the table as fields, not in ``DataFrame.attrs``
    (which pandas does not keep through every operation; common practice: no metadata there)."""
    table = read_members(build_index(str(tmp_model(_rod_model("mm")))))
    assert isinstance(table, MemberTable)
    assert table.frame["name"].tolist() == ["rod"] and table.frame.attrs == {}
    assert isinstance(table.model_warnings, tuple) and table.parse_problem_count == 0


def test_missing_material_and_section_are_missing_not_guessed(tmp_model):
    mb = ModelBuilder(schema="IFC4", units="mm")
    mb.member("IfcMember", name="bare", length=1000.0, body=None)
    m = members_of(tmp_model(mb)).loc["bare"]
    assert m["material"] is None and math.isnan(m["Fy"]) and math.isnan(m["area"])
    assert math.isclose(m["length"], 1.0)


def test_length_ranking_axis_then_body_then_quantity(tmp_model):
    mb = ModelBuilder(schema="IFC4", units="mm")
    rod = mb.f.createIfcCircleProfileDef("AREA", "RD", None, 5.0)
    mb.member("IfcMember", name="ax", profile=rod, length=2000.0, qto={"Length": 2000.0})
    mb.member("IfcMember", name="body", profile=rod, length=1500.0, axis=False)
    mb.member("IfcMember", name="qto", length=None, body=None, axis=False, qto={"Length": 1234.0})
    ms = members_of(tmp_model(mb))
    assert ms.loc["ax", "length_source"].startswith("Axis")
    assert "Depth" in ms.loc["body", "length_source"] and math.isclose(ms.loc["body", "length"], 1.5)
    assert ms.loc["qto", "length_source"].startswith("Qto_MemberBaseQuantities.Length")
    assert math.isclose(ms.loc["qto", "length"], 1.234)


def test_swept_disk_and_mapped_bodies(tmp_model):
    mb = ModelBuilder(schema="IFC4", units="mm")
    steel = mb.material("S355", category="steel", E=210000.0, Fy=355.0, Fu=490.0)
    mb.member("IfcMember", name="disk", body="swept_disk", disk=(8.0, 5.0), length=900.0, axis=False,
              material=steel, material_via="direct")
    chs = mb.f.createIfcCircleHollowProfileDef("AREA", "CHS", None, 30.0, 3.0)
    typ = mb.member_type(name="Strut", profile=chs, material=steel, body_length=1200.0)
    mb.member("IfcMember", name="mapped", member_type=typ, body="mapped", length=None, axis=False)
    ms = members_of(tmp_model(mb))
    assert math.isclose(ms.loc["disk", "area"], math.pi * (64 - 25) * 1e-6, rel_tol=1e-12)  # π(R²−r²) (geometry)
    assert math.isclose(ms.loc["disk", "length"], 0.9)
    assert math.isclose(ms.loc["mapped", "length"], 1.2)  # the mapped extrusion's depth
    assert math.isclose(ms.loc["mapped", "area"], math.pi * (30**2 - 27**2) * 1e-6, rel_tol=1e-9)  # annulus


def test_area_agrees_with_the_geometry_kernel(tmp_model):
    """ifcopenshell's geometry kernel: volume ÷ length of the extruded body (tessellated, ~1 % small)."""
    import ifcopenshell.geom
    import ifcopenshell.util.shape

    mb = ModelBuilder(schema="IFC4", units="mm")
    steel = mb.material("S355", category="steel", E=210000.0, Fy=355.0, Fu=490.0)
    ipe = mb.f.createIfcIShapeProfileDef("AREA", "IPE200", None, 100.0, 200.0, 5.6, 8.5, 12.0)
    mb.member("IfcColumn", name="post", profile=ipe, material=steel, length=1000.0, predefined_type="COLUMN")
    path = tmp_model(mb)
    m = members_of(path).loc["post"]
    f = ifcopenshell.open(str(path))
    settings = ifcopenshell.geom.settings()
    shape = ifcopenshell.geom.create_shape(settings, f.by_type("IfcColumn")[0])
    volume = ifcopenshell.util.shape.get_volume(shape.geometry)  # m³ (kernel works in SI)
    assert math.isclose(m["area"], volume / m["length"], rel_tol=0.02)


def test_proxy_with_a_profile_sweep_is_a_member_and_one_without_is_not(tmp_model):
    mb = ModelBuilder(schema="IFC4", units="mm")
    rod = mb.f.createIfcCircleProfileDef("AREA", "RD12", None, 6.0)
    mb.member("IfcBuildingElementProxy", name="swept proxy", profile=rod, length=800.0)
    mb.member("IfcDiscreteAccessory", name="swept accessory", profile=rod, length=600.0)
    mb.member("IfcBuildingElementProxy", name="bodiless proxy", length=800.0, body=None)
    ms = members_of(tmp_model(mb))
    assert set(ms.index) == {"swept proxy", "swept accessory"}
    assert math.isclose(ms.loc["swept proxy", "area"], math.pi * 36e-6, rel_tol=1e-12)  # πr², r = 6 mm


@pytest.mark.parametrize("kind", ["constituents", "list", "layers"])
def test_material_through_sets_and_lists(tmp_model, kind):
    mb = ModelBuilder(schema="IFC4", units="mm")
    f = mb.f
    steel = mb.material("S355", category="steel", E=210000.0, Fy=355.0, Fu=490.0)
    paint = mb.material("Paint")
    if kind == "constituents":
        sel = f.createIfcMaterialConstituentSet("Rod", None, [
            f.createIfcMaterialConstituent("core", None, steel, None, None),
            f.createIfcMaterialConstituent("coat", None, paint, None, None)])
    elif kind == "list":
        sel = f.createIfcMaterialList([steel, paint])
    else:
        layers = f.createIfcMaterialLayerSet([f.createIfcMaterialLayer(steel, 10.0, None, None, None, None, None)],
                                             "plate", None)
        sel = f.createIfcMaterialLayerSetUsage(layers, "AXIS2", "POSITIVE", 0.0, None)
    rod = f.createIfcCircleProfileDef("AREA", "RD20", None, 10.0)
    el = mb.member("IfcMember", name="m", profile=rod, length=1000.0)
    mb.associate_material([el], sel)
    m = members_of(tmp_model(mb)).loc["m"]
    assert m["material"] == "S355" and math.isclose(m["Fy"], 355e6)  # the first material, as written
    if kind in ("constituents", "list"):
        assert any("several materials" in w for w in m["warnings"])  # the others are named, not dropped

