"""A value the model gives but the reader does not use is reported as such: the missing input says
what was found, where, and why it was not used (never "no modulus ... in the material properties"
when the properties hold one), and each member's warnings reach every report of `check`.

Plausible ranges are the library's screening bounds (modelcheck/rulesets/materials.toml, common
practice): steel E 150–230 GPa.
"""

from __future__ import annotations

import json
import math
import re
from html.parser import HTMLParser
from pathlib import Path

import jsonschema
import pandas as pd
import pytest

from modelcheck.cli import main
from modelcheck.core.check import member_warnings, merge_member_warnings
from modelcheck.testing.author import ModelBuilder
from tests.helpers import KN, REPO, axial_force, round_bar

GENERIC_E = "E: no modulus of elasticity in the material properties or the material library"


def _check_json(capsys, tmp_path: Path, mb: ModelBuilder, rules: str = "steel-asd-us") -> dict:
    model, out = tmp_path / "m.ifc", tmp_path / "r.json"
    mb.write(str(model))
    code = main(["check", str(model), "--no-config", "--jobs", "1", "--rules", rules, "--format", "json",
                 "--output", str(out)])
    capsys.readouterr()
    assert code in (0, 1)
    return json.loads(out.read_text(encoding="utf-8"))


def _missing_of(doc: dict, tag: str, check: str) -> list[str]:
    rows = [r for r in doc["results"] if r["tag"] == tag and r["check"] == check]
    assert rows, (tag, check)
    assert {r["status"] for r in rows} == {"unchecked"}
    return rows[0]["missing"]


def test_an_implausible_modulus_is_named_with_its_value_source_and_range(capsys, tmp_path):
    mb = ModelBuilder(schema="IFC4", units="mm")
    # 210 written where the file's modulus unit is N/mm²: the GPa number slipped in (210 MPa)
    steel = mb.material("S355 slip", category="steel", E=210.0, Fy=355.0, Fu=490.0)
    mb.member(name="rod", tag="R1", profile=round_bar(mb, 20.0), material=steel, length=2000.0, psets=axial_force(20.0 * KN))
    missing = _missing_of(_check_json(capsys, tmp_path, mb), "R1", "elongation")
    # the value as the file writes it, in its own unit, then in the range's terms
    assert missing == ["E: 210 N·mm^-2 (= 210 MPa) in Pset_MaterialMechanical.YoungModulus is outside the "
                       "plausible range for steel (150–230 GPa); not used"]


def test_an_implausible_modulus_in_a_us_file_is_quoted_as_the_file_writes_it(capsys, tmp_path):
    mb = ModelBuilder(schema="IFC2X3", units="inch-kip")
    # 29,000,000 in a ksi file: the psi value (29,000 ksi, AISC 360-16 Symbols, from memory) slipped in
    steel = mb.material("Steel", category="steel", E=29.0e6, Fy=36.0, Fu=58.0)
    mb.member(name="rod", tag="R1", profile=round_bar(mb, 0.75, "RD20"), material=steel, length=120.0,
              psets=axial_force(5.0))
    (text,) = _missing_of(_check_json(capsys, tmp_path, mb), "R1", "elongation")
    # 29,000,000 ksi = 1.99948e8 MPa (pint: 1 ksi = 6.894757 MPa)
    assert text.startswith("E: 29000000 KIP·INCH^-2 (= 1.99948e+08 MPa) in IfcMechanicalSteelMaterialProperties #")
    # IFC2X3 materials carry no category: the name "Steel" says steel (rulesets/material-names.toml)
    assert text.endswith(".YoungModulus is outside the plausible range for steel (150–230 GPa); not used")


