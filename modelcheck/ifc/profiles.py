"""Cross-section properties of IFC profile definitions, one function per profile class.

INTERFACE (stable; the reader depends on it):

    section_of(profile, angle_factor=1.0) -> ProfileSection     # raises UnsupportedProfile
    PROFILE_FUNCTIONS: dict[str, Callable[[entity], ProfileSection]]

All numbers of a ProfileSection are in the *file's* length unit (area in its square); the
reader scales them to SI. Plane angles in the file (flange slopes, trimming parameters of
circles and ellipses) are multiplied by ``angle_factor`` (radians per file angle unit, 1.0 when
the file works in radians); the reader passes it.

How the numbers are made: every parametric profile is drawn as a closed outline of straight
edges and circular arcs (its fillet and edge radii are true arcs tangent to both edges) and
integrated exactly with `modelcheck.ifc.outline` (Green's theorem; nothing is tessellated).
Arbitrary profiles integrate the curves written in the file (polylines, indexed poly curves
with three-point arcs, composite curves of trimmed lines, circles and ellipses, whole circles
and ellipses); voids are subtracted; derived, mirrored and composite profiles transform and add
the raw moments of their parents. ``r_min`` is the least *principal* radius of gyration about
the centroid: I_min = (Ix+Iy)/2 - sqrt(((Ix-Iy)/2)² + Ixy²), r_min = sqrt(I_min / A), which
for angles and Z sections is the inclined minor axis.

Anything that cannot be computed, or data that describe no real section (zero, negative or NaN
dimensions, walls thicker than half the section, radii that do not fit), raises
`UnsupportedProfile` with the entity and the reason; never a wrong number.

Example::

    >>> import ifcopenshell
    >>> f = ifcopenshell.file(schema="IFC4")
    >>> ipe = f.createIfcIShapeProfileDef("AREA", "IPE200", None, 100.0, 200.0, 5.6, 8.5, 12.0)
    >>> s = section_of(ipe)
    >>> round(s.area, 1), round(s.r_min, 2), s.shape, s.source
    (2848.4, 22.36, 'I', 'IfcIShapeProfileDef #1')
"""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence
from dataclasses import dataclass, field, replace
from typing import Any

from modelcheck.common.vocabulary import Shape
from modelcheck.ifc.curves import (
    SegmentIndexError,
    conic_sweep,
    indexed_segments,
    line_trims,
    orient,
    trim_angle_problem,
    trim_choice,
)
from modelcheck.ifc.outline import (
    MAX_OUTLINE_POINTS,
    Arc,
    GeometryError,
    Line,
    Matrix,
    Moments,
    Point,
    Segment,
    circle_through,
    closing_gaps,
    crossing_edges,
    loop_moments,
    rounded_polygon,
)


class UnsupportedProfile(ValueError):
    """A profile class (or a profile's content) this module cannot compute."""


@dataclass(frozen=True)
class ProfileSection:
    area: float                 # gross area, file length unit squared
    r_min: float                # least principal radius of gyration, file length unit
    shape: str                  # shape family (``vocabulary.SHAPES``)
    source: str                 # e.g. "IfcIShapeProfileDef #19"
    name: str | None = None     # IfcProfileDef.ProfileName
    dims: dict[str, float] = field(default_factory=dict)  # d, h, b, tf, tw, t (file length unit)
    # raw area moments in the profile's own coordinate system (its Position applied), so
    # derived and composite profiles can be built from it; file length unit
    moments: Moments | None = field(default=None, compare=False, repr=False)


ProfileFunction = Callable[..., ProfileSection]

# Outline gaps (between consecutive curve segments) up to this fraction of the outline's size
# are bridged by a straight edge; larger ones mean a curve modelcheck has misread or a broken
# outline, and are refused.
GAP_TOLERANCE = 1e-4
# Flange and leg slopes beyond this are refused (real tapers are 2 % to 16 %; a larger value is
# most likely an angle in degrees read as radians).
MAX_SLOPE = math.radians(45.0)

_TWO_PI = 2.0 * math.pi
_IDENTITY: Matrix = ((1.0, 0.0), (0.0, 1.0))


def section_of(profile: Any, angle_factor: float = 1.0) -> ProfileSection:
    """Section properties of ``profile`` (any IfcProfileDef), or UnsupportedProfile."""
    src = _src(profile)
    if getattr(profile, "ProfileType", None) == "CURVE":
        raise UnsupportedProfile(f"{src}: ProfileType is CURVE (an outline, not an area)")
    import numpy as np

    try:
        with np.errstate(all="ignore"):  # absurd dimensions are judged below, not warned about
            sec = _dispatch(profile, angle_factor)
    except (OverflowError, ZeroDivisionError) as exc:
        raise UnsupportedProfile(f"{src}: dimensions too large or too small to compute ({exc})") from None
    except AttributeError as exc:  # a null or dangling reference where a curve or point belongs
        raise UnsupportedProfile(f"{src}: a referenced curve or point is missing ({exc})") from None
    if not (math.isfinite(sec.area) and math.isfinite(sec.r_min)):
        raise UnsupportedProfile(f"{src}: area or radius of gyration is not a finite number")
    return sec


def _dispatch(profile: Any, angle_factor: float) -> ProfileSection:
    fn = PROFILE_FUNCTIONS.get(profile.is_a())
    if fn is None:
        raise UnsupportedProfile(f"{profile.is_a()} #{profile.id()} is a profile class modelcheck cannot compute")
    return fn(profile, angle_factor=angle_factor)


# ---------------------------------------------------------------------------------------------
# reading attributes
# ---------------------------------------------------------------------------------------------


def _src(p: Any) -> str:
    return f"{p.is_a()} #{p.id()}"


def _value(p: Any, *names: str) -> Any:
    """First attribute among ``names`` that the entity has (schemas rename attributes)."""
    for n in names:
        try:
            return getattr(p, n)
        except AttributeError:
            continue
    return None


def _length(p: Any, *names: str) -> float:
    """A required positive length."""
    v = _value(p, *names)
    if v is None or not isinstance(v, int | float) or not math.isfinite(v) or v <= 0:
        raise UnsupportedProfile(f"{_src(p)}: {names[0]} = {v!r} is not a positive length")
    return float(v)


def _radius(p: Any, *names: str) -> float:
    """An optional non-negative length (radii); None (unknown) counts as sharp (0)."""
    v = _value(p, *names)
    if v is None:
        return 0.0
    if not isinstance(v, int | float) or not math.isfinite(v) or v < 0:
        raise UnsupportedProfile(f"{_src(p)}: {names[0]} = {v!r} is not a non-negative length")
    return float(v)


