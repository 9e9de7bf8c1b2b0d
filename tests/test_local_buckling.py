"""Slender and class 4 sections in compression: the shipped steel rule sets flag them.

Both rule sets check flexural buckling on the gross area, which holds only for a section without
slender elements: AISC 360-16 Table B4.1a (λ <= λr) and EN 1993-1-1 Table 5.2 (class 1 to 3).
Every expected ratio below is computed in the test from those tables' limits (from memory) and
the sections' published dimensions (AISC Shapes Database, EN 10365 / EN 10219; from memory).
"""

from __future__ import annotations

import math
from typing import Any

import pytest

from modelcheck.rules.engine import run_checks
from modelcheck.rules.ruleset import load_ruleset
from tests.helpers import IN, KSI
from tests.tables import force_table
from tests.tables import member_table as members

E_US = 29000.0   # ksi, AISC 360-16 Symbols (from memory)
E_EU = 210e9     # Pa, EN 1993-1-1 3.2.6 (from memory)


def us(shape: str, fy_ksi: float, **dims_in: Any) -> dict[str, Any]:
    row: dict[str, Any] = {"shape": shape, "area": 5 * IN**2, "r_min": 1.5 * IN, "length": 60 * IN,
                           "E": E_US * KSI, "Fy": fy_ksi * KSI, "Fu": 65 * KSI, "material": "steel"}
    row.update({k: (v * IN if k != "section_name" else v) for k, v in dims_in.items()})
    return row


def eu(shape: str, fy_mpa: float, **dims_mm: Any) -> dict[str, Any]:
    row: dict[str, Any] = {"shape": shape, "area": 2e-3, "r_min": 0.04, "length": 2.0, "E": E_EU,
                           "Fy": fy_mpa * 1e6, "Fu": 490e6, "material": "S355"}
    row.update({k: (v / 1000 if k != "section_name" else v) for k, v in dims_mm.items()})
    return row


def ratios(ruleset: str, check: str, *rows: dict[str, Any], force: float = -10e3) -> list[float]:
    res = run_checks(load_ruleset(ruleset), members(*rows),
                     force_table(*((f"G{i}", "LC1", force) for i in range(len(rows)))))
    res = res[res.check == check].sort_values("global_id")
    return [float(x) for x in res.ratio]


# --- AISC 360-16 Table B4.1a ---------------------------------------------------------------------

def test_asd_rolled_i_flange_and_web() -> None:
    root = math.sqrt(E_US / 50)
    # Web (case 5): h/tw against 1.49 √(E/Fy), h = d - 2 kdes = d - 2 tf - 2 r (B4.1b(a)); flange
    # (case 1): bf/2tf against 0.56 √(E/Fy). Fy = 50 ksi. Dimensions: d, bf, tf, tw, r = kdes - tf
    # (AISC Shapes Database v15.0, from memory)
    # W14X22 (d 13.7, bf 5.00, tf 0.335, tw 0.230, kdes 0.735): h/tw = 53.3, slender (the Manual
    # marks it slender for compression at 50 ksi)
    w14x22 = us("I", 50, h=13.7, b=5.00, tf=0.335, tw=0.230, r_root=0.735 - 0.335)
    # W14X132 (d 14.7, bf 14.7, tf 1.03, tw 0.645, kdes 1.63): no slender element
    w14x132 = us("I", 50, h=14.7, b=14.7, tf=1.03, tw=0.645, r_root=1.63 - 1.03)
    # W12X40 (d 11.9, bf 8.01, tf 0.515, tw 0.295, kdes 1.02): h/tw = 33.6 < 35.9, not slender;
    # with the fillets left out (h = d - 2 tf) it would come out at 36.8, slender
    w12x40 = us("I", 50, h=11.9, b=8.01, tf=0.515, tw=0.295, r_root=1.02 - 0.515)
    # the same W14X22 drawn with sharp corners: the fillets are not deducted (the safe side)
    sharp = us("I", 50, h=13.7, b=5.00, tf=0.335, tw=0.230)
    got = ratios("steel-asd-us", "element-slenderness", w14x22, w14x132, w12x40, sharp)
    web22 = (13.7 - 2 * 0.735) / 0.230 / (1.49 * root)
    flange132 = 14.7 / (2 * 1.03) / (0.56 * root)
    web132 = (14.7 - 2 * 1.63) / 0.645 / (1.49 * root)
    web40 = (11.9 - 2 * 1.02) / 0.295 / (1.49 * root)
    assert got == pytest.approx([web22, max(flange132, web132), web40, (13.7 - 2 * 0.335) / 0.230 / (1.49 * root)],
                                rel=1e-6)
    assert (13.7 - 2 * 0.735) / 0.230 == pytest.approx(53.3, abs=0.2)    # the Manual's h/tw, within the
    # rounding of the dimensions it is computed from
    assert (11.9 - 2 * 1.02) / 0.295 == pytest.approx(33.6, abs=0.2)
    assert [g > 1 for g in got] == [True, False, False, True]