def test_a_modulus_without_a_unit_says_so(capsys, tmp_path):
    mb = ModelBuilder(schema="IFC4", units="mm")
    assignment = mb.project.UnitsInContext   # the file states no unit for a modulus of elasticity
    assignment.Units = [u for u in assignment.Units if u.UnitType != "MODULUSOFELASTICITYUNIT"]
    steel = mb.material("House steel 7", category="steel", E=210000.0, Fy=355.0, Fu=490.0)   # no library grade
    mb.member(name="rod", tag="R1", profile=round_bar(mb, 20.0), material=steel, length=2000.0, psets=axial_force(20.0 * KN))
    (text,) = _missing_of(_check_json(capsys, tmp_path, mb), "R1", "elongation")
    assert text.startswith("E: 210000 in Pset_MaterialMechanical.YoungModulus has no unit (")
    assert "MODULUSOFELASTICITYUNIT" in text and text.endswith("; not used")


def test_a_modulus_the_model_does_not_give_keeps_the_plain_reason(capsys, tmp_path):
    mb = ModelBuilder(schema="IFC4", units="mm")
    steel = mb.material("House steel 7", category="steel", Fy=355.0, Fu=490.0)   # no E, no library grade
    mb.member(name="rod", tag="R1", profile=round_bar(mb, 20.0), material=steel, length=2000.0, psets=axial_force(20.0 * KN))
    assert _missing_of(_check_json(capsys, tmp_path, mb), "R1", "elongation") == [GENERIC_E]


@pytest.mark.parametrize(("schema", "units", "fy", "fu", "shown_fy", "shown_fu"), [
    # values swapped: 490 and 355 MPa (EN 10025-2 S355: fy 355, fu 470–630 MPa; from memory)
    ("IFC4", "mm", 490.0, 355.0, "490 MPa", "355 MPa"),
    # in ksi, swapped: 65 and 50 (ASTM A992: Fy 50 ksi, Fu 65 ksi; from memory); 1 ksi = 6.894757 MPa (pint)
    ("IFC2X3", "inch-kip", 65.0, 50.0, "65 KSI (= 448.159 MPa)", "50 KSI (= 344.738 MPa)"),
])
def test_a_tensile_strength_below_the_yield_strength_uses_neither(capsys, tmp_path, schema, units, fy, fu,
                                                                   shown_fy, shown_fu):
    # a tensile strength is never below the yield strength (the largest stress of the tensile test,
    # ISO 6892-1 Rm; common practice): one of the two is wrong, and nothing says which
    mb = ModelBuilder(schema=schema, units=units)
    e = 210000.0 if units == "mm" else 29000.0
    steel = mb.material("House steel 7", category="steel", E=e, Fy=fy, Fu=fu)   # no library grade
    if units == "mm":
        mb.member(name="rod", tag="R1", profile=round_bar(mb, 20.0), material=steel, length=2000.0,
                  psets=axial_force(20.0 * KN))
    else:
        mb.member(name="rod", tag="R1", profile=round_bar(mb, 0.75, "RD20"), material=steel, length=120.0,
                  psets=axial_force(5.0))
    doc = _check_json(capsys, tmp_path, mb)
    (fy_text,) = _missing_of(doc, "R1", "tension-yield")
    assert fy_text.startswith(f"Fy: {shown_fy} in ") and f"is above the tensile strength Fu, {shown_fu} in " in fy_text
    assert fy_text.endswith("one of them is wrong (swapped?); not used")
    (fu_text,) = _missing_of(doc, "R1", "threaded-rod")
    assert fu_text.startswith(f"Fu: {shown_fu} in ") and f"is below the yield strength Fy, {shown_fy} in " in fu_text
    # the modulus is not in question: the elongation is still checked
    assert {r["status"] for r in doc["results"] if r["check"] == "elongation"} <= {"pass", "fail"}
    (warnings,) = doc["models"][0]["member_warnings"].values()
    assert [w.split(":")[0] for w in warnings] == ["material 'House steel 7', Fy", "material 'House steel 7', Fu"]