def _slope(p: Any, name: str, angle_factor: float) -> float:
    """An optional slope angle in radians (file unit × angle_factor); None counts as 0."""
    v = _value(p, name)
    if v is None:
        return 0.0
    if not isinstance(v, int | float) or not math.isfinite(v):
        raise UnsupportedProfile(f"{_src(p)}: {name} = {v!r} is not an angle")
    if not math.isfinite(angle_factor):
        raise UnsupportedProfile(f"{_src(p)}: {name} = {v!r} cannot be read: the model's PLANEANGLEUNIT is "
                                 "not usable")
    a = float(v) * angle_factor
    if not 0.0 <= a < MAX_SLOPE:
        raise UnsupportedProfile(
            f"{_src(p)}: {name} = {v!r} ({math.degrees(a):.4g}°) is outside 0..45° "
            f"(angle unit factor {angle_factor:g} rad)"
        )
    return a


def _need(p: Any, ok: bool, what: str) -> None:
    if not ok:
        raise UnsupportedProfile(f"{_src(p)}: {what}")


def _coords(p: Any, point: Any) -> Point:
    return _xy(p, tuple(point.Coordinates))


def _xy(p: Any, c: Sequence[float]) -> Point:
    if len(c) < 2 or (len(c) > 2 and c[2] != 0.0):
        raise UnsupportedProfile(f"{_src(p)}: point {tuple(c)} is not in the profile plane")
    x, y = float(c[0]), float(c[1])
    if not (math.isfinite(x) and math.isfinite(y)):
        raise UnsupportedProfile(f"{_src(p)}: point {tuple(c)} is not finite")
    return (x, y)


def _direction(p: Any, d: Any, default: Point) -> Point:
    if d is None:
        return default
    r = tuple(d.DirectionRatios)
    x, y = float(r[0]), float(r[1])
    n = math.hypot(x, y)
    if not math.isfinite(n) or n == 0.0:
        raise UnsupportedProfile(f"{_src(p)}: direction {r} has no length in the profile plane")
    return (x / n, y / n)


def _frame(p: Any, placement: Any) -> tuple[Point, Point, Point]:
    """(origin, x axis, y axis) of an IfcAxis2Placement2D (or a 3D one whose Axis is ±Z)."""
    if placement is None:
        return (0.0, 0.0), (1.0, 0.0), (0.0, 1.0)
    origin = _coords(p, placement.Location)
    u = _direction(p, getattr(placement, "RefDirection", None), (1.0, 0.0))
    sign = 1.0
    if placement.is_a("IfcAxis2Placement3D"):
        axis = getattr(placement, "Axis", None)
        if axis is not None:
            ax = tuple(axis.DirectionRatios)
            if abs(ax[0]) > 1e-9 * abs(ax[2]) or abs(ax[1]) > 1e-9 * abs(ax[2]) or ax[2] == 0:
                raise UnsupportedProfile(f"{_src(p)}: placement #{placement.id()} is not in the profile plane")
            sign = 1.0 if ax[2] > 0 else -1.0
    v = (-sign * u[1], sign * u[0])
    return origin, u, v


def _placed(p: Any, m: Moments) -> Moments:
    """Moments moved by the profile's Position (IfcParameterizedProfileDef)."""
    origin, u, v = _frame(p, getattr(p, "Position", None))
    return m.transformed(((u[0], v[0]), (u[1], v[1])), origin)


def _root(r: float) -> dict[str, float]:
    """The ``r_root`` dimension of a root radius the profile gives (none for a sharp corner)."""
    return {"r_root": r} if r > 0 else {}


def _section(p: Any, m: Moments, shape: str, dims: dict[str, float], *, placed: bool = True) -> ProfileSection:
    if placed:
        m = _placed(p, m)
    if not (math.isfinite(m.a) and m.a > 0):
        raise UnsupportedProfile(f"{_src(p)}: the outline encloses no area")
    r = m.r_min()
    if not math.isfinite(r):
        raise UnsupportedProfile(f"{_src(p)}: the section's radius of gyration is not finite")
    return ProfileSection(
        area=m.a, r_min=r, shape=shape, source=_src(p), name=getattr(p, "ProfileName", None),
        dims=dims, moments=m,
    )


def _outline(p: Any, corners: list[tuple[float, float, float]]) -> Moments:
    try:
        return loop_moments(rounded_polygon(corners)).positive()
    except GeometryError as e:
        raise UnsupportedProfile(f"{_src(p)}: {e}") from None


def _disc(r: float) -> Moments:
    """Disc of radius r about its centre: A = πr², ∫x² = ∫y² = πr⁴/4."""
    return Moments(math.pi * r * r, 0.0, 0.0, math.pi * r**4 / 4, math.pi * r**4 / 4, 0.0)


# ---------------------------------------------------------------------------------------------
# parametric profiles: round, rectangular, elliptical
# ---------------------------------------------------------------------------------------------


def circle(p: Any, *, angle_factor: float = 1.0) -> ProfileSection:
    """IfcCircleProfileDef: solid round bar. A = πR², I = πR⁴/4 (closed form)."""
    r = _length(p, "Radius")
    return _section(p, _disc(r), Shape.ROUND_BAR, {"d": 2 * r})


def circle_hollow(p: Any, *, angle_factor: float = 1.0) -> ProfileSection:
    """IfcCircleHollowProfileDef: tube, Radius to the outside. A = π(R² - Ri²),
    I = π(R⁴ - Ri⁴)/4 with Ri = R - WallThickness."""
    r = _length(p, "Radius")
    t = _length(p, "WallThickness")
    _need(p, t < r, f"WallThickness {t:g} is not less than Radius {r:g}")
    return _section(p, _disc(r) - _disc(r - t), Shape.ROUND_TUBE, {"d": 2 * r, "t": t})


def _rect_family(b: float, h: float) -> str:
    return Shape.SQUARE_BAR if b == h else Shape.FLAT_BAR


def rectangle(p: Any, *, angle_factor: float = 1.0) -> ProfileSection:
    """IfcRectangleProfileDef: A = b·h, I = b h³/12 (polygon formula); square-bar when XDim = YDim."""
    b, h = _length(p, "XDim"), _length(p, "YDim")
    m = _outline(p, [(-b / 2, -h / 2, 0), (b / 2, -h / 2, 0), (b / 2, h / 2, 0), (-b / 2, h / 2, 0)])
    return _section(p, m, _rect_family(b, h), {"b": b, "h": h})


