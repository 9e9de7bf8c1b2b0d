"""The rule engine: results table, statuses, missing inputs, load cases, selection, order."""

from __future__ import annotations

import textwrap
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd
import pytest

from modelcheck.common.errors import RuleSetError
from modelcheck.common.table import RESULT_COLUMNS
from modelcheck.common.units import Q_, ureg
from modelcheck.rules.engine import evaluate_expression, run_checks
from modelcheck.rules.ruleset import RuleSet, load_ruleset
from tests.tables import force_table, member_table

NAN = np.nan

# a plain steel member, SI base units: 1000 mm², r = 20 mm, 3 m, E = 200 GPa, 250/400 MPa
BASE: dict[str, Any] = {
    "model": "m1.ifc", "ifc_class": "IfcMember", "name": "Brace", "shape": "L", "storey": "Level 1",
    "material": "S235", "material_category": "steel",
    "area": 1e-3, "r_min": 0.02, "length": 3.0, "E": 200e9, "Fy": 250e6, "Fu": 400e6, "alpha": 12e-6,
}


def members(*rows: dict[str, Any]) -> pd.DataFrame:
    return member_table(*rows, defaults=BASE)


def forces(*rows: tuple[str, str, float], model: str | None = "m1.ifc") -> pd.DataFrame:
    return force_table(*rows, model=model)


def ruleset(tmp_path: Path, checks: str, extra: str = "", units: str = "SI") -> RuleSet:
    text = textwrap.dedent(f"""\
        [ruleset]
        name = "test"
        basis = "test"
        units = "{units}"
        [parameters]
        Omega = 1.0
        """) + textwrap.dedent(extra) + textwrap.dedent(checks)
    path = tmp_path / "rules.toml"
    path.write_text(text, encoding="utf-8")
    return load_ruleset(path)


TENSION = """
[[check]]
id = "tension"
when = "P > 0"
demand = "P / A"
capacity = "Fy / Omega"
message = "f = {demand}"
"""

SLENDER = """
[[check]]
id = "slender"
demand = "L / r"
capacity = "300"
"""

COMPRESSION = """
[[check]]
id = "compression"
when = "P < 0"
demand = "-P / A"
capacity = "Fy / Omega"
"""


def test_results_have_the_contract_columns(tmp_path: Path) -> None:
    rs = ruleset(tmp_path, TENSION)
    res = run_checks(rs, members({}), forces(("G0", "D", 100e3)))
    assert list(res.columns[:len(RESULT_COLUMNS)]) == list(RESULT_COLUMNS)
    row = res.iloc[0]
    # 100 kN / 1000 mm² = 100 MPa against 250 MPa (arithmetic)
    assert (row.status, row.unit, row.load_case) == ("pass", "MPa", "D")
    assert row.demand == pytest.approx(100.0) and row.capacity == pytest.approx(250.0)
    assert row.ratio == pytest.approx(0.4)
    assert len(row.missing) == 0 and row.message == "f = 100 MPa"
    assert row.demand_source == "P / A" and row.capacity_source == "Fy / Omega"
    ureg.Unit(row.unit)   # pint can read the unit
    empty = run_checks(rs, members({}).iloc[:0], None)
    assert list(empty.columns[:len(RESULT_COLUMNS)]) == list(RESULT_COLUMNS) and empty.empty


def test_missing_inputs_make_a_member_unchecked_never_passed(tmp_path: Path) -> None:
    rs = ruleset(tmp_path, TENSION)
    res = run_checks(rs, members({"Fy": NAN}, {"area": NAN, "Fy": NAN}), forces(("G0", "D", 1.0), ("G1", "D", 1.0)))
    assert list(res.status) == ["unchecked", "unchecked"]
    assert res.ratio.isna().all()
    assert res.missing[0] == ["Fy: no yield strength in the material properties or the material library"]
    assert [m.split(":")[0] for m in res.missing[1]] == ["A", "Fy"]
    assert res.message[1] == "not checked: missing A, Fy"


def test_a_member_without_force_gets_one_unchecked_result_per_force_check(tmp_path: Path) -> None:
    rs = ruleset(tmp_path, TENSION + SLENDER + COMPRESSION)
    res = run_checks(rs, members({}), None)
    assert list(res.check) == ["tension", "slender", "compression"]
    assert list(res.status) == ["unchecked", "pass", "unchecked"]
    assert res.load_case.isna().all()
    assert res.missing[0] == ["P: no axial force from load tables, model properties or IFC analysis results"]
    # L/r = 3000/20 = 150 (arithmetic)
    assert res.demand[1] == pytest.approx(150.0)