def test_asd_hss_walls_with_the_design_wall() -> None:
    root = math.sqrt(E_US / 50)
    # HSS6X6X1/8, tdes = 0.116 in (B4.2): b = B - 3t (B4.1b(d)) = 5.65 in, b/t = 48.7 > 1.40 √(E/Fy):
    # slender (the Manual's b/t, from memory); HSS6X6X3/8 (tdes 0.349 in): b/t = 14.2, not slender
    thin = us("rect-tube", 50, section_name="HSS6X6X1/8", h=6, b=6, t=0.93 * 0.125)
    thick = us("rect-tube", 50, section_name="HSS6X6X3/8", h=6, b=6, t=0.93 * 0.375)
    got = ratios("steel-asd-us", "element-slenderness", thin, thick)
    assert got == pytest.approx([(6 - 3 * 0.93 * 0.125) / (0.93 * 0.125) / (1.40 * root),
                                 (6 - 3 * 0.93 * 0.375) / (0.93 * 0.375) / (1.40 * root)], rel=1e-6)
    assert (6 - 3 * 0.116) / 0.116 == pytest.approx(48.7, abs=0.1)
    assert got[0] > 1 > got[1]


def test_asd_round_hss_angles_and_tees() -> None:
    # round HSS (case 9): D/t against 0.11 E/Fy; HSS20.000X0.250, tdes 0.233 in, Fy 46 ksi (round A500 Gr C)
    pipe = us("round-tube", 46, section_name="HSS20.000X0.250", d=20, t=0.93 * 0.25)
    # single angle legs (case 3): b/t against 0.45 √(E/Fy); L4X4X1/4 and L4X4X1/2 in A36
    thin_angle = us("L", 36, h=4, b=4, t=0.25)
    angle = us("L", 36, h=4, b=4, t=0.5)
    # tee stem (case 4): d/tw against 0.75 √(E/Fy); WT7X11 (half a W14X22: d 6.85, bf 5.00, tf 0.335,
    # tw 0.230 in), Fy 50 ksi
    tee = us("T", 50, h=6.85, b=5.00, tf=0.335, tw=0.230)
    got = ratios("steel-asd-us", "element-slenderness", pipe, thin_angle, angle, tee)
    expected = [20 / (0.93 * 0.25) / (0.11 * E_US / 46), 4 / 0.25 / (0.45 * math.sqrt(E_US / 36)),
                4 / 0.5 / (0.45 * math.sqrt(E_US / 36)),
                max(5.00 / (2 * 0.335) / (0.56 * math.sqrt(E_US / 50)), 6.85 / 0.230 / (0.75 * math.sqrt(E_US / 50)))]
    assert got == pytest.approx(expected, rel=1e-6)
    assert [g > 1 for g in got] == [True, True, False, True]


