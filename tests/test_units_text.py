"""Numbers with units as people write them: one normaliser and one reader for the whole project,
checked against pint's own definitions and the exact arithmetic of fractions."""

from __future__ import annotations

from fractions import Fraction
from pathlib import Path

import pytest

from modelcheck.cli.size import parse_force, parse_length_arg
from modelcheck.common.errors import UsageError
from modelcheck.common.units import Q_, QuantityTextError, normalise_unit, parse_quantity, parse_unit
from modelcheck.design.stock import parse_length
from modelcheck.loads.tables import ForceUnitError, force_unit_factor
from modelcheck.rules.ruleset import load_ruleset
from tests.helpers import IN, KIP, KIP_NIST


@pytest.mark.parametrize(("trade", "pint_unit"), [
    ("mm2", "mm**2"), ("m2", "m**2"), ("cm2", "cm**2"), ("in2", "in**2"),   # pint
    ("mm4", "mm**4"), ("in4", "in**4"),                                       # pint
    ("N/mm2", "MPa"),          # 1 N/mm² = 1 MPa (SI Brochure; pint)
    ("kN/m2", "kPa"),          # 1 kN/m² = 1 kPa (pint)
    ("kN/m", "N/mm"),          # 1 kN/m = 1 N/mm (pint)
    ("kip/in2", "ksi"),        # 1 ksi = 1 kip/in² (NIST SP 811; pint)
    ("KN", "kN"), ("KIP", "kip"), ("KIPS", "kip"), ("LBF", "lbf"),           # exporter spellings
    ("kN·m", "kN*m"), ("mm^2", "mm**2"), ("mm²", "mm**2"), ("1/K", "1/K"),
    ("/ delta_degF", "1/delta_degF"),
])
def test_trade_spellings_read_as_pint_defines_them(trade: str, pint_unit: str) -> None:
    assert Q_(1.0, parse_unit(trade)).to_base_units().magnitude == pytest.approx(
        Q_(1.0, pint_unit).to_base_units().magnitude, rel=1e-12)
    assert parse_unit(normalise_unit(trade)) == parse_unit(trade)       # normalising twice changes nothing


@pytest.mark.parametrize(("text", "number", "si"), [
    ("1 1/2 kip", Fraction(3, 2), 1.5 * KIP_NIST),            # NIST SP 811: kip = 4448.2216152605 N
    ("3/8 in", Fraction(3, 8), 0.375 * IN),                   # inch = 0.0254 m exactly (pint)
    ("-8 kip", Fraction(-8), -8 * KIP_NIST),
    ("25 [mm]", Fraction(25), 0.025),
    ("0.1 m", Fraction(1, 10), 0.1),                          # exact: 1/10, not 0.1000000000000000055
    ("157 mm2", Fraction(157), 157e-6),
    ("355 N/mm2", Fraction(355), 355e6),
    ("1.5e3 N", Fraction(1500), 1500.0),
])
def test_parse_quantity(text: str, number: Fraction, si: float) -> None:
    q = parse_quantity(text)
    assert q.number == number
    assert q.si() == pytest.approx(si, rel=1e-12)


@pytest.mark.parametrize(("text", "dimension", "fragment"), [
    ("12", "force", "has no unit"),
    ("12 in", "force", "is not a force"),
    ("5 N/0", "force", "divides by zero"),
    ("1/0 kN", "force", "division by zero"),
    ("1e400 kN", "force", "not a finite number"),
    ("12 blorps", "force", "not a unit"),
    ("twelve kN", "force", "not a number with a unit"),
    ("3 mm2", "length", "is not a length"),
])
def test_bad_text_is_one_clear_error(text: str, dimension: str, fragment: str) -> None:
    with pytest.raises(QuantityTextError, match=fragment) as info:
        parse_quantity(text, dimension, what="--x")
    assert "\n" not in str(info.value) and str(info.value).startswith("--x ")


def test_every_caller_reads_mixed_numbers_alike(tmp_path: Path) -> None:
    # the command line's --force and --length, stock lengths, rule-file parameters, load-table
    # units and property texts read "1 1/2" as 3/2 (common practice for fractional inch sizes)
    kip = KIP                                                    # pint
    assert parse_force("1 1/2 kip") == pytest.approx(1.5 * kip, rel=1e-12)
    assert parse_length_arg("--length", "1 1/2 in") == pytest.approx(1.5 * IN, rel=1e-12)
    assert parse_length("1 1/2 in") == (Fraction(3, 2), "in")
    assert force_unit_factor("kip") == pytest.approx(kip, rel=1e-12)
    rules = tmp_path / "r.toml"
    rules.write_text('[ruleset]\nname = "r"\nbasis = "test"\nunits = "US"\n[display]\nstress = "kip/in2"\n'
                     '[parameters]\nf = "1 1/2 kip"\ns = "21.6 N/mm2"\n'
                     '[[check]]\nid = "c"\nwhen = "P > 0"\ndemand = "P / A"\ncapacity = "s"\nunit = "N/mm2"\n',
                     encoding="utf-8")
    rs = load_ruleset(rules)
    assert rs.parameter_map["f"].value.m_as("N") == pytest.approx(1.5 * kip, rel=1e-12)
    assert rs.parameter_map["s"].value.m_as("MPa") == pytest.approx(21.6)
    assert rs.display["stress"] == "kip/in**2"


def test_force_units_refused_with_the_reason() -> None:
    with pytest.raises(ForceUnitError, match="not a force"):
        force_unit_factor("kN/m")
    with pytest.raises(ForceUnitError, match="divides by zero"):
        force_unit_factor("N/0")
    with pytest.raises(UsageError, match="--force '3 kg'"):
        parse_force("3 kg")