def rounded_rectangle(p: Any, *, angle_factor: float = 1.0) -> ProfileSection:
    """IfcRoundedRectangleProfileDef: rectangle with RoundingRadius arcs at its four corners."""
    b, h = _length(p, "XDim"), _length(p, "YDim")
    r = _radius(p, "RoundingRadius")
    _need(p, r <= min(b, h) / 2, f"RoundingRadius {r:g} exceeds half the smaller side {min(b, h) / 2:g}")
    m = _outline(p, [(-b / 2, -h / 2, r), (b / 2, -h / 2, r), (b / 2, h / 2, r), (-b / 2, h / 2, r)])
    return _section(p, m, _rect_family(b, h), {"b": b, "h": h})


def rectangle_hollow(p: Any, *, angle_factor: float = 1.0) -> ProfileSection:
    """IfcRectangleHollowProfileDef: outer rectangle XDim × YDim rounded with OuterFilletRadius
    minus the inner one (XDim - 2t) × (YDim - 2t) rounded with InnerFilletRadius (EN 10210 /
    EN 10219 hollow sections: give their ro and ri)."""
    b, h = _length(p, "XDim"), _length(p, "YDim")
    t = _length(p, "WallThickness")
    ro, ri = _radius(p, "OuterFilletRadius"), _radius(p, "InnerFilletRadius")
    _need(p, 2 * t < min(b, h), f"WallThickness {t:g} is not less than half the smaller side {min(b, h) / 2:g}")
    bi, hi = b - 2 * t, h - 2 * t
    _need(p, ro <= min(b, h) / 2, f"OuterFilletRadius {ro:g} exceeds half the smaller side {min(b, h) / 2:g}")
    _need(p, ri <= min(bi, hi) / 2, f"InnerFilletRadius {ri:g} exceeds half the smaller inner side {min(bi, hi) / 2:g}")
    # the inner outline must stay inside the outer one at the corners: comparing the support
    # functions of the two rounded rectangles in the diagonal direction gives
    # √2·(ro - t - ri) <= ro - ri
    _need(p, math.sqrt(2.0) * (ro - t - ri) <= (ro - ri) * (1 + 1e-12),
          f"OuterFilletRadius {ro:g} is too large for WallThickness {t:g} and InnerFilletRadius {ri:g}: "
          "the wall would break through at the corners")
    outer = _outline(p, [(-b / 2, -h / 2, ro), (b / 2, -h / 2, ro), (b / 2, h / 2, ro), (-b / 2, h / 2, ro)])
    inner = _outline(p, [(-bi / 2, -hi / 2, ri), (bi / 2, -hi / 2, ri), (bi / 2, hi / 2, ri), (-bi / 2, hi / 2, ri)])
    return _section(p, outer - inner, Shape.RECT_TUBE, {"b": b, "h": h, "t": t})


def ellipse(p: Any, *, angle_factor: float = 1.0) -> ProfileSection:
    """IfcEllipseProfileDef: SemiAxis1 = a along x, SemiAxis2 = c along y.
    A = π a c, ∫x² = π a³ c / 4, ∫y² = π a c³ / 4 (closed form)."""
    a, c = _length(p, "SemiAxis1"), _length(p, "SemiAxis2")
    m = Moments(math.pi * a * c, 0.0, 0.0, math.pi * a**3 * c / 4, math.pi * a * c**3 / 4, 0.0)
    return _section(p, m, Shape.ELLIPSE, {"b": 2 * a, "h": 2 * c})


def trapezium(p: Any, *, angle_factor: float = 1.0) -> ProfileSection:
    """IfcTrapeziumProfileDef: bottom edge BottomXDim, top edge TopXDim starting TopXOffset from
    the bottom edge's start, height YDim; origin at the centre of the bounding box."""
    bb, bt, h = _length(p, "BottomXDim"), _length(p, "TopXDim"), _length(p, "YDim")
    off = _value(p, "TopXOffset")
    _need(p, isinstance(off, int | float) and math.isfinite(off), f"TopXOffset = {off!r} is not a length")
    x0 = -(min(off, 0.0) + max(off + bt, bb)) / 2  # left end of the bottom edge
    m = _outline(p, [(x0, -h / 2, 0), (x0 + bb, -h / 2, 0), (x0 + off + bt, h / 2, 0), (x0 + off, h / 2, 0)])
    width = max(off + bt, bb) - min(off, 0.0)
    return _section(p, m, Shape.ARBITRARY, {"b": width, "h": h})


# ---------------------------------------------------------------------------------------------
# parametric profiles: rolled and cold-formed shapes
# ---------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class _Flange:
    b: float       # width
    tf: float      # thickness (at b/4 from the tip when sloped)
    r: float       # fillet radius to the web
    re: float      # edge radius at the tip's inner corner
    slope: float   # slope of the inner face, radians


def _i_corners(p: Any, h: float, tw: float, bot: _Flange, top: _Flange) -> list[tuple[float, float, float]]:
    """Outline of an I (bottom and top flange may differ), counter-clockwise.

    Sloped inner flange faces: the thickness tf is measured b/4 from the flange tip (the
    EN 10365 convention for IPN sections), so the flange is tf - (b/4)·tan α thick at the tip
    and tf + (b/4 - tw/2)·tan α at the face of the web.
    """
    for name, f in (("bottom", bot), ("top", top)):
        _need(p, tw < f.b, f"WebThickness {tw:g} is not less than the {name} flange width {f.b:g}")
        _need(p, f.tf - f.b / 4 * math.tan(f.slope) > 0,
              f"the sloped {name} flange has no thickness at its tip")
    tb_tip = bot.tf - bot.b / 4 * math.tan(bot.slope)
    tb_web = bot.tf + (bot.b / 4 - tw / 2) * math.tan(bot.slope)
    tt_tip = top.tf - top.b / 4 * math.tan(top.slope)
    tt_web = top.tf + (top.b / 4 - tw / 2) * math.tan(top.slope)
    _need(p, tb_web + tt_web < h, f"the flanges ({tb_web:g} + {tt_web:g} at the web) fill the depth {h:g}")
    y0, y1 = -h / 2, h / 2
    xb, xt, w = bot.b / 2, top.b / 2, tw / 2
    return [
        (-xb, y0, 0), (xb, y0, 0), (xb, y0 + tb_tip, bot.re), (w, y0 + tb_web, bot.r),
        (w, y1 - tt_web, top.r), (xt, y1 - tt_tip, top.re), (xt, y1, 0), (-xt, y1, 0),
        (-xt, y1 - tt_tip, top.re), (-w, y1 - tt_web, top.r), (-w, y0 + tb_web, bot.r),
        (-xb, y0 + tb_tip, bot.re),
    ]


