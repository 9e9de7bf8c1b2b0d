"""The one collector of a data file's problems (modelcheck/common/problems.py): each placed on the
line of its key as the file's text has it, or where the reader names it; gathered in line order;
one line each; shared by the rule-set, material-library, material-name and stock readers."""

from __future__ import annotations

from pathlib import Path

import pytest

from modelcheck.common.errors import LoadTableError, RuleSetError
from modelcheck.common.problems import Problems, read_toml, toml_lines
from modelcheck.materials.library import load_library
from modelcheck.materials.names import load_patterns

TEXT = '''\
# a comment
[ruleset]
name = "x"
units = "SI"

[parameters]
Omega = 1.67
long = """
  a text over lines
  name = "not a key"
"""
list = [
  "a",
  "b",
]

[[check]]
id = "first"
demand = "P / A"

[[check]]
id = "second"
[check.select]
name = ["*rod*"]

[stock]
round = ["3/4 in"]
'''


def _line_of(text: str, start: str, after: int = 0) -> int:
    """The number of the first line (after line ``after``) that starts with ``start``, counted in the text."""
    for no, line in enumerate(text.splitlines(), 1):
        if no > after and line.startswith(start):
            return no
    raise AssertionError(start)


def test_every_key_is_placed_on_its_line_and_the_tables_of_an_array_are_counted() -> None:
    lines = toml_lines(TEXT, arrays=("check",))
    first = _line_of(TEXT, "[[check]]")
    second = _line_of(TEXT, "[[check]]", first)
    assert lines[("ruleset",)] == _line_of(TEXT, "[ruleset]")
    assert lines[("ruleset", "units")] == _line_of(TEXT, "units")
    assert lines[("parameters", "long")] == _line_of(TEXT, "long =")
    assert lines[("parameters", "list")] == _line_of(TEXT, "list =")
    assert ("parameters", "name") not in lines        # inside a text over lines: no key
    assert lines[("check", 0)] == first and lines[("check", 0, "demand")] == _line_of(TEXT, "demand")
    assert lines[("check", 1)] == second and lines[("check", 1, "id")] == second + 1
    assert lines[("check", 1, "select")] == _line_of(TEXT, "[check.select]")
    assert lines[("check", 1, "select", "name")] == _line_of(TEXT, "name = [")
    assert lines[("stock", "round")] == _line_of(TEXT, "round =")
    # without counting, the tables of an array share one key
    assert toml_lines(TEXT)[("check",)] == first


def test_a_problem_is_placed_at_its_key_else_its_nearest_table_else_where_the_reader_says() -> None:
    problems = Problems("rules.toml", RuleSetError, lines=toml_lines(TEXT, arrays=("check",)))
    problems.add(("check", 1, "select", "name"), "on its key")
    problems.add(("check", 0, "capacity"), "a key the file lacks: its table")
    problems.add(("nowhere", "at", "all"), "no table of it: line 1")
    problems.add("material.'A36'.names", "a place written as text")
    problems.add(None, "the file alone")
    assert [str(e) for e in problems.items] == [
        f"rules.toml:{_line_of(TEXT, 'name = [')}: on its key",
        f"rules.toml:{_line_of(TEXT, '[[check]]')}: a key the file lacks: its table",
        "rules.toml:1: no table of it: line 1",
        "rules.toml:material.'A36'.names: a place written as text",
        "rules.toml: the file alone",
    ]
    unplaced = Problems("stock.toml", RuleSetError, lines={}, unplaced=None)
    assert str(unplaced.error(("US", "round"), "no line")) == "stock.toml: no line"


def test_problems_are_listed_in_line_order_and_a_label_is_shared_by_a_view() -> None:
    problems = Problems("r.toml", RuleSetError, lines={("a",): 9, ("b",): 3, ("c",): 3})
    problems.add(("a",), "late")
    own = problems.within("check stress")
    own.add(("c",), "first found on line 3")
    problems.add(("b",), "second found on line 3")
    assert len(problems) == 3 and len(own) == 3            # one list
    assert [str(e) for e in problems.by_line()] == [
        "r.toml:3: check stress: first found on line 3", "r.toml:3: second found on line 3", "r.toml:9: late"]
    assert all(isinstance(e, RuleSetError) for e in problems.items)


def test_every_problem_is_one_line_of_the_readers_own_error() -> None:
    problems = Problems("t.csv", LoadTableError)
    error = problems.error("row 4", "a value quoted from the file:\nsecond line")
    assert isinstance(error, LoadTableError)
    assert str(error) == "t.csv:row 4: a value quoted from the file: second line"


@pytest.mark.parametrize(("loader", "what"), [(load_library, "library"), (load_patterns, "patterns")])
def test_a_data_file_nested_too_deeply_is_one_clear_error(tmp_path: Path, loader, what: str) -> None:
    # tomllib descends once per nested array: thousands of levels exhaust Python's stack
    path = tmp_path / f"{what}.toml"
    path.write_text("deep = " + "[" * 3000 + "]" * 3000 + "\n", encoding="utf-8")
    with pytest.raises(RuleSetError) as err:
        loader(path)
    assert str(err.value) == f"{path}: TOML syntax error: arrays or tables nested too deeply"


def test_read_toml_names_the_file_and_the_line(tmp_path: Path) -> None:
    bad = tmp_path / "bad.toml"
    bad.write_text("a = 1\nb = \n", encoding="utf-8")
    with pytest.raises(RuleSetError, match=rf"^{bad}:line 2: TOML syntax error: "):
        read_toml(Problems(str(bad), RuleSetError), "the file")
    latin = tmp_path / "latin.toml"
    latin.write_bytes("a = 'r\u00e8gle'\n".encode("latin-1"))
    with pytest.raises(RuleSetError, match=rf"^{latin}: the patterns are not UTF-8 text$"):
        read_toml(Problems(str(latin), RuleSetError), "the patterns", plural=True)
    with pytest.raises(RuleSetError, match=r"cannot read the file: "):
        read_toml(Problems(str(tmp_path / "missing.toml"), RuleSetError), "the file")
