"""Capacity rating against hand values from AISC 360-16 and EN 1993-1-1, and against the engine."""

from __future__ import annotations

import json
import math
from typing import Any

import numpy as np
import pandas as pd
import pytest

from modelcheck.design.rating import rate_members
from modelcheck.report.quantities import DisplayUnits
from modelcheck.rules.engine import run_checks
from modelcheck.rules.ruleset import load_ruleset
from tests.helpers import FT, IN, IN2, KIP, KSI, SAMPLES
from tests.tables import member_table as members

NAN = np.nan
US, SI = DisplayUnits("US"), DisplayUnits("SI")


def w8x31_a992(length_ft: float) -> dict[str, Any]:
    # AISC Shapes Database v15.0: W8X31 A = 9.13 in², ry = 2.02 in (from memory); ASTM A992 Fy 50 ksi,
    # Fu 65 ksi; E = 29,000 ksi (AISC 360-16 B3 user note); all from memory
    return {"shape": "I", "section_name": "W8X31", "area": 9.13 * IN2, "r_min": 2.02 * IN,
            "h": 8.0 * IN, "b": 8.0 * IN, "tf": 0.435 * IN, "tw": 0.285 * IN,
            "length": length_ft * FT, "E": 29000 * KSI, "Fy": 50 * KSI, "Fu": 65 * KSI}


def value(q: dict[str, Any] | None) -> float:
    assert q is not None
    return float(q["value"])


def test_aisc_e3_column_and_d2_tension() -> None:
    rs = load_ruleset("steel-asd-us")
    r = rate_members(rs, members(w8x31_a992(10.0)), US).iloc[0]
    a, ry, length = 9.13, 2.02, 120.0
    klr = length / ry                                    # AISC 360-16 E2, K = 1
    fe = math.pi**2 * 29000 / klr**2                     # (E3-4)
    assert klr <= 4.71 * math.sqrt(29000 / 50)
    fcr = 0.658 ** (50 / fe) * 50                        # (E3-2)
    assert value(r.compression) == pytest.approx(fcr * a / 1.67, rel=1e-5)   # Pn/Ωc, Ωc = 1.67 (E1)
    assert r.compression_check == "compression"
    assert value(r.tension) == pytest.approx(50 * a / 1.67, rel=1e-5)        # D2(a): Fy Ag / 1.67
    assert r.tension_check == "tension-yield"
    assert r.tension["unit"] == "kip" and "AISC 360-16 D2(a)" in r.tension["source"]


def test_aisc_e3_elastic_range() -> None:
    rs = load_ruleset("steel-asd-us")
    r = rate_members(rs, members(w8x31_a992(30.0)), US).iloc[0]
    klr = 360 / 2.02
    assert klr > 4.71 * math.sqrt(29000 / 50)
    fcr = 0.877 * math.pi**2 * 29000 / klr**2            # AISC 360-16 (E3-3)
    assert value(r.compression) == pytest.approx(fcr * 9.13 / 1.67, rel=1e-5)


def test_ec3_buckling_of_hea_140() -> None:
    rs = load_ruleset("steel-ec3")
    # EN 10365: HEA 140 A = 31.4 cm², iz = 3.52 cm, h 133, b 140, tf 8.5 (from memory); S355
    m = members({"shape": "I", "area": 31.4e-4, "r_min": 3.52e-2, "h": 0.133, "b": 0.140, "tf": 0.0085,
                 "tw": 0.0055, "length": 3.6, "E": 210e9, "Fy": 355e6, "Fu": 490e6})
    r = rate_members(rs, m, SI).iloc[0]
    lam1 = math.pi * math.sqrt(210000 / 355)             # EN 1993-1-1 6.3.1.3
    lam = 3600 / (35.2 * lam1)                           # (6.50)
    phi = 0.5 * (1 + 0.49 * (lam - 0.2) + lam**2)        # Table 6.2: h/b <= 1.2 -> curve c, α = 0.49
    chi = 1 / (phi + math.sqrt(phi**2 - lam**2))         # (6.49)
    assert value(r.compression) == pytest.approx(chi * 3140 * 355 / 1e3, rel=1e-5)   # (6.47), kN
    # tension: the lesser of A fy (6.6) and the elongation limit δ = NL/EA ≤ 6 mm (project limit)
    n_pl = 3140 * 355 / 1e3
    n_el = 6 * 3140 * 210000 / 3600 / 1e3
    assert value(r.tension) == pytest.approx(min(n_pl, n_el), rel=1e-5)
    assert r.tension_check == ("tension-plastic" if n_pl < n_el else "elongation")