def i_shape(p: Any, *, angle_factor: float = 1.0) -> ProfileSection:
    """IfcIShapeProfileDef: doubly symmetric I/H section with web-flange fillets (FilletRadius),
    flange tip edge radii (FlangeEdgeRadius, IFC4+) and tapered flanges (FlangeSlope, IFC4+,
    thickness measured b/4 from the tip as in EN 10365 for IPN). Drawn as arcs and lines and
    integrated exactly (cf. EN 10365 section tables, which round the same geometry)."""
    h, b = _length(p, "OverallDepth"), _length(p, "OverallWidth")
    tw, tf = _length(p, "WebThickness"), _length(p, "FlangeThickness")
    fl = _Flange(b, tf, _radius(p, "FilletRadius"), _radius(p, "FlangeEdgeRadius"),
                 _slope(p, "FlangeSlope", angle_factor))
    m = _outline(p, _i_corners(p, h, tw, fl, fl))
    return _section(p, m, Shape.I_SECTION, {"h": h, "b": b, "tw": tw, "tf": tf} | _root(fl.r))


def asymmetric_i_shape(p: Any, *, angle_factor: float = 1.0) -> ProfileSection:
    """IfcAsymmetricIShapeProfileDef: I with different bottom and top flanges.

    IFC2X3 (a subtype of IfcIShapeProfileDef): OverallWidth / FlangeThickness / FilletRadius
    are the bottom flange's, TopFlangeThickness defaults to FlangeThickness. IFC4 and later:
    BottomFlangeWidth, BottomFlangeThickness, BottomFlangeFilletRadius, edge radii and slopes
    per flange; TopFlangeThickness defaults to BottomFlangeThickness. dims: b is the wider
    flange, tf the thinner one.
    """
    h, tw = _length(p, "OverallDepth"), _length(p, "WebThickness")
    bb = _length(p, "BottomFlangeWidth", "OverallWidth")
    tfb = _length(p, "BottomFlangeThickness", "FlangeThickness")
    bt = _length(p, "TopFlangeWidth")
    tft = _length(p, "TopFlangeThickness") if _value(p, "TopFlangeThickness") is not None else tfb
    bot = _Flange(bb, tfb, _radius(p, "BottomFlangeFilletRadius", "FilletRadius"),
                  _radius(p, "BottomFlangeEdgeRadius"), _slope(p, "BottomFlangeSlope", angle_factor))
    top = _Flange(bt, tft, _radius(p, "TopFlangeFilletRadius"), _radius(p, "TopFlangeEdgeRadius"),
                  _slope(p, "TopFlangeSlope", angle_factor))
    m = _outline(p, _i_corners(p, h, tw, bot, top))
    return _section(p, m, Shape.I_SECTION, {"h": h, "b": max(bb, bt), "tw": tw, "tf": min(tfb, tft),
                                            **_root(min(bot.r, top.r))})


def l_shape(p: Any, *, angle_factor: float = 1.0) -> ProfileSection:
    """IfcLShapeProfileDef: angle with the heel at bottom left, Width along x, Depth along y,
    root fillet FilletRadius, toe radii EdgeRadius (EN 10056-1 r1, r2). LegSlope tapers the
    inner faces; the thickness is then measured at the middle of each leg's bounding length.
    r_min is the principal (v-v) axis radius."""
    h = _length(p, "Depth")
    b = _length(p, "Width") if _value(p, "Width") is not None else h
    t = _length(p, "Thickness")
    r1, r2 = _radius(p, "FilletRadius"), _radius(p, "EdgeRadius")
    k = math.tan(_slope(p, "LegSlope", angle_factor))
    _need(p, t < min(b, h), f"Thickness {t:g} is not less than the shorter leg {min(b, h):g}")
    _need(p, t - b / 2 * k > 0 and t - h / 2 * k > 0, "the sloped legs have no thickness at their toes")
    # inner faces: y = -h/2 + t - x·k (horizontal leg), x = -b/2 + t - y·k (vertical leg)
    xi = (-b / 2 + t + (h / 2 - t) * k) / (1 - k * k)
    yi = -h / 2 + t - xi * k
    m = _outline(p, [
        (-b / 2, -h / 2, 0), (b / 2, -h / 2, 0), (b / 2, -h / 2 + t - b / 2 * k, r2), (xi, yi, r1),
        (-b / 2 + t - h / 2 * k, h / 2, r2), (-b / 2, h / 2, 0),
    ])
    return _section(p, m, Shape.ANGLE, {"h": h, "b": b, "t": t})


def t_shape(p: Any, *, angle_factor: float = 1.0) -> ProfileSection:
    """IfcTShapeProfileDef: flange on top (FlangeWidth × FlangeThickness), web down to the toe.
    FilletRadius at the web-flange corners, FlangeEdgeRadius at the flange tips, WebEdgeRadius
    at the toe. FlangeSlope tapers the flange's underside (thickness measured b/4 from the tip);
    WebSlope tapers the web (thickness measured at half the depth), as in EN 10055. (The
    schema's prose descriptions of the two slopes are swapped; the attribute names are followed.)"""
    h, b = _length(p, "Depth"), _length(p, "FlangeWidth")
    tw, tf = _length(p, "WebThickness"), _length(p, "FlangeThickness")
    r1, r2, r3 = _radius(p, "FilletRadius"), _radius(p, "FlangeEdgeRadius"), _radius(p, "WebEdgeRadius")
    ka = math.tan(_slope(p, "FlangeSlope", angle_factor))
    kb = math.tan(_slope(p, "WebSlope", angle_factor))
    _need(p, tw < b, f"WebThickness {tw:g} is not less than FlangeWidth {b:g}")
    _need(p, tf < h, f"FlangeThickness {tf:g} is not less than Depth {h:g}")
    toe = tw / 2 - h / 2 * kb
    tip = tf - b / 4 * ka
    _need(p, toe > 0 and tip > 0, "the sloped web or flange has no thickness at its end")
    # underside of the flange: y = h/2 - tf - (b/4 - x)·ka; web face: x = tw/2 + y·kb
    yi = (h / 2 - tf - (b / 4 - tw / 2) * ka) / (1 - ka * kb)
    xi = tw / 2 + yi * kb
    _need(p, -h / 2 < yi and xi < b / 2, "the flange and the web do not meet inside the section")
    m = _outline(p, [
        (toe, -h / 2, r3), (xi, yi, r1), (b / 2, h / 2 - tip, r2), (b / 2, h / 2, 0),
        (-b / 2, h / 2, 0), (-b / 2, h / 2 - tip, r2), (-xi, yi, r1), (-toe, -h / 2, r3),
    ])
    return _section(p, m, Shape.TEE, {"h": h, "b": b, "tw": tw, "tf": tf} | _root(r1))