def test_a_tensile_strength_equal_to_the_yield_strength_but_for_rounding_is_used(capsys, tmp_path):
    # Fu 344 MPa beside Fy 345 MPa: 0.3 % below, the rounding of one value converted between unit
    # systems (50 ksi = 344.7 MPa, pint), not a contradiction
    mb = ModelBuilder(schema="IFC4", units="mm")
    steel = mb.material("House steel 7", category="steel", E=210000.0, Fy=345.0, Fu=344.0)
    mb.member(name="rod", tag="R1", profile=round_bar(mb, 20.0), material=steel, length=2000.0,
              psets=axial_force(20.0 * KN))
    doc = _check_json(capsys, tmp_path, mb)
    assert {r["status"] for r in doc["results"]} == {"pass"}
    assert doc["models"][0]["member_warnings"] == {}


def test_a_yield_strength_from_the_model_above_the_librarys_tensile_strength_uses_neither(capsys, tmp_path):
    # the name says S275 (the library's fu 410 MPa, EN 10025-2 for 3 <= t <= 100 mm, checked against that table in
    # tests/test_materials.py), the model says fy 460 MPa:
    # the material is not what its name says, and neither strength is used
    mb = ModelBuilder(schema="IFC4", units="mm")
    steel = mb.material("S275", category="steel", E=210000.0, Fy=460.0)
    mb.member(name="rod", tag="R1", profile=round_bar(mb, 20.0), material=steel, length=2000.0,
              psets=axial_force(20.0 * KN))
    doc = _check_json(capsys, tmp_path, mb)
    (fy_text,) = _missing_of(doc, "R1", "tension-yield")
    assert fy_text.startswith("Fy: 460 MPa in ") and "is above the tensile strength Fu, 410 MPa in " in fy_text
    assert "S275" in fy_text


def test_an_implausible_section_is_named_for_each_section_value(capsys, tmp_path):
    mb = ModelBuilder(schema="IFC4", units="mm")
    steel = mb.material("S355", category="steel", E=210000.0, Fy=355.0, Fu=490.0)
    plate = mb.f.createIfcRectangleProfileDef("AREA", "PL2500x10", None, 2500.0, 10.0)   # 2.5 m wide
    mb.member(name="plate", tag="P1", profile=plate, material=steel, length=2000.0, psets=axial_force(20.0 * KN))
    doc = _check_json(capsys, tmp_path, mb)
    (text,) = _missing_of(doc, "P1", "tension-yield")
    assert text.startswith("A: section from IfcRectangleProfileDef #")
    assert "not plausible for an axial member (over 2 m); not used" in text
    (text,) = _missing_of(doc, "P1", "slenderness-tension")   # L/r: the radius of gyration is the section's too
    assert text.startswith("r: section from IfcRectangleProfileDef #") and text.endswith("; not used")


def test_an_implausible_length_is_named(capsys, tmp_path):
    mb = ModelBuilder(schema="IFC4", units="mm")
    steel = mb.material("S355", category="steel", E=210000.0, Fy=355.0, Fu=490.0)
    typ = mb.member_type(name="Rod type", profile=round_bar(mb, 20.0), material=steel)
    # the only length is a quantity of 500 m: no rod of these kinds is that long
    mb.member(name="rod", tag="R1", member_type=typ, length=None, body=None, axis=False, psets=axial_force(20.0 * KN),
              qto={"Length": 500_000.0})
    (text,) = _missing_of(_check_json(capsys, tmp_path, mb), "R1", "elongation")
    assert text == ("L: 500 m from Qto_MemberBaseQuantities.Length [mm] is not plausible for a member "
                    "(outside 1 mm – 200 m); not used")


