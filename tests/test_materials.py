"""The material library: values against published tables, name matching, file errors."""

from __future__ import annotations

import os
from pathlib import Path

import pytest

from modelcheck.common.errors import RuleSetError
from modelcheck.materials.library import (
    load_library,
    match_candidates,
    match_material,
    normalise,
    plausible_range,
)
from tests.helpers import si

# ------------------------------------------------------------------ published values

@pytest.mark.parametrize(("name", "grade", "fy", "fu"), [
    # AISC Steel Construction Manual 15th ed. Table 2-4 / ASTM A36 (from memory)
    ("ASTM A36", "ASTM A36", "36 ksi", "58 ksi"),
    # ASTM A572 Table 2, Grade 50 (from memory)
    ("A572 Gr 50", "ASTM A572 Gr 50", "50 ksi", "65 ksi"),
    # ASTM A992 tensile requirements (from memory)
    ("A992", "ASTM A992", "50 ksi", "65 ksi"),
    # ASTM F1554 Table 2, Grade 36 (from memory)
    ("F1554 Gr 36", "ASTM F1554 Gr 36", "36 ksi", "58 ksi"),
    # fy: EN 1993-1-1 Table 3.1, t <= 40 mm; fu: EN 10025-2 Table 7, the minimum of Rm for
    # 3 mm <= t <= 100 mm: S235 360 to 510, S275 410 to 560, S355 470 to 630 MPa (from memory)
    ("S235", "EN 10025 S235", "235 MPa", "360 MPa"),
    ("S275", "EN 10025 S275", "275 MPa", "410 MPa"),
    ("S355", "EN 10025 S355", "355 MPa", "470 MPa"),
    # ASTM A500 Tables 1 and 2 / AISC Manual Table 2-4, square and rectangular HSS (from memory)
    ("ASTM A500 Grade B", "ASTM A500 Gr B", "46 ksi", "58 ksi"),
    ("A500 Gr. C", "ASTM A500 Gr C", "50 ksi", "62 ksi"),
    # ASTM A1085 / AISC Manual Table 2-4 (from memory)
    ("A1085", "ASTM A1085 Gr A", "50 ksi", "65 ksi"),
    # ASTM A53 Table 2, Grade B pipe / AISC Manual Table 2-4 (from memory)
    ("A53 Gr B", "ASTM A53 Gr B", "35 ksi", "60 ksi"),
    # ASTM A240 Table 2, S30400 / S31600: 30 ksi [205 MPa], 75 ksi [515 MPa] (from memory)
    ("AISI 304", "ASTM A240 Type 304", "205 MPa", "515 MPa"),
    ("316", "ASTM A240 Type 316", "205 MPa", "515 MPa"),
    # EN 1993-1-4 Table 2.1, bars, rods and sections (from memory)
    ("1.4301", "EN 10088 1.4301", "190 MPa", "500 MPa"),
    ("1.4401", "EN 10088 1.4401", "200 MPa", "500 MPa"),
    # ASTM B308 / Aluminum Design Manual Table A.3.4, 6061-T6: Fty 35 ksi, Ftu 38 ksi (from memory)
    ("6061-T6", "6061-T6", "35 ksi", "38 ksi"),
])
def test_grade_strengths_match_published_tables(name: str, grade: str, fy: str, fu: str) -> None:
    m = match_material(name)
    assert m is not None and m.grade == grade
    assert m.Fy == pytest.approx(si(fy), rel=1e-9)
    assert m.Fu == pytest.approx(si(fu), rel=1e-9)


@pytest.mark.parametrize(("name", "fy_round"), [
    # ASTM A500 Table 1 / AISC Manual Table 2-4, round HSS: Grade B 42 ksi, Grade C 46 ksi (from memory)
    ("Metal - Steel - ASTM A500, Grade B - Round", "42 ksi"),
    ("A500-C", "46 ksi"),
])
def test_a500_round_tubing_has_its_own_yield_strength(name: str, fy_round: str) -> None:
    m = match_material(name)
    assert m is not None
    ((q, v, source, basis),) = m.round_values
    assert q == "Fy" and v == pytest.approx(si(fy_round), rel=1e-9) and v < m.Fy
    assert source == f"rulesets/materials.toml: {m.grade} (round)" and "round" in basis


def test_a500_without_a_grade_takes_nothing_from_the_library() -> None:
    # A500 has several grades with different strengths (ASTM A500 Tables 1 and 2): none is guessed
    assert match_material("ASTM A500") is None