def u_shape(p: Any, *, angle_factor: float = 1.0) -> ProfileSection:
    """IfcUShapeProfileDef: channel, web on the left, flanges pointing +x; FilletRadius at the
    web-flange corners, EdgeRadius at the flange tips. A sloped flange (FlangeSlope) has its
    thickness measured at half the flange width b/2 from the tip (the EN 10365 convention for
    UPN, reproducing its tabulated areas)."""
    h, b = _length(p, "Depth"), _length(p, "FlangeWidth")
    tw, tf = _length(p, "WebThickness"), _length(p, "FlangeThickness")
    r1, r2 = _radius(p, "FilletRadius"), _radius(p, "EdgeRadius")
    k = math.tan(_slope(p, "FlangeSlope", angle_factor))
    _need(p, tw < b, f"WebThickness {tw:g} is not less than FlangeWidth {b:g}")
    tip, web = tf - b / 2 * k, tf + (b / 2 - tw) * k
    _need(p, tip > 0, "the sloped flange has no thickness at its tip")
    _need(p, 2 * web < h, f"the flanges ({web:g} thick at the web) fill the depth {h:g}")
    x0, y0 = -b / 2, -h / 2
    m = _outline(p, [
        (x0, y0, 0), (b / 2, y0, 0), (b / 2, y0 + tip, r2), (x0 + tw, y0 + web, r1),
        (x0 + tw, -y0 - web, r1), (b / 2, -y0 - tip, r2), (b / 2, -y0, 0), (x0, -y0, 0),
    ])
    return _section(p, m, Shape.CHANNEL_U, {"h": h, "b": b, "tw": tw, "tf": tf} | _root(r1))


def c_shape(p: Any, *, angle_factor: float = 1.0) -> ProfileSection:
    """IfcCShapeProfileDef: cold-formed lipped channel of constant WallThickness t, web on the
    left, lips of total length Girth (from the flange's outer face) at the flange tips; bends
    with InternalFilletRadius r inside and r + t outside (sharp when the radius is omitted)."""
    h, b = _length(p, "Depth"), _length(p, "Width")
    t, c = _length(p, "WallThickness"), _length(p, "Girth")
    ri = _radius(p, "InternalFilletRadius")
    ro = ri + t if ri > 0 else 0.0
    _need(p, 2 * t < min(b, h), f"WallThickness {t:g} is not less than half of Width and Depth")
    _need(p, t <= c < h / 2, f"Girth {c:g} is not between WallThickness {t:g} and half the Depth {h / 2:g}")
    x0, y0, x1, y1 = -b / 2, -h / 2, b / 2, h / 2
    m = _outline(p, [
        (x0, y0, ro), (x1, y0, ro), (x1, y0 + c, 0), (x1 - t, y0 + c, 0), (x1 - t, y0 + t, ri),
        (x0 + t, y0 + t, ri), (x0 + t, y1 - t, ri), (x1 - t, y1 - t, ri), (x1 - t, y1 - c, 0),
        (x1, y1 - c, 0), (x1, y1, ro), (x0, y1, ro),
    ])
    return _section(p, m, Shape.CHANNEL_C, {"h": h, "b": b, "t": t})


def z_shape(p: Any, *, angle_factor: float = 1.0) -> ProfileSection:
    """IfcZShapeProfileDef: web centred on the y axis, bottom flange to +x and top flange to -x,
    each reaching FlangeWidth from the web's centre line (overall width 2·FlangeWidth, the
    bounding box centred on the origin, as ifcopenshell's geometry kernel draws it);
    FilletRadius at the web-flange corners, EdgeRadius at the flange tips. r_min is the
    inclined principal axis."""
    h, b = _length(p, "Depth"), _length(p, "FlangeWidth")
    tw, tf = _length(p, "WebThickness"), _length(p, "FlangeThickness")
    r1, r2 = _radius(p, "FilletRadius"), _radius(p, "EdgeRadius")
    _need(p, tw / 2 < b, f"WebThickness {tw:g} is not less than twice FlangeWidth {b:g}")
    _need(p, 2 * tf < h, f"FlangeThickness {tf:g} is not less than half the Depth {h / 2:g}")
    w, y = tw / 2, h / 2
    m = _outline(p, [
        (-w, -y, 0), (b, -y, 0), (b, -y + tf, r2), (w, -y + tf, r1),
        (w, y, 0), (-b, y, 0), (-b, y - tf, r2), (-w, y - tf, r1),
    ])
    return _section(p, m, Shape.ZED, {"h": h, "b": b, "tw": tw, "tf": tf})


# ---------------------------------------------------------------------------------------------
# curves (arbitrary and centre-line profiles)
# ---------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class _Ctx:
    profile: Any
    angle_factor: float

    def fail(self, what: str) -> UnsupportedProfile:
        return UnsupportedProfile(f"{_src(self.profile)}: {what}")


#: composite curves nested deeper than this are refused (real outlines nest one or two levels)
MAX_CURVE_NESTING = 32


def _curve_segments(curve: Any, ctx: _Ctx, within: tuple[int, ...] = ()) -> list[Segment]:
    """The curve as line segments and conic arcs, in its own direction. ``within``: the ids of
    the composite curves it is a part of (a curve that is part of itself is refused)."""
    kind = curve.is_a()
    p = ctx.profile
    if kind == "IfcPolyline":
        points = curve.Points
        _within_limit(ctx, curve, len(points))
        pts = [_coords(p, q) for q in points]
        return _polyline(pts)
    if kind == "IfcIndexedPolyCurve":
        return _indexed_poly_curve(curve, ctx)
    if kind in ("IfcCompositeCurve", "Ifc2DCompositeCurve"):
        if curve.id() in within:
            raise ctx.fail(f"{kind} #{curve.id()} is a segment of itself (a cycle through "
                           + " → ".join(f"#{i}" for i in (*within, curve.id())) + ")")
        if len(within) >= MAX_CURVE_NESTING:
            raise ctx.fail(f"{kind} #{curve.id()} nests composite curves more than {MAX_CURVE_NESTING} deep")
        parts: list[tuple[list[Segment], bool]] = []
        for part in curve.Segments:
            if not part.is_a("IfcCompositeCurveSegment"):
                raise ctx.fail(f"{part.is_a()} #{part.id()} in a composite curve is not supported")
            parent = part.ParentCurve
            if parent is None:
                raise ctx.fail(f"IfcCompositeCurveSegment #{part.id()} has no ParentCurve")
            if parent.is_a("IfcTrimmedCurve"):
                seg, ambiguous = _trimmed(parent, ctx)
                sub = [seg]
            else:
                sub, ambiguous = _curve_segments(parent, ctx, (*within, curve.id())), False
            if not part.SameSense:
                sub = [s.reversed() for s in reversed(sub)]
            parts.append((sub, ambiguous))
        return orient(parts)
    if kind == "IfcTrimmedCurve":
        return [_trimmed(curve, ctx)[0]]
    if kind in ("IfcCircle", "IfcEllipse"):
        return [_conic(curve, ctx, 0.0, _TWO_PI)]
    raise ctx.fail(f"{kind} #{curve.id()} is a curve type modelcheck cannot integrate")


