"""Material category, grade and stated strength read from names as authoring and analysis tools
write them (rulesets/material-names.toml), and the pattern file's own errors."""

from __future__ import annotations

from pathlib import Path

import pytest

from modelcheck.common.errors import RuleSetError
from modelcheck.materials.names import category_of_word, load_patterns, read_name
from tests.helpers import si

# (name as a model writes it, expected category, expected grade, pattern that decides the category)
# The names are invented in the styles real exports use: a category word with separators, a grade
# designation alone, both, capitals or not, '/', '-', '_' and ',' between. What a designation
# means is the designation standard named beside it (common practice of naming materials).
NAMES = [
    # steel: EN 10027-1 names (S + minimum yield strength in MPa), EN 10025 products
    ("S275", "steel", "S275", "en-steel-grade"),
    ("S355J2H", "steel", "S355", "en-steel-grade"),
    ("EN 10025 S235JR", "steel", "S235", "en-steel-grade"),
    ("s355jr", "steel", "S355", "en-steel-grade"),
    ("STEEL/S355", "steel", "S355", "steel-word"),
    ("Steel_S460NL", "steel", "S460", "steel-word"),
    ("S420M", "steel", "S420", "en-steel-grade"),
    ("Stahl S235", "steel", "S235", "steel-word"),
    ("Acier S275", "steel", "S275", "steel-word"),
    ("Fe 360", "steel", "Fe 360", "old-en-steel-grade"),
    ("STEEL, S355K2+N", "steel", "S355", "steel-word"),
    # steel: ASTM designations (ASTM A6 family) and US grade numbers
    ("ASTM A36", "steel", "ASTM A36", "astm-steel-designation"),
    ("A992Fy50", "steel", "ASTM A992", "astm-steel-designation"),
    ("A572 Gr 65", "steel", "ASTM A572", "astm-steel-designation"),
    ("A500 Gr.B", "steel", "ASTM A500", "astm-steel-designation"),
    ("ASTM A53 Grade B", "steel", "ASTM A53", "astm-steel-designation"),
    ("A36/A36M", "steel", "ASTM A36", "astm-steel-designation"),
    ("Gr 50", "steel", "Gr 50", "us-grade-number"),
    ("Grade 65", "steel", "Gr 65", "us-grade-number"),
    ("ASTM F1554 Gr 55", "steel", "ASTM F1554", "astm-bolt-designation"),
    # steel: category words alone, and fastener classes (ISO 898-1)
    ("Steel, Structural", "steel", None, "steel-word"),
    ("Metal - Steel - 345 MPa", "steel", None, "steel-word"),
    ("STRUCTURAL STEEL", "steel", None, "steel-word"),
    ("steel", "steel", None, "steel-word"),
    ("Metal_Steel_Generic", "steel", None, "steel-word"),
    ("Bolt 8.8", "steel", "ISO 898-1 8.8", "iso-property-class"),
    ("Grade 10.9", "steel", "ISO 898-1 10.9", "iso-property-class"),
    # stainless: EN 10088 numbers, AISI / ASTM A240 types, ISO 3506 fastener grades
    ("AISI 316", "stainless", "AISI 316", "aisi-stainless-type"),
    ("Stainless Steel 304L", "stainless", "304L", "stainless-word"),
    ("1.4401", "stainless", "1.4401", "en-stainless-number"),
    ("INOX 1.4301", "stainless", "1.4301", "stainless-word"),
    ("Metal - Stainless Steel", "stainless", None, "stainless-word"),
    ("SS316", "stainless", "SS316", "aisi-stainless-type"),
    ("Duplex 2205", "stainless", "2205", "aisi-stainless-type"),
    ("A4-70", "stainless", "A4-70", "iso-stainless-fastener"),
    # aluminium: EN 573 / Aluminum Association alloys with EN 515 tempers
    ("Aluminium", "aluminium", None, "aluminium-word"),
    ("Metal - Aluminum", "aluminium", None, "aluminium-word"),
    ("6061-T6", "aluminium", "6061-T6", "aluminium-alloy"),
    ("EN AW-6082 T6", "aluminium", "EN AW-6082 T6", "aluminium-alloy"),
    ("ALU 6063-T5", "aluminium", "6063-T5", "aluminium-word"),
    # concrete: EN 206 / EN 1992-1-1 Table 3.1 classes, words, US f'c in psi
    ("CONCRETE/C30/37", "concrete", "C30/37", "concrete-word"),
    ("Structural Concrete", "concrete", None, "concrete-word"),
    ("C25/30", "concrete", "C25/30", "en-concrete-class"),
    ("C40", "concrete", "C40", "en-concrete-class-short"),
    ("concrete_c35_45", "concrete", "C35/45", "concrete-word"),
    ("Concrete, Cast-in-Place gray", "concrete", None, "concrete-word"),
    ("Precast Concrete C50/60", "concrete", "C50/60", "concrete-word"),
    ("Beton C20/25", "concrete", "C20/25", "concrete-word"),
    ("LC25/28", "concrete", "LC25/28", "en-concrete-class"),
    ("Concrete - 4000 psi", "concrete", "f'c 4000 psi", "concrete-word"),
    ("5000 psi", "concrete", "f'c 5000 psi", "us-concrete-strength"),
    # timber: EN 338 (C softwood, D hardwood) and EN 14080 (GL) classes, words
    ("TIMBER/GL24h", "timber", "GL24h", "timber-word"),
    ("TIMBER/C24", "timber", "C24", "timber-word"),
    ("C24", "timber", "C24", "softwood-class"),
    ("Wood - Glulam GL28c", "timber", "GL28c", "timber-word"),
    ("Softwood, Lumber", "timber", None, "timber-word"),
    ("Oak D40", "timber", "D40", "timber-word"),
    ("Douglas Fir-Larch No. 2", "timber", "No. 2", "timber-word"),
    ("Timber C16", "timber", "C16", "timber-word"),
    ("GL32h", "timber", "GL32h", "glulam-class"),
    ("LVL", "timber", None, "timber-word"),
    # masonry
    ("Masonry - Brick", "masonry", None, "masonry-word"),
    ("Concrete Masonry Unit", "masonry", None, "masonry-word"),
    ("CMU 8in", "masonry", None, "masonry-word"),
    ("Concrete block", "masonry", None, "masonry-word"),
    # other
    ("MISCELLANEOUS/Neoprene", "other", None, "other-word"),
    ("Glass", "other", None, "other-word"),
    ("Misc_Plastic", "other", None, "other-word"),
    # unknown: nothing recognised
    ("Material 7", "unknown", None, None),
    ("<Unnamed>", "unknown", None, None),
    ("Default", "unknown", None, None),
    ("FAB-STD", "unknown", None, None),
    ("XS3550", "unknown", None, None),       # not S355: a grade must stand as its own token
    ("Fire rated board", "unknown", None, None),   # 'fir' is not 'fire'
]


