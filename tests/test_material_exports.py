"""Materials as authoring and analysis tools export them: named freely with no Category, their
mechanical values in property sets of their own (or IFC2X3's typed ones), each value's unit its
own or the file's; plausibility by material category. Models built with ModelBuilder."""

from __future__ import annotations

import math
from pathlib import Path
from typing import Any

import pytest

from modelcheck.core.check import check_model
from modelcheck.core.model import ForceOptions
from modelcheck.ifc.index import build_index
from modelcheck.ifc.reader import read_members
from modelcheck.testing.author import ModelBuilder
from tests.helpers import axial_force, rectangle, round_bar, si


def read(path: Path) -> dict[str, dict[str, Any]]:
    """The member table's rows by member name (None stays None: the table's text columns hold it)."""
    return {r["name"]: r for r in read_members(build_index(str(path))).frame.to_dict("records")}


def without_unit(mb: ModelBuilder, unit_type: str) -> None:
    """Drop one unit type from the project's unit assignment (an export that states none)."""
    ua = mb.project.UnitsInContext
    ua.Units = [u for u in ua.Units if getattr(u, "UnitType", None) != unit_type]


def prop(mb: ModelBuilder, name: str, measure: str, value: float, unit: Any = None) -> Any:
    return mb.f.createIfcPropertySingleValue(name, None, mb.f.create_entity(measure, value), unit)


# ------------------------------------------------------------------ item 1: names, IFC2X3, exclusion

@pytest.fixture
def mixed_ifc2x3(tmp_model: Any) -> Path:
    """An IFC2X3 export: no IfcMaterial.Category anywhere, materials named in exporters' styles."""
    mb = ModelBuilder(schema="IFC2X3", units="mm")
    conc = mb.material("CONCRETE/C30/37")
    glulam = mb.material("TIMBER/GL24h")
    steel = mb.material("Metal - Steel - 345 MPa")
    a992 = mb.material("A992Fy50")
    vague = mb.material("Material 7")
    pad = mb.material("MISCELLANEOUS/Neoprene")
    mb.member("IfcColumn", name="C1", profile=rectangle(mb, 300, 300), material=conc, length=3000.0, material_via="direct")
    mb.member("IfcColumn", name="C2", profile=rectangle(mb, 400, 400), material=conc, length=3000.0, material_via="direct")
    mb.member("IfcMember", name="T1", profile=rectangle(mb, 100, 200), material=glulam, length=4000.0,
              material_via="direct")
    mb.member("IfcMember", name="B1", profile=round_bar(mb, 20), material=steel, length=2000.0, material_via="direct")
    mb.member("IfcMember", name="B2", profile=round_bar(mb, 20), material=a992, length=2000.0, material_via="direct")
    mb.member("IfcMember", name="X1", profile=round_bar(mb, 20), material=vague, length=2000.0, material_via="direct")
    mb.member("IfcMember", name="N1", profile=rectangle(mb, 200, 20), material=pad, length=300.0, material_via="direct")
    return tmp_model(mb)


def test_categories_and_grades_of_an_ifc2x3_export(mixed_ifc2x3: Path) -> None:
    m = read(mixed_ifc2x3)
    got = {n: (r["material_category"], r["material_grade"]) for n, r in m.items()}
    assert got == {
        "C1": ("concrete", "C30/37"), "C2": ("concrete", "C30/37"),   # EN 206 class C30/37
        "T1": ("timber", "GL24h"),                                     # EN 14080 class GL24h
        "B1": ("steel", None),
        "B2": ("steel", "ASTM A992"),                                  # the library's grade
        "X1": ("unknown", None),
        "N1": ("other", None),
    }
    # the strength the name states is its yield strength, with the name as its source
    assert m["B1"]["Fy"] == pytest.approx(si("345 MPa"), rel=1e-9)
    assert "Metal - Steel - 345 MPa" in m["B1"]["Fy_source"]
    assert math.isnan(m["B1"]["E"])          # nothing states E: missing, never assumed
    # A992Fy50: Fy = 50 ksi from the name (US practice), E and Fu from the library's A992
    assert m["B2"]["Fy"] == pytest.approx(si("50 ksi"), rel=1e-9)
    assert "A992Fy50" in m["B2"]["Fy_source"]
    assert m["B2"]["E"] == pytest.approx(si("29000 ksi"), rel=1e-9)   # AISC 360-16: E = 29,000 ksi (from memory)
    assert m["B2"]["E_source"] == "rulesets/materials.toml: ASTM A992"
    assert any("category unknown" in w for w in m["X1"]["warnings"])


