"""Exact area moments of plane regions bounded by line segments and conic arcs.

A region is described by closed loops of segments (`Line`, `Arc`). `loop_moments` integrates
a loop with Green's theorem: every segment contributes the moments of the signed "fan" between
the origin and itself, so the contributions of a closed loop add up to the moments of the
region it encloses (positive when the loop runs counter-clockwise). Nothing is tessellated:

* a line segment P0→P1 contributes the signed triangle (O, P0, P1), whose moments are the
  classic polygon-formula terms;
* an arc contributes the triangle of its chord plus the signed segment between chord and arc.
  An `Arc` is the image of the unit circle under an affine map (centre + U·cos t + V·sin t),
  which covers circles and ellipses alike; its segment is the image of the unit-circle segment
  (sector minus chord triangle, both in closed form), moved with `Moments.transformed`.

`Moments` holds the raw moments (A, ∫x, ∫y, ∫x², ∫y², ∫xy) about the origin of the current
coordinate system, so results can be added (composite profiles), subtracted (voids) and moved
by any affine map (placements, mirroring, non-uniform scaling) without touching the outline.

`rounded_polygon` builds a loop from corner points that carry an optional fillet radius (the
radius is tangent to both edges of the corner, concave or convex, at any corner angle); the
parametric IFC profiles are written with it.

Worked example (a 2 × 1 rectangle with one 0.25 fillet)::

    >>> loop = rounded_polygon([(0, 0, 0), (2, 0, 0.25), (2, 1, 0), (0, 1, 0)])
    >>> round(loop_moments(loop).a, 6)  # 2 - (1 - pi/4) * 0.25**2
    1.986587
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Sequence
from dataclasses import dataclass
from typing import Any

__all__ = [
    "Arc",
    "Matrix",
    "Point",
    "GeometryError",
    "Line",
    "Moments",
    "Segment",
    "circle_through",
    "circular_arc",
    "closing_gaps",
    "crossing_edges",
    "loop_moments",
    "rounded_polygon",
]

Point = tuple[float, float]
Matrix = tuple[tuple[float, float], tuple[float, float]]


class GeometryError(ValueError):
    """An outline that cannot be built (a fillet that does not fit, a degenerate arc, ...)."""


# ---------------------------------------------------------------------------------------------
# moments
# ---------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class Moments:
    """Raw area moments of a plane region about the origin: ∫dA, ∫x, ∫y, ∫x², ∫y², ∫xy."""

    a: float = 0.0
    sx: float = 0.0
    sy: float = 0.0
    sxx: float = 0.0
    syy: float = 0.0
    sxy: float = 0.0

    def __add__(self, other: Moments) -> Moments:
        return Moments(self.a + other.a, self.sx + other.sx, self.sy + other.sy,
                       self.sxx + other.sxx, self.syy + other.syy, self.sxy + other.sxy)

    def __sub__(self, other: Moments) -> Moments:
        return self + other.scaled(-1.0)

    def scaled(self, k: float) -> Moments:
        """Every moment multiplied by ``k`` (``-1`` flips the orientation)."""
        return Moments(k * self.a, k * self.sx, k * self.sy, k * self.sxx, k * self.syy, k * self.sxy)

    def positive(self) -> Moments:
        """The same region with a positive area (a clockwise loop integrates negative)."""
        return self.scaled(-1.0) if self.a < 0 else self

    def transformed(self, m: Matrix, t: Point = (0.0, 0.0), *, signed: bool = False) -> Moments:
        """Moments of the image of the region under ``p -> m·p + t``.

        With y = M x + t and J = det M: A' = |J| A, s' = |J| (M s + t A),
        S' = |J| (M S Mᵀ + (M s) tᵀ + t (M s)ᵀ + A t tᵀ), where s = (∫x, ∫y) and S is the
        matrix of second moments. ``signed=True`` uses J instead of |J| (orientation follows
        the map: a mirror turns a counter-clockwise loop clockwise).
        """
        (m11, m12), (m21, m22) = m
        tx, ty = t
        det = m11 * m22 - m12 * m21
        k = det if signed else abs(det)
        msx = m11 * self.sx + m12 * self.sy
        msy = m21 * self.sx + m22 * self.sy
        # M S Mᵀ
        s11 = m11 * m11 * self.sxx + 2 * m11 * m12 * self.sxy + m12 * m12 * self.syy
        s22 = m21 * m21 * self.sxx + 2 * m21 * m22 * self.sxy + m22 * m22 * self.syy
        s12 = m11 * m21 * self.sxx + (m11 * m22 + m12 * m21) * self.sxy + m12 * m22 * self.syy
        return Moments(
            k * self.a,
            k * (msx + tx * self.a),
            k * (msy + ty * self.a),
            k * (s11 + 2 * msx * tx + self.a * tx * tx),
            k * (s22 + 2 * msy * ty + self.a * ty * ty),
            k * (s12 + msx * ty + msy * tx + self.a * tx * ty),
        )

    def translated(self, dx: float, dy: float) -> Moments:
        return self.transformed(((1.0, 0.0), (0.0, 1.0)), (dx, dy), signed=True)

    @property
    def centroid(self) -> Point:
        return (self.sx / self.a, self.sy / self.a)

    def central(self) -> tuple[float, float, float]:
        """(Ixx, Iyy, Ixy) about the centroid: Ixx = ∫(y-ȳ)², Iyy = ∫(x-x̄)², Ixy = ∫(x-x̄)(y-ȳ)."""
        cx, cy = self.centroid
        return (self.syy - cy * self.sy, self.sxx - cx * self.sx, self.sxy - cx * self.sy)

    def principal(self) -> tuple[float, float]:
        """(I_max, I_min), the principal second moments about the centroid."""
        ixx, iyy, ixy = self.central()
        mean = 0.5 * (ixx + iyy)
        radius = math.hypot(0.5 * (ixx - iyy), ixy)
        return (mean + radius, mean - radius)

    def r_min(self) -> float:
        """Least principal radius of gyration sqrt(I_min / A)."""
        return math.sqrt(max(self.principal()[1], 0.0) / self.a)


def _edge(x0: float, y0: float, x1: float, y1: float) -> Moments:
    """Moments of the signed triangle (origin, P0, P1): one term of the polygon formulas."""
    c = x0 * y1 - x1 * y0
    return Moments(
        c / 2.0,
        c * (x0 + x1) / 6.0,
        c * (y0 + y1) / 6.0,
        c * (x0 * x0 + x0 * x1 + x1 * x1) / 12.0,
        c * (y0 * y0 + y0 * y1 + y1 * y1) / 12.0,
        c * (x0 * y1 + 2.0 * x0 * y0 + 2.0 * x1 * y1 + x1 * y0) / 24.0,
    )


def _u_minus_sin(u: float) -> float:
    """u − sin u without cancellation: its series below |u| = 0.1 (error under 1e-16 relative)."""
    if abs(u) < 0.1:
        u2 = u * u
        return u * u2 * (1 / 6 - u2 * (1 / 120 - u2 * (1 / 5040 - u2 / 362880)))
    return u - math.sin(u)


def _sin4_integral(a: float) -> float:
    """∫₀ᵃ sin⁴φ dφ = 3a/8 − sin 2a/4 + sin 4a/32, by its series for small |a| (no cancellation)."""
    if abs(a) < 0.05:
        a2 = a * a
        return a * a2 * a * (1 / 5 - a2 * (2 / 21 - a2 / 45))
    return 3 * a / 8 - math.sin(2 * a) / 4 + math.sin(4 * a) / 32


def _unit_circle_segment(t0: float, sweep: float) -> Moments:
    """Signed region between the unit circle arc t0 → t0 + sweep and its chord.

    In the frame whose x' axis points to the arc's middle (half angle α = sweep/2) the segment
    is {x' ≥ cos α} of the unit disc: A = (2α − sin 2α)/2, ∫x' = (2/3) sin³α, ∫y' = 0,
    ∫x'² = (4α − sin 4α)/16, ∫y'² = (2/3) ∫₀^α sin⁴φ dφ, ∫x'y' = 0; then rotated to the arc.
    Each term is written so that a nearly straight arc (tiny sweep, huge radius) keeps its
    precision: sector minus triangle would cancel to nothing.
    """
    al = 0.5 * sweep
    local = Moments(
        0.5 * _u_minus_sin(2 * al),
        (2.0 / 3.0) * math.sin(al) ** 3,
        0.0,
        _u_minus_sin(4 * al) / 16.0,
        (2.0 / 3.0) * _sin4_integral(al),
        0.0,
    )
    tm = t0 + al
    c, s = math.cos(tm), math.sin(tm)
    return local.transformed(((c, -s), (s, c)), (0.0, 0.0), signed=True)


def _unit_circle_segment_reference(t0: float, sweep: float) -> Moments:
    """Sector minus triangle: the plain formula, for checking the one above at ordinary sweeps."""
    t1 = t0 + sweep
    s0, c0, s1, c1 = math.sin(t0), math.cos(t0), math.sin(t1), math.cos(t1)
    half = 0.5 * sweep
    sin2 = math.sin(2 * t1) - math.sin(2 * t0)
    sector = Moments(half, (s1 - s0) / 3.0, (c0 - c1) / 3.0, (half + sin2 / 4.0) / 4.0,
                     (half - sin2 / 4.0) / 4.0, (s1 * s1 - s0 * s0) / 8.0)
    return sector - _edge(c0, s0, c1, s1)


# ---------------------------------------------------------------------------------------------
# segments
# ---------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class Line:
    start: Point
    end: Point

    def reversed(self) -> Line:
        return Line(self.end, self.start)

    def length(self) -> float:
        return math.dist(self.start, self.end)

    def contribution(self) -> Moments:
        return _edge(*self.start, *self.end)


@dataclass(frozen=True)
class Arc:
    """Conic arc: p(t) = centre + u·cos t + v·sin t for t from ``t0`` to ``t0 + sweep``.

    A circle of radius r has |u| = |v| = r and v = u turned +90°; an ellipse has u and v along
    its axes with the semi-axis lengths. ``sweep`` is signed: positive runs from u towards v.
    """

    center: Point
    u: Point
    v: Point
    t0: float
    sweep: float

    def point(self, t: float) -> Point:
        c, s = math.cos(t), math.sin(t)
        return (self.center[0] + self.u[0] * c + self.v[0] * s,
                self.center[1] + self.u[1] * c + self.v[1] * s)

    @property
    def start(self) -> Point:
        return self.point(self.t0)

    @property
    def end(self) -> Point:
        return self.point(self.t0 + self.sweep)

    def reversed(self) -> Arc:
        return Arc(self.center, self.u, self.v, self.t0 + self.sweep, -self.sweep)

    @property
    def is_circular(self) -> bool:
        (ux, uy), (vx, vy) = self.u, self.v
        ru, rv = math.hypot(ux, uy), math.hypot(vx, vy)
        return abs(ru - rv) <= 1e-12 * ru and abs(ux * vx + uy * vy) <= 1e-12 * ru * rv

    @property
    def radius(self) -> float:
        if not self.is_circular:
            raise GeometryError("an elliptic arc has no single radius")
        return math.hypot(*self.u)

    def length(self) -> float:
        if self.is_circular:
            return self.radius * abs(self.sweep)
        # elliptic arc: Gauss-Legendre on |p'(t)| over spans of at most 45°
        n = max(1, math.ceil(abs(self.sweep) / (math.pi / 4)))
        h = self.sweep / n
        total = 0.0
        for i in range(n):
            a = self.t0 + i * h
            for x, w in _GAUSS_16:
                t = a + 0.5 * h * (x + 1.0)
                dx = -self.u[0] * math.sin(t) + self.v[0] * math.cos(t)
                dy = -self.u[1] * math.sin(t) + self.v[1] * math.cos(t)
                total += 0.5 * abs(h) * w * math.hypot(dx, dy)
        return total

    def contribution(self) -> Moments:
        (x0, y0), (x1, y1) = self.start, self.end
        m = ((self.u[0], self.v[0]), (self.u[1], self.v[1]))
        segment = _unit_circle_segment(self.t0, self.sweep).transformed(m, self.center, signed=True)
        return _edge(x0, y0, x1, y1) + segment


Segment = Line | Arc


def circular_arc(center: Point, radius: float, t0: float, sweep: float) -> Arc:
    """Circular arc of ``radius`` about ``center`` from angle ``t0`` through signed ``sweep``."""
    return Arc(center, (radius, 0.0), (0.0, radius), t0, sweep)


def circle_through(p1: Point, p2: Point, p3: Point) -> Arc | None:
    """The circular arc that starts at p1, passes through p2 and ends at p3.

    None when the three points are collinear (the "arc" is a straight line).
    """
    (ax, ay), (bx, by), (cx, cy) = p1, p2, p3
    d = 2.0 * (ax * (by - cy) + bx * (cy - ay) + cx * (ay - by))
    scale = max(math.dist(p1, p2), math.dist(p2, p3), math.dist(p1, p3))
    if scale == 0.0 or abs(d) <= 1e-12 * scale * scale:
        return None
    a2, b2, c2 = ax * ax + ay * ay, bx * bx + by * by, cx * cx + cy * cy
    ox = (a2 * (by - cy) + b2 * (cy - ay) + c2 * (ay - by)) / d
    oy = (a2 * (cx - bx) + b2 * (ax - cx) + c2 * (bx - ax)) / d
    r = math.hypot(ax - ox, ay - oy)
    t1 = math.atan2(ay - oy, ax - ox)
    t3 = math.atan2(cy - oy, cx - ox)
    ccw = (bx - ax) * (cy - by) - (by - ay) * (cx - bx) > 0
    if ccw:
        sweep = (t3 - t1) % (2 * math.pi)
    else:
        sweep = -((t1 - t3) % (2 * math.pi))
    return circular_arc((ox, oy), r, t1, sweep)


# Gauss-Legendre nodes and weights (16 points), used only for elliptic arc lengths.
def _gauss_legendre(n: int) -> tuple[tuple[float, float], ...]:
    nodes = []
    for i in range(1, n + 1):
        x = math.cos(math.pi * (i - 0.25) / (n + 0.5))
        for _ in range(100):
            p0, p1 = 1.0, x
            for k in range(2, n + 1):
                p0, p1 = p1, ((2 * k - 1) * x * p1 - (k - 1) * p0) / k
            dp = n * (x * p1 - p0) / (x * x - 1.0)
            dx = p1 / dp
            x -= dx
            if abs(dx) < 1e-16:
                break
        nodes.append((x, 2.0 / ((1.0 - x * x) * dp * dp)))
    return tuple(nodes)


_GAUSS_16 = _gauss_legendre(16)


# ---------------------------------------------------------------------------------------------
# loops
# ---------------------------------------------------------------------------------------------


def closing_gaps(segments: Sequence[Segment]) -> list[tuple[int, float]]:
    """(index, gap) for each joint: the distance from the end of segment i to the start of the
    next one (the last joint closes the loop back to the first segment)."""
    n = len(segments)
    return [(i, math.dist(segments[i].end, segments[(i + 1) % n].start)) for i in range(n)]


def loop_moments(segments: Iterable[Segment]) -> Moments:
    """Signed moments of the region enclosed by a loop of segments (Green's theorem).

    Any gap between the end of a segment and the start of the next (and between the last and
    the first) is bridged by a straight line, i.e. the loop is closed polygonally; check gaps
    with `closing_gaps` first where a gap means bad data. Positive for counter-clockwise loops.
    """
    segs = list(segments)
    if not segs:
        return Moments()
    # integrate about a point of the loop, then move: keeps the sums well-conditioned for
    # outlines drawn far from their coordinate origin
    ox, oy = segs[0].start
    total = Moments()
    for i, seg in enumerate(segs):
        local = _shifted(seg, -ox, -oy)
        total = total + local.contribution()
        nxt = segs[(i + 1) % len(segs)].start
        if nxt != seg.end:
            (ex, ey) = local.end
            total = total + _edge(ex, ey, nxt[0] - ox, nxt[1] - oy)
    return total.translated(ox, oy)


def _shifted(seg: Segment, dx: float, dy: float) -> Segment:
    if isinstance(seg, Line):
        return Line((seg.start[0] + dx, seg.start[1] + dy), (seg.end[0] + dx, seg.end[1] + dy))
    return Arc((seg.center[0] + dx, seg.center[1] + dy), seg.u, seg.v, seg.t0, seg.sweep)


#: the most points an outline may have: a real profile has tens to a few thousand; beyond this
#: an outline is refused with a clear reason instead of tying up time and memory
MAX_OUTLINE_POINTS = 100_000


#: outlines up to this many points are tested pair by pair (n × n small arrays: quicker than
#: building a spatial index for the dozen points of a filleted profile)
PAIRWISE_POINTS = 64


def crossing_edges(points: Sequence[Point], *, pairwise: int = PAIRWISE_POINTS) -> tuple[int, int] | None:
    """First pair (i, j), i < j, of non-adjacent edges of the closed polygon through ``points``
    that cross each other properly (edge i runs from point i to point i+1), or None when the
    polygon is simple. Edges that only touch (an end on the other edge) or overlap along a line
    are not reported.

    Up to ``pairwise`` points every pair is compared; beyond, the candidates come from a spatial
    index of the edges (shapely's STRtree: n log n, where comparing every pair of 8,000 edges
    takes gigabytes) and shapely's ``crosses`` decides each one.
    """
    n = len(points)
    if n < 4:
        return None
    if n > MAX_OUTLINE_POINTS:
        raise GeometryError(f"an outline of {n} points (more than {MAX_OUTLINE_POINTS}) is not read")
    import numpy as np  # only here: the outlines of parametric profiles rarely need it

    p = np.asarray(points, dtype=float)
    if not np.isfinite(p).all():
        raise GeometryError("an outline point is not a finite number")
    if n <= pairwise:
        i, j = _crossing_pairs(p)
    else:
        import shapely

        edges = shapely.linestrings(np.stack([p, np.roll(p, -1, axis=0)], axis=1))   # edge i: point i → i+1
        i, j = shapely.STRtree(edges).query(edges, predicate="crosses")
    keep = (i < j) & (j - i >= 2) & ~((i == 0) & (j == n - 1))
    if not keep.any():
        return None
    i, j = i[keep], j[keep]
    first = np.lexsort((j, i))[0]
    return int(i[first]), int(j[first])


def _crossing_pairs(p: Any) -> tuple[Any, Any]:
    """(i, j) of every pair of edges of the closed polygon ``p`` (an n × 2 array) whose ends lie
    strictly on both sides of each other's line."""
    import numpy as np

    a, b = p, np.roll(p, -1, axis=0)
    d = b - a
    # side[i, j]: side of edge j's endpoints relative to edge i
    rel_a = a[None, :, :] - a[:, None, :]
    rel_b = b[None, :, :] - a[:, None, :]
    side_a = d[:, None, 0] * rel_a[..., 1] - d[:, None, 1] * rel_a[..., 0]
    side_b = d[:, None, 0] * rel_b[..., 1] - d[:, None, 1] * rel_b[..., 0]
    straddles = side_a * side_b < 0
    i, j = np.nonzero(straddles & straddles.T)
    return i, j


def rounded_polygon(corners: Sequence[tuple[float, float, float]]) -> list[Segment]:
    """Closed loop through corner points (x, y, r); a corner with r > 0 is rounded by an arc
    of radius r tangent to both of its edges (convex or concave, any corner angle).

    The tangent points lie r·tan(φ/2) from the corner along each edge, φ being the change of
    direction at the corner. Raises GeometryError when two roundings (or a rounding and the
    end of its edge) overlap on an edge, i.e. a radius too large for the outline.
    """
    pts: list[tuple[float, float, float]] = []
    for c in corners:
        if pts and (c[0], c[1]) == pts[-1][:2]:  # repeated corner: keep one, with the larger radius
            pts[-1] = (pts[-1][0], pts[-1][1], max(float(c[2]), pts[-1][2]))
            continue
        pts.append((float(c[0]), float(c[1]), float(c[2])))
    if len(pts) > 1 and pts[0][:2] == pts[-1][:2]:
        pts.pop()
    n = len(pts)
    if n < 3:
        raise GeometryError("an outline needs at least three distinct corners")

    # per corner: (tangent point on incoming edge, arc or None, tangent point on outgoing edge)
    cut: list[float] = []
    arcs: list[tuple[Point, Arc | None, Point]] = []
    for i in range(n):
        px, py, r = pts[i]
        ax, ay, _ = pts[i - 1]
        bx, by, _ = pts[(i + 1) % n]
        din = _unit(px - ax, py - ay)
        dout = _unit(bx - px, by - py)
        cross = din[0] * dout[1] - din[1] * dout[0]
        dot = din[0] * dout[0] + din[1] * dout[1]
        phi = math.atan2(cross, dot)  # signed change of direction
        if r <= 0.0 or abs(phi) < 1e-12:
            cut.append(0.0)
            arcs.append(((px, py), None, (px, py)))
            continue
        if abs(phi) > math.pi - 1e-9:
            raise GeometryError(f"corner ({px:g}, {py:g}) folds back on itself and cannot be rounded")
        tan_len = r * math.tan(abs(phi) / 2.0)
        a = (px - din[0] * tan_len, py - din[1] * tan_len)
        b = (px + dout[0] * tan_len, py + dout[1] * tan_len)
        side = 1.0 if phi > 0 else -1.0  # centre to the left of a left turn
        cx, cy = a[0] - side * din[1] * r, a[1] + side * din[0] * r
        t0 = math.atan2(a[1] - cy, a[0] - cx)
        cut.append(tan_len)
        arcs.append((a, circular_arc((cx, cy), r, t0, phi), b))

    crossing = crossing_edges([q[:2] for q in pts])
    if crossing is not None:
        i, j = crossing
        raise GeometryError(f"the outline crosses itself (edges from corners {i + 1} and {j + 1})")

    for i in range(n):
        j = (i + 1) % n
        edge = math.dist(pts[i][:2], pts[j][:2])
        if cut[i] + cut[j] > edge * (1.0 + 1e-9) + 1e-12 * max(edge, 1.0):
            raise GeometryError(
                f"the radii at ({pts[i][0]:g}, {pts[i][1]:g}) and ({pts[j][0]:g}, {pts[j][1]:g}) "
                f"need {cut[i] + cut[j]:g} of an edge {edge:g} long"
            )

    segs: list[Segment] = []
    for i in range(n):
        _, arc, b = arcs[i]
        if arc is not None:
            segs.append(arc)
        a_next = arcs[(i + 1) % n][0]
        if b != a_next:
            segs.append(Line(b, a_next))
    return segs


def _unit(x: float, y: float) -> Point:
    d = math.hypot(x, y)
    if d == 0.0:
        raise GeometryError("zero-length edge")
    return (x / d, y / d)