def test_elongation_can_govern_tension() -> None:
    rs = load_ruleset("steel-ec3")
    # a 20 mm tie rod 11.6 m long, 1.4401 (E 200 GPa, fy 200 MPa): EN 1993-1-4 (from memory)
    a = math.pi / 4 * 20**2
    m = members({"shape": "round-bar", "name": "TIE ROD M20", "d": 0.020, "area": a * 1e-6, "r_min": 0.005,
                 "length": 11.6, "E": 200e9, "Fy": 200e6, "Fu": 500e6})
    r = rate_members(rs, m, SI).iloc[0]
    n_el = 6 * a * 200000 / 11600 / 1e3                  # δ = NL/EA ≤ 6 mm (steel-ec3 project limit)
    assert n_el < a * 200 / 1e3                          # EN 1993-1-1 (6.6) would allow more
    assert r.tension_check == "elongation"
    assert value(r.tension) == pytest.approx(n_el, rel=1e-5)
    assert "slenderness-compression fails at any force" in r.compression_note


def test_hanger_rod_on_its_tensile_stress_area() -> None:
    rs = load_ruleset("hanger-rods")
    m = members({"shape": "round-bar", "d": 0.016, "area": math.pi / 4 * 0.016**2, "r_min": 0.004,
                 "length": 1.0, "E": 210e9, "Fy": 240e6, "Fu": 400e6})
    r = rate_members(rs, m, SI).iloc[0]
    as_m16 = math.pi / 4 * (16 - 0.9382 * 2.0) ** 2     # ISO 898-1: As = π/4 (d − 0.9382 P)², M16 P = 2
    assert as_m16 == pytest.approx(157, rel=0.003)       # ISO 898-1 table: 157 mm² (from memory)
    f_allow = min(240 / 1.67, 400 / 2.0)                 # AISC 360-16 D2 limits on As (common practice)
    assert value(r.tension) == pytest.approx(f_allow * as_m16 / 1e3, rel=1e-5)
    assert r.tension_check == "rod-tension"


def test_rating_is_where_the_engine_turns_from_pass_to_fail() -> None:
    """Fed back as the force, the rated capacity passes; 0.1 % more fails (the engine is the reference)."""
    rs = load_ruleset("steel-asd-us")
    rows = [w8x31_a992(ft) for ft in (6, 10, 18, 26)]
    rows.append({"shape": "round-bar", "name": "HANGER ROD", "d": 0.75 * IN, "area": math.pi / 4 * (0.75 * IN) ** 2,
                 "r_min": 0.75 * IN / 4, "length": 2.0, "E": 29000 * KSI, "Fy": 36 * KSI, "Fu": 58 * KSI})
    m = members(*rows)
    rated = rate_members(rs, m, US)
    # the rod (KL/r = 2 m / 4.76 mm = 420 > 200, AISC 360-16 E2 user note) has no compression rating
    assert rated.compression[4] is None and "slenderness-compression" in rated.compression_note[4]
    for direction, sign in (("tension", 1.0), ("compression", -1.0)):
        p = np.asarray([NAN if q is None else value(q) for q in rated[direction]]) * KIP * sign
        for factor, status in ((1 - 1e-6, "pass"), (1.001, "fail")):
            rated_ids = np.isfinite(p)
            f = pd.DataFrame({"model": "m.ifc", "global_id": m.global_id[rated_ids], "load_case": "LC",
                              "axial_force": p[rated_ids] * factor, "source": "test"})
            res = run_checks(rs, m, f)
            res = res[res.load_case.notna() & ~res.check.str.startswith("slenderness")]
            worst = res.groupby("global_id")["status"].agg(lambda s: "fail" if (s == "fail").any() else "pass")
            assert (worst == status).all(), (direction, factor, worst.to_dict())