def _polyline(pts: list[Point]) -> list[Segment]:
    return [Line(a, b) for a, b in zip(pts, pts[1:], strict=False) if a != b]


def _within_limit(ctx: _Ctx, curve: Any, count: int) -> None:
    if count > MAX_OUTLINE_POINTS:
        raise ctx.fail(f"{curve.is_a()} #{curve.id()} has {count} points, more than the {MAX_OUTLINE_POINTS} "
                       "an outline may have; not read")


def _indexed_poly_curve(curve: Any, ctx: _Ctx) -> list[Segment]:
    coord_list = curve.Points.CoordList
    _within_limit(ctx, curve, len(coord_list))
    coords = [_xy(ctx.profile, c) for c in coord_list]

    def arc(a: Point, m: Point, b: Point) -> list[Segment]:
        through = circle_through(a, m, b)
        return _polyline([a, m, b]) if through is None else [through]

    try:
        return indexed_segments(curve, coords, _polyline, arc)
    except SegmentIndexError as exc:
        raise ctx.fail(exc.named) from None


def _conic_axes(curve: Any, ctx: _Ctx) -> tuple[Point, Point, Point]:
    """(centre, U, V) with p(t) = centre + U cos t + V sin t for IfcCircle / IfcEllipse."""
    p = ctx.profile
    origin, u, v = _frame(p, curve.Position)
    if curve.is_a("IfcCircle"):
        a = c = _length(curve, "Radius")
    else:
        a, c = _length(curve, "SemiAxis1"), _length(curve, "SemiAxis2")
    return origin, (u[0] * a, u[1] * a), (v[0] * c, v[1] * c)


def _conic(curve: Any, ctx: _Ctx, t0: float, sweep: float) -> Arc:
    centre, uu, vv = _conic_axes(curve, ctx)
    return Arc(centre, uu, vv, t0, sweep)


def _trimmed(curve: Any, ctx: _Ctx) -> tuple[Segment, bool]:
    """IfcTrimmedCurve of an IfcLine, IfcCircle or IfcEllipse, from Trim1 to Trim2, in the senses
    ``modelcheck.ifc.curves`` documents (``line_trims``, ``conic_sweep``).

    Trims by IfcCartesianPoint are projected on the basis curve; trims by IfcParameterValue are
    a length along the line's direction vector, or an angle (file unit × angle_factor) on a
    conic. On a line the piece runs from Trim1 to Trim2; where SenseAgreement contradicts that
    order the piece is returned as written and marked ambiguous (True), for the composite curve
    to run it the way that joins its neighbours. On a conic, SenseAgreement False runs clockwise."""
    p = ctx.profile
    basis = curve.BasisCurve
    master = getattr(curve, "MasterRepresentation", None)
    (p1, t1), (p2, t2) = trim_choice(curve.Trim1, master), trim_choice(curve.Trim2, master)
    if (p1 is None and t1 is None) or (p2 is None and t2 is None):
        raise ctx.fail(f"IfcTrimmedCurve #{curve.id()} has an empty trim")
    sense = bool(curve.SenseAgreement)
    if basis.is_a("IfcLine"):
        origin = _coords(p, basis.Pnt)
        vec = basis.Dir
        d = _direction(p, vec.Orientation, (1.0, 0.0))
        mag = float(vec.Magnitude)
        if not (math.isfinite(mag) and mag > 0):
            raise ctx.fail(f"IfcTrimmedCurve #{curve.id()}: the line's vector has magnitude {mag:g}")

        def on_line(pt: Any, t: float | None) -> tuple[float, Point]:
            """(parameter, point): a point trim is kept as written, its parameter projected."""
            if pt is not None:
                q = _coords(p, pt)
                return ((q[0] - origin[0]) * d[0] + (q[1] - origin[1]) * d[1]) / mag, q
            assert t is not None
            return t, (origin[0] + t * mag * d[0], origin[1] + t * mag * d[1])

        (u1, q1), (u2, q2) = on_line(p1, t1), on_line(p2, t2)
        return Line(q1, q2), line_trims(u1, u2, sense)[2]
    if basis.is_a("IfcCircle") or basis.is_a("IfcEllipse"):
        centre, uu, vv = _conic_axes(basis, ctx)
        det = uu[0] * vv[1] - uu[1] * vv[0]

        def angle(pt: Any, t: float | None) -> float:
            if pt is None:
                assert t is not None
                if not math.isfinite(ctx.angle_factor):
                    raise ctx.fail(f"IfcTrimmedCurve #{curve.id()} is trimmed by angle, and the model's "
                                   "PLANEANGLEUNIT is not usable")
                why = trim_angle_problem(t * ctx.angle_factor)
                if why is not None:
                    raise ctx.fail(f"IfcTrimmedCurve #{curve.id()}: {why}")
                return t * ctx.angle_factor
            x, y = _coords(p, pt)
            dx, dy = x - centre[0], y - centre[1]
            # solve centre + U cos t + V sin t = point for (cos t, sin t)
            c = (dx * vv[1] - dy * vv[0]) / det
            s = (uu[0] * dy - uu[1] * dx) / det
            return math.atan2(s, c)

        a1 = angle(p1, t1)
        return Arc(centre, uu, vv, a1, conic_sweep(a1, angle(p2, t2), sense)), False
    raise ctx.fail(f"IfcTrimmedCurve #{curve.id()} of {basis.is_a()} is not supported")


