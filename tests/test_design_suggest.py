"""Suggestions for failing members: hand-checked choices, and every suggestion passes all its checks."""

from __future__ import annotations

import json
import math
from typing import Any

import numpy as np
import pandas as pd
import pytest

from modelcheck.design import stock
from modelcheck.design.suggest import suggest
from modelcheck.rules.engine import run_checks
from modelcheck.rules.ruleset import load_ruleset
from tests.helpers import IN, KIP, KSI, REPO, SAMPLES
from tests.tables import force_table as forces
from tests.tables import member_table as members

NAN = np.nan


def a36(**kw: Any) -> dict[str, Any]:
    # ASTM A36: Fy 36 ksi, Fu 58 ksi; E 29000 ksi (AISC 360-16) (from memory)
    return {"E": 29000 * KSI, "Fy": 36 * KSI, "Fu": 58 * KSI, **kw}


def s235(**kw: Any) -> dict[str, Any]:
    # EN 1993-1-1 Table 3.1 / 3.2.6: fy 235, fu 360 MPa, E 210000 MPa (from memory)
    return {"E": 210e9, "Fy": 235e6, "Fu": 360e6, **kw}


def by_member(out: pd.DataFrame) -> dict[str, Any]:
    fails = out[out.status == "fail"]
    return {gid: grp.suggestion.iloc[0] for gid, grp in fails.groupby("global_id")}


@pytest.fixture(params=["every size", "bisection"])
def search(request: pytest.FixtureRequest, monkeypatch: pytest.MonkeyPatch) -> str:
    """Both ways of searching a family of monotone sizes: every size at once (few members), and
    bisection (forced here; a large model's many failing members take it)."""
    from modelcheck.design import suggest as module

    if request.param == "bisection":
        monkeypatch.setattr(module, "EVERY_SIZE_PAIRS", 0)
    return request.param


def test_rod_gets_the_next_unc_size_that_passes(search: str) -> None:
    rs = load_ruleset("steel-asd-us")
    d = 0.75 * IN
    m = members(a36(shape="round-bar", name="HANGER ROD", d=d, area=math.pi / 4 * d * d, r_min=d / 4, length=2.0))
    f = forces(("G0", "D+L", 12 * KIP), ("G0", "D+S", 8 * KIP))
    res = run_checks(rs, m, f)
    out = suggest(rs, m, f, res)
    # AISC 360-16 D2(a): A ≥ 12 × 1.67 / 36 = 0.557 in²;  J3.6: Ab ≥ 12 × 2 / (0.75 × 58) = 0.552 in²
    a_req = max(12 * 1.67 / 36, 12 * 2 / (0.75 * 58))
    assert math.pi / 4 * 0.75**2 < a_req <= math.pi / 4 * 0.875**2      # ASME B1.1 UNC: 3/4, 7/8 in
    s = by_member(out)["G0"]
    assert s["designation"] == "7/8-9 UNC" and s["family"].startswith("threaded rod")
    assert s["area"] == {"value": pytest.approx(math.pi / 4 * 0.875**2, rel=1e-5), "unit": "in**2",
                         "source": s["area"]["source"]}
    assert s["ratio"] == pytest.approx(12 / (math.pi / 4 * 0.875**2) / (36 / 1.67), rel=1e-5)
    # only failing rows carry it
    assert out.loc[out.status != "fail", "suggestion"].isna().all()


def test_flat_bar_wider_first_then_next_thickness() -> None:
    rs = load_ruleset("steel-ec3")
    flat = s235(shape="flat-bar", h=0.010, b=0.060, area=600e-6, r_min=0.010 / math.sqrt(12), length=NAN)
    m = members(flat, dict(flat), dict(flat))
    f = forces(("G0", "LC", 200e3), ("G1", "LC", 330e3), ("G2", "LC", 380e3))
    out = suggest(rs, m, f, run_checks(rs, m, f))
    s = by_member(out)
    # EN 1993-1-1 (6.6) A ≥ N/fy; EN 10058 widths (from memory): 90 and 150 mm at t = 10, 140 at t = 12
    assert 200e3 / 235 <= 900 and 200e3 / 235 > 800
    assert s["G0"]["designation"] == "flat bar 90 x 10 mm"
    # 1404 mm² needed: 150 x 10 = 1500 would do, but 120 x 12 = 1440 is less steel (smallest area wins)
    assert 12 * 110 < 330e3 / 235 <= 12 * 120 < 10 * 150
    assert s["G1"]["designation"] == "flat bar 120 x 12 mm"
    assert 380e3 / 235 > 1500 and 380e3 / 235 <= 12 * 140 and 380e3 / 235 > 12 * 130
    assert s["G2"]["designation"] == "flat bar 140 x 12 mm"
    # no length: slenderness and elongation stay unchecked, as they were for the member itself
    assert set(s["G0"]["unchecked"]) == {"slenderness-tension", "elongation"}


