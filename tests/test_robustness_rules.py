"""Robustness corpus, rule-set files: through ``modelcheck rules validate FILE`` and
``modelcheck check --rules FILE``.

``rules validate`` lists every error, one line each starting 'file:line:', then one summary line,
exit 2. ``check --rules`` refuses the file on one line (the first error, and how many more), exit
2, before reading any model. Expressions that are valid but give no finite number for a member
make that member's result 'unchecked', never pass or fail. No traceback, no hang, the rule file
and the model byte-for-byte unchanged.
"""

from __future__ import annotations

import json
import re
import warnings
from pathlib import Path
from typing import Any

import pytest
from hypothesis import HealthCheck, example, given, settings
from hypothesis import strategies as st

from modelcheck.common.errors import RuleSetError
from modelcheck.core.model import ForceOptions
from modelcheck.core.read import read_model
from modelcheck.rules.engine import run_checks
from modelcheck.rules.ruleset import load_ruleset, validate_ruleset_file
from tests.corpus import good_builder, rich_builder, run_inprocess, run_process, write_model

HEAD = """\
[ruleset]
name = "robustness"
basis = "test rules"
units = "SI"

[parameters]
Omega = 1.67
"""

CHECK = """
[[check]]
id = "stress"
when = "P > 0"
demand = "P / A"
capacity = {capacity}
"""


def _capacity(expr: str) -> str:
    return HEAD + CHECK.format(capacity=json.dumps(expr))


def _when(expr: str) -> str:
    return HEAD + CHECK.format(capacity=json.dumps("Fy / Omega")).replace('when = "P > 0"', f"when = {json.dumps(expr)}")


GOOD = _capacity("Fy / Omega")

#: case -> (file text, text on the line the error must name (or its number), fragment of the message)
BAD_RULES: dict[str, tuple[str | bytes, str | int, str]] = {
    # bad TOML
    "unclosed string": (GOOD + 'title = "P / A\n', 'title = "P / A', "not valid TOML"),
    "key given twice": (GOOD + 'capacity = "Fy"\n', 'capacity = "Fy"', "not valid TOML"),
    "not TOML at all": (GOOD + "check it twice\n", "check it twice", "not valid TOML"),
    "nested too deeply": (GOOD + "deep = " + "[" * 3000 + "]" * 3000 + "\n", "deep = ", "nested too deeply"),
    "not UTF-8": (GOOD.replace("test rules", "r\u00e8gles").encode("latin-1"), "basis", "not UTF-8"),
    "UTF-16": (GOOD.encode("utf-16"), 1, "not UTF-8"),
    "binary junk": (bytes(range(256)) * 4, 2, "not UTF-8"),   # 0x80, the first non-UTF-8 byte
    # unknown names
    "unknown name": (_capacity("Fyy / Omega"), "capacity", "unknown name 'Fyy' (did you mean 'Fy'?)"),
    "unknown name in a condition": (_when("PP > 0"), "when", "unknown name 'PP'"),
    "unknown name in a definition": (GOOD + '\n[define]\ntwice = "Pp * 2"\n', "twice =", "unknown name 'Pp'"),
    # dimension mismatch
    "dimension mismatch": (_capacity("L / Omega"), "capacity", "they must have one dimension"),
    "dimension mismatch in a formula": (GOOD + '\n[define]\nbad = "L + P"\n', "bad =", "different dimensions"),
    "dimension beyond a float": (_capacity("((Fy**10)**10)**10"), "capacity", "[mass] ** 1000"),
    "a unit no one can write": (_capacity("Fu ** pi").replace('demand = "P / A"', 'demand = "Fy ** pi"'), "demand",
                                "cannot be written down"),
    # dunder or attribute access
    "dunder name": (_capacity("__import__('os').system('true')"), "capacity", "'__import__' is not an allowed name"),
    "dunder builtins": (_capacity("__builtins__"), "capacity", "not an allowed name"),
    "dunder attribute": (_capacity("Fy.__class__.__mro__"), "capacity", "attribute access"),
    "plain attribute": (_capacity("Fy.magnitude / Omega"), "capacity", "attribute access"),
    # imports
    "import statement": (_when("import os"), "when", "is not a valid expression"),
    "from import": (_capacity("from os import system"), "capacity", "is not a valid expression"),
    # calls to unknown functions
    "unknown function": (_capacity("open('/etc/passwd')"), "capacity", "unknown function 'open'"),
    "getattr": (_capacity("getattr(Fy, 'magnitude')"), "capacity", "unknown function 'getattr'"),
    "eval": (_capacity("eval('Fy')"), "capacity", "unknown function 'eval'"),
    "calling a lambda": (_capacity("(lambda: Fy)()"), "capacity", "only the listed functions"),
    # huge exponents
    "huge exponent": (_capacity("Fy ** 1000"), "capacity", "larger than 10"),
    "huge exponent of ten": (_capacity("Fy / Omega * 10 ** 400"), "capacity", "larger than 10"),
    "exponent in floating point": (_capacity("Fy ** 1e10"), "capacity", "larger than 10"),
    "negative exponent": (_capacity("Fy * 10 ** -400"), "capacity", "larger than 10"),
    "unit to a huge power": (_capacity("Fy / Omega * 1 [m**20] / 1 [m**20]"), "capacity", "unit powers"),
    "huge number": (_capacity("Fy / Omega * 1e999"), "capacity", "finite"),
    # deeply nested expressions
    "nested calls": (_capacity("sqrt(" * 40 + "Fy" + ")" * 40), "capacity", "nested more than"),
    "nested parentheses": (_capacity("(" * 300 + "Fy / Omega" + ")" * 300), "capacity", "nested parentheses"),
    "nested minus signs": (_capacity("-" * 40 + "Fy"), "capacity", "nested"),
    "a very long sum": (_capacity("+".join(["Fy"] * 600)), "capacity", "nested"),
    "a very long text": (_capacity("Fy" + " " * 2100), "capacity", "longer than"),
}