def test_the_table_is_large_enough() -> None:
    assert len(NAMES) >= 60
    assert {c for _, c, _, _ in NAMES} == {"steel", "stainless", "aluminium", "concrete", "timber", "masonry",
                                           "other", "unknown"}


@pytest.mark.parametrize(("name", "category", "grade", "pattern"), NAMES)
def test_category_and_grade_from_the_name(name: str, category: str, grade: str | None,
                                          pattern: str | None) -> None:
    r = read_name(name)
    assert (r.category, r.grade, r.category_pattern) == (category, grade, pattern)


def test_every_pattern_of_the_file_is_exercised_by_the_table() -> None:
    used = {read_name(n).category_pattern for n, *_ in NAMES} | {read_name(n).grade_pattern for n, *_ in NAMES}
    used |= {read_name(n).Fy_pattern for n in ("fy=355MPa steel", "A992Fy50", "Metal - Steel - 345 MPa")}
    assert {p.name for p in load_patterns()} <= used


@pytest.mark.parametrize(("name", "fy", "pattern"), [
    ("Metal - Steel - 345 MPa", "345 MPa", "stress-in-name"),
    ("Steel 235 N/mm2", "235 MPa", "stress-in-name"),              # 1 N/mm² = 1 MPa (pint)
    ("A992Fy50", "50 ksi", "fy-ksi-number"),                       # US practice: Fy in ksi (common practice)
    ("Gr 50", "50 ksi", "us-grade-number"),                        # ASTM A572 Grade 50: Fy = 50 ksi (from memory)
    ("A572 Gr 65", "65 ksi", "us-grade-number"),                   # ASTM A572 Grade 65: Fy = 65 ksi (from memory)
    ("fy=355MPa steel", "355 MPa", "fy-with-unit"),
    ("Aluminium 160 MPa", "160 MPa", "stress-in-name"),
    ("Steel fu=490MPa fy=355MPa", "355 MPa", "fy-with-unit"),     # the labelled one, whatever comes first
    ("Steel 355 MPa (355 MPa)", "355 MPa", "stress-in-name"),     # one strength, stated twice
])
def test_a_strength_in_the_name_is_a_yield_strength(name: str, fy: str, pattern: str) -> None:
    r = read_name(name)
    assert r.Fy == pytest.approx(si(fy), rel=1e-9)
    assert r.Fy_pattern == pattern


