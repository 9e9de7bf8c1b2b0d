"""Stock series, threaded rods and shape tables (modelcheck.design.stock) against outside references.

Catalog rows are checked three ways: a few against the published tables (from memory), all
against the standards' own area formulas, and a sample against sectionproperties on the
nominal geometry.
"""

from __future__ import annotations

import math
import re
from fractions import Fraction
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from modelcheck.common.data import data_path
from modelcheck.common.errors import RuleSetError
from modelcheck.common.units import Q_
from modelcheck.design import stock
from modelcheck.rules.ruleset import load_ruleset
from tests.helpers import IN, IN2


def us() -> stock.StockSeries:
    return stock.stock_series(load_ruleset("steel-asd-us"))


def si() -> stock.StockSeries:
    return stock.stock_series(load_ruleset("steel-ec3"))


# ------------------------------------------------------------------------------ lengths


@pytest.mark.parametrize(("text", "unit", "inches_or_mm"), [
    ("3/4 in", "in", 0.75), ("1 1/2 in", "in", 1.5), ("20 mm", "mm", 20.0), ("0.25 [in]", "in", 0.25),
])
def test_parse_length_matches_pint(text: str, unit: str, inches_or_mm: float) -> None:
    value, u = stock.parse_length(text)
    assert stock.metres(value, u) == pytest.approx(Q_(inches_or_mm, unit).m_as("m"), rel=1e-15)  # pint


@pytest.mark.parametrize("text", ["12", "12 kip", "twelve mm", ""])
def test_parse_length_refuses_what_is_not_a_length(text: str) -> None:
    with pytest.raises(ValueError):
        stock.parse_length(text, "--thickness")


def test_length_labels() -> None:
    assert stock.length_label(17 / 16 * IN, "US") == "1 1/16 in"     # common practice: fractional inches
    assert stock.length_label(0.75 * IN, "US") == "3/4 in"
    assert stock.length_label(0.02, "SI") == "20 mm"


# ------------------------------------------------------------------------------ bar series


def test_us_round_and_square_bars_are_in_sixteenth_inch_steps() -> None:
    s = us()
    d = np.asarray(s.round) / IN
    # common practice: round bars stocked in 1/16 in steps, 1/4 in to 6 in
    assert d[0] == pytest.approx(0.25) and d[-1] == pytest.approx(6.0)
    assert np.allclose(np.diff(d), 1 / 16, rtol=0, atol=1e-12)
    assert len(d) == round((6 - 0.25) * 16) + 1
    a = np.asarray(s.square) / IN
    assert np.allclose(np.diff(a), 1 / 16, rtol=0, atol=1e-12)


def test_us_steps_are_exact_multiples() -> None:
    # each size is k/16 in computed exactly, not by adding 0.0625 over and over
    for d in us().round:
        k = d / IN * 16
        assert abs(k - round(k)) < 1e-9


def test_si_series_hold_the_thread_diameters_and_en_sizes() -> None:
    s = si()
    mm = {round(x * 1e3, 6) for x in s.round}
    # ISO 261 coarse M10 ... M24 nominal diameters; EN 10060 rolls each of them (from memory)
    assert {10, 12, 14, 16, 20, 24} <= mm
    # EN 10058: flats 10 mm thick are rolled 20 ... 150 mm wide (from memory)
    widths = {round(x * 1e3, 6) for x in s.flat_width}
    assert {20, 25, 30, 40, 50, 60, 80, 100, 120, 150} <= widths
    assert s.threads == "ISO coarse" and s.shapes == "shapes-en.csv"


def test_bar_geometry() -> None:
    r = stock.round_bars(us())
    one = r[r.designation == "round bar 1 in"].iloc[0]
    assert one.area == pytest.approx(math.pi / 4 * IN2)          # A = π d²/4
    assert one.r_min == pytest.approx(IN / 4)                     # r = d/4 (solid circle)
    sq = stock.square_bars(si())
    s25 = sq[sq.designation == "square bar 25 mm"].iloc[0]
    assert s25.area == pytest.approx(625e-6) and s25.r_min == pytest.approx(0.025 / math.sqrt(12))  # a/√12
    fl = stock.flat_bars(si(), (0.010,))
    f = fl[fl.designation == "flat bar 60 x 10 mm"].iloc[0]
    assert f.area == pytest.approx(600e-6) and f.r_min == pytest.approx(0.010 / math.sqrt(12))   # t/√12
    assert (fl.b > fl.h).all()              # a flat is wider than thick
    assert (np.diff(r.area) > 0).all()      # smallest first


