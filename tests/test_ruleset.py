"""Rule-set files: parsing, validation with file:line:check, and loading by name or path."""

from __future__ import annotations

import textwrap
from pathlib import Path

import pytest

from modelcheck.common.errors import RuleSetError
from modelcheck.common.units import Q_
from modelcheck.rules.ruleset import (
    load_ruleset,
    resolve_ruleset,
    shipped_names,
    validate_ruleset_file,
)

HEAD = """\
[ruleset]
name = "mini"
basis = "test rules"
units = "SI"

[parameters]
Omega = 1.67
limit = "6 mm"
"""

GOOD_CHECK = """
[[check]]
id = "stress"
when = "P > 0"
demand = "P / A"
capacity = "Fy / Omega"
"""


def write(tmp_path: Path, text: str, name: str = "rules.toml") -> Path:
    path = tmp_path / name
    path.write_text(textwrap.dedent(text), encoding="utf-8")
    return path


def line_of(path: Path, needle: str, nth: int = 1) -> int:
    seen = 0
    for no, line in enumerate(path.read_text(encoding="utf-8").splitlines(), 1):
        if needle in line:
            seen += 1
            if seen == nth:
                return no
    raise AssertionError(f"{needle!r} not in {path}")


def one_error(path: Path) -> str:
    errors = validate_ruleset_file(path)
    assert len(errors) == 1, errors
    return errors[0]


# --- valid files -------------------------------------------------------------------------------

def test_a_minimal_rule_set_loads(tmp_path: Path) -> None:
    path = write(tmp_path, HEAD + GOOD_CHECK)
    assert validate_ruleset_file(path) == []
    rs = load_ruleset(path)
    assert rs.name == "mini" and rs.units == "SI" and rs.path == str(path)
    check = rs.check("stress")
    assert check.unit == "MPa"                 # SI display of a stress
    assert check.inputs == {"P", "A", "Fy"}
    assert check.needs_force
    assert check.line == line_of(path, "[[check]]")
    # parameters keep their units: "6 mm" is 0.006 m (pint)
    assert rs.parameter_map["limit"].value.m_as("m") == pytest.approx(0.006)


def test_shipped_rule_sets_load_by_name_and_by_path() -> None:
    assert {"steel-asd-us", "steel-ec3", "hanger-rods"} <= set(shipped_names())
    assert "threads" not in shipped_names()          # a data file, not a rule set
    for name in ("steel-asd-us", "steel-ec3", "hanger-rods"):
        rs = load_ruleset(name)
        assert rs.name == name
        assert validate_ruleset_file(rs.path) == []
        assert load_ruleset(rs.path).checks == rs.checks


def test_an_unknown_rule_set_name_lists_the_shipped_ones() -> None:
    with pytest.raises(RuleSetError, match="no rule set named 'steel-lrfd'.*steel-asd-us"):
        resolve_ruleset("steel-lrfd")
    with pytest.raises(RuleSetError, match="no such rule-set file"):
        load_ruleset("does/not/exist.toml")


def test_parameter_forms(tmp_path: Path) -> None:
    path = write(tmp_path, HEAD.replace('limit = "6 mm"', '''\
limit = "6 mm"
rod = "3/8 in"
big = "1 1/2 in"
bracketed = "25 [mm]"
dT = { value = "50 delta_degF", about = "a temperature change" }
n = { value = 2 }
''') + GOOD_CHECK)
    rs = load_ruleset(path)
    p = rs.parameter_map
    # pint: 3/8 in = 9.525 mm, 1 1/2 in = 38.1 mm, 50 Δ°F = 27.78 K
    assert p["rod"].value.m_as("mm") == pytest.approx(9.525)
    assert p["big"].value.m_as("mm") == pytest.approx(38.1)
    assert p["bracketed"].value.m_as("mm") == pytest.approx(25)
    assert p["dT"].value.m_as("K") == pytest.approx(50 * 5 / 9)
    assert p["dT"].about == "a temperature change"
    assert p["n"].value.m_as("") == 2


def test_display_units_can_be_changed(tmp_path: Path) -> None:
    path = write(tmp_path, HEAD + '\n[display]\nstress = "ksi"\n' + GOOD_CHECK)
    rs = load_ruleset(path)
    assert rs.check("stress").unit == "ksi"
    assert rs.display_unit(Q_(1.0, "N")) == "kN"


def test_multi_line_formulas_with_comments(tmp_path: Path) -> None:
    path = write(tmp_path, HEAD + '''
[define]
F = """
    Fy / Omega if L < 3 [m]     # short
    else 0.9 * Fy / Omega       # long [sic]
"""
''' + GOOD_CHECK.replace('capacity = "Fy / Omega"', 'capacity = "F"'))
    rs = load_ruleset(path)
    assert rs.check("stress").inputs == {"P", "A", "Fy", "L"}
    assert rs.check("stress").definitions == ("F",)