def test_one_result_per_load_case_in_a_stable_order(tmp_path: Path) -> None:
    rs = ruleset(tmp_path, TENSION + SLENDER + COMPRESSION)
    m = members({"global_id": "B"}, {"global_id": "A"}, {"global_id": "A", "model": "m0.ifc"})
    f = pd.concat([
        forces(("B", "W", -10e3), ("A", "D", 50e3), ("B", "D", 20e3), ("A", "W", -30e3)),
        forces(("A", "S", 5e3), model="m0.ifc"),
    ])
    res = run_checks(rs, m, f)
    got = list(zip(res.model, res.global_id, res.check, res.load_case, strict=True))
    assert got == [
        ("m0.ifc", "A", "tension", "S"),
        ("m0.ifc", "A", "slender", None),
        ("m1.ifc", "A", "tension", "D"),
        ("m1.ifc", "A", "slender", None),
        ("m1.ifc", "A", "compression", "W"),
        ("m1.ifc", "B", "tension", "D"),
        ("m1.ifc", "B", "slender", None),
        ("m1.ifc", "B", "compression", "W"),
    ]
    # load cases in the natural order of their names, whatever the order of the forces table:
    # D before W, and LC2 before LC10 (how load-case lists are numbered and read, common practice)
    res2 = run_checks(ruleset(tmp_path, SLENDER.replace('demand = "L / r"', 'demand = "where(P > 0, L / r, L / r)"')), m, f)
    assert list(res2[res2.global_id == "B"].load_case) == ["D", "W"]
    f3 = forces(("B", "LC10", 1e3), ("B", "LC2", 1e3), ("B", "lc1", 1e3))
    res3 = run_checks(ruleset(tmp_path, SLENDER.replace('demand = "L / r"', 'demand = "where(P > 0, L / r, L / r)"')),
                      m, f3)
    assert list(res3[(res3.global_id == "B") & (res3.model == "m1.ifc")].load_case) == ["lc1", "LC2", "LC10"]


def test_forces_without_model_apply_to_every_model_and_unknown_members_are_ignored(tmp_path: Path) -> None:
    rs = ruleset(tmp_path, TENSION)
    m = members({"global_id": "X", "model": "a.ifc"}, {"global_id": "X", "model": "b.ifc"})
    res = run_checks(rs, m, forces(("X", "D", 1e3), ("nobody", "D", 1e3), model=None))
    assert list(res.model) == ["a.ifc", "b.ifc"] and list(res.status) == ["pass", "pass"]


def test_forces_of_another_model_are_not_taken_by_a_model_checked_alone(tmp_path: Path) -> None:
    # one model's members (as one model, or a part of one, is evaluated): a row naming another
    # model with the same GlobalId is that model's force, never this one's (common practice)
    rs = ruleset(tmp_path, TENSION)
    m = members({"global_id": "X"}, {"global_id": "Y"})
    f = pd.concat([forces(("X", "D", 1e3)), forces(("X", "W", 1e3), ("Y", "D", 1e3), model="other.ifc")],
                  ignore_index=True)
    res = run_checks(rs, m, f)
    assert list(zip(res.global_id, res.load_case, res.status, strict=True)) == [
        ("X", "D", "pass"), ("Y", None, "unchecked")]


def test_a_load_case_without_a_number_is_unchecked_for_that_case(tmp_path: Path) -> None:
    rs = ruleset(tmp_path, TENSION)
    res = run_checks(rs, members({}), forces(("G0", "D", NAN), ("G0", "L", 1e3)))
    assert list(res.status) == ["unchecked", "pass"]
    assert res.missing[0] == ["P: load case 'D' has no axial force value for this member"]


def test_exactly_at_capacity_passes_just_above_fails(tmp_path: Path) -> None:
    rs = ruleset(tmp_path, TENSION)
    # 250 MPa × 1000 mm² = 250 kN exactly at Fy (arithmetic); computed through unit conversions
    at = Q_(250, "MPa").m_as("Pa") * 1e-3
    res = run_checks(rs, members({}, {}), forces(("G0", "D", at), ("G1", "D", at * 1.0001)))
    assert list(res.status) == ["pass", "fail"]
    assert res.ratio[0] == pytest.approx(1.0)