def test_missing_data_gives_none_with_the_reason() -> None:
    rs = load_ruleset("steel-asd-us")
    no_fy = dict(w8x31_a992(10), Fy=NAN)
    no_length = dict(w8x31_a992(10), length=NAN)
    aluminium = dict(w8x31_a992(10), material_category="aluminium")
    r = rate_members(rs, members(no_fy, no_length, aluminium), US)
    assert r.tension[0] is None and "Fy" in r.tension_note[0]
    assert r.compression[0] is None and "Fy" in r.compression_note[0]
    # no length: tension yielding still rates, but the elongation check (which needs L) cannot:
    # the tension rating is withheld rather than shown without it
    assert r.tension[1] is None and r.tension_note[1].startswith(("elongation", "slenderness"))
    assert r.compression[1] is None and "L:" in r.compression_note[1]
    assert r.tension[2] is None and "does not cover" in r.tension_note[2]


def test_members_alike_are_rated_once_but_each_gets_its_own_row() -> None:
    rs = load_ruleset("steel-asd-us")
    m = members(*[dict(w8x31_a992(10), tag=f"PO-{i}") for i in range(50)])
    r = rate_members(rs, m, US)
    assert list(r.global_id) == list(m.global_id)
    assert len({value(q) for q in r.compression}) == 1
    assert len({id(q) for q in r.compression}) == 50      # distinct dicts, safe to edit


def test_sample_models_are_all_rated_and_json_ready() -> None:
    from modelcheck.core.read import read_model

    for name, rules, units in (("canopy", "steel-asd-us", US), ("hall", "steel-ec3", SI),
                               ("pipebridge", "steel-ec3", SI)):
        d = read_model(str(SAMPLES / f"nettlebrook-{name}.ifc"))
        r = rate_members(load_ruleset(rules), d.members, units)
        assert list(r.global_id) == list(d.members.global_id)
        rated = r.tension.notna() | r.compression.notna()
        assert rated.mean() > 0.7, name
        # every member without a value says why
        assert all(note for q, note in zip(r.tension, r.tension_note, strict=True) if q is None)
        json.dumps(r.to_dict("records"), allow_nan=False)


def test_empty_table() -> None:
    r = rate_members(load_ruleset("steel-ec3"), members().iloc[0:0], SI)
    assert list(r.columns)[:3] == ["global_id", "tension", "compression"] and len(r) == 0


def test_a_limit_no_force_satisfies_gives_no_rating() -> None:
    rs = load_ruleset("steel-asd-us")
    # a 1/2 in A36 rod 8.85 ft long: KL/r = 106.25 in / 0.125 in = 850 > 200 (AISC 360-16 E2 user
    # note): no compression force is acceptable, whatever E3 would give (0.877 Fe A / 1.67 = 0.3 kip)
    d = 0.5 * IN
    rod = {"shape": "round-bar", "name": "HANGER ROD", "d": d, "area": math.pi / 4 * d**2, "r_min": d / 4,
           "length": 850 * d / 4, "E": 29000 * KSI, "Fy": 36 * KSI, "Fu": 58 * KSI}
    # an L4X4X1/4 angle 40 ft long: L/r = 480 in / 0.791 in = 607 > 300 (AISC 360-16 D1 user note;
    # rz = 0.791 in, AISC Shapes Database v15.0, from memory)
    angle = {"shape": "L", "area": 1.93 * IN2, "r_min": 0.791 * IN, "length": 40 * FT,
             "E": 29000 * KSI, "Fy": 36 * KSI, "Fu": 58 * KSI, "h": 4 * IN, "b": 4 * IN, "t": 0.25 * IN}
    r = rate_members(rs, members(rod, angle), US)
    assert r.compression[0] is None and r.compression_check[0] is None
    assert "slenderness-compression fails at any force" in r.compression_note[0]
    assert "no rating" in r.compression_note[0]
    assert r.tension[0] is not None               # rods in tension: no L/r limit (D1 user note)
    assert r.tension[1] is None and "slenderness-tension fails at any force" in r.tension_note[1]
    assert r.compression[1] is None and "slenderness-compression" in r.compression_note[1]


def test_a_failing_minimum_size_gives_no_rating_either_way() -> None:
    rs = load_ruleset("hanger-rods")
    # a 5/16 in rod under the 3/8 in minimum (common practice): no force makes it acceptable
    d = 5 / 16 * IN
    r = rate_members(rs, members({"shape": "round-bar", "d": d, "area": math.pi / 4 * d**2, "r_min": d / 4,
                                  "length": 0.5, "E": 200e9, "Fy": 250e6, "Fu": 400e6}), SI).iloc[0]
    assert r.tension is None and r.compression is None
    assert "rod-size fails at any force" in r.tension_note and "rod-size" in r.compression_note