# --- errors: every one with file, line and check id --------------------------------------------

def test_bad_toml_names_the_line(tmp_path: Path) -> None:
    path = write(tmp_path, HEAD + GOOD_CHECK + 'demand = "P / A\n')
    error = one_error(path)
    line = line_of(path, 'demand = "P / A', 2)
    assert error.startswith(f"{path}:{line}: not valid TOML")


def test_unknown_name_with_suggestion(tmp_path: Path) -> None:
    path = write(tmp_path, HEAD + GOOD_CHECK.replace("Fy / Omega", "Fyy / Omega"))
    error = one_error(path)
    assert error == (f"{path}:{line_of(path, 'capacity')}: check stress: capacity: "
                     "unknown name 'Fyy' (did you mean 'Fy'?)")


def test_dimension_mismatch_is_caught_when_the_file_loads(tmp_path: Path) -> None:
    path = write(tmp_path, HEAD + GOOD_CHECK.replace('capacity = "Fy / Omega"', 'capacity = "limit"'))
    error = one_error(path)
    assert error.startswith(f"{path}:{line_of(path, 'capacity')}: check stress: demand 'P / A' is a stress (MPa)")
    assert "capacity 'limit' is a length (mm)" in error
    with pytest.raises(RuleSetError, match="is a stress"):
        load_ruleset(path)


def test_dimension_mismatch_inside_a_formula(tmp_path: Path) -> None:
    path = write(tmp_path, HEAD + '\n[define]\nbad = "L + P"\n' + GOOD_CHECK)
    error = one_error(path)
    assert error.startswith(f"{path}:{line_of(path, 'bad =')}: bad: ")
    assert "different dimensions" in error


@pytest.mark.parametrize(("capacity", "message"), [
    ("__import__('os')", "'__import__' is not an allowed name"),
    ("Fy.__class__", "attribute access"),
    ("Fy.magnitude / Omega", "attribute access"),
    ("open('/etc/passwd')", "unknown function 'open'"),
    ("Fy ** 1000", "exponent 1000 is larger than 10"),
    ("sqrt(" * 40 + "Fy" + ")" * 40, "nested more than 32 levels"),
    ("Fy[0]", "square brackets hold a unit"),
    ("Fy if P > 0", "not a valid expression"),
])
def test_unsafe_expressions_are_refused_with_file_line_and_check(tmp_path: Path, capacity: str, message: str) -> None:
    path = write(tmp_path, HEAD + GOOD_CHECK.replace('capacity = "Fy / Omega"', f"capacity = {capacity!r}"))
    error = one_error(path)
    assert error.startswith(f"{path}:{line_of(path, 'capacity')}: check stress: capacity: ")
    assert message in error


def test_import_statement_is_not_an_expression(tmp_path: Path) -> None:
    path = write(tmp_path, HEAD + GOOD_CHECK.replace('when = "P > 0"', 'when = "import os"'))
    assert "check stress: when: 'import os' is not a valid expression" in one_error(path)


def test_every_error_is_reported(tmp_path: Path) -> None:
    text = HEAD.replace('units = "SI"', 'units = "SI"\nversion = 2') + """
[parameters.K]
value = "1 [furlong/fortnight/zz]"

[define]
aa = "bb * 2"
bb = "aa / 2"

[[check]]
id = "one"
demand = "P / A"
capacity = "Fy / Omegaa"
colour = "red"

[[check]]
id = "one"
demand = "P"
capacity = "A"
when = "P"

[[check]]
id = "two"
demand = "L / r"
capacity = "300"
unit = "mm"
message = "L/r = {demand:.0f} and {nonsense}"

[[check]]
demand = "L"
capacity = "L"
[check.select]
ifc_class = ["IfcMembr"]
shape = ["rod"]
colour = ["red"]
"""
    path = write(tmp_path, text)
    errors = validate_ruleset_file(path)
    joined = "\n".join(errors)
    expected = [
        (line_of(path, "version = 2"), "unknown key 'version' in [ruleset]"),
        (line_of(path, "furlong"), "parameter K: '[furlong/fortnight/zz]' is not a unit pint knows"),
        (line_of(path, 'aa = "bb * 2"'), "aa: definitions refer to themselves: aa -> bb -> aa"),
        (line_of(path, 'bb = "aa / 2"'), "bb: definitions refer to themselves: bb -> aa -> bb"),
        (line_of(path, "Omegaa"), "check one: capacity: unknown name 'Omegaa' (did you mean 'Omega'?)"),
        (line_of(path, "colour = \"red\""), "check one: unknown key 'colour'"),
        (line_of(path, 'id = "one"', 2), "check one: the id is used by an earlier check"),
        (line_of(path, 'when = "P"'), "check one: when must be a condition (a comparison), but is a force"),
        (line_of(path, 'unit = "mm"'), "check two: unit 'mm' does not fit a plain number"),
        (line_of(path, "{nonsense}"), "check two: message: unknown name 'nonsense'"),
        (line_of(path, "[[check]]", 4), "check #4: needs an id"),
        (line_of(path, "IfcMembr"), "check #4: 'IfcMembr' is not an IFC class"),
        (line_of(path, 'shape = ["rod"]'), "check #4: 'rod' is not a shape family"),
        (line_of(path, 'colour = ["red"]'), "check #4: unknown selector 'colour'"),
    ]
    for line, message in expected:
        assert f"{path}:{line}: {message}" in joined, (line, message, joined)
    assert len(errors) == len(expected), joined
    # loading raises the first, and says there are more
    with pytest.raises(RuleSetError, match=r"unknown key 'version'.*and 13 more errors") as info:
        load_ruleset(path)
    assert len(info.value.errors) == len(expected)  # type: ignore[attr-defined]


