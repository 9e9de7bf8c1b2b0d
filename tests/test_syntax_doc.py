"""The rule-file syntax is described once, in modelcheck/rulesets/SYNTAX.md, and kept in step with
the parser: every key, table, name and function the parser accepts is named there (as code), every
key its tables list is one the parser accepts, its examples load, it is installed with the package,
and each shipped rule set points to it instead of carrying a copy."""

from __future__ import annotations

import re
import tomllib
from pathlib import Path

import pytest

from modelcheck.common.data import data_dir, data_path
from modelcheck.design.stock import SERIES_KEYS, stock_series
from modelcheck.rules.expr import CONSTANTS, FUNCTIONS
from modelcheck.rules.names import MEMBER_QUANTITIES, MESSAGE_NAMES, TEXT_NAMES
from modelcheck.rules.parse.checks import CHECK_KEYS
from modelcheck.rules.parse.tables import (
    DEFINE_KEYS,
    EXCLUDE,
    PARAMETER_KEYS,
    RULESET_KEYS,
    SHAPES,
    TOP_LEVEL,
)
from modelcheck.rules.ruleset import load_ruleset, shipped_names
from modelcheck.rules.select import SELECTOR_KEYS
from modelcheck.rules.values import DISPLAY_DIMENSIONS
from tests.helpers import REPO

SYNTAX = data_path("SYNTAX.md")


def _doc() -> str:
    return SYNTAX.read_text(encoding="utf-8")


def _code(text: str) -> str:
    """Everything the document writes as code: fenced blocks and `inline` spans."""
    blocks = re.findall(r"^```[a-z]*\n(.*?)^```", text, re.S | re.M)
    rest = re.sub(r"^```[a-z]*\n.*?^```", "", text, flags=re.S | re.M)
    return "\n".join(blocks + re.findall(r"`([^`\n]+)`", rest))


def _words(code: str) -> set[str]:
    return set(re.findall(r"[A-Za-z]+(?:-[A-Za-z]+)+|[A-Za-z_][A-Za-z0-9_]*", code))


def _section(text: str, heading: str) -> str:
    """The text under a heading, up to the next heading of the same or a higher level."""
    m = re.search(rf"^(#+) {re.escape(heading)}\s*$", text, re.M)
    assert m, f"SYNTAX.md has a section {heading!r}"
    level = len(m.group(1))
    end = re.search(rf"^#{{1,{level}}} ", text[m.end():], re.M)
    return text[m.end(): m.end() + end.start() if end else len(text)]


def _table_keys(section: str) -> set[str]:
    """The keys a Markdown table of a section names in its first column (`a`, `b`)."""
    keys: set[str] = set()
    for row in re.findall(r"^\| (.+?) \|", section, re.M):
        keys |= set(re.findall(r"`([^`]+)`", row))
    return keys


ACCEPTED = {
    "tables": TOP_LEVEL,
    "[ruleset] keys": RULESET_KEYS,
    "[display] keys": tuple(DISPLAY_DIMENSIONS),
    "parameter table keys": PARAMETER_KEYS,
    "definition table keys": DEFINE_KEYS,
    "[[check]] keys": CHECK_KEYS,
    "selectors": (*SELECTOR_KEYS, EXCLUDE),
    "[stock] keys": ("series", *SERIES_KEYS),
    "functions": tuple(FUNCTIONS),
    "constants": tuple(CONSTANTS),
    "member values": tuple(MEMBER_QUANTITIES),
    "text values": tuple(TEXT_NAMES),
    "message values": tuple(MESSAGE_NAMES),
    "shape families": tuple(SHAPES),
}


@pytest.mark.parametrize("what", sorted(ACCEPTED))
def test_every_name_the_parser_accepts_is_in_the_syntax_document(what: str) -> None:
    words = _words(_code(_doc()))
    missing = [k for k in ACCEPTED[what] if k not in words]
    assert not missing, f"SYNTAX.md does not name these {what} as code: {missing}"


def test_every_table_is_named_with_its_brackets() -> None:
    code = _code(_doc())
    for table in TOP_LEVEL:
        header = "[[check]]" if table == "check" else f"[{table}]"
        assert header in code, f"SYNTAX.md does not write the table {header}"