def _loop_moments(curve: Any, ctx: _Ctx) -> Moments:
    """Positive moments of the region enclosed by a closed curve.

    A polyline (IfcPolyline, IfcIndexedPolyCurve) whose last point is not its first is closed
    by a straight edge; any other gap larger than GAP_TOLERANCE × the outline's size is refused.
    """
    segs = _curve_segments(curve, ctx)
    if not segs:
        raise ctx.fail(f"{curve.is_a()} #{curve.id()} has no segments")
    size = _extent(segs)
    polyline = curve.is_a("IfcPolyline") or curve.is_a("IfcIndexedPolyCurve")
    gaps = closing_gaps(segs)
    for i, gap in gaps:
        if gap > GAP_TOLERANCE * size and not (polyline and i == len(segs) - 1):
            where = "between its end and its start" if i == len(segs) - 1 else f"after segment {i + 1}"
            raise ctx.fail(f"{curve.is_a()} #{curve.id()} is not closed: a gap of {gap:g} {where}")
    _within_limit(ctx, curve, len(segs))
    if all(isinstance(s, Line) for s in segs):
        crossing = crossing_edges([s.start for s in segs])
        if crossing is not None:
            raise ctx.fail(f"{curve.is_a()} #{curve.id()} crosses itself (segments {crossing[0] + 1} "
                           f"and {crossing[1] + 1})")
    m = loop_moments(segs)
    if not (math.isfinite(m.a) and abs(m.a) > 1e-12 * size * size):
        raise ctx.fail(f"{curve.is_a()} #{curve.id()} encloses no area")
    return m.positive()


def _extent(segs: Sequence[Segment]) -> float:
    pts = [q for s in segs for q in (s.start, s.end)]
    for s in segs:
        if isinstance(s, Arc):
            pts.append(s.point(s.t0 + s.sweep / 2))
            r = math.hypot(*s.u) + math.hypot(*s.v)
            pts.extend([(s.center[0] - r, s.center[1] - r), (s.center[0] + r, s.center[1] + r)])
    xs, ys = [q[0] for q in pts], [q[1] for q in pts]
    return max(max(xs) - min(xs), max(ys) - min(ys))


def arbitrary_closed(p: Any, *, angle_factor: float = 1.0) -> ProfileSection:
    """IfcArbitraryClosedProfileDef: the region inside OuterCurve (IfcPolyline,
    IfcIndexedPolyCurve, IfcCompositeCurve of polylines / trimmed lines, circles and ellipses,
    whole IfcCircle / IfcEllipse), integrated exactly with Green's theorem."""
    ctx = _Ctx(p, angle_factor)
    m = _loop_moments(p.OuterCurve, ctx)
    return _section(p, m, Shape.ARBITRARY, {}, placed=False)


def arbitrary_with_voids(p: Any, *, angle_factor: float = 1.0) -> ProfileSection:
    """IfcArbitraryProfileDefWithVoids: OuterCurve's region minus each of InnerCurves'."""
    ctx = _Ctx(p, angle_factor)
    m = _loop_moments(p.OuterCurve, ctx)
    for inner in p.InnerCurves or ():
        m = m - _loop_moments(inner, ctx)
    _need(p, m.a > 0, "the voids are as large as the outer outline")
    return _section(p, m, Shape.ARBITRARY, {}, placed=False)


def center_line(p: Any, *, angle_factor: float = 1.0) -> ProfileSection:
    """IfcCenterLineProfileDef: Thickness t centred on an open (or closed) Curve.

    The region is the exact offset band: straight pieces are quadrilaterals cut at each corner
    by the mitre line (the bisector, where the two offset edges meet), circular pieces are
    annular sectors; the area is therefore length × t. Arcs must join their neighbours
    tangentially; elliptic arcs are refused.
    """
    ctx = _Ctx(p, angle_factor)
    t = _length(p, "Thickness")
    segs = _curve_segments(p.Curve, ctx)
    if not segs:
        raise ctx.fail("the centre line has no segments")
    size = max(_extent(segs), t)
    for i, gap in closing_gaps(segs)[:-1]:
        if gap > GAP_TOLERANCE * size:
            raise ctx.fail(f"the centre line has a gap of {gap:g} after segment {i + 1}")
    closed = math.dist(segs[-1].end, segs[0].start) <= GAP_TOLERANCE * size
    w = t / 2
    n = len(segs)

    def tangent(s: Segment, at_end: bool) -> Point:
        if isinstance(s, Line):
            return _unit_vec(s.end[0] - s.start[0], s.end[1] - s.start[1])
        tt = s.t0 + (s.sweep if at_end else 0.0)
        sign = 1.0 if s.sweep > 0 else -1.0
        dx = -s.u[0] * math.sin(tt) + s.v[0] * math.cos(tt)
        dy = -s.u[1] * math.sin(tt) + s.v[1] * math.cos(tt)
        return _unit_vec(sign * dx, sign * dy)

    def mitre(i: int) -> Point:
        """Offset vector (left side, length w scaled) at the start of segment i."""
        d_out = tangent(segs[i], False)
        n_out = (-d_out[1], d_out[0])
        if i == 0 and not closed:
            return (w * n_out[0], w * n_out[1])
        d_in = tangent(segs[i - 1], True)
        n_in = (-d_in[1], d_in[0])
        tangential = abs(d_in[0] * d_out[1] - d_in[1] * d_out[0]) < 1e-9 and d_in[0] * d_out[0] + d_in[1] * d_out[1] > 0
        if not tangential and (isinstance(segs[i], Arc) or isinstance(segs[i - 1], Arc)):
            raise ctx.fail("an arc of the centre line meets its neighbour at a corner")
        denom = 1.0 + n_in[0] * n_out[0] + n_in[1] * n_out[1]
        if denom < 1e-9:
            raise ctx.fail("the centre line turns back on itself")
        return (w * (n_in[0] + n_out[0]) / denom, w * (n_in[1] + n_out[1]) / denom)

    mitres = [mitre(i) for i in range(n)]
    end_d = tangent(segs[-1], True)
    end_mitre = mitres[0] if closed else (-w * end_d[1], w * end_d[0])
    total = Moments()
    for i, s in enumerate(segs):
        m0 = mitres[i]
        m1 = mitres[i + 1] if i + 1 < n else end_mitre
        if isinstance(s, Line):
            (x0, y0), (x1, y1) = s.start, s.end
            d = tangent(s, False)
            for sgn in (1.0, -1.0):
                along = (x1 + sgn * m1[0] - x0 - sgn * m0[0]) * d[0] + (y1 + sgn * m1[1] - y0 - sgn * m0[1]) * d[1]
                if along < -1e-12 * size:
                    raise ctx.fail(f"Thickness {t:g} is too large for the corners of the centre line")
            quad = [
                Line((x0 - m0[0], y0 - m0[1]), (x1 - m1[0], y1 - m1[1])),
                Line((x1 - m1[0], y1 - m1[1]), (x1 + m1[0], y1 + m1[1])),
                Line((x1 + m1[0], y1 + m1[1]), (x0 + m0[0], y0 + m0[1])),
                Line((x0 + m0[0], y0 + m0[1]), (x0 - m0[0], y0 - m0[1])),
            ]
            total = total + loop_moments(quad).positive()
        else:
            if not s.is_circular:
                raise ctx.fail("an elliptic arc in a centre line is not supported")
            r = s.radius
            if r <= w:
                raise ctx.fail(f"Thickness {t:g} exceeds the diameter of an arc of radius {r:g}")
            k_out, k_in = (r + w) / r, (r - w) / r
            outer = Arc(s.center, _mul(s.u, k_out), _mul(s.v, k_out), s.t0, s.sweep)
            inner = Arc(s.center, _mul(s.u, k_in), _mul(s.v, k_in), s.t0 + s.sweep, -s.sweep)
            band: list[Line | Arc] = [outer, Line(outer.end, inner.start), inner, Line(inner.end, outer.start)]
            total = total + loop_moments(band).positive()
    return _section(p, total, Shape.ARBITRARY, {"t": t}, placed=False)