# --------------------------------------------------------------------- member warnings in every report
def _warned_model() -> ModelBuilder:
    """R1 fails tension (100 kN on πr² = 314.16 mm², r = 10 mm: 318 MPa against 355/1.67 = 213 MPa,
    AISC 360-16 D2(a) ASD) and its area quantity disagrees with the profile by −32 % (smaller,
    so the profile's outline allows it); R2's modulus is implausible (unchecked elongation); R3
    has no warning."""
    mb = ModelBuilder(schema="IFC4", units="mm")
    steel = mb.material("S355", category="steel", E=210000.0, Fy=355.0, Fu=490.0)
    slip = mb.material("S355 slip", category="steel", E=210.0, Fy=355.0, Fu=490.0)
    mb.member(name="rod one", tag="R1", profile=round_bar(mb, 20.0), material=steel, length=2000.0, psets=axial_force(100.0 * KN),
              qto={"CrossSectionArea": 214.0})
    mb.member(name="rod two", tag="R2", profile=round_bar(mb, 20.0), material=slip, length=2000.0, psets=axial_force(20.0 * KN))
    mb.member(name="rod three", tag="R3", profile=round_bar(mb, 20.0), material=steel, length=2000.0, psets=axial_force(20.0 * KN))
    return mb


class _Rows(HTMLParser):
    """The text of each table row of an HTML document, cells joined by ' | '."""

    def __init__(self) -> None:
        super().__init__()
        self.rows: list[str] = []
        self._row: list[str] | None = None

    def handle_starttag(self, tag, attrs):
        if tag == "tr":
            self._row = []
        elif tag in ("td", "th") and self._row is not None:
            self._row.append("")

    def handle_endtag(self, tag):
        if tag == "tr" and self._row is not None:
            self.rows.append(" | ".join(self._row))
            self._row = None

    def handle_data(self, data):
        if self._row:
            self._row[-1] += data


@pytest.fixture(scope="module")
def warned_run(tmp_path_factory):
    folder = tmp_path_factory.mktemp("warned")
    model = folder / "warned.ifc"
    _warned_model().write(str(model))
    out = folder / "reports"
    out.mkdir()
    import contextlib
    import io

    stdout = io.StringIO()
    with contextlib.redirect_stdout(stdout):
        code = main(["check", str(model), "--no-config", "--jobs", "1", "--format", "console,json,csv,html",
                     "--output", str(out)])
    assert code == 1   # R1 fails
    doc = json.loads((out / "modelcheck-report.json").read_text(encoding="utf-8"))
    gid = {r["tag"]: r["global_id"] for r in doc["results"]}
    return {"console": stdout.getvalue(), "doc": doc, "gid": gid, "out": out}


def test_member_warnings_in_the_json_report(warned_run):
    doc, gid = warned_run["doc"], warned_run["gid"]
    schema = json.loads((REPO / "modelcheck" / "schemas" / "check.schema.json").read_text())
    jsonschema.validate(doc, schema)
    mw = doc["models"][0]["member_warnings"]
    assert set(mw) == {gid["R1"], gid["R2"]}   # R3 has none: left out
    (area,) = mw[gid["R1"]]
    # −31.9 % = 214 / (π · 10²) − 1 (geometry)
    assert area.startswith("inconsistent area:") and "214 mm²" in area and "-31.9%" in area
    assert math.isclose(214 / (math.pi * 100) - 1, -0.319, abs_tol=5e-4)
    assert mw[gid["R2"]] == ["material 'S355 slip', E: 210 N·mm^-2 (= 210 MPa) in Pset_MaterialMechanical.YoungModulus "
                             "is outside the plausible range for steel (150–230 GPa); not used"]


def test_member_warnings_in_the_csv_report(warned_run):
    df = pd.read_csv(warned_run["out"] / "modelcheck-report.csv", keep_default_na=False)
    by_tag = df.groupby("tag")["warnings"].agg(set)
    assert len(by_tag["R1"]) == 1 and next(iter(by_tag["R1"])).startswith("inconsistent area:")
    assert all("plausible range" in w for w in by_tag["R2"])
    assert by_tag["R3"] == {""}