def _write(tmp_path: Path, name: str, text: str | bytes) -> Path:
    p = tmp_path / (re.sub(r"\W+", "-", name) + ".toml")
    if isinstance(text, bytes):
        p.write_bytes(text)
    else:
        p.write_text(text, encoding="utf-8")
    return p


def _line_of(path: Path, needle: str | int) -> int:
    if isinstance(needle, int):
        return needle
    lines = path.read_bytes().decode("utf-8", errors="replace").splitlines()
    return next(no for no, ln in enumerate(lines, 1) if needle in ln)


@pytest.fixture(scope="module")
def model(tmp_path_factory: Any) -> Path:
    return write_model(good_builder(), tmp_path_factory.mktemp("rules") / "hangers.ifc")


def test_the_good_file_is_valid_and_checks(capsys, model, tmp_path):
    path = _write(tmp_path, "good", GOOD)
    out = run_inprocess(capsys, ["rules", "validate", str(path)], inputs=[path])
    assert out.code == 0 and out.lines == []
    out = run_inprocess(capsys, ["check", str(model), "--rules", str(path), "--jobs", "1", "--no-config",
                                 "--format", "json"], inputs=[path, model])
    assert out.code == 0 and {r["status"] for r in out.json()["results"]} == {"pass"}


@pytest.mark.parametrize("case", list(BAD_RULES))
def test_a_bad_rule_file_is_one_line_with_file_and_line_in_both_commands(capsys, model, tmp_path, case):
    text, needle, fragment = BAD_RULES[case]
    path = _write(tmp_path, case, text)
    line = _line_of(path, needle)
    out = run_inprocess(capsys, ["rules", "validate", str(path)], inputs=[path])
    assert out.code == 2
    assert len(out.lines) == 2, out.stderr        # the error, then the summary
    error, summary = out.lines
    assert error.startswith(f"{path}:{line}: ") and fragment in error, error
    assert len(error) - len(str(path)) < 400, error   # a long expression is quoted shortened
    assert summary == f"modelcheck: error: {path}: 1 error(s)"
    out = run_inprocess(capsys, ["check", str(model), "--rules", str(path), "--jobs", "1", "--no-config",
                                 "--format", "json"], inputs=[path, model])
    assert out.code == 2 and out.stdout == ""
    assert out.lines == [f"modelcheck: error: {error}"], out.stderr