def test_asd_only_in_compression_and_only_classified_shapes() -> None:
    slender = us("I", 50, h=13.7, b=5.00, tf=0.335, tw=0.230)
    assert ratios("steel-asd-us", "element-slenderness", slender, force=+10e3) == []   # tension: no result
    other = us("arbitrary", 50, h=10, b=5)
    bar = us("round-bar", 36, d=1)
    assert ratios("steel-asd-us", "element-slenderness", other, bar) == []            # not classified


def test_asd_a_slender_section_fails_and_says_why() -> None:
    res = run_checks(load_ruleset("steel-asd-us"), members(us("L", 36, h=4, b=4, t=0.25)),
                     force_table(("G0", "LC1", -10e3)))
    row = res[res.check == "element-slenderness"].iloc[0]
    assert row.status == "fail" and row.clause == "AISC 360-16 B4.1, Table B4.1a"
    assert "λ/λr = 1.25" in row.message and "E7" in row.message


# --- EN 1993-1-1 Table 5.2 -------------------------------------------------------------------------

def test_ec3_class_4_hollow_sections() -> None:
    eps = math.sqrt(235 / 355)
    # SHS 200x200x5 and x8, S355: c = h - 3t (internal part) against 42 ε
    shs5 = eu("rect-tube", 355, h=200, b=200, t=5)
    shs8 = eu("rect-tube", 355, h=200, b=200, t=8)
    # CHS 323.9x5.0, S355: d/t against 90 ε²
    chs = eu("round-tube", 355, d=323.9, t=5)
    got = ratios("steel-ec3", "section-class", shs5, shs8, chs)
    assert got == pytest.approx([(200 - 15) / 5 / (42 * eps), (200 - 24) / 8 / (42 * eps),
                                 323.9 / 5 / (90 * eps**2)], rel=1e-6)
    assert [g > 1 for g in got] == [True, False, True]


def test_ec3_rolled_i_angle_and_tee() -> None:
    eps = math.sqrt(235 / 355)
    # IPE 300 (EN 10365: h 300, b 150, tw 7.1, tf 10.7, r 15 mm), S355 in pure compression: class 4
    # (web c = h - 2 tf - 2 r: c/t = 248.6 / 7.1 = 35.0 > 42 ε = 34.2)
    ipe = eu("I", 355, h=300, b=150, tf=10.7, tw=7.1, r_root=15)
    # L 100x100x8 S235 (ε = 1): h/t = 12.5 <= 15, (b + h)/2t = 12.5 > 11.5: class 4
    angle = eu("L", 235, h=100, b=100, t=8)
    # HEA 140 S275 (EN 10365: h 133, b 140, tw 5.5, tf 8.5, r 12 mm): class 1 to 3
    hea = eu("I", 275, h=133, b=140, tf=8.5, tw=5.5, r_root=12)
    # IPE 240 S355 (EN 10365: h 240, b 120, tw 6.2, tf 9.8, r 15 mm): web c/t = 190.4 / 6.2 = 30.7, class 1
    # to 3; with the root radii left out (c = h - 2 tf) it would be 35.5, class 4
    ipe240 = eu("I", 355, h=240, b=120, tf=9.8, tw=6.2, r_root=15)
    got = ratios("steel-ec3", "section-class", ipe, angle, hea, ipe240)
    e275 = math.sqrt(235 / 275)
    assert got == pytest.approx([
        max((150 - 7.1 - 30) / 2 / 10.7 / (14 * eps), (300 - 2 * 10.7 - 30) / 7.1 / (42 * eps)),
        max(100 / 8 / 15, 200 / 16 / 11.5),
        max((140 - 5.5 - 24) / 2 / 8.5 / (14 * e275), (133 - 17 - 24) / 5.5 / (42 * e275)),
        max((120 - 6.2 - 30) / 2 / 9.8 / (14 * eps), (240 - 2 * 9.8 - 30) / 6.2 / (42 * eps))], rel=1e-6)
    assert [g > 1 for g in got] == [True, True, False, False]
    assert (240 - 2 * 9.8) / 6.2 > 42 * eps