@pytest.mark.parametrize("rules", ["steel-ec3", "steel-asd-us"])
def test_steel_rules_exclude_concrete_and_timber_and_say_so(mixed_ifc2x3: Path, rules: str) -> None:
    checked = check_model(str(mixed_ifc2x3), rules, ForceOptions())
    gid = {n: r["global_id"] for n, r in read(mixed_ifc2x3).items()}
    res = checked.results
    # concrete and timber members get no result: not a steel member lacking E and Fy
    for name in ("C1", "C2", "T1", "N1"):
        assert not (res["global_id"] == gid[name]).any(), name
    for name in ("B1", "X1"):   # steel and unknown stay in (unknown: unchecked for what it lacks)
        assert (res["global_id"] == gid[name]).any(), name
    lines = [w for w in checked.data.warnings if w.startswith("excluded:")]
    assert len(lines) == 3
    assert any(w.startswith("excluded: other — 1 member ") and gid["N1"] in w for w in lines)
    conc = next(w for w in lines if w.startswith("excluded: concrete"))
    assert "2 members" in conc and gid["C1"] in conc and gid["C2"] in conc
    assert any(w.startswith("excluded: timber — 1 member ") and gid["T1"] in w for w in lines)


# ------------------------------------------------------------------ item 2: any material property set

def _analysis_steel(mb: ModelBuilder, name: str, sets: dict[str, list[Any]]) -> Any:
    mat = mb.f.createIfcMaterial(name, None, None)
    for set_name, props in sets.items():
        mb.f.createIfcMaterialProperties(set_name, None, props, mat)
    return mat


def test_values_from_a_set_named_after_the_program_each_with_its_own_unit(tmp_model: Any) -> None:
    mb = ModelBuilder(schema="IFC4", units="mm")
    f = mb.f
    pascal = f.createIfcSIUnit(None, "PRESSUREUNIT", None, "PASCAL")
    mpa = f.createIfcSIUnit(None, "PRESSUREUNIT", "MEGA", "PASCAL")
    kg = f.createIfcSIUnit(None, "MASSUNIT", "KILO", "GRAM")
    m3 = f.createIfcSIUnit(None, "VOLUMEUNIT", None, "CUBIC_METRE")
    density_unit = f.createIfcDerivedUnit([f.createIfcDerivedUnitElement(kg, 1), f.createIfcDerivedUnitElement(m3, -1)],
                                          "MASSDENSITYUNIT", None)
    kelvin = f.createIfcSIUnit(None, "THERMODYNAMICTEMPERATUREUNIT", None, "KELVIN")
    per_k = f.createIfcDerivedUnit([f.createIfcDerivedUnitElement(kelvin, -1)], "THERMALEXPANSIONCOEFFICIENTUNIT", None)
    mat = _analysis_steel(mb, "STEEL_GRADE_A", {"FEM-Export": [
        prop(mb, "YoungModulus", "IfcModulusOfElasticityMeasure", 2.1e11, pascal),
        prop(mb, "YieldStress", "IfcPressureMeasure", 3.55e8, pascal),
        prop(mb, "UltimateStress", "IfcPressureMeasure", 510.0, mpa),
        prop(mb, "PoissonRatio", "IfcPositiveRatioMeasure", 0.3),
        prop(mb, "ThermalExpansionCoefficient", "IfcThermalExpansionCoefficientMeasure", 1.2e-5, per_k),
        prop(mb, "MassDensity", "IfcMassDensityMeasure", 7850.0, density_unit),
    ]})
    mb.member("IfcMember", name="M1", profile=round_bar(mb, 20), material=mat, length=2000.0)
    m = read(tmp_model(mb))
    # each value in its own unit, converted by pint (the reference): 2.1e11 Pa, 3.55e8 Pa, 510 MPa
    assert m["M1"]["E"] == pytest.approx(2.1e11, rel=1e-12)
    assert m["M1"]["Fy"] == pytest.approx(3.55e8, rel=1e-12)
    assert m["M1"]["Fu"] == pytest.approx(si("510 MPa"), rel=1e-12)
    assert m["M1"]["alpha"] == pytest.approx(1.2e-5, rel=1e-12)
    assert m["M1"]["E_source"].startswith("FEM-Export.YoungModulus")
    assert m["M1"]["material_category"] == "steel"
    assert not m["M1"]["warnings"]   # density 7850 kg/m³ lies in steel's range (EN 1991-1-1 Table A.4)