# ------------------------------------------------------------------------------ threaded rods


def _tpi(designation: str) -> tuple[float, float]:
    size, n = re.match(r"(.+)-([\d.]+) UNC", designation).groups()
    return float(sum(Fraction(p) for p in size.split())), float(n)


def test_unc_rod_areas_follow_asme_b1_1() -> None:
    rods = stock.threaded_rods("UNC")
    for rec in rods.to_dict("records"):
        d, n = _tpi(rec["designation"])
        # ASME B1.1: As = 0.7854 (d − 0.9743/n)² (from memory)
        assert rec["As"] / IN2 == pytest.approx(0.7854 * (d - 0.9743 / n) ** 2, rel=1e-12)
        assert rec["d"] == pytest.approx(d * IN)


@pytest.mark.parametrize(("name", "as_mm2"), [
    ("M10", 58.0), ("M12", 84.3), ("M16", 157), ("M20", 245), ("M24", 353), ("M30", 561), ("M36", 817),
])   # ISO 898-1 table of nominal stress areas (from memory)
def test_iso_rod_areas_match_iso_898_1(name: str, as_mm2: float) -> None:
    rods = stock.threaded_rods("ISO coarse").set_index("designation")
    assert rods.loc[name, "As"] * 1e6 == pytest.approx(as_mm2, rel=0.003)


def test_rod_labels_reach_rule_selectors() -> None:
    # the rule sets treat bars named "*rod*" as threaded rods; a rod candidate carries such a name
    assert stock.threaded_rods("UNC").label.str.contains("rod").all()
    assert not stock.round_bars(us()).label.str.contains("rod").any()


# ------------------------------------------------------------------------------ shape tables


def aisc() -> pd.DataFrame:
    return stock.load_shapes("shapes-aisc.csv")


def en() -> pd.DataFrame:
    return stock.load_shapes("shapes-en.csv")


def row(table: pd.DataFrame, designation: str) -> pd.Series:
    return table.set_index("designation").loc[designation]


@pytest.mark.parametrize(("designation", "a_in2", "r_in"), [
    ("W8X31", 9.13, 2.02),          # AISC Shapes Database v15.0: W8X31 A = 9.13 in², ry = 2.02 in (from memory)
    ("W6X15", 4.43, 1.45),          # AISC Shapes Database v15.0 (from memory)
    ("W12X65", 19.1, 3.02),         # AISC Shapes Database v15.0 (from memory)
    ("L4X4X3/8", 2.86, 0.78),       # AISC Shapes Database v15.0: rz (from memory)
    ("HSS4X4X1/4", 3.37, 1.52),     # AISC Shapes Database v15.0 (from memory)
    ("HSS6X6X3/8", 7.58, 2.28),     # AISC Shapes Database v15.0 (from memory)
    ("HSS8X8X1/2", 13.5, 3.04),     # AISC Shapes Database v15.0 (from memory)
    ("HSS4.500X0.237", 2.96, 1.51),  # AISC Shapes Database v15.0 (from memory)
])
def test_aisc_rows_match_published_values(designation: str, a_in2: float, r_in: float) -> None:
    r = row(aisc(), designation)
    assert r.area / IN2 == pytest.approx(a_in2, rel=0.012)
    assert r.r_min / IN == pytest.approx(r_in, rel=0.012)


@pytest.mark.parametrize(("designation", "a_cm2", "r_cm"), [
    ("IPE 200", 28.5, 2.24),     # EN 10365: IPE 200 A = 28.5 cm², iz = 2.24 cm (from memory)
    ("HEA 140", 31.4, 3.52),     # EN 10365: HEA 140 (from memory)
    ("L 70x70x7", 9.40, 1.37),   # EN 10056-1: L 70x70x7 A = 9.40 cm², iv = 1.37 cm (from memory)
    ("SHS 80x80x4", 11.7, 3.08),  # EN 10219-2: SHS 80x80x4 A = 11.7 cm², I = 111 cm⁴ (from memory): i = √(I/A)
    ("RHS 100x50x4", 10.9, 2.03),  # EN 10219-2: RHS 100x50x4 A = 10.9 cm², iz = 2.03 cm (from memory)
    ("CHS 88.9x4.0", 10.7, 3.00),  # EN 10210-2: CHS 88.9x4.0 A = 10.7 cm², i = 3.00 cm (from memory)
])
def test_en_rows_match_published_values(designation: str, a_cm2: float, r_cm: float) -> None:
    r = row(en(), designation)
    assert r.area * 1e4 == pytest.approx(a_cm2, rel=0.01)
    assert r.r_min * 1e2 == pytest.approx(r_cm, rel=0.01)