def test_the_root_radius_comes_from_the_profile_and_the_shape_table(tmp_path) -> None:
    import json

    from modelcheck.design.stock import catalog_shapes
    from modelcheck.testing.author import ModelBuilder
    from tests.helpers import axial_force, run_modelcheck

    # the shipped table's W12X40 keeps its root radius (r = kdes - tf = 0.505 in, AISC Shapes Database
    # v15.0, from memory); a tube's corner radius is no root radius
    hss = catalog_shapes("shapes-aisc.csv", ("W", "HSS"))
    row = hss[hss.designation == "W12X40"].iloc[0]
    assert row["r_root"] == pytest.approx(0.505 * IN, rel=1e-9)
    assert hss[hss["shape"] == "rect-tube"]["r_root"].isna().all()
    # a model's IfcIShapeProfileDef.FilletRadius: W12X40 in compression has no slender element
    mb = ModelBuilder(schema="IFC4", units="inch-kip")
    steel = mb.material("ASTM A992", category="steel", E=29000.0, Fy=50.0, Fu=65.0)
    w = mb.f.createIfcIShapeProfileDef("AREA", "W12X40", None, 8.01, 11.9, 0.295, 0.515, 0.505)
    mb.member(name="strut", tag="S1", profile=w, material=steel, length=60.0, psets=axial_force(-20.0))
    path = tmp_path / "w.ifc"
    mb.write(str(path))
    out = tmp_path / "r.json"
    p = run_modelcheck("check", str(path), "--format", "json", "--output", str(out), "--no-config")
    assert p.returncode == 0, p.stderr + p.stdout
    (row,) = [r for r in json.loads(out.read_text(encoding="utf-8"))["results"] if r["check"] == "element-slenderness"]
    assert row["status"] == "pass"
    assert row["demand"]["value"] == pytest.approx((11.9 - 2 * 0.515 - 2 * 0.505) / 0.295
                                                   / (1.49 * math.sqrt(E_US / 50)), rel=1e-5)


def test_a_profile_without_its_fillet_takes_the_root_radius_of_the_table_row_its_name_designates() -> None:
    # many exports leave IfcIShapeProfileDef.FilletRadius out; the name W12X40 designates a row of the
    # shipped AISC table (r = kdes - tf = 0.505 in, AISC Shapes Database v15.0, from memory), whose
    # d, bf, tf, tw it matches: h/tw = 33.6, not slender. Without a designation the corner stays sharp.
    root = math.sqrt(E_US / 50)
    dims = {"h": 11.9, "b": 8.01, "tf": 0.515, "tw": 0.295}
    named = us("I", 50, section_name="W-Wide Flange:W12x40", **dims)
    unnamed = us("I", 50, section_name="Strut", **dims)
    other = us("I", 50, section_name="W12X40", **{**dims, "h": 12.9})   # not the table's W12X40
    got = ratios("steel-asd-us", "element-slenderness", named, unnamed, other)
    assert got == pytest.approx([(11.9 - 2 * 0.515 - 2 * 0.505) / 0.295 / (1.49 * root),
                                 (11.9 - 2 * 0.515) / 0.295 / (1.49 * root),
                                 (12.9 - 2 * 0.515) / 0.295 / (1.49 * root)], rel=1e-6)
    assert [g > 1 for g in got] == [False, True, True]
    # EN 10365 (from memory): IPE 240, r = 15 mm; S355 web c/t = 190.4 / 6.2 = 30.7 <= 42 ε
    eps = math.sqrt(235 / 355)
    (ipe,) = ratios("steel-ec3", "section-class", eu("I", 355, section_name="IPE240", h=240, b=120, tf=9.8, tw=6.2))
    assert ipe == pytest.approx(max((120 - 6.2 - 30) / 2 / 9.8 / (14 * eps), (240 - 19.6 - 30) / 6.2 / (42 * eps)),
                                rel=1e-6)
    assert ipe < 1