def test_buildingsmart_sets_rank_before_the_programs_own(tmp_model: Any) -> None:
    mb = ModelBuilder(schema="IFC4", units="mm")
    mat = _analysis_steel(mb, "S355 (analysis)", {
        "Analysis": [prop(mb, "YieldStress", "IfcPressureMeasure", 345.0),      # MPa: the file's pressure unit
                     prop(mb, "YoungModulus", "IfcModulusOfElasticityMeasure", 205000.0)],
        "Pset_MaterialSteel": [prop(mb, "YieldStress", "IfcPressureMeasure", 355.0)],
    })
    mb.member("IfcMember", name="M1", profile=round_bar(mb, 20), material=mat, length=2000.0)
    m = read(tmp_model(mb))
    assert m["M1"]["Fy"] == pytest.approx(si("355 MPa"), rel=1e-12)
    assert m["M1"]["Fy_source"].startswith("Pset_MaterialSteel.YieldStress")
    # what the buildingSMART set lacks comes from the program's set, ahead of the library's 210 GPa
    assert m["M1"]["E"] == pytest.approx(si("205000 MPa"), rel=1e-12)
    assert m["M1"]["E_source"].startswith("Analysis.YoungModulus")


def test_no_unit_for_the_measure_type_is_the_reason_unless_the_value_has_its_own(tmp_model: Any) -> None:
    mb = ModelBuilder(schema="IFC4", units="mm")
    without_unit(mb, "MODULUSOFELASTICITYUNIT")
    gpa = mb.f.createIfcSIUnit(None, "PRESSUREUNIT", "GIGA", "PASCAL")
    bare = _analysis_steel(mb, "Steel A", {"Material": [prop(mb, "YoungModulus", "IfcModulusOfElasticityMeasure",
                                                                   210000.0)]})
    own = _analysis_steel(mb, "Steel B", {"Material": [prop(mb, "YoungModulus", "IfcModulusOfElasticityMeasure",
                                                                  210.0, gpa)]})
    # an exporter's variant: the value itself an IfcMeasureWithUnit (its unit with it)
    mwu = mb.f.createIfcMeasureWithUnit(mb.f.create_entity("IfcModulusOfElasticityMeasure", 205.0), gpa)
    with_unit = _analysis_steel(mb, "Steel C", {"Material": [
        mb.f.createIfcPropertySingleValue("YoungModulus", None, mwu, None)]})
    mb.member("IfcMember", name="A", profile=round_bar(mb, 20), material=bare, length=2000.0)
    mb.member("IfcMember", name="B", profile=round_bar(mb, 20), material=own, length=2000.0)
    mb.member("IfcMember", name="C", profile=round_bar(mb, 20), material=with_unit, length=2000.0)
    m = read(tmp_model(mb))
    assert m["C"]["E"] == pytest.approx(si("205 GPa"), rel=1e-12)   # 205 GPa in its own unit (pint)
    assert math.isnan(m["A"]["E"]) and m["A"]["E_source"] is None
    assert any("MODULUSOFELASTICITYUNIT" in w and "not used" in w and "YoungModulus" in w for w in m["A"]["warnings"])
    assert m["B"]["E"] == pytest.approx(si("210 GPa"), rel=1e-12)   # its own unit: 210 GPa (pint)