@pytest.mark.parametrize("name", [
    "Concrete 30 MPa",       # a concrete's strength is not a yield strength
    "TIMBER 24 MPa",
    "Grade 10.9",            # a bolt class, not 10 ksi
    "S355",                  # a grade designation: its values come from the library, by thickness
])
def test_no_yield_strength_where_the_name_states_none(name: str) -> None:
    assert read_name(name).Fy is None


@pytest.mark.parametrize("name", [
    "Steel Fu 490 MPa",                # the ultimate strength (fu, Rm, UTS: common practice of naming)
    "Steel fu: 490 MPa",
    "Steel FU=490 MPa",
    "Steel Rm = 490 MPa",
    "Steel UTS 490 MPa",
    "Steel tensile strength 490 MPa",
    "Steel 345 MPa / 450 MPa",         # two strengths: which is the yield strength is a guess
    "Steel 1,345 MPa",                 # the end of a longer number, not 345 MPa
    "Steel 1 345 MPa",                 # digits in groups of three with a space between (SI brochure 5.4.4;
    "Steel 1\u202f345 MPa",            #   from memory): 1345, not 345 MPa; a thin or no-break space too
    "Steel 1\u00a0345 MPa",
    "Steel 1e308 MPa",                 # an exponent's digits, not 308 MPa
    "Steel 1.5E+308 MPa",
])
def test_a_stress_in_the_name_that_is_not_plainly_the_yield_strength_gives_none(name: str) -> None:
    # taking any of these as Fy would raise the capacity above what the name supports
    r = read_name(name)
    assert r.category == "steel"
    assert (r.Fy, r.Fy_pattern) == (None, None)


@pytest.mark.parametrize(("word", "category"), [
    ("Steel", "steel"), ("Structural Steel", "steel"), ("Wood", "timber"), ("Concrete", "concrete"),
    ("Masonry", "masonry"), ("Aluminum", "aluminium"), ("Stainless Steel", "stainless"),
    ("Metal", None), ("", None), (None, None),
])
def test_category_words(word: str | None, category: str | None) -> None:
    assert category_of_word(word) == category


def test_the_models_category_wins_over_the_name() -> None:
    # IfcMaterial.Category 'Wood' on a name that alone would read as concrete (C30 is an EN 338 and
    # an EN 206 class): the model says which
    r = read_name("C30", "Wood")
    assert (r.category, r.grade, r.category_pattern) == ("timber", "C30", None)
    # a Category nothing recognises: the name decides
    assert read_name("CONCRETE/C30/37", "Structural").category == "concrete"


# ------------------------------------------------------------------ file errors

GOOD = """
[[pattern]]
name = "w"
match = 'steel'
category = "steel"
about = "steel"
"""


@pytest.mark.parametrize(("text", "fragment"), [
    (GOOD.replace("'steel'", "'(steel'"), "not a regular expression"),
    (GOOD.replace('category = "steel"', 'category = "wood"'), "category must be one of"),
    (GOOD.replace('about = "steel"', ''), "about"),
    (GOOD + GOOD, "name used twice"),
    (GOOD.replace('category = "steel"', 'grade = "X{2}"'), "group 2"),
    (GOOD.replace('category = "steel"', 'Fy = "{0} mm"'), "is not a pressure"),
    (GOOD.replace('category = "steel"', 'colour = "red"'), "unknown key 'colour'"),
    ("[[pattern]]\nname = 'x'\nmatch = 'x'\nabout = 'x'\n", "gives nothing"),
])
def test_pattern_file_errors_name_the_file_and_the_pattern(tmp_path: Path, text: str, fragment: str) -> None:
    p = tmp_path / "names.toml"
    p.write_text(text, encoding="utf-8")
    with pytest.raises(RuleSetError) as exc:
        load_patterns(p)
    assert str(p) in str(exc.value) and fragment in str(exc.value)


@pytest.mark.parametrize(("name", "category"), [(None, None), (12, None), ("", 3.5), ("   ", "")])
def test_no_name_or_a_name_of_the_wrong_type_is_unknown(name: object, category: object) -> None:
    r = read_name(name, category)  # type: ignore[arg-type]
    assert (r.category, r.grade, r.Fy) == ("unknown", None, None)
