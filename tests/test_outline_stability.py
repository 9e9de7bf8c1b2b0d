"""Nearly straight arcs (tiny sweep, huge radius): the moment integrator keeps its precision."""

from __future__ import annotations

import math

import pytest
from shapely.geometry import Polygon

from modelcheck.ifc.outline import (
    Line,
    _unit_circle_segment,
    _unit_circle_segment_reference,
    circular_arc,
    loop_moments,
)


@pytest.mark.parametrize("sweep", [1.0, 0.3, -0.7, 2.5])
def test_segment_formula_equals_sector_minus_triangle_at_ordinary_sweeps(sweep):
    a, b = _unit_circle_segment(0.4, sweep), _unit_circle_segment_reference(0.4, sweep)
    for f in ("a", "sx", "sy", "sxx", "syy", "sxy"):
        assert getattr(a, f) == pytest.approx(getattr(b, f), abs=1e-14)  # the plain formula


@pytest.mark.parametrize("sweep", [1e-3, 1e-5, 1e-7])
def test_tiny_segment_area_follows_its_series(sweep):
    # circular segment of the unit circle: A = (θ − sin θ)/2 = θ³/12 − θ⁵/240 + … (Taylor series)
    assert _unit_circle_segment(1.1, sweep).a == pytest.approx(sweep**3 / 12 - sweep**5 / 240, rel=1e-12)


def test_square_with_a_nearly_straight_side_has_the_squares_centroid():
    # unit square whose top side is an arc of radius 1e5 (sweep 1e-5): it bulges by
    # r(1 − cos(θ/2)) ≈ 1.25e-6, so area and centroid are the square's to ~1e-6 (geometry; shapely)
    r = 1e5
    half = math.asin(0.5 / r)
    top = circular_arc((0.5, 1.0 - r * math.cos(half)), r, math.pi / 2 - half, 2 * half)
    loop = [Line((0.0, 0.0), (1.0, 0.0)), Line((1.0, 0.0), top.start), top, Line(top.end, (0.0, 1.0)),
            Line((0.0, 1.0), (0.0, 0.0))]
    m = loop_moments(loop)
    sq = Polygon([(0, 0), (1, 0), (1, 1), (0, 1)])
    assert m.a == pytest.approx(sq.area, abs=2e-6)
    assert m.centroid == pytest.approx((sq.centroid.x, sq.centroid.y), abs=2e-6)
