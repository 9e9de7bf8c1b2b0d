"""IfcIndexedPolyCurve segments (IFC4 IfcLineIndex / IfcArcIndex, indices counted from 1) read the
same way for a member's axis in space and for a profile's outline in its plane: the lengths and
areas of one index list agree with the hand values, and a bad index is refused with the same
reason in each reader's wording."""

from __future__ import annotations

import math
from typing import Any

import ifcopenshell
import pytest

from modelcheck.ifc.curves import CurveError, curve_length
from modelcheck.ifc.profiles import UnsupportedProfile, section_of

#: a 40 × 20 rectangle whose right side is a half circle of radius 10 through (50, 10):
#: 0 (0,0) → 1 (40,0) → arc through 2 (50,10) to 3 (40,20) → 4 (0,20) → back to 0
POINTS = [(0.0, 0.0), (40.0, 0.0), (50.0, 10.0), (40.0, 20.0), (0.0, 20.0)]


def _curve(f: ifcopenshell.file, segments: list[Any] | None, dim: int) -> Any:
    pts = [p if dim == 2 else (*p, 0.0) for p in POINTS]
    plist = (f.createIfcCartesianPointList2D(pts) if dim == 2 else f.createIfcCartesianPointList3D(pts))
    return f.createIfcIndexedPolyCurve(plist, segments, False)


def _segments(f: ifcopenshell.file, arc: tuple[int, ...] = (2, 3, 4), last: int = 1) -> list[Any]:
    return [f.createIfcLineIndex((1, 2)), f.createIfcArcIndex(arc), f.createIfcLineIndex((4, 5, last))]


def test_axis_and_outline_read_one_index_list_alike() -> None:
    f = ifcopenshell.file(schema="IFC4")
    # perimeter: 40 + π·10 (half circle) + 40 + 20; area: 40·20 + π·10²/2 (plane geometry, common practice)
    assert curve_length(_curve(f, _segments(f), 3)) == pytest.approx(100.0 + 10.0 * math.pi, rel=1e-12)
    profile = f.createIfcArbitraryClosedProfileDef("AREA", None, _curve(f, _segments(f), 2))
    assert section_of(profile).area == pytest.approx(800.0 + 50.0 * math.pi, rel=1e-9)
    # no Segments: the points in order, straight (40 + √200 + √200 + 40)
    assert curve_length(_curve(f, None, 3)) == pytest.approx(80.0 + 2 * math.sqrt(200.0), rel=1e-12)


@pytest.mark.parametrize(("arc", "last", "axis_says", "outline_says"), [
    ((2, 3, 4), 9, "IfcIndexedPolyCurve #{c}: refers to point 9 of 5",
     "IfcIndexedPolyCurve #{c} refers to point 9 of 5"),
    ((2, 0, 4), 1, "IfcIndexedPolyCurve #{c}: refers to point 0 of 5",
     "IfcIndexedPolyCurve #{c} refers to point 0 of 5"),
    ((2, 3), 1, "IfcIndexedPolyCurve #{c}: IfcArcIndex (2, 3) does not have three points",
     "IfcArcIndex (2, 3) of #{c} does not have three points"),
])
def test_bad_index_is_refused_in_each_wording(arc: tuple[int, ...], last: int, axis_says: str,
                                              outline_says: str) -> None:
    f = ifcopenshell.file(schema="IFC4")
    axis = _curve(f, _segments(f, arc, last), 3)
    with pytest.raises(CurveError) as err:
        curve_length(axis)
    assert str(err.value) == axis_says.format(c=axis.id())
    outline = _curve(f, _segments(f, arc, last), 2)
    profile = f.createIfcArbitraryClosedProfileDef("AREA", None, outline)
    with pytest.raises(UnsupportedProfile) as err2:
        section_of(profile)
    assert str(err2.value) == f"IfcArbitraryClosedProfileDef #{profile.id()}: " + outline_says.format(c=outline.id())