@pytest.mark.parametrize(("heading", "accepted"), [
    ("`[ruleset]`", RULESET_KEYS),
    ("`[[check]]`", CHECK_KEYS),
    ("Selectors", (*SELECTOR_KEYS, EXCLUDE)),
    ("Member values", tuple(MEMBER_QUANTITIES)),
])
def test_every_key_a_table_of_the_document_lists_is_accepted_by_the_parser(heading: str, accepted: tuple[str, ...]) -> None:
    listed = _table_keys(_section(_doc(), heading))
    assert listed, f"the section {heading} lists its keys in a table"
    assert listed <= set(accepted), f"{heading}: SYNTAX.md lists keys the parser refuses: {sorted(listed - set(accepted))}"
    assert set(accepted) <= listed, f"{heading}: the table leaves out {sorted(set(accepted) - listed)}"


def test_the_display_keys_the_document_lists_are_the_parsers() -> None:
    listed = set(re.findall(r"`([a-z_]+)`", _section(_doc(), "`[display]`").split("Keys:")[1].split(".")[0]))
    assert listed == set(DISPLAY_DIMENSIONS)


def _toml_blocks() -> list[str]:
    return re.findall(r"^```toml\n(.*?)^```", _doc(), re.S | re.M)


def test_the_example_rule_set_loads_and_uses_every_table_but_stock(tmp_path: Path) -> None:
    example = _toml_blocks()[0]
    path = tmp_path / "example.toml"
    path.write_text(example, encoding="utf-8")
    rs = load_ruleset(path)
    assert set(tomllib.loads(example)) == set(TOP_LEVEL) - {"stock"}
    assert [c.id for c in rs.checks] == ["tension-yield", "slenderness", "elongation"]
    # every key of a check, and the table forms of a parameter and a definition, are shown
    used = set().union(*(tomllib.loads(example)["check"]))
    assert used == set(CHECK_KEYS)
    assert rs.parameter_map["K"].about and rs.definition_map["lambda_lim"].about


def test_the_documents_snippets_are_valid(tmp_path: Path) -> None:
    example = _toml_blocks()[0]
    head = example[:example.index("[display]")]
    check = '[[check]]\nid = "c"\ndemand = "P / A"\ncapacity = "Fy"\n'
    snippets = _toml_blocks()[1:]
    assert len(snippets) == 3
    for n, block in enumerate(snippets):
        data = tomllib.loads(block)
        path = tmp_path / f"snippet-{n}.toml"
        if "stock" in data:        # a [stock] table: the stock series of a rule set that has it
            path.write_text(example + "\n" + block, encoding="utf-8")
            series = stock_series(load_ruleset(path))
            assert series.system == data["stock"]["series"]
            assert series.round[0] == pytest.approx(0.012)   # from = "12 mm": the first size
        elif "Omega_t" in data:    # the [parameters] snippet
            path.write_text(head + "[parameters]\n" + block + check, encoding="utf-8")
            assert [p.name for p in load_ruleset(path).parameters] == list(data)
        else:                      # the [define] snippet (its K a parameter)
            path.write_text(head + "[parameters]\nK = 1.0\n[define]\n" + block + check, encoding="utf-8")
            assert [d.name for d in load_ruleset(path).definitions] == list(data)


def test_the_syntax_document_is_installed_with_the_rule_sets() -> None:
    assert SYNTAX.is_file() and SYNTAX.parent == data_dir()
    pyproject = tomllib.loads((REPO / "pyproject.toml").read_text(encoding="utf-8"))
    patterns = pyproject["tool"]["setuptools"]["package-data"]["modelcheck.rulesets"]
    assert "*.md" in patterns or "SYNTAX.md" in patterns


@pytest.mark.parametrize("name", sorted(shipped_names()))
def test_each_shipped_rule_set_points_to_the_syntax_instead_of_copying_it(name: str) -> None:
    text = (data_dir() / f"{name}.toml").read_text(encoding="utf-8")
    opening = []
    for line in text.splitlines():
        if not line.startswith("#"):
            break
        opening.append(line)
    assert opening and "SYNTAX.md" in " ".join(opening[:3]), f"{name}.toml opens with a pointer to SYNTAX.md"
    comments = "\n".join(line for line in text.splitlines() if line.lstrip().startswith("#"))
    # the syntax is not copied: none of the document's section headings, nor its list of functions
    for copied in ("EXPRESSIONS are written", "MISSING VALUES:", "SELECTORS (in", "Functions:  sqrt"):
        assert copied not in comments, f"{name}.toml still carries the syntax ({copied!r})"
    # and its own notes stay: the clauses its checks follow
    assert re.search(rf"^# {re.escape(name)}:", comments, re.M), f"{name}.toml keeps its own notes"