def test_non_finite_values_are_unchecked(tmp_path: Path) -> None:
    rs = ruleset(tmp_path, TENSION)
    res = run_checks(rs, members({"area": 0.0}), forces(("G0", "D", 1e3)))
    assert res.status[0] == "unchecked"
    assert res.missing[0] == []
    assert "not a finite number" in res.message[0]


def test_applicability_on_known_values(tmp_path: Path) -> None:
    check = """
    [[check]]
    id = "net"
    when = "known(An) and P > 0"
    demand = "P / An"
    capacity = "Fu"
    """
    rs = ruleset(tmp_path, check)
    m = members({}, {})
    f = forces(("G0", "D", 1e3), ("G1", "D", 1e3))
    assert run_checks(rs, m, f).empty          # no net area anywhere: no results, not 'unchecked'
    m["net_area"] = [8e-4, NAN]
    res = run_checks(rs, m, f)
    assert list(res.global_id) == ["G0"] and res.status[0] == "pass"
    # 1 kN / 800 mm² = 1.25 MPa (arithmetic)
    assert res.demand[0] == pytest.approx(1.25)


def test_unknown_condition_is_unchecked(tmp_path: Path) -> None:
    check = """
    [[check]]
    id = "long"
    when = "L > 2 [m]"
    demand = "L"
    capacity = "10 [m]"
    """
    res = run_checks(ruleset(tmp_path, check), members({}, {"length": 1.0}, {"length": NAN}), None)
    assert list(res.global_id) == ["G0", "G2"]
    assert list(res.status) == ["pass", "unchecked"]
    assert res.missing[1][0].startswith("L: no length")


def test_missing_list_names_only_what_the_member_needs(tmp_path: Path) -> None:
    rs = load_ruleset("steel-ec3")
    m = members(
        {"shape": "round-bar", "Fy": NAN},                         # no h, b, tf: a round bar needs none
        {"shape": "I", "h": 0.2, "b": NAN, "tf": 0.0085},          # an I-section needs b for its curve
        {"shape": "I", "h": 0.2, "b": 0.1, "tf": 0.0085, "area": NAN, "E": NAN},
    )
    res = run_checks(rs, m, forces(("G0", "D", -1e3), ("G1", "D", -1e3), ("G2", "D", -1e3)), checks=["compression"])
    assert [[s.split(":")[0] for s in ms] for ms in res.missing] == [["Fy"], ["b"], ["A", "E"]]


def test_selectors(tmp_path: Path) -> None:
    checks = """
    [[check]]
    id = "rods"
    demand = "L"
    capacity = "10 [m]"
    [check.select]
    ifc_class = ["IfcMember"]
    any_name = ["*rod*"]

    [[check]]
    id = "not-level-2"
    demand = "L"
    capacity = "10 [m]"
    [check.select.exclude]
    storey = ["Level 2"]
    """
    extra = """
    [select]
    material = ["S*"]
    """
    rs = ruleset(tmp_path, checks, extra)
    m = members(
        {"name": "Hanger ROD", "ifc_class": "IfcMemberStandardCase"},   # IFC4 subtype of IfcMember
        {"name": "Tie", "object_type": "Threaded rod"},                 # ObjectType counts for any_name
        {"name": "rod", "ifc_class": "IfcColumn"},                      # not an IfcMember
        {"name": "rod", "storey": "Level 2"},
        {"name": "rod", "material": "Aluminium 6061"},                  # not selected by the rule set
        {"name": None, "type_name": "ROD-12"},
    )
    res = run_checks(rs, m, None)
    assert sorted(res[res.check == "rods"].global_id) == ["G0", "G1", "G3", "G5"]
    assert sorted(res[res.check == "not-level-2"].global_id) == ["G0", "G1", "G2", "G5"]