def test_en_i_sections_follow_the_en_10365_area_formula() -> None:
    t = pd.read_csv(data_path("shapes-en.csv"), comment="#")
    i = t[t["shape"] == "I"]
    assert len(i) >= 20
    for rec in i.to_dict("records"):
        h, b, tf, tw, r = (rec[f"{k} [mm]"] for k in ("h", "b", "tf", "tw", "r"))
        # EN 10365 / rolled I: A = 2 b tf + (h − 2 tf) tw + (4 − π) r²
        formula = 2 * b * tf + (h - 2 * tf) * tw + (4 - math.pi) * r * r
        assert rec["A [cm**2]"] * 100 == pytest.approx(formula, rel=0.005), rec["designation"]


def test_en_angles_follow_the_en_10056_area_formula() -> None:
    t = pd.read_csv(data_path("shapes-en.csv"), comment="#")
    angles = t[t["shape"] == "L"]
    assert len(angles) >= 10
    for rec in angles.to_dict("records"):
        b, tt, r1 = rec["b [mm]"], rec["t [mm]"], rec["r [mm]"]
        r2 = r1 / 2        # EN 10056-1: toe radius r2 = r1/2 for these sizes (from memory)
        # EN 10056-1: A = t (2b − t) + (1 − π/4)(r1² − 2 r2²)
        formula = tt * (2 * b - tt) + (1 - math.pi / 4) * (r1 * r1 - 2 * r2 * r2)
        assert rec["A [cm**2]"] * 100 == pytest.approx(formula, rel=0.005), rec["designation"]


def test_aisc_w_areas_exceed_their_plates_by_the_fillets() -> None:
    for rec in aisc()[lambda t: t.family == "W"].to_dict("records"):
        plates = 2 * rec["b"] * rec["tf"] + (rec["h"] - 2 * rec["tf"]) * rec["tw"]
        # AISC Shapes Database: A includes the web-flange fillets, a few per cent (common practice)
        assert 1.0 < rec["area"] / plates < 1.04, rec["designation"]


def _sp(geom, size: float) -> tuple[float, float]:
    from sectionproperties.analysis.section import Section

    geom.create_mesh(mesh_sizes=[size])
    sec = Section(geom)
    sec.calculate_geometric_properties()
    return float(sec.get_area()), float(min(sec.get_rp()))


def test_catalog_sample_against_sectionproperties() -> None:
    from sectionproperties.pre.library import steel_sections as ss

    t = pd.read_csv(data_path("shapes-en.csv"), comment="#").set_index("designation")
    # EN rows: radii from the table; tolerance covers rounding of published values
    for name in ("IPE 100", "IPE 300", "HEA 200"):
        r = t.loc[name]
        a, rmin = _sp(ss.i_section(d=r["h [mm]"], b=r["b [mm]"], t_f=r["tf [mm]"], t_w=r["tw [mm]"],
                                   r=r["r [mm]"], n_r=12), 8)
        assert r["A [cm**2]"] * 100 == pytest.approx(a, rel=0.005)       # sectionproperties
        assert r["r_min [cm]"] * 10 == pytest.approx(rmin, rel=0.006)    # sectionproperties
    for name in ("L 50x50x5", "L 100x100x10"):
        r = t.loc[name]
        a, rmin = _sp(ss.angle_section(d=r["b [mm]"], b=r["b [mm]"], t=r["t [mm]"], r_r=r["r [mm]"],
                                       r_t=r["r [mm]"] / 2, n_r=12), 4)
        assert r["A [cm**2]"] * 100 == pytest.approx(a, rel=0.005)       # sectionproperties
        assert r["r_min [cm]"] * 10 == pytest.approx(rmin, rel=0.01)     # sectionproperties (v-v axis)
    for name in ("SHS 100x100x5", "RHS 200x100x8"):
        r = t.loc[name]
        a, rmin = _sp(ss.rectangular_hollow_section(d=r["h [mm]"], b=r["b [mm]"], t=r["t [mm]"],
                                                    r_out=r["r [mm]"], n_r=12), 8)
        assert r["A [cm**2]"] * 100 == pytest.approx(a, rel=0.006)       # sectionproperties
        assert r["r_min [cm]"] * 10 == pytest.approx(rmin, rel=0.006)
    for name in ("CHS 48.3x3.2", "CHS 168.3x6.3"):
        r = t.loc[name]
        a, rmin = _sp(ss.circular_hollow_section(d=r["d [mm]"], t=r["t [mm]"], n=64), 10)
        assert r["A [cm**2]"] * 100 == pytest.approx(a, rel=0.006)       # sectionproperties (64-gon)
        assert r["r_min [cm]"] * 10 == pytest.approx(rmin, rel=0.006)
    u = aisc().set_index("designation")
    for name in ("W8X31", "W10X12"):
        r = u.loc[name]
        a, rmin = _sp(ss.i_section(d=r.h / IN, b=r.b / IN, t_f=r.tf / IN, t_w=r.tw / IN, r=0, n_r=1), 0.05)
        assert r.r_min / IN == pytest.approx(rmin, rel=0.015)   # sectionproperties, plates (fillets lower ry ~1 %)
    for name in ("L3X3X1/4", "L6X6X1/2"):
        r = u.loc[name]
        a, rmin = _sp(ss.angle_section(d=r.h / IN, b=r.b / IN, t=r.t / IN, r_r=r.t / IN, r_t=r.t / IN / 2,
                                       n_r=12), 0.01)
        assert r.area / IN2 == pytest.approx(a, rel=0.01)       # sectionproperties, root radius ≈ t
        assert r.r_min / IN == pytest.approx(rmin, rel=0.015)