def test_ifc2x3_typed_and_extended_material_properties(tmp_model: Any) -> None:
    mb = ModelBuilder(schema="IFC2X3", units="mm")
    f = mb.f
    mat = f.createIfcMaterial("Stahl S235")
    kg = f.createIfcSIUnit(None, "MASSUNIT", "KILO", "GRAM")
    m3 = f.createIfcSIUnit(None, "VOLUMEUNIT", None, "CUBIC_METRE")
    ua = mb.project.UnitsInContext
    ua.Units = list(ua.Units) + [f.createIfcDerivedUnit(
        [f.createIfcDerivedUnitElement(kg, 1), f.createIfcDerivedUnitElement(m3, -1)], "MASSDENSITYUNIT", None)]
    # a density of 7.85 (g/cm³) written into a file whose density unit is kg/m³: a unit slip
    f.create_entity("IfcGeneralMaterialProperties", Material=mat, MassDensity=7.85)
    f.create_entity("IfcExtendedMaterialProperties", Material=mat, Name="FEM", ExtendedProperties=[
        prop(mb, "YieldStress", "IfcPressureMeasure", 240.0)])
    mb.member("IfcMember", name="M1", profile=round_bar(mb, 20), material=mat, length=2000.0, material_via="direct")
    m = read(tmp_model(mb))
    assert m["M1"]["material_category"] == "steel" and m["M1"]["material_grade"] == "EN 10025 S235"
    assert m["M1"]["Fy"] == pytest.approx(si("240 MPa"), rel=1e-12)
    assert m["M1"]["Fy_source"].startswith("FEM.YieldStress")
    # steel weighs 77-78.5 kN/m³ (EN 1991-1-1 Table A.4, from memory): 7.85 kg/m³ is flagged
    w = [w for w in m["M1"]["warnings"] if "density" in w]
    assert len(w) == 1 and "7.85 kg/m³" in w[0] and "for steel (7700–8100 kg/m^3)" in w[0]


# ------------------------------------------------------------------ item 9: ranges by category

@pytest.mark.parametrize(("name", "category", "E_mpa", "used"), [
    ("TIMBER/C24", None, 11000.0, True),     # EN 338 C24: E0,mean = 11,000 MPa (from memory)
    ("Softwood", None, 8100.0, True),        # a timber modulus of 8,100 MPa (the value)
    ("Glulam", "Wood", 11500.0, True),       # EN 14080 GL24h: E0,mean = 11,500 MPa (from memory)
    ("CONCRETE/C30/37", None, 33000.0, True),   # EN 1992-1-1 Table 3.1: Ecm = 33 GPa for C30/37 (from memory)
    ("C25/30", None, 27000.0, True),         # concrete at the low end, 27 GPa
    ("Beton", None, 35000.0, True),
    ("Steel S355", None, 8100.0, False),     # 8.1 GPa is no steel modulus (EN 1993-1-1 3.2.6: 210 GPa)
    ("CONCRETE/C30/37", None, 210000.0, False),   # a steel modulus on concrete
    ("Material 7", None, 8100.0, True),      # unknown category: only unit slips are caught
    ("Material 7", None, 210.0, False),      # 210 "N/mm²" meant as kN/mm²: a unit slip
    ("Material 7", None, 2.1e9, False),      # the TPa range
    ("Masonry", None, 5000.0, True),         # EN 1996-1-1 3.7.2: E = 1000 fk, fk = 5 MPa (from memory)
    ("AISI 316", None, 193000.0, True),      # type 316: 193 GPa (from memory)
    ("Aluminium", None, 70000.0, True),      # EN 1999-1-1 3.2.5: E = 70,000 MPa (from memory)
    ("Aluminium", None, 210000.0, False),
])
def test_modulus_plausibility_follows_the_category(tmp_model: Any, name: str, category: str | None,
                                                   E_mpa: float, used: bool) -> None:
    mb = ModelBuilder(schema="IFC4", units="mm")
    mat = mb.f.createIfcMaterial(name, None, category)
    mb._material_pset(mat, "Pset_MaterialMechanical", {"YoungModulus": ("IfcModulusOfElasticityMeasure", E_mpa)})
    mb.member("IfcMember", name="M1", profile=rectangle(mb, 100, 100), material=mat, length=2000.0)
    m = read(tmp_model(mb))
    if used:
        assert m["M1"]["E"] == pytest.approx(si(f"{E_mpa} MPa"), rel=1e-12)
        assert not any("plausible" in w for w in m["M1"]["warnings"])
    else:
        assert math.isnan(m["M1"]["E"])
        assert any("outside the plausible range" in w for w in m["M1"]["warnings"])


def test_the_rejection_quotes_the_range_of_the_category(tmp_model: Any) -> None:
    mb = ModelBuilder(schema="IFC4", units="mm")
    mat = mb.f.createIfcMaterial("TIMBER/C24", None, None)
    mb._material_pset(mat, "Pset_MaterialMechanical", {"YoungModulus": ("IfcModulusOfElasticityMeasure", 110.0)})
    mb.member("IfcMember", name="M1", profile=rectangle(mb, 100, 100), material=mat, length=2000.0)
    m = read(tmp_model(mb))
    w = next(w for w in m["M1"]["warnings"] if "plausible" in w)
    assert "for timber (5–25 GPa)" in w and "110 MPa" in w