def test_a_users_new_check_needs_no_code_change(tmp_path: Path) -> None:
    # a width-to-thickness check of the user's own, in US units: AISC 360-16 Table B4.1a case 1,
    # λr = 0.56 √(E/Fy) = 13.5 for E = 29000 ksi, Fy = 50 ksi (from the formula)
    check = """
    [[check]]
    id = "flange-width-thickness"
    clause = "AISC 360-16 Table B4.1a, case 1"
    demand = "b / (2 * tf)"
    capacity = "0.56 * sqrt(E / Fy)"
    message = "b/2tf = {demand:.1f} (λr = {capacity:.1f})"
    [check.select]
    shape = ["I"]
    """
    rs = ruleset(tmp_path, check, units="US")
    e, fy = Q_(29000, "ksi").m_as("Pa"), Q_(50, "ksi").m_as("Pa")
    m = members(
        {"shape": "I", "b": Q_(8, "in").m_as("m"), "tf": Q_(0.5, "in").m_as("m"), "E": e, "Fy": fy},
        {"shape": "I", "b": Q_(10, "in").m_as("m"), "tf": Q_(0.25, "in").m_as("m"), "E": e, "Fy": fy},
        {"shape": "L"},
    )
    res = run_checks(rs, m, None)
    assert list(res.status) == ["pass", "fail"]
    assert res.capacity[0] == pytest.approx(0.56 * (29000 / 50) ** 0.5)
    assert list(res.message) == ["b/2tf = 8.0 (λr = 13.5)", "b/2tf = 20.0 (λr = 13.5)"]
    assert res.clause[0] == "AISC 360-16 Table B4.1a, case 1"


def test_members_table_without_some_columns(tmp_path: Path) -> None:
    rs = ruleset(tmp_path, TENSION + SLENDER)
    m = members({}).drop(columns=["alpha", "alpha_source", "r_min", "storey"])
    res = run_checks(rs, m, forces(("G0", "D", 1e3)))
    assert list(res.status) == ["pass", "unchecked"]
    assert res.missing[1][0].startswith("r: ")


def test_duplicate_member_keys_still_join_their_forces(tmp_path: Path) -> None:
    rs = ruleset(tmp_path, TENSION)
    m = members({"global_id": "X"}, {"global_id": "X"})
    res = run_checks(rs, m, forces(("X", "D", 1e3)))
    assert len(res) == 2 and set(res.status) == {"pass"}


def test_missing_inputs_are_never_a_shared_mutable_object(tmp_path: Path) -> None:
    # changing one row's list must not change another's: a list per row, an immutable () when empty
    res = run_checks(ruleset(tmp_path, SLENDER), members({}, {}), None)
    assert res.missing[0] is not res.missing[1] or isinstance(res.missing[0], tuple)
    ok = run_checks(ruleset(tmp_path, SLENDER), members({}), None)
    assert len(ok) and set(ok.status) == {"pass"} and all(m == () for m in ok.missing)


def test_a_subset_of_checks(tmp_path: Path) -> None:
    rs = ruleset(tmp_path, TENSION + SLENDER)
    assert list(run_checks(rs, members({}), None, checks=["slender"]).check) == ["slender"]
    with pytest.raises(RuleSetError, match="no check 'nope'"):
        run_checks(rs, members({}), None, checks=["nope"])


def test_evaluate_expression_over_members() -> None:
    rs = load_ruleset("steel-asd-us")
    m = members({}, {"Fy": NAN})
    cap = evaluate_expression(rs, "Fy / Omega_t * A", m)
    # 250 MPa / 1.67 × 1000 mm² = 149.7 kN (AISC 360-16 D2(a), arithmetic)
    assert cap.m_as("kN")[0] == pytest.approx(250 / 1.67)
    assert np.isnan(cap.m_as("kN")[1])
    with pytest.raises(RuleSetError, match="unknown name"):
        evaluate_expression(rs, "Fyy", m)


def test_large_member_tables_run_in_one_pass(tmp_path: Path) -> None:
    # 20,000 members × 2 load cases in one evaluation (timing was measured by hand; no assertion on time)
    n = 20_000
    rs = ruleset(tmp_path, TENSION + COMPRESSION)
    one = members({}).iloc[0].to_dict()
    m = pd.DataFrame({c: np.full(n, v, dtype=object if not isinstance(v, float) else float)
                      for c, v in one.items() if c != "warnings"})
    m["global_id"] = [f"G{i:05d}" for i in range(n)]
    m["area"] = np.linspace(1e-4, 2e-3, n)
    f = pd.DataFrame({"model": "m1.ifc", "global_id": np.repeat(m.global_id.to_numpy(), 2),
                      "load_case": ["D", "W"] * n, "axial_force": np.tile([100e3, -50e3], n), "source": "t"})
    res = run_checks(rs, m, f)
    assert len(res) == 2 * n
    # 100 kN over A passes where A >= 400 mm² (Fy = 250 MPa, arithmetic)
    tension = res[res.check == "tension"]
    expected = m.area.to_numpy() >= 100e3 / 250e6
    assert ((tension.status == "pass").to_numpy() == expected).all()
