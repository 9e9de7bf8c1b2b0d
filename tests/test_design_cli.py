"""`modelcheck size` on the command line: output formats, unit handling, errors.

Until the command is registered in modelcheck/cli/main.py the tests drive ``cmd_size`` through their
own argparse parser (the same arguments); once it is, they run ``python -m modelcheck size``.
"""

from __future__ import annotations

import argparse
import json
import math
import sys

import pytest

from modelcheck.cli.size import add_size_parser, cmd_size, parse_force
from modelcheck.common.errors import ModelcheckError, UsageError
from modelcheck.common.units import Q_
from modelcheck.report.members import CAUTION
from tests.helpers import run_modelcheck


def _registered() -> bool:
    from modelcheck.cli import build_parser

    try:
        build_parser().parse_args(["size", "--force", "1 kN"])
    except SystemExit:
        return False
    return True


REGISTERED = _registered()


def run(argv: list[str], capsys: pytest.CaptureFixture[str]) -> tuple[int, str, str]:
    """Exit code, stdout, stderr of `modelcheck size ARGV`."""
    if REGISTERED:
        p = run_modelcheck("size", *argv, timeout=120)
        return p.returncode, p.stdout, p.stderr
    parser = argparse.ArgumentParser(prog="modelcheck")
    add_size_parser(parser.add_subparsers(dest="command"))
    args = parser.parse_args(["size", *argv])
    try:
        code = cmd_size(args)
    except ModelcheckError as exc:       # what modelcheck.cli.main does with it
        print(f"modelcheck: error: {exc}", file=sys.stderr)
        code = 2
    out, err = capsys.readouterr()
    return code, out, err


def test_json_output(capsys: pytest.CaptureFixture[str]) -> None:
    code, out, _ = run(["--force", "12 kip", "--material", "A36", "--shape", "threaded", "--length", "8 ft",
                        "--format", "json"], capsys)
    assert code == 0
    doc = json.loads(out)
    sel = doc["selected"]
    # AISC 360-16 D2(a): A ≥ 12 × 1.67 / 36 = 0.557 in² → ASME B1.1 UNC 7/8 in (0.601 in² body)
    assert sel["designation"] == "7/8-9 UNC"
    assert doc["required_area"] == {"value": pytest.approx(12 * 1.67 / 36, rel=1e-5), "unit": "in**2",
                                    "source": doc["required_area"]["source"]}
    assert sel["area"]["unit"] == "in**2" and sel["stress"]["unit"] == "ksi"
    # δ = PL/AE = 12 kip × 96 in / (0.6013 in² × 29000 ksi)   (AISC 360-16 E = 29000 ksi, from memory)
    assert sel["elongation"]["value"] == pytest.approx(12 * 96 / (math.pi / 4 * 0.875**2 * 29000), rel=1e-5)
    assert isinstance(sel["ratio"], float) and 0 < sel["ratio"] <= 1
    assert doc["caution"] == CAUTION


def test_table_output_ends_with_the_caution(capsys: pytest.CaptureFixture[str]) -> None:
    code, out, _ = run(["--force", "50 kN", "--rules", "steel-ec3", "--shape", "flat", "--thickness", "10 mm"], capsys)
    assert code == 0
    assert "flat bar 25 x 10 mm" in out          # EN 1993-1-1 (6.6): 50 kN / 235 MPa = 213 mm² → 25 x 10
    assert "not applied" in out and "--length" in out
    assert " ".join(out.split()).rstrip().endswith(" ".join(CAUTION.split()))


def test_catalog_compression(capsys: pytest.CaptureFixture[str]) -> None:
    code, out, _ = run(["--force", "-180 kN", "--rules", "steel-ec3", "--family", "HEA", "--length", "3.5 m",
                        "--format", "json"], capsys)
    assert code == 0
    assert json.loads(out)["selected"]["designation"] == "HEA 120"   # EN 1993-1-1 6.3.1: test_design_sizing


@pytest.mark.parametrize(("argv", "match"), [
    (["--force", "12"], "has no unit"),
    (["--force", "12 in"], "is not a force"),
    (["--force", "1e400 kN"], "not a finite number"),
    (["--force", "12 blorps"], "not a unit"),
    (["--force", "10 kN", "--length", "3"], "length unit"),
    (["--force", "10 kN", "--thickness", "6 mm"], "--thickness applies to --shape flat"),
    (["--force", "10 kN", "--rules", "no-such-rules"], "no rule set named"),
])
def test_input_errors_are_one_line_exit_2(argv: list[str], match: str, capsys: pytest.CaptureFixture[str]) -> None:
    code, out, err = run(argv, capsys)
    assert code == 2 and out == ""
    lines = err.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("modelcheck: error:") and match in lines[0]


@pytest.mark.parametrize(("text", "kip"), [("12 kip", 12.0), ("-8 kip", -8.0), ("50 kN", Q_(50, "kN").m_as("kip")),
                                           ("1.5e3 lbf", 1.5), ("12 [kip]", 12.0),
                                           ("12 KIP", 12.0), ("50 KN", Q_(50, "kN").m_as("kip"))])   # as tables
def test_parse_force_against_pint(text: str, kip: float) -> None:
    assert parse_force(text) == pytest.approx(Q_(kip, "kip").m_as("N"), rel=1e-12)   # pint


def test_bare_number_raises_usage_error() -> None:
    with pytest.raises(UsageError, match="no unit"):
        parse_force("12")


def test_shape_choices_of_the_command_line_are_the_sizing_shapes():
    from modelcheck.cli.size import SHAPE_CHOICES
    from modelcheck.design.sizing import SHAPES

    assert SHAPE_CHOICES == SHAPES