def test_catalog_member_stays_in_its_family() -> None:
    rs = load_ruleset("steel-ec3")
    hea = stock.load_shapes("shapes-en.csv").set_index("designation").loc["HEA 140"]
    m = members(s235(shape="I", section_name="HEA140", area=hea.area, r_min=hea.r_min, h=hea.h, b=hea.b,
                     tf=hea.tf, tw=hea.tw, length=3.5))
    f = forces(("G0", "LC", -600e3))
    out = suggest(rs, m, f, run_checks(rs, m, f))
    s = by_member(out)["G0"]
    assert s["designation"].startswith("HEA") and s["family"] == "HEA"
    assert s["ratio"] <= 1


def test_shapes_without_a_series_get_a_note() -> None:
    rs = load_ruleset("steel-ec3")
    m = members(s235(shape="T", section_name="T80", area=1.38e-3, r_min=0.0165, length=3.0))
    f = forces(("G0", "LC", 800e3))
    out = suggest(rs, m, f, run_checks(rs, m, f))
    fail = out[out.status == "fail"]
    assert fail.suggestion.isna().all()
    assert fail.suggestion_note.str.contains("no stock series or shape table for shape 'T'").all()


def test_no_failures_leave_results_untouched() -> None:
    rs = load_ruleset("steel-ec3")
    m = members(s235(shape="round-bar", d=0.02, area=math.pi * 1e-4, r_min=0.005, length=1.0))
    f = forces(("G0", "LC", 1e3))
    res = run_checks(rs, m, f)
    out = suggest(rs, m, f, res)
    assert out.drop(columns=["suggestion", "suggestion_note"]).equals(res)
    assert out.suggestion.isna().all()


def _replace(m: pd.DataFrame, gid: str, designation: str, family: str, ruleset: Any) -> pd.DataFrame:
    """The member with its section replaced by the named candidate (looked up independently)."""
    series = stock.stock_series(ruleset)
    pools = [stock.round_bars(series), stock.square_bars(series), stock.flat_bars(series),
             stock.threaded_rods("UNC"), stock.threaded_rods("ISO coarse"),
             stock.load_shapes("shapes-aisc.csv"), stock.load_shapes("shapes-en.csv")]
    cand = pd.concat(pools, ignore_index=True)
    hit = cand[cand.designation == designation]
    if designation.startswith("flat bar") and not len(hit):
        t_w = designation.removeprefix("flat bar ").split(" x ")
        raise AssertionError(f"unknown flat {t_w}")
    row = hit.iloc[0]
    one = m[m.global_id == gid].copy()
    for c in stock.GEOMETRY_COLUMNS:
        one[c] = row[c]
    one["shape"] = row["shape"]
    one["section_name"] = designation
    return one