def test_every_row_names_its_source() -> None:
    for table in (aisc(), en()):
        assert table.source.str.len().gt(20).all()
        assert table.source.str.contains("from memory|computed").all()


def test_catalog_tables_are_si_and_sorted() -> None:
    w = stock.catalog_shapes("shapes-aisc.csv", ("W",))
    assert (np.diff(w.area) >= 0).all()
    assert set(w["shape"]) == {"I"}
    hss = stock.catalog_shapes("shapes-aisc.csv", ("HSS",), "round-tube")
    assert set(hss["shape"]) == {"round-tube"} and hss.d.notna().all()


@pytest.mark.parametrize(("name", "expected"), [
    ("W8X31", ("shapes-aisc.csv", "W")), ("HSS4X4X1/4", ("shapes-aisc.csv", "HSS")),
    ("HSS4.500X0.237", ("shapes-aisc.csv", "HSS")), ("L4X4X3/8", ("shapes-aisc.csv", "L")),
    ("L70x70x7", ("shapes-en.csv", "L")), ("L 70x70x7", ("shapes-en.csv", "L")),
    ("HEA140", ("shapes-en.csv", "HEA")), ("HE 140 A", ("shapes-en.csv", "HEA")),
    ("IPE 200", ("shapes-en.csv", "IPE")), ("CHS 88.9x4.0", ("shapes-en.csv", "CHS")),
    ("SHS 80x80x4", ("shapes-en.csv", "SHS")), ("RHS 100x50x4", ("shapes-en.csv", "RHS")),
    ("IPN200", None), ("WI 250 (welded)", None), (None, None),
])
def test_catalog_family_from_section_names(name: str | None, expected: tuple[str, str] | None) -> None:
    assert stock.catalog_family(name) == expected


# ------------------------------------------------------------------------------ [stock] in a rule set


def _variant(tmp_path: Path, extra: str) -> Path:
    text = data_path("steel-ec3.toml").read_text(encoding="utf-8") + "\n" + extra
    p = tmp_path / "ec3-stock.toml"
    p.write_text(text, encoding="utf-8")
    return p


def test_a_rule_set_can_choose_and_change_its_series(tmp_path: Path) -> None:
    rs = load_ruleset(_variant(tmp_path, '[stock]\nseries = "US"\nflat_width = ["2 in", "3 in"]\n'))
    s = stock.stock_series(rs)
    assert s.system == "US" and s.threads == "UNC"
    assert s.flat_width == pytest.approx((2 * IN, 3 * IN))
    assert "[stock] of steel-ec3" in s.origin


def test_a_bad_stock_key_names_file_and_line(tmp_path: Path) -> None:
    path = _variant(tmp_path, '[stock]\nround = ["12"]\n')
    with pytest.raises(RuleSetError) as err:
        stock.stock_series(load_ruleset(path))
    line = len(path.read_text(encoding="utf-8").splitlines())
    assert f"{path}:{line}:" in str(err.value) and "round" in str(err.value)
    path2 = _variant(tmp_path, '[stock]\ncolour = "red"\n')
    with pytest.raises(RuleSetError, match="unknown key 'colour'"):
        stock.stock_series(load_ruleset(path2))