def _several_errors() -> str:
    """Four errors in four checks, each on its own line."""
    text = HEAD
    for k, cap in enumerate(("Fyy / Omega", "Fy.__class__", "Fy ** 1000", "open('x')")):
        text += f'\n[[check]]\nid = "c{k}"\ndemand = "P / A"\ncapacity = {json.dumps(cap)}\n'
    return text


def test_validate_lists_every_error_and_check_names_the_first(capsys, model, tmp_path):
    path = _write(tmp_path, "several", _several_errors())
    lines = [no for no, ln in enumerate(path.read_text(encoding="utf-8").splitlines(), 1) if "capacity" in ln]
    out = run_inprocess(capsys, ["rules", "validate", str(path)], inputs=[path])
    assert out.code == 2 and len(out.lines) == 5, out.stderr
    for k, (line, fragment) in enumerate(zip(lines, ("unknown name", "attribute access", "larger than 10",
                                                       "unknown function"), strict=True)):
        assert out.lines[k].startswith(f"{path}:{line}: check c{k}: capacity: ") and fragment in out.lines[k]
    assert out.lines[-1] == f"modelcheck: error: {path}: 4 error(s)"
    out = run_inprocess(capsys, ["check", str(model), "--rules", str(path), "--jobs", "1", "--no-config"],
                        inputs=[path, model])
    assert out.code == 2 and len(out.lines) == 1
    assert out.lines[0].startswith(f"modelcheck: error: {path}:{lines[0]}: ") and "and 3 more errors" in out.lines[0]


def test_both_commands_in_fresh_processes(model, tmp_path):
    path = _write(tmp_path, "several", _several_errors())
    deep = _write(tmp_path, "deep", BAD_RULES["nested too deeply"][0])
    out = run_process(["rules", "validate", str(path)], inputs=[path], timeout=120)
    assert out.code == 2 and len(out.lines) == 5
    out = run_process(["check", str(model), "--rules", str(deep), "--jobs", "1", "--no-config"],
                      inputs=[deep, model], timeout=120)
    assert out.code == 2 and len(out.lines) == 1 and "nested too deeply" in out.lines[0]


#: valid expressions whose value is no finite number for any member
NOT_FINITE = {
    "a tower of powers of plain numbers": "Fy / Omega * 2 ** 2 ** 2 ** 2 ** 2 ** 2 ** 2",
    "division by zero": "Fy / Omega / 0",
    "exp of a large number": "Fy / Omega * exp(1000)",
    "square root of a negative number": "Fy / Omega * sqrt(-1)",
    "logarithm of zero": "Fy / Omega * log(0)",
    "powers that overflow, then cancel": "((Fy**10)**10)**10 / ((Fy**10)**10)**10 * Fy / Omega",
}


@pytest.mark.parametrize("case", list(NOT_FINITE))
def test_a_capacity_that_is_no_finite_number_leaves_members_unchecked(capsys, model, tmp_path, case):
    path = _write(tmp_path, case, _capacity(NOT_FINITE[case]))
    out = run_inprocess(capsys, ["rules", "validate", str(path)], inputs=[path])
    assert out.code == 0, out.stderr
    out = run_inprocess(capsys, ["check", str(model), "--rules", str(path), "--jobs", "1", "--no-config",
                                 "--format", "json"], inputs=[path, model])
    # nothing failed, but nothing could be checked: exit 1; no numpy warning on stderr either
    assert out.code == 1 and out.lines == [], out.stderr
    results = out.json()["results"]
    assert results and {r["status"] for r in results} == {"unchecked"}
    assert all("finite" in r["message"] for r in results)