def test_a307_has_tensile_strength_but_no_yield() -> None:
    m = match_material("ASTM A307 Gr A")
    assert m is not None
    # ASTM A307 Grade A: 60 ksi minimum tensile strength, no yield specified (from memory)
    assert m.Fu == pytest.approx(si("60 ksi"), rel=1e-9)
    assert m.Fy is None and m.Fy_source is None


@pytest.mark.parametrize(("name", "modulus", "rel"), [
    ("A36", "200 GPa", 0.001),          # AISC 360-16: E = 29,000 ksi (200 000 MPa) (from memory)
    ("S355", "210 GPa", 1e-9),          # EN 1993-1-1 3.2.6: E = 210 000 N/mm² (from memory)
    ("1.4401", "200 GPa", 1e-9),        # EN 1993-1-4 2.1.3: E = 200 000 N/mm² (from memory)
    ("6061-T6", "69.6 GPa", 0.002),     # Aluminum Design Manual: E = 10,100 ksi ≈ 69.6 GPa (from memory)
    ("EN AW-6061 T6", "70 GPa", 1e-9),  # EN 1999-1-1 3.2.5: E = 70 000 N/mm² (from memory)
])
def test_modulus_of_elasticity(name: str, modulus: str, rel: float) -> None:
    m = match_material(name)
    assert m is not None and m.E == pytest.approx(si(modulus), rel=rel)


def test_thermal_expansion_per_fahrenheit_step_is_converted_as_a_step() -> None:
    a36 = match_material("A36")
    s355 = match_material("S355")
    assert a36 is not None and s355 is not None
    # AISC Manual Part 2: 6.5e-6 per °F = 11.7e-6 per K (a 1 °F step is 5/9 K) (from memory)
    assert a36.alpha == pytest.approx(6.5e-6 * 9 / 5, rel=1e-9)
    # EN 1993-1-1 3.2.6: α = 12e-6 per K (from memory)
    assert s355.alpha == pytest.approx(12e-6, rel=1e-9)


def test_every_value_names_its_source_and_the_library() -> None:
    lib = load_library()
    required = {"ASTM A36", "ASTM A572 Gr 50", "ASTM A992", "ASTM A307 Gr A", "ASTM F1554 Gr 36",
                "EN 10025 S235", "EN 10025 S275", "EN 10025 S355", "ASTM A240 Type 304",
                "ASTM A240 Type 316", "6061-T6"}
    assert required <= {m.grade for m in lib.materials}
    for m in lib.materials:
        assert m.category in ("steel", "stainless", "aluminium")
        for key in ("E", "Fy", "Fu", "alpha"):
            if m.value(key) is None:
                continue
            assert m.source(key) == f"rulesets/materials.toml: {m.grade}"
            assert m.basis(key) and any(s in m.basis(key) for s in ("ASTM", "EN ", "AISC", "AISI", "Aluminum"))


def test_library_values_lie_in_their_categorys_plausible_range() -> None:
    # common practice: a shipped grade must not be flagged by the library's own screening bounds
    for m in load_library().materials:
        ranges = plausible_range(m.category)
        for key, (lo, hi) in ranges.items():
            v = m.value(key)
            if v is not None:
                assert lo <= v <= hi, (m.grade, key, v)


# ------------------------------------------------------------------ plausibility bounds

def test_plausible_steel_modulus_rejects_unit_mistakes() -> None:
    lo, hi = plausible_range("steel")["E"]
    assert lo <= si("29000 ksi") <= hi         # AISC 360-16: 29,000 ksi (from memory)
    assert not lo <= si("29 psi") <= hi        # the unit slip issue 2 names
    assert not lo <= si("29000000 ksi") <= hi  # psi value written in a ksi file
    assert not lo <= si("210 MPa") <= hi       # GPa value written in an MPa file


def test_plausible_range_categories() -> None:
    alu = plausible_range("Aluminum")
    steel = plausible_range("Structural Steel")
    unknown = plausible_range(None)
    assert set(alu) == set(steel) == set(unknown) == {"E", "Fy", "Fu", "alpha", "density"}
    # aluminium alloys: E ≈ 70 GPa, steel ≈ 200 GPa (EN 1999-1-1 3.2.5, EN 1993-1-1 3.2.6) (from memory)
    assert alu["E"][0] <= 70e9 <= alu["E"][1] and not steel["E"][0] <= 70e9 <= steel["E"][1]
    assert plausible_range("concrete")["E"] != unknown["E"]      # concrete has its own modulus range
    assert plausible_range("concrete")["Fy"] == unknown["Fy"]    # and no yield strength: the fallback
    assert unknown["E"][0] <= steel["E"][0] and unknown["E"][1] >= steel["E"][1]


# ------------------------------------------------------------------ matching