def test_member_warnings_listed_in_the_html_tables(warned_run):
    parser = _Rows()
    parser.feed((warned_run["out"] / "modelcheck-report.html").read_text(encoding="utf-8"))
    gid = warned_run["gid"]
    failing = [r for r in parser.rows if gid["R1"] in r and "tension-yield" in r]
    assert failing and all("inconsistent area:" in r and "-31.9%" in r for r in failing)
    unchecked = [r for r in parser.rows if gid["R2"] in r and "elongation" in r]
    assert unchecked and "outside the plausible range for steel (150–230 GPa); not used" in unchecked[0]
    assert any(h.startswith("GlobalId") and "Member warnings" in h for h in parser.rows)


def test_member_warnings_counted_on_the_console_with_the_first(warned_run):
    text = warned_run["console"]
    assert "2 member warnings on 2 members:" in text
    # each named by its tag, its warning beside it (wrapped to the console's width)
    assert re.search(r"\bR1:\s+inconsistent area:", text), text
    assert re.search(r"\bR2:\s+material 'S355 slip', E: 210", text), text


def test_member_warnings_of_parts_merge_to_those_of_the_whole():
    # a model shared out among processes: each part's warnings, merged, are the whole model's
    members = pd.DataFrame({"global_id": ["B", "A", "C", "A"],
                            "warnings": [["w1"], [], ["w2", "w3"], ["w4", "w2"]]})
    whole = member_warnings(members)
    assert whole == {"A": ["w4", "w2"], "B": ["w1"], "C": ["w2", "w3"]}
    assert list(whole) == ["A", "B", "C"]   # by GlobalId, whatever the order of the rows
    parts = [member_warnings(members.iloc[:2]), member_warnings(members.iloc[2:])]
    assert merge_member_warnings(parts) == whole


def test_a_force_property_without_a_unit_is_named_where_the_force_is_missing(capsys, tmp_path):
    mb = ModelBuilder(schema="IFC4", units="mm", force_unit=False)   # the file assigns no FORCEUNIT
    steel = mb.material("S355", category="steel", E=210000.0, Fy=355.0, Fu=490.0)
    mb.member(name="rod", tag="R1", profile=round_bar(mb, 20.0), material=steel, length=2000.0, psets=axial_force(20.0 * KN))
    mb.member(name="rod without force", tag="R2", profile=round_bar(mb, 20.0), material=steel, length=2000.0)
    doc = _check_json(capsys, tmp_path, mb)
    (text,) = _missing_of(doc, "R1", "tension-yield")
    assert text.startswith("P: MC_MemberForces.AxialForce") and "no FORCEUNIT" in text
    assert text.endswith("no force taken (the unit is never assumed)")
    # a member whose model gives no force keeps the plain reason
    assert _missing_of(doc, "R2", "tension-yield") == [
        "P: no axial force from load tables, model properties or IFC analysis results"]


def test_a_value_the_library_stands_in_for_says_so(capsys, tmp_path):
    # E without a unit the file states: not used, and the grade the name gives (S355) has E in the
    # library (210 GPa, EN 1993-1-1 3.2.6; checked against it in tests/test_materials.py): the
    # warning says which value is used instead, not only "not used"
    mb = ModelBuilder(schema="IFC4", units="mm")
    assignment = mb.project.UnitsInContext
    assignment.Units = [u for u in assignment.Units if u.UnitType != "MODULUSOFELASTICITYUNIT"]
    steel = mb.material("S355", category="steel", E=210000.0, Fy=355.0, Fu=490.0)
    mb.member(name="rod", tag="R1", profile=round_bar(mb, 20.0), material=steel, length=2000.0,
              psets=axial_force(20.0 * KN))
    doc = _check_json(capsys, tmp_path, mb)
    assert {r["status"] for r in doc["results"] if r["check"] == "elongation"} == {"pass"}
    (warnings,) = doc["models"][0]["member_warnings"].values()
    (e_text,) = [w for w in warnings if w.startswith("material 'S355', E: ")]
    assert "has no unit" in e_text
    assert e_text.endswith("; not used; the material library's value for EN 10025 S355, 210000 MPa, is used instead")