# --- property: whatever expression a rule file holds, only one-line errors with file:line ----------
_TOKENS = st.sampled_from([
    "P", "A", "L", "E", "Fy", "Fu", "r", "d", "t", "Omega", "pi", "shape", "name", "x", "__class__", "__import__",
    "0", "1", "2.5", "1e308", "1e-308", "10", "1000", "-", "+", "*", "/", "**", "(", ")", ",", ".", "[", "]",
    "[mm]", "[kN]", "[ksi]", "[GPa]", "[m**9]", "[1/K]", "[degF]", " if ", " else ", " and ", " or ", " not ",
    "<", ">", "==", "sqrt(", "min(", "max(", "exp(", "log(", "abs(", "where(", "case(", "known(", "matches(",
    "'I'", "\"*rod*\"", "#", "\n", " ", "lambda", ":", "{", "}", "import ", "open(", "getattr(",
])


@settings(max_examples=50, deadline=None, suppress_health_check=[HealthCheck.too_slow,
                                                                   HealthCheck.function_scoped_fixture])
@given(st.lists(_TOKENS, min_size=1, max_size=30).map("".join))
def test_any_capacity_expression_gives_only_one_line_errors(tmp_path, expr):
    path = tmp_path / "random.toml"
    path.write_text(_capacity(expr), encoding="utf-8")
    capacity_line = _line_of(path, "capacity =")
    errors = validate_ruleset_file(path)
    for e in errors:
        assert "\n" not in e and e.startswith(f"{path}:"), e
        assert re.match(rf"{re.escape(str(path))}:\d+: ", e), e
    if errors:
        assert any(e.startswith(f"{path}:{capacity_line}: ") for e in errors), errors
        with pytest.raises(RuleSetError):
            load_ruleset(path)
    else:
        assert load_ruleset(path).check("stress") is not None


# --- property: an expression that validates never breaks the engine ---------------------------------
_LEAF = st.sampled_from(["Fy", "Fu", "P", "A", "L", "r", "E", "d", "t", "Omega", "pi", "0", "1", "2.5", "-1",
                         "1e300", "1e-300", "1 [MPa]", "0 [MPa]", "1 [ksi]", "1e300 [GPa]", "3 [mm]", "1 [kN]"])


def _combine(children: Any) -> Any:
    return st.one_of(
        st.tuples(children, st.sampled_from(["+", "-", "*", "/", "**"]), children).map(lambda t: f"({t[0]} {t[1]} {t[2]})"),
        st.tuples(st.sampled_from(["sqrt", "abs", "exp", "log", "log10"]), children).map(lambda t: f"{t[0]}({t[1]})"),
        st.tuples(st.sampled_from(["min", "max"]), children, children).map(lambda t: f"{t[0]}({t[1]}, {t[2]})"),
        st.tuples(children, children).map(lambda t: f"({t[0]} if {t[0]} > {t[1]} else {t[1]})"),
        children.map(lambda c: f"-{c}"),
    )


@pytest.fixture(scope="module")
def members(tmp_path_factory: Any) -> Any:
    path = write_model(rich_builder(), tmp_path_factory.mktemp("engine") / "rich.ifc")
    return read_model(str(path), ForceOptions(property=("MC_MemberForces", "AxialForce")))


@settings(max_examples=50, deadline=None, suppress_health_check=[HealthCheck.too_slow,
                                                                   HealthCheck.function_scoped_fixture])
@given(st.recursive(_LEAF, _combine, max_leaves=10), st.booleans())
@example("(1e300 [GPa] * 1 [kN])", True)   # a demand whose conversion to its display unit overflows
def test_a_rule_that_validates_runs_on_every_member_without_error_or_warning(tmp_path, members, expr, as_demand):
    path = tmp_path / "random.toml"
    if as_demand:  # demand and capacity alike: valid whenever the expression has one dimension
        text = _capacity(expr).replace('demand = "P / A"', f"demand = {json.dumps(expr)}")
    else:          # a term that is zero for every member, but evaluated all the same
        text = _capacity(f"Fy / Omega + 0 * ({expr}) / ({expr})")
    path.write_text(text, encoding="utf-8")
    if validate_ruleset_file(path):
        return
    with warnings.catch_warnings():
        warnings.simplefilter("error")   # numpy overflow warnings would reach the user's stderr
        results = run_checks(load_ruleset(path), members.members, members.forces)
    assert len(results) and set(results["status"]) <= {"pass", "fail", "unchecked"}