def test_when_must_be_a_condition(tmp_path: Path) -> None:
    path = write(tmp_path, HEAD + GOOD_CHECK.replace('when = "P > 0"', 'when = "P * 2"'))
    error = one_error(path)
    assert error == f"{path}:{line_of(path, 'when')}: check stress: when must be a condition (a comparison), but is a force"


def test_offset_temperatures_are_refused(tmp_path: Path) -> None:
    path = write(tmp_path, HEAD.replace('limit = "6 mm"', 'dT = "50 degF"') + GOOD_CHECK)
    error = one_error(path)
    assert f"{path}:{line_of(path, 'dT =')}: parameter dT" in error
    assert "delta_degF" in error


def test_names_cannot_take_member_values(tmp_path: Path) -> None:
    path = write(tmp_path, HEAD.replace('limit = "6 mm"', 'A = 2') + GOOD_CHECK)
    assert f"{path}:{line_of(path, 'A = 2')}: parameter name 'A' is taken" in one_error(path)


def test_missing_pieces(tmp_path: Path) -> None:
    path = write(tmp_path, HEAD)
    assert "has no [[check]]" in one_error(path)
    path = write(tmp_path, HEAD + '\n[[check]]\nid = "x"\ndemand = "P"\n')
    assert f"{path}:{line_of(path, '[[check]]')}: check x: needs a capacity expression" == one_error(path)
    path = write(tmp_path, '[[check]]\nid = "x"\ndemand = "P"\ncapacity = "P"\n')
    assert "needs a [ruleset] table" in one_error(path)


def test_unreadable_files(tmp_path: Path) -> None:
    path = tmp_path / "latin1.toml"
    path.write_bytes(HEAD.encode() + b"# caf\xe9\n" + GOOD_CHECK.encode())
    assert validate_ruleset_file(path) == [f"{path}:{line_of_bytes(path, b'caf')}: not UTF-8 text"]
    # the same words as `--rules nope.toml`: validate and check resolve a rule set alike
    assert validate_ruleset_file(tmp_path / "nope.toml") == [f"{tmp_path / 'nope.toml'}: no such rule-set file"]


def line_of_bytes(path: Path, needle: bytes) -> int:
    return next(i for i, line in enumerate(path.read_bytes().splitlines(), 1) if needle in line)


def test_line_numbers_after_values_running_over_several_lines(tmp_path: Path) -> None:
    path = write(tmp_path, HEAD + """
[select]
any_name = [
    "*rod*",
    "[x]*",
]

[define]
F = \"\"\"
    Fy / Omega   # [[check]] in a comment
\"\"\"
""" + GOOD_CHECK + GOOD_CHECK.replace('"stress"', '"second"').replace("Fy / Omega", "Fy / Omegax"))
    assert one_error(path) == (f"{path}:{line_of(path, 'Omegax')}: check second: capacity: "
                               "unknown name 'Omegax' (did you mean 'Omega'?)")


@pytest.mark.parametrize("name", sorted(shipped_names()))
def test_validate_takes_a_shipped_name_as_show_does(name, capsys):
    # `rules validate` and `rules show` take the same target: a shipped name or a file
    assert validate_ruleset_file(name) == []
    from modelcheck.cli import main

    assert main(["rules", "validate", name]) == 0
    assert f"{name}: valid" in capsys.readouterr().out


def test_validate_an_unknown_name_lists_the_shipped_ones():
    errors = validate_ruleset_file("steel-nosuch")
    assert len(errors) == 1 and "no rule set named 'steel-nosuch'" in errors[0]
    assert all(n in errors[0] for n in shipped_names())