def _unit_vec(x: float, y: float) -> Point:
    d = math.hypot(x, y)
    if d == 0.0:
        raise UnsupportedProfile("zero-length segment in a centre line")
    return (x / d, y / d)


def _mul(v: Point, k: float) -> Point:
    return (v[0] * k, v[1] * k)


# ---------------------------------------------------------------------------------------------
# profiles made of other profiles
# ---------------------------------------------------------------------------------------------


def _operator(p: Any, op: Any) -> tuple[Matrix, Point, float, float]:
    """IfcCartesianTransformationOperator2D(nonUniform) as x' = M x + t, with its scales.

    Axes as IFC's IfcBaseAxis: U1 = Axis1 (or Axis2 turned -90°), U2 = U1 turned +90° and
    flipped when Axis2 points the other way (a mirror); then x' = LocalOrigin + Scale·x·U1 +
    Scale2·y·U2 (Scale defaults to 1, Scale2 to Scale).
    """
    a1, a2 = getattr(op, "Axis1", None), getattr(op, "Axis2", None)
    if a1 is not None:
        u1 = _direction(p, a1, (1.0, 0.0))
        u2 = (-u1[1], u1[0])
        if a2 is not None:
            d2 = _direction(p, a2, u2)
            if d2[0] * u2[0] + d2[1] * u2[1] < 0:
                u2 = (-u2[0], -u2[1])
    elif a2 is not None:
        u2 = _direction(p, a2, (0.0, 1.0))
        u1 = (u2[1], -u2[0])
    else:
        u1, u2 = (1.0, 0.0), (0.0, 1.0)
    origin = _coords(p, op.LocalOrigin)
    s1 = getattr(op, "Scale", None)
    s1 = 1.0 if s1 is None else float(s1)
    s2 = getattr(op, "Scale2", None) if op.is_a("IfcCartesianTransformationOperator2DnonUniform") else None
    s2 = s1 if s2 is None else float(s2)
    for s in (s1, s2):
        if not (math.isfinite(s) and s > 0):
            raise UnsupportedProfile(f"{_src(p)}: operator #{op.id()} has scale {s!r}")
    m = ((s1 * u1[0], s2 * u2[0]), (s1 * u1[1], s2 * u2[1]))
    return m, origin, s1, s2


def derived(p: Any, *, angle_factor: float = 1.0) -> ProfileSection:
    """IfcDerivedProfileDef: ParentProfile moved, rotated, mirrored and scaled by Operator.

    The parent's moment tensor is transformed (never its outline). With a uniform scale the
    family and dims carry over (dims × scale); a non-uniform scale makes it 'arbitrary'.
    """
    parent = _dispatch(p.ParentProfile, angle_factor)
    if p.Operator is None:
        raise UnsupportedProfile(f"{_src(p)}: no Operator")
    m, t, s1, s2 = _operator(p, p.Operator)
    assert parent.moments is not None
    moments = parent.moments.transformed(m, t)
    if math.isclose(s1, s2, rel_tol=1e-12):
        shape, dims = parent.shape, {k: v * s1 for k, v in parent.dims.items()}
    else:
        shape, dims = Shape.ARBITRARY, {}
    sec = _section(p, moments, shape, dims, placed=False)
    return sec if sec.name is not None else replace(sec, name=parent.name)


def mirrored(p: Any, *, angle_factor: float = 1.0) -> ProfileSection:
    """IfcMirroredProfileDef (IFC4+): ParentProfile mirrored about its y axis (the schema's
    derived Operator, applied here directly: reading that attribute would add entities to the
    model)."""
    parent = _dispatch(p.ParentProfile, angle_factor)
    assert parent.moments is not None
    moments = parent.moments.transformed(((-1.0, 0.0), (0.0, 1.0)))
    sec = _section(p, moments, parent.shape, dict(parent.dims), placed=False)
    return sec if sec.name is not None else replace(sec, name=parent.name)


def composite(p: Any, *, angle_factor: float = 1.0) -> ProfileSection:
    """IfcCompositeProfileDef: the sum of its Profiles (each in its own Position)."""
    parts = list(p.Profiles or ())
    if not parts:
        raise UnsupportedProfile(f"{_src(p)}: no Profiles")
    total = Moments()
    for part in parts:
        sec = _dispatch(part, angle_factor)
        assert sec.moments is not None
        total = total + sec.moments
    return _section(p, total, Shape.COMPOSITE, {}, placed=False)


PROFILE_FUNCTIONS: dict[str, ProfileFunction] = {
    "IfcCircleProfileDef": circle,
    "IfcCircleHollowProfileDef": circle_hollow,
    "IfcRectangleProfileDef": rectangle,
    "IfcRoundedRectangleProfileDef": rounded_rectangle,
    "IfcRectangleHollowProfileDef": rectangle_hollow,
    "IfcEllipseProfileDef": ellipse,
    "IfcTrapeziumProfileDef": trapezium,
    "IfcIShapeProfileDef": i_shape,
    "IfcAsymmetricIShapeProfileDef": asymmetric_i_shape,
    "IfcLShapeProfileDef": l_shape,
    "IfcTShapeProfileDef": t_shape,
    "IfcUShapeProfileDef": u_shape,
    "IfcCShapeProfileDef": c_shape,
    "IfcZShapeProfileDef": z_shape,
    "IfcArbitraryClosedProfileDef": arbitrary_closed,
    "IfcArbitraryProfileDefWithVoids": arbitrary_with_voids,
    "IfcCenterLineProfileDef": center_line,
    "IfcDerivedProfileDef": derived,
    "IfcMirroredProfileDef": mirrored,
    "IfcCompositeProfileDef": composite,
}