def test_normalise() -> None:
    assert normalise("ASTM A572 Gr.50") == "astm a572 gr 50"
    assert normalise("  EN 1.4301 ") == "en 1 4301"


@pytest.mark.parametrize(("name", "grade"), [
    ("s355jr", "EN 10025 S355"),
    ("Steel S355J2+N (EN 10025-2)", "EN 10025 S355"),
    ("ASTM A36/A36M", "ASTM A36"),
    ("A572-50", "ASTM A572 Gr 50"),
    ("ASTM A572 Grade 50", "ASTM A572 Gr 50"),
    ("X5CrNi18-10", "EN 10088 1.4301"),
    ("AISI 304 / 1.4301", "ASTM A240 Type 304"),   # longest pattern wins: "aisi 304" > "1 4301"
    ("EN AW-6061 T6", "EN AW-6061 T6"),            # longer than the ASTM "6061-T6" pattern
    ("Fe 510", "EN 10025 S355"),
])
def test_matches(name: str, grade: str) -> None:
    m = match_material(name)
    assert m is not None and m.grade == grade


@pytest.mark.parametrize("name", [
    "S2355", "XS235", "304L", "316L", "A572", "A3600", "Steel", "", None, "concrete C30/37",
    "S355 or S275",   # two grades equally well: ambiguous, nothing taken
])
def test_no_match_or_ambiguous(name: str | None) -> None:
    assert match_material(name) is None


def test_ambiguous_names_list_both_candidates() -> None:
    grades = [m.grade for m, _ in match_candidates("S355 or S275")]
    assert sorted(grades) == ["EN 10025 S275", "EN 10025 S355"]


def test_category_filters_candidates() -> None:
    assert match_material("304", "aluminium") is None
    m = match_material("304", "Steel")     # stainless is a steel
    assert m is not None and m.category == "stainless"
    m = match_material("S355", "Stainless Steel")
    assert m is None


def test_results_are_frozen() -> None:
    m = match_material("S235")
    assert m is not None
    with pytest.raises(AttributeError):
        m.Fy = 1.0  # type: ignore[misc]


# ------------------------------------------------------------------ file errors

GOOD = """
[plausible.unknown]
E = ["40 GPa", "250 GPa"]
Fy = ["20 MPa", "1800 MPa"]
Fu = ["50 MPa", "2100 MPa"]
alpha = ["5e-6 1/K", "30e-6 1/K"]

[material."Test S1"]
category = "steel"
standard = "none"
names = ["S1"]
E = { value = "210000 MPa", source = "EN 1993-1-1 3.2.6" }
Fy = { value = "235 MPa", source = "EN 1993-1-1 Table 3.1" }
"""


def write(tmp_path: Path, text: str) -> Path:
    p = tmp_path / "lib.toml"
    p.write_text(text, encoding="utf-8")
    return p


def test_custom_library_file(tmp_path: Path) -> None:
    p = write(tmp_path, GOOD)
    m = match_material("grade s1", path=p)
    assert m is not None and m.Fy == 235e6 and m.Fu is None
    assert m.Fy_source == f"{p}: Test S1"


@pytest.mark.parametrize(("change", "where"), [
    (('Fy = { value = "235 MPa", source = "EN 1993-1-1 Table 3.1" }', 'Fy = { value = "235", source = "x" }'),
     "material.'Test S1'.Fy.value"),
    (('Fy = { value = "235 MPa", source = "EN 1993-1-1 Table 3.1" }', 'Fy = { value = "235 mm", source = "x" }'),
     "material.'Test S1'.Fy.value"),
    (('Fy = { value = "235 MPa", source = "EN 1993-1-1 Table 3.1" }', 'Fy = { value = "235 MPa" }'),
     "material.'Test S1'.Fy"),
    (('Fy = { value = "235 MPa", source = "EN 1993-1-1 Table 3.1" }', 'Fy = { value = "235 bananas", source = "x" }'),
     "material.'Test S1'.Fy.value"),
    (('category = "steel"', 'category = "wood"'), "material.'Test S1'.category"),
    (('names = ["S1"]', 'names = "S1"'), "material.'Test S1'.names"),
    (('standard = "none"', 'standard = "none"\nstrength = 3'), "material.'Test S1'.strength"),
    (('alpha = ["5e-6 1/K", "30e-6 1/K"]', 'alpha = ["5e-6 MPa", "30e-6 1/K"]'), "plausible.unknown.alpha"),
    (('E = { value = "210000 MPa", source = "EN 1993-1-1 3.2.6" }', ''), "material.'Test S1'.E"),
])
def test_library_errors_name_file_and_key(tmp_path: Path, change: tuple[str, str], where: str) -> None:
    assert change[0] in GOOD
    p = write(tmp_path, GOOD.replace(change[0], change[1]))
    with pytest.raises(RuleSetError) as exc:
        load_library(p)
    assert str(p) in str(exc.value) and where in str(exc.value)


