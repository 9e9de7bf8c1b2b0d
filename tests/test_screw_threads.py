"""Thread series and tensile-stress areas (modelcheck.design.screw_threads)."""

from __future__ import annotations

import math

import numpy as np
import pytest

from modelcheck.common.units import Q_
from modelcheck.design.screw_threads import (
    iso_tensile_area,
    thread_series,
    thread_tensile_area,
    unc_tensile_area,
)
from tests.helpers import IN, IN2


@pytest.mark.parametrize(("d_in", "tpi", "table_in2"), [
    (3 / 8, 16, 0.0775),   # ASME B1.1 table, 3/8-16 UNC: As = 0.0775 in² (from memory)
    (1 / 2, 13, 0.1419),   # ASME B1.1 table, 1/2-13 UNC: As = 0.1419 in² (from memory)
    (5 / 8, 11, 0.226),    # ASME B1.1 table, 5/8-11 UNC: As = 0.226 in² (from memory)
    (3 / 4, 10, 0.334),    # ASME B1.1 table, 3/4-10 UNC: As = 0.334 in² (from memory)
    (1.0, 8, 0.606),       # ASME B1.1 table, 1-8 UNC: As = 0.606 in² (from memory)
])
def test_unc_tensile_area_matches_published_table(d_in: float, tpi: int, table_in2: float) -> None:
    assert unc_tensile_area(d_in, tpi) == pytest.approx(table_in2, abs=0.0006)


@pytest.mark.parametrize(("d_mm", "pitch", "table_mm2"), [
    (10, 1.5, 58.0),    # ISO 898-1 Table (stress area), M10: As = 58.0 mm² (from memory)
    (12, 1.75, 84.3),   # ISO 898-1, M12: As = 84.3 mm² (from memory)
    (16, 2.0, 157),     # ISO 898-1, M16: As = 157 mm² (from memory)
    (20, 2.5, 245),     # ISO 898-1, M20: As = 245 mm² (from memory)
    (24, 3.0, 353),     # ISO 898-1, M24: As = 353 mm² (from memory)
])
def test_iso_tensile_area_matches_published_table(d_mm: float, pitch: float, table_mm2: float) -> None:
    assert iso_tensile_area(d_mm, pitch) == pytest.approx(table_mm2, rel=0.003)


def test_areas_from_thread_geometry() -> None:
    # ISO 724 basic profile, H = 0.866025 P: d2 = d - 0.649519 P, d3 = d - 1.226869 P;
    # ISO 898-1: As = π/4 ((d2 + d3)/2)²  (from memory)
    for s in thread_series("ISO coarse"):
        d, p = s.d_m * 1e3, s.pitch_m * 1e3
        d2, d3 = d - 0.649519 * p, d - 1.226869 * p
        assert s.As_m2 * 1e6 == pytest.approx(math.pi / 4 * ((d2 + d3) / 2) ** 2, rel=1e-4)
    # ASME B1.1: As = π/4 ((E + K)/2)² with pitch diameter E = d - 0.649519/n and
    # d - 1.299038/n (= d - 1.5 H) for K, which is the 0.9743/n of the formula (from memory)
    for s in thread_series("UNC"):
        d, n = s.d_m / IN, s.tpi
        assert n is not None
        e, k = d - 0.649519 / n, d - 1.299038 / n
        assert s.As_m2 / IN2 == pytest.approx(math.pi / 4 * ((e + k) / 2) ** 2, rel=1e-4)


def test_series_cover_the_sizes_of_the_standards() -> None:
    unc = thread_series("UNC")
    iso = thread_series("ISO coarse")
    # ASME B1.1 UNC 1/4 in to 4 in: 24 sizes; 1/4-20, 1-8, 4-4 (from memory)
    assert len(unc) == 24
    assert [u.designation for u in (unc[0], unc[9], unc[-1])] == ["1/4-20 UNC", "1-8 UNC", "4-4 UNC"]
    assert unc[-1].d_m == pytest.approx(Q_(4, "in").m_as("m"))   # pint
    # ISO 261 coarse M6 to M64, first and second choice: 22 sizes; M64 × 6 (from memory)
    assert len(iso) == 22
    assert iso[0].designation == "M6" and iso[-1].designation == "M64"
    assert iso[-1].pitch_m == pytest.approx(6e-3)
    # nothing out of order: the matcher relies on it
    all_d = [s.d_m for s in thread_series()]
    assert all_d == sorted(all_d)


def test_matching_diameters_to_series_sizes() -> None:
    d = np.array([
        Q_(3 / 8, "in").m_as("m"),        # exact 3/8 in
        0.010,                            # exact M10
        0.016,                            # M16 (5/8 in = 15.875 mm is 0.125 mm away)
        Q_(5 / 8, "in").m_as("m"),        # 5/8 in
        0.01215,                          # M12 modelled 0.15 mm oversize: within 0.2 mm
        0.0115,                           # 11.5 mm: between 7/16 in (11.11 mm) and M12
        np.nan,                           # unknown diameter
        0.2,                              # far above the series
    ])
    area, name = thread_tensile_area(d)
    assert list(name) == ["3/8-16 UNC", "M10", "M16", "5/8-11 UNC", "M12", None, None, None]
    # ASME B1.1 3/8-16: 0.0775 in²; ISO 898-1 M10: 58.0 mm² (from memory)
    assert area[0] / IN2 == pytest.approx(0.0775, abs=0.0005)
    assert area[1] * 1e6 == pytest.approx(58.0, rel=0.003)
    assert np.isnan(area[5:]).all()


def test_matching_tolerance_is_two_tenths_of_a_millimetre() -> None:
    # the brief's matching rule: within 0.2 mm of a series size
    area, _ = thread_tensile_area(np.array([0.02019, 0.02021]))   # M20 + 0.19 mm / + 0.21 mm
    assert not np.isnan(area[0])
    assert np.isnan(area[1])
