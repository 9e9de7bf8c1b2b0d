"""Exact lengths of IFC curves in space: a member's Axis, a swept disk's directrix.

Example::

    from modelcheck.ifc.curves import curve_length
    curve_length(axis_curve, angle_factor=math.pi / 180)   # in the file's length unit

What is measured, and how (nothing is tessellated):

* IfcPolyline, IfcIndexedPolyCurve of IfcLineIndex: the sum of the straight pieces;
* an IfcArcIndex (three points A, M, B of a circular arc): R·θ, with the inscribed angle φ = ∠AMB,
  R = |AB| / (2 sin φ) and θ = 2(π − φ) (the law of sines and the inscribed-angle theorem);
* IfcTrimmedCurve of an IfcLine: the distance between the trims (parameters are lengths along the
  line's IfcVector, magnitude included);
* IfcTrimmedCurve of an IfcCircle: R·|sweep|; of an IfcEllipse: ∫ |p'(t)| dt by Gauss–Legendre
  quadrature (``outline.Arc.length``), exact to rounding for these smooth integrands;
* a whole IfcCircle or IfcEllipse: its circumference, the same way;
* IfcCompositeCurve (IfcCompositeCurveSegment): the sum of its segments, each run in its own sense
  (SameSense false runs a segment backwards), after checking that each segment starts where the
  one before it ends.

The senses, as ISO 10303-42 defines them for IfcTrimmedCurve and as ifcopenshell's geometry
kernel reads them (``line_trims``, ``conic_sweep``, shared with ``modelcheck.ifc.profiles``):

* on a line, the piece runs from Trim1 to Trim2 (the sense is redundant on an open curve); where
  the flag contradicts the order, as some exporters write it, the piece of a composite curve
  runs the way that joins its neighbours (``line_trims``, ``orient``);
* on a circle or an ellipse, the arc starts at Trim1 and runs to Trim2 counter-clockwise (the
  basis curve's sense) when SenseAgreement is true, clockwise when false.

A trim given both as a point and as a parameter follows MasterRepresentation (the point unless it
says PARAMETER). Parameters on circles and ellipses are plane angles in the file's angle unit,
multiplied by ``angle_factor`` (radians per file unit). A curve that cannot be measured raises
``CurveError`` naming the entity and the reason; never a guessed length.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from typing import Any, Protocol, TypeVar

from modelcheck.ifc.outline import Arc

__all__ = ["MAX_TRIM_ANGLE", "CurveError", "SegmentIndexError", "conic_sweep", "curve_length", "edge_curve_length",
           "indexed_segments", "line_trims", "orient", "trim_angle_problem", "trim_choice"]

_TWO_PI = 2.0 * math.pi
#: a gap between consecutive segments of a composite curve larger than this share of the
#: curve's length means the segments do not form one curve (the closing tolerance of profile
#: outlines, ``profiles.GAP_TOLERANCE``: exporters round coordinates)
GAP_TOLERANCE = 1e-4

Vec = tuple[float, float, float]


class _Oriented(Protocol):
    @property
    def start(self) -> Any: ...
    @property
    def end(self) -> Any: ...
    def reversed(self) -> Any: ...


_S = TypeVar("_S", bound=_Oriented)
_P = TypeVar("_P")
_T = TypeVar("_T")


class CurveError(ValueError):
    """A curve that cannot be measured (its class, a degenerate or inconsistent definition)."""


# ----------------------------------------------------------------------------- shared semantics
def line_trims(t1: float, t2: float, sense: bool) -> tuple[float, float, bool]:
    """(start, end, ambiguous) parameters of an IfcTrimmedCurve of an IfcLine.

    ISO 10303-42 makes the sense redundant on an open curve: it runs from Trim1 to Trim2, and
    SenseAgreement is false exactly when t1 > t2. Exporters also write the flag against the
    order (false with t1 < t2, meaning the piece run backwards, which is how ifcopenshell's
    geometry kernel reads it; or true with t1 > t2). Such a piece is returned from Trim1 to
    Trim2 and marked ambiguous: in a composite curve, ``orient`` then runs it the way that
    joins its neighbours."""
    return t1, t2, (t1 > t2) == bool(sense) and t1 != t2


def orient(parts: Sequence[tuple[Sequence[_S], bool]]) -> list[_S]:
    """The pieces of a composite curve's segments, in order, with each ambiguous segment
    (``line_trims``) run the way that joins the segment before it and the one after it best
    (the order as written where both ways join equally, as for a lone segment)."""
    out = [list(segs) for segs, _ in parts]
    for i, (segs, ambiguous) in enumerate(parts):
        if not ambiguous or not segs:
            continue
        prev = out[i - 1][-1].end if i > 0 and out[i - 1] else None
        nxt = out[i + 1][0].start if i + 1 < len(out) and out[i + 1] else None

        def cost(start: Any, end: Any, prev: Any = prev, nxt: Any = nxt) -> float:
            return (math.dist(prev, start) if prev is not None else 0.0) + \
                (math.dist(end, nxt) if nxt is not None else 0.0)

        if cost(segs[-1].end, segs[0].start) < cost(segs[0].start, segs[-1].end):
            out[i] = [s.reversed() for s in reversed(segs)]
    return [s for segs in out for s in segs]


def conic_sweep(a1: float, a2: float, sense: bool) -> float:
    """Signed sweep (radians) of an IfcTrimmedCurve of a circle or an ellipse from angle ``a1``
    (Trim1) to ``a2`` (Trim2): counter-clockwise when ``sense`` is true, clockwise when false;
    equal trims make the whole conic."""
    sweep = (a2 - a1) % _TWO_PI if sense else -((a1 - a2) % _TWO_PI)
    if abs(sweep) < 1e-12:
        sweep = _TWO_PI if sense else -_TWO_PI
    return sweep


#: a trim angle of a conic beyond this many radians (1,000 turns) is no position on it: its
#: remainder modulo a turn has lost the precision of a real trim (a slip or a hostile value)
MAX_TRIM_ANGLE = 1000.0 * _TWO_PI


def trim_angle_problem(angle: float) -> str | None:
    """Why an angle (radians) cannot trim a circle or an ellipse, or None when it can."""
    if not math.isfinite(angle):
        return f"a trim angle of {angle!r} rad is not a number"
    if abs(angle) > MAX_TRIM_ANGLE:
        return f"a trim angle of {angle:.4g} rad is beyond ±1,000 turns, no position on the conic"
    return None


def trim_choice(trim: Any, master: str | None) -> tuple[Any, float | None]:
    """(IfcCartesianPoint or None, parameter or None) of one trim (an IfcTrimmingSelect list).
    Both given: MasterRepresentation decides (the point unless it says PARAMETER, because a
    point does not depend on the file's angle unit)."""
    point, param = None, None
    for item in trim or ():
        if item.is_a("IfcCartesianPoint"):
            point = item
        elif item.is_a("IfcParameterValue"):
            param = float(item.wrappedValue)
    if point is not None and param is not None:
        return (None, param) if master == "PARAMETER" else (point, None)
    return point, param


class SegmentIndexError(CurveError):
    """A segment of an IfcIndexedPolyCurve that cannot be read. The message leaves the curve to
    the caller (``curve_length`` names the outermost curve); ``named`` says the same naming the
    IfcIndexedPolyCurve itself."""

    def __init__(self, message: str, named: str) -> None:
        super().__init__(message)
        self.named = named


def indexed_segments(curve: Any, coords: Sequence[_P], line: Callable[[list[_P]], list[_T]],
                     arc: Callable[[_P, _P, _P], list[_T]]) -> list[_T]:
    """The pieces of an IfcIndexedPolyCurve whose points are ``coords`` (its CoordList, read by the
    caller: 3D axes here, 2D outlines in ``modelcheck.ifc.profiles``): the whole point list as
    one ``line`` where there are no Segments, else per segment in order, ``line`` of an
    IfcLineIndex's points and ``arc`` of an IfcArcIndex's three (start, middle, end). Indices
    count from 1; one outside the point list, an IfcArcIndex without three points or another
    segment class raise ``SegmentIndexError``."""
    segments = getattr(curve, "Segments", None)
    if not segments:
        return line(list(coords))
    ref = f"#{curve.id()}"

    def pt(i: int) -> _P:
        if not 1 <= i <= len(coords):
            raise SegmentIndexError(f"refers to point {i} of {len(coords)}",
                                    f"IfcIndexedPolyCurve {ref} refers to point {i} of {len(coords)}")
        return coords[i - 1]

    out: list[_T] = []
    for seg in segments:
        idx = [int(i) for i in seg.wrappedValue]
        if seg.is_a("IfcLineIndex"):
            out.extend(line([pt(i) for i in idx]))
        elif seg.is_a("IfcArcIndex"):
            if len(idx) != 3:
                raise SegmentIndexError(f"IfcArcIndex {tuple(idx)} does not have three points",
                                        f"IfcArcIndex {tuple(idx)} of {ref} does not have three points")
            a, m, b = (pt(i) for i in idx)
            out.extend(arc(a, m, b))
        else:
            raise SegmentIndexError(f"{seg.is_a()} segments are not supported",
                                    f"{seg.is_a()} in IfcIndexedPolyCurve {ref} is not supported")
    return out


# ----------------------------------------------------------------------------- vectors
def _v(c: Sequence[float]) -> Vec:
    vals = [float(x) for x in c]
    if len(vals) not in (2, 3) or not all(math.isfinite(x) for x in vals):
        raise CurveError(f"coordinates {tuple(c)} are not a point")
    return (vals[0], vals[1], vals[2] if len(vals) == 3 else 0.0)


def _sub(a: Vec, b: Vec) -> Vec:
    return (a[0] - b[0], a[1] - b[1], a[2] - b[2])


def _dot(a: Vec, b: Vec) -> float:
    return a[0] * b[0] + a[1] * b[1] + a[2] * b[2]


def _cross(a: Vec, b: Vec) -> Vec:
    return (a[1] * b[2] - a[2] * b[1], a[2] * b[0] - a[0] * b[2], a[0] * b[1] - a[1] * b[0])


def _norm(a: Vec) -> float:
    return math.sqrt(_dot(a, a))


def _add_scaled(a: Vec, b: Vec, k: float) -> Vec:
    return (a[0] + k * b[0], a[1] + k * b[1], a[2] + k * b[2])


def _unit(a: Vec, what: str) -> Vec:
    n = _norm(a)
    if not (math.isfinite(n) and n > 0.0):
        raise CurveError(f"{what} has no length")
    return (a[0] / n, a[1] / n, a[2] / n)


def _point(p: Any) -> Vec:
    return _v(p.Coordinates)


def _direction(d: Any, default: Vec) -> Vec:
    return default if d is None else _unit(_v(d.DirectionRatios), f"IfcDirection #{d.id()}")


# ----------------------------------------------------------------------------- pieces
@dataclass(frozen=True)
class _Piece:
    """A measured stretch of curve: where it starts and ends (to check that the segments of a
    composite curve join), and its length."""

    start: Vec
    end: Vec
    length: float

    def reversed(self) -> _Piece:
        return _Piece(self.end, self.start, self.length)


def curve_length(curve: Any, angle_factor: float = 1.0) -> float:
    """Length of an IFC curve in the file's length unit; CurveError where it cannot be measured."""
    return curve_extent(curve, angle_factor)[0]


def curve_extent(curve: Any, angle_factor: float = 1.0) -> tuple[float, float]:
    """(length of an IFC curve, the straight distance between its two ends), in the file's length
    unit; CurveError where it cannot be measured."""
    try:
        pieces = _pieces(curve, angle_factor, 0)
        total = sum(p.length for p in pieces)
        chord = math.dist(pieces[0].start, pieces[-1].end)
    except CurveError as exc:
        raise CurveError(f"{curve.is_a()} #{curve.id()}: {exc}") from None
    except (AttributeError, TypeError, ValueError, ArithmeticError, IndexError) as exc:
        raise CurveError(f"{curve.is_a()} #{curve.id()} cannot be measured: {exc}") from None
    if not math.isfinite(total):
        raise CurveError(f"{curve.is_a()} #{curve.id()} has no finite length")
    return total, chord


def edge_curve_length(edge: Any, angle_factor: float = 1.0) -> float:
    """Length of an IfcEdgeCurve (an analysis member's edge) in the file's length unit: the part of
    its EdgeGeometry between its two vertices: on an IfcLine their distance, on an IfcCircle or
    IfcEllipse the arc from EdgeStart to EdgeEnd (counter-clockwise when SameSense is true), on a
    bounded curve the whole curve. CurveError where it cannot be measured."""
    try:
        geom = edge.EdgeGeometry
        a, b = _point(edge.EdgeStart.VertexGeometry), _point(edge.EdgeEnd.VertexGeometry)
        if geom is None or geom.is_a("IfcLine"):
            return math.dist(a, b)
        if geom.is_a("IfcCircle") or geom.is_a("IfcEllipse"):
            c = _Conic.of(geom)
            a1 = c.angle_of(a)
            return c.length(a1, conic_sweep(a1, c.angle_of(b), bool(edge.SameSense)))
    except CurveError as exc:
        raise CurveError(f"{edge.is_a()} #{edge.id()}: {exc}") from None
    except (AttributeError, TypeError, ValueError, ArithmeticError) as exc:
        raise CurveError(f"{edge.is_a()} #{edge.id()} cannot be measured: {exc}") from None
    return curve_length(geom, angle_factor)


def _pieces(curve: Any, af: float, depth: int) -> list[_Piece]:
    if depth > 8:
        raise CurveError("composite curves nested too deep")
    kind = curve.is_a()
    if kind == "IfcPolyline":
        return _polyline([_point(p) for p in curve.Points])
    if kind == "IfcIndexedPolyCurve":
        return _indexed(curve)
    if kind in ("IfcCompositeCurve", "IfcCompositeCurveOnSurface", "Ifc2DCompositeCurve"):
        return _composite(curve, af, depth)
    if kind == "IfcTrimmedCurve":
        return [_trimmed(curve, af)[0]]
    if kind in ("IfcCircle", "IfcEllipse"):
        c = _Conic.of(curve)
        start = c.at(0.0)
        return [_Piece(start, start, c.length(0.0, _TWO_PI))]
    if kind == "IfcLine":
        raise CurveError("an unbounded IfcLine has no length")
    raise CurveError(f"{kind} is a curve type modelcheck cannot measure")


def _polyline(pts: list[Vec]) -> list[_Piece]:
    if len(pts) < 2:
        raise CurveError("fewer than two points")
    return [_Piece(pts[0], pts[-1], sum(math.dist(a, b) for a, b in zip(pts, pts[1:], strict=False)))]


def _arc3(a: Vec, m: Vec, b: Vec) -> float:
    """Length of the circular arc from ``a`` through ``m`` to ``b`` (straight when collinear)."""
    ma, mb = _sub(a, m), _sub(b, m)
    chord = math.dist(a, b)
    if min(_norm(ma), _norm(mb), chord) == 0.0:
        raise CurveError(f"the arc through {a}, {m}, {b} repeats a point")
    phi = math.atan2(_norm(_cross(ma, mb)), _dot(ma, mb))   # the inscribed angle ∠AMB
    if math.pi - phi < 1e-12:   # M on the chord: a straight piece
        return _norm(ma) + _norm(mb)
    if phi < 1e-12:
        raise CurveError(f"the arc through {a}, {m}, {b}: the middle point is not between the ends")
    return chord / (2.0 * math.sin(phi)) * 2.0 * (math.pi - phi)


def _indexed(curve: Any) -> list[_Piece]:
    def arc(a: Vec, m: Vec, b: Vec) -> list[_Piece]:
        return [_Piece(a, b, _arc3(a, m, b))]

    return indexed_segments(curve, [_v(c) for c in curve.Points.CoordList], _polyline, arc)


def _composite(curve: Any, af: float, depth: int) -> list[_Piece]:
    parts: list[tuple[list[_Piece], bool]] = []
    for part in curve.Segments or ():
        if not part.is_a("IfcCompositeCurveSegment"):
            raise CurveError(f"{part.is_a()} #{part.id()} in a composite curve is not supported")
        parent = part.ParentCurve
        if parent.is_a("IfcTrimmedCurve"):
            piece, ambiguous = _trimmed(parent, af)
            sub = [piece]
        else:
            sub, ambiguous = _pieces(parent, af, depth + 1), False
        if not part.SameSense:
            sub = [p.reversed() for p in reversed(sub)]
        parts.append((sub, ambiguous))
    out = orient(parts)
    if not out:
        raise CurveError("no segments")
    total = sum(p.length for p in out)
    for i, (a, b) in enumerate(zip(out, out[1:], strict=False)):
        gap = math.dist(a.end, b.start)
        if gap > GAP_TOLERANCE * total:
            raise CurveError(f"the segments do not join: a gap of {gap:g} after piece {i + 1} "
                             "(each run in the sense SameSense and SenseAgreement give it)")
    return out


@dataclass(frozen=True)
class _Conic:
    """p(t) = origin + a·cos t·x + b·sin t·y for an IfcCircle (a = b) or an IfcEllipse."""

    origin: Vec
    x: Vec
    y: Vec
    a: float
    b: float

    @staticmethod
    def of(curve: Any) -> _Conic:
        pos = curve.Position
        if pos is None:
            raise CurveError("no Position")
        origin = _point(pos.Location)
        if pos.is_a("IfcAxis2Placement3D"):
            z = _direction(getattr(pos, "Axis", None), (0.0, 0.0, 1.0))
            ref = _direction(getattr(pos, "RefDirection", None), (1.0, 0.0, 0.0))
            x = _unit(_add_scaled(ref, z, -_dot(ref, z)), "the RefDirection along the Axis")
            y = _cross(z, x)
        else:
            x = _direction(getattr(pos, "RefDirection", None), (1.0, 0.0, 0.0))
            x = _unit((x[0], x[1], 0.0), "the RefDirection")
            y = (-x[1], x[0], 0.0)
        if curve.is_a("IfcCircle"):
            a = b = float(curve.Radius)
        else:
            a, b = float(curve.SemiAxis1), float(curve.SemiAxis2)
        if not (math.isfinite(a) and math.isfinite(b) and a > 0 and b > 0):
            raise CurveError(f"radius or semi-axes {a:g}, {b:g} are not positive")
        return _Conic(origin, x, y, a, b)

    def at(self, t: float) -> Vec:
        p = _add_scaled(self.origin, self.x, self.a * math.cos(t))
        return _add_scaled(p, self.y, self.b * math.sin(t))

    def angle_of(self, p: Vec) -> float:
        d = _sub(p, self.origin)
        return math.atan2(_dot(d, self.y) / self.b, _dot(d, self.x) / self.a)

    def length(self, t0: float, sweep: float) -> float:
        if self.a == self.b:
            return self.a * abs(sweep)
        return Arc((0.0, 0.0), (self.a, 0.0), (0.0, self.b), t0, sweep).length()


def _trimmed(curve: Any, af: float) -> tuple[_Piece, bool]:
    """The trimmed curve's piece, and whether its sense is ambiguous (``line_trims``)."""
    basis = curve.BasisCurve
    master = getattr(curve, "MasterRepresentation", None)
    (p1, t1), (p2, t2) = trim_choice(curve.Trim1, master), trim_choice(curve.Trim2, master)
    if (p1 is None and t1 is None) or (p2 is None and t2 is None):
        raise CurveError("an empty trim")
    sense = bool(curve.SenseAgreement)
    if basis.is_a("IfcLine"):
        origin = _point(basis.Pnt)
        vec = basis.Dir
        d = _direction(vec.Orientation, (1.0, 0.0, 0.0))
        mag = float(vec.Magnitude)
        if not (math.isfinite(mag) and mag > 0):
            raise CurveError(f"the line's vector has magnitude {mag:g}")

        def param(pt: Any, t: float | None) -> float:
            return _dot(_sub(_point(pt), origin), d) / mag if pt is not None else float(t)  # type: ignore[arg-type]

        s, e, ambiguous = line_trims(param(p1, t1), param(p2, t2), sense)
        return _Piece(_add_scaled(origin, d, s * mag), _add_scaled(origin, d, e * mag), abs(e - s) * mag), ambiguous
    if basis.is_a("IfcCircle") or basis.is_a("IfcEllipse"):
        c = _Conic.of(basis)

        def angle(pt: Any, t: float | None) -> float:
            if pt is not None:
                return c.angle_of(_point(pt))
            a = float(t) * af  # type: ignore[arg-type]
            why = trim_angle_problem(a)
            if why is not None:
                raise CurveError(why)
            return a

        a1 = angle(p1, t1)
        sweep = conic_sweep(a1, angle(p2, t2), sense)
        return _Piece(c.at(a1), c.at(a1 + sweep), c.length(a1, sweep)), False
    raise CurveError(f"a trimmed {basis.is_a()} is not supported")