@pytest.mark.parametrize(("name", "rules"), [
    ("canopy", "steel-asd-us"), ("hall", "steel-ec3"), ("hall", "hanger-rods"), ("pipebridge", "steel-ec3"),
])
def test_every_suggestion_on_the_samples_passes_all_its_checks(name: str, rules: str, search: str) -> None:
    from modelcheck.core.model import ForceOptions
    from modelcheck.core.read import read_model
    from modelcheck.loads.tables import read_load_table

    opts = ForceOptions(tables=(read_load_table(str(SAMPLES / f"nettlebrook-{name}-forces.csv")),),
                        property=("MC_MemberForces", "AxialForce"))
    d = read_model(str(SAMPLES / f"nettlebrook-{name}.ifc"), opts)
    rs = load_ruleset(rules)
    res = run_checks(rs, d.members, d.forces)
    out = suggest(rs, d.members, d.forces, res)
    s = by_member(out)
    assert s, "the sample has failing members"
    for gid, sugg in s.items():
        assert sugg is not None, gid
        one = _replace(d.members, gid, sugg["designation"], sugg["family"], rs)
        again = run_checks(rs, one, d.forces)
        own = res[res.global_id == gid]
        own_unchecked = set(zip(own.check[own.status == "unchecked"], own.load_case[own.status == "unchecked"],
                                strict=True))
        for rec in again.to_dict("records"):
            if rec["status"] == "unchecked":
                assert (rec["check"], rec["load_case"]) in own_unchecked
            else:
                assert rec["status"] == "pass", (gid, sugg["designation"], rec["check"], rec["ratio"])
        assert max(again.ratio.dropna()) == pytest.approx(sugg["ratio"], rel=1e-5)


def test_suggestion_matches_the_report_schema() -> None:
    import jsonschema

    schema = json.loads((REPO / "modelcheck" / "schemas" / "check.schema.json").read_text(encoding="utf-8"))
    rs = load_ruleset("steel-asd-us")
    d = 0.75 * IN
    m = members(a36(shape="round-bar", name="ROD", d=d, area=math.pi / 4 * d * d, r_min=d / 4, length=2.0))
    f = forces(("G0", "D+L", 12 * KIP))
    out = suggest(rs, m, f, run_checks(rs, m, f))
    sub = {"$defs": schema["$defs"], **schema["$defs"]["suggestion"]}
    for s in out.suggestion:
        jsonschema.validate(s, sub)
    json.dumps([s for s in out.suggestion], allow_nan=False)


@pytest.mark.parametrize("name", ["canopy", "hall"])
def test_bisection_and_every_size_suggest_the_same(name: str, monkeypatch: pytest.MonkeyPatch) -> None:
    """In a family whose every check improves with size, the first size that passes (bisection) is
    the smallest that passes (every size tried): the same suggestion either way (common practice:
    area and radius of gyration grow along a bar or rod series)."""
    from modelcheck.core.model import ForceOptions
    from modelcheck.core.read import read_model
    from modelcheck.design import suggest as module
    from modelcheck.loads.tables import read_load_table

    opts = ForceOptions(tables=(read_load_table(str(SAMPLES / f"nettlebrook-{name}-forces.csv")),),
                        property=("MC_MemberForces", "AxialForce"))
    d = read_model(str(SAMPLES / f"nettlebrook-{name}.ifc"), opts)
    rs = load_ruleset("steel-asd-us")
    res = run_checks(rs, d.members, d.forces)
    every = by_member(suggest(rs, d.members, d.forces, res))
    monkeypatch.setattr(module, "EVERY_SIZE_PAIRS", 0)
    halved = by_member(suggest(rs, d.members, d.forces, res))
    assert every == halved
    assert any(s and s["family"].startswith(("threaded", "round", "square")) for s in every.values())


def test_a_long_round_bar_in_tension_is_sized_for_its_stress_not_l_over_r(search: str) -> None:
    # 3 kip on a 3/8 in A36 bar 20 ft long: AISC 360-16 D2(a) needs A >= 3 x 1.67 / 36 = 0.139 in²
    # -> 7/16 in (1/16 in stock steps, common practice); no L/r limit for a bar in tension (D1 user note)
    rs = load_ruleset("steel-asd-us")
    d = 0.375 * IN
    m = members(a36(shape="round-bar", name="Tie", d=d, area=math.pi / 4 * d**2, r_min=d / 4, length=240 * IN))
    f = forces(("G0", "LC", 3 * KIP))
    out = suggest(rs, m, f, run_checks(rs, m, f))
    assert 3.0 / (math.pi / 4 * 0.375**2) > 36 / 1.67          # 3/8 in fails D2(a): 27.2 > 21.6 ksi
    assert by_member(out)["G0"]["designation"] == "round bar 7/16 in"