@pytest.mark.parametrize(("fy", "fu", "refused"), [
    ("355 MPa", "270 MPa", True),    # the two swapped (EN 10025-2 S275: fy 275, fu 410; common practice)
    ("50 ksi", "36 ksi", True),      # in ksi too, compared in SI
    ("355 MPa", "355 MPa", False),   # equal: allowed (a tensile strength is at least the yield strength)
    ("345 MPa", "65 ksi", False),    # mixed units, 448 MPa (pint) above 345 MPa
    ("345 MPa", "50 ksi", False),    # 344.7 MPa (pint): one strength, rounded in another unit system
    ("345 MPa", "340 MPa", True),    # 1.4 % below: not a rounding
])
def test_a_tensile_strength_below_the_yield_strength_is_refused(tmp_path: Path, fy: str, fu: str,
                                                                 refused: bool) -> None:
    # the tensile strength is the largest stress of the tensile test (ISO 6892-1, Rm; common practice),
    # so a grade whose Fu is below its Fy is a typo in the file
    text = GOOD.replace('"235 MPa"', f'"{fy}"') + f'Fu = {{ value = "{fu}", source = "x" }}\n'
    p = write(tmp_path, text)
    if not refused:
        assert load_library(p).materials[0].Fu is not None
        return
    with pytest.raises(RuleSetError) as exc:
        load_library(p)
    assert str(exc.value) == (f"{p}:material.'Test S1'.Fu.value: tensile strength {fu!r} is below the yield "
                              f"strength Fy {fy!r}; are the two swapped?")


def test_a_round_yield_strength_is_checked_like_the_yield_strength(tmp_path: Path) -> None:
    base = GOOD + 'Fu = { value = "360 MPa", source = "x" }\n'
    p = write(tmp_path, base + 'Fy_round = { value = "215 MPa", source = "x" }\n')
    grade = load_library(p).materials[0]
    ((q, v, source, _),) = grade.round_values
    assert (q, v, source) == ("Fy", pytest.approx(215e6), f"{grade.Fy_source} (round)")
    p = write(tmp_path, base + 'Fy_round = { value = "400 MPa", source = "x" }\n')
    with pytest.raises(RuleSetError) as exc:
        load_library(p)
    assert str(exc.value) == (f"{p}:material.'Test S1'.Fu.value: tensile strength '360 MPa' is below the yield "
                              "strength Fy_round '400 MPa'; are the two swapped?")
    p = write(tmp_path, GOOD.replace('Fy = { value = "235 MPa", source = "EN 1993-1-1 Table 3.1" }\n', "")
              + 'Fy_round = { value = "215 MPa", source = "x" }\n')
    with pytest.raises(RuleSetError, match=r"Fy_round: given without Fy"):
        load_library(p)
    p = write(tmp_path, base + 'Fy_round = { value = "215 kN", source = "x" }\n')
    with pytest.raises(RuleSetError, match=r"Fy_round\.value"):
        load_library(p)


def test_duplicate_pattern_across_grades_is_refused(tmp_path: Path) -> None:
    extra = GOOD + '\n[material."Test S2"]\ncategory = "steel"\nstandard = "x"\nnames = ["s1"]\n' \
        'E = { value = "200 GPa", source = "x" }\n'
    p = write(tmp_path, extra)
    with pytest.raises(RuleSetError, match="also a pattern of grade 'Test S1'"):
        load_library(p)


def test_toml_syntax_error_names_line(tmp_path: Path) -> None:
    text = GOOD + "\n[material.broken\n"
    p = write(tmp_path, text)
    with pytest.raises(RuleSetError) as exc:
        load_library(p)
    line = text.splitlines().index("[material.broken") + 1
    assert str(p) in str(exc.value) and f"line {line}:" in str(exc.value)


def test_missing_file(tmp_path: Path) -> None:
    with pytest.raises(RuleSetError, match="cannot read"):
        load_library(tmp_path / "nope.toml")


def test_edited_library_file_is_read_anew(tmp_path: Path) -> None:
    p = write(tmp_path, GOOD)
    first = match_material("S1", path=p)
    p.write_text(GOOD.replace('"235 MPa"', '"275 MPa"'), encoding="utf-8")
    st = p.stat()
    os.utime(p, ns=(st.st_atime_ns, st.st_mtime_ns + 1_000_000_000))
    second = match_material("S1", path=p)
    assert first is not None and second is not None
    assert (first.Fy, second.Fy) == (235e6, 275e6)   # the values written in the two files