def test_exclusions_read_the_same_when_the_model_is_shared_out(mixed_ifc2x3: Path, capsys: Any,
                                                              monkeypatch: Any) -> None:
    import json

    import modelcheck.run.split as parallel
    from tests.corpus import run_inprocess

    monkeypatch.setattr(parallel, "MIN_MEMBERS_PER_PART", 2)
    args = ["check", str(mixed_ifc2x3), "--rules", "steel-ec3", "--format", "json", "--no-config"]
    one = run_inprocess(capsys, [*args, "--jobs", "1"], [mixed_ifc2x3])
    two = run_inprocess(capsys, [*args, "--jobs", "2"], [mixed_ifc2x3])
    a, b = json.loads(one.stdout), json.loads(two.stdout)
    a.pop("generated")
    b.pop("generated")
    assert a == b
    assert sum(w.startswith("excluded: ") for w in a["models"][0]["warnings"]) == 3


def test_an_ultimate_strength_in_the_name_never_makes_a_yield_check_pass(tmp_model: Any) -> None:
    """IFC2X3, a material named 'Steel Fu 490 MPa' and no property set: the name states the
    ultimate strength, not Fy, so the yield check has no Fy and the member is unchecked. Read as Fy
    490 MPa, 20 kN on a 20 mm bar (63.7 MPa = 20 kN / (π·10² mm²), hand value) would pass."""
    mb = ModelBuilder(schema="IFC2X3", units="mm")
    mat = mb.f.createIfcMaterial("Steel Fu 490 MPa")
    rod = mb.f.createIfcCircleProfileDef("AREA", "RD20", mb.f.createIfcAxis2Placement2D(
        mb.f.createIfcCartesianPoint((0.0, 0.0)), None), 10.0)
    mb.member("IfcMember", name="H1", tag="H1", profile=rod, material=mat, length=2400.0,
              psets=axial_force(20000.0))
    res = check_model(str(tmp_model(mb)), "steel-asd-us", ForceOptions()).results
    yld = res[res["check"] == "tension-yield"]
    assert len(yld) == 1
    assert yld["status"].tolist() == ["unchecked"]
    assert "Fy" in yld["message"].iloc[0]


@pytest.mark.parametrize(("second", "category", "status"), [
    ("C30/37", "concrete", None),        # reinforced concrete or a filled section: excluded with concrete
    ("GL24h", "timber", None),           # a flitch beam: excluded with timber
    ("EN AW-6061", "unknown", "unchecked"),   # two metals: which carries the force is not said
])
def test_a_member_of_steel_and_another_structural_material_is_never_checked_as_steel(
        tmp_model: Any, second: str, category: str, status: str | None) -> None:
    """A 300 × 300 section whose constituent set lists S355 first and a second structural
    material. Checked as solid S355 it would pass (20 kN / 90,000 mm² = 0.22 MPa, hand value);
    a coat of paint beside the steel is still no second category (tests/test_reader.py)."""
    mb = ModelBuilder(schema="IFC4", units="mm")
    f = mb.f
    steel = mb.material("S355", category="steel", E=210000.0, Fy=355.0, Fu=490.0)
    other = mb.material(second, category=None)
    sel = f.createIfcMaterialConstituentSet("Composite", None, [
        f.createIfcMaterialConstituent("a", None, steel, None, None),
        f.createIfcMaterialConstituent("b", None, other, None, None)])
    sq = f.createIfcRectangleProfileDef("AREA", "300x300", None, 300.0, 300.0)
    el = mb.member("IfcColumn", name="K1", profile=sq, length=3000.0,
                   psets=axial_force(20000.0))
    mb.associate_material([el], sel)
    path = tmp_model(mb)
    m = read(path)["K1"]
    assert m["material_category"] == category
    assert any("several materials of different categories" in w for w in m["warnings"]), m["warnings"]
    checked = check_model(str(path), "steel-asd-us", ForceOptions())
    statuses = set(checked.results.loc[checked.results["global_id"] == el.GlobalId, "status"])
    assert "pass" not in statuses
    if status is None:
        assert statuses == set()
        assert any(w.startswith(f"excluded: {category}") and el.GlobalId in w for w in checked.data.warnings)
    else:
        assert statuses == {status}
