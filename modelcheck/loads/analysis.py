"""Axial forces from the results of an IFC structural-analysis model inside the file.

What is read
------------
* **Members.** An IfcStructuralCurveMember assigned to a physical element by
  IfcRelAssignsToProduct (RelatingProduct = the element, RelatedObjects = the curve member; the
  reverse direction is accepted too) gives its results to that element. A curve member assigned
  to no element is a member in its own right and its forces are keyed by its own GlobalId. A
  result connected directly to an IfcElement belongs to that element.
* **Results.** IfcStructuralCurveReaction and IfcStructuralPointReaction connected to the member
  by IfcRelConnectsStructuralActivity. Their AppliedLoad is an IfcStructuralLoadSingleForce or an
  IfcStructuralLoadConfiguration of single forces at locations (IFC4+). Actions (applied loads)
  are not results and are not read.
* **Load cases.** A result belongs to the load case named by its IfcStructuralResultGroup
  (IfcRelAssignsToGroup): the group's Name, else the Name of its ResultForLoadGroup. A result in
  no result group but in a load group takes that group's Name; a result in no group at all is
  load case ``default`` (with a message).
* **Units.** Forces are IfcForceMeasure in the project's FORCEUNIT; a model without one gives no
  forces and a message (the unit is never assumed).

Sign conventions
----------------
The member's local x axis runs along its axis from EdgeStart to EdgeEnd of the curve member's
IfcEdge (an IfcOrientedEdge with Orientation = False runs the other way). Axial force N is
**tension positive**.

1. *Single force, LOCAL_COORDS*: the result is the internal force in the member's local axes;
   ``N = ForceX``.
2. *Single force, GLOBAL_COORDS*: the internal force vector in the analysis model's global axes
   (the IfcStructuralAnalysisModel's SharedPlacement; the project's world axes if it has none),
   acting on the section face whose outward normal is local +x; ``N = F · x̂`` — its projection on
   the member axis. x̂ comes from the curve member's edge vertices (through its placement); when
   the result hangs on a physical element or a curve member without topology, from the element's
   Axis representation (first to last point) or its extrusion direction. That fallback assumes
   the physical axis runs the way the analysis member's x does.
3. *Load configuration read as member end forces* (IfcStructuralPointReaction, or an
   IfcStructuralCurveReaction of type DISCRETE, CONST, USERDEFINED or NOTDEFINED): the forces act
   *on the member* at its ends, in local axes (a GLOBAL_COORDS end force is projected on x̂ as in
   2). The end at the smallest Location is the start, at the largest the end; without Locations
   the forces must be named ``start``/``end`` (also ``begin``, ``i``/``j``, ``1``/``2``). Then
   ``N = −Fx(start) = +Fx(end)`` (a tie pulled at both ends: Fx(start) < 0, Fx(end) > 0). When
   the two disagree by more than ``max(abs_tol, rel_tol · max(|N_start|, |N_end|))`` a message
   names the member and the larger magnitude is used.
4. *Load configuration read as a distribution of the internal force* (an
   IfcStructuralCurveReaction of type LINEAR, POLYGONAL, EQUIDISTANT, SINUS or PARABOLA: IFC's
   distributions along the member): each value is N at its location as in 1/2, and the largest
   magnitude governs.

Several results for one member and load case (several reactions, or a member split into several
analysis members) give the one of largest magnitude; a message notes when they differ in sign.

Doubtful coordinate flags
-------------------------
Some exports flag member end forces GLOBAL_COORDS whose values are in member axes (or the
reverse); read literally, a column in compression can come out in tension. For every result of
end forces at both ends whose member axis is known, the axial components are tested for
equilibrium along the member (Fx(start) + Fx(end) = 0, within ``max(abs_tol, rel_tol · max)``, for
a member without span loads along it) as flagged and as read in the other frame. Where the flagged
reading fails and the other holds, with the larger force along the member (an axial member's load
runs along its axis: a right flag unbalanced by a load along the member, its self-weight, reads
smaller in the other frame and is left alone), the flag is doubtful: the member's
force for that load case has no value (NaN; its source says why, and an unchecked result lists it
as what is missing) and a message names the member and the file, unless ``frame`` (the command
line's ``--analysis-frame``) says which frame to trust: ``as-flagged`` (each result's own flag),
``local`` or ``global`` (every result read in that frame; a local result whose axis cannot be
found stays as flagged).

The direction of the end forces tells a wrong flag too: with no load between its ends, a member's
end forces balance in every frame, and the test above cannot tell; but an axial member's end
forces lie along it. Where the flagged reading puts more than ``BENDING_SHARE`` of the force across
the member and the other reading at most ``ALONG_SHARE``, the flag is doubtful in the same way.

Members in bending
------------------
A force across the member (shear) of more than ``BENDING_SHARE`` of the force (and more than
``abs_tol``: a member with next to no force points anywhere), in the frame the result is read in
(at either end of end forces, or in an internal force), means the analysis has the member bending
(a frame's column or beam). The checks cover axial force only: its force for that load case has
no value (NaN; its source says so and names the share and the result) and one message lists the
members. A pin-ended member's self-weight gives it a little shear, under
``BENDING_SHARE`` for any real axial load.

Supports and other elements
---------------------------
Results on supports (IfcStructuralConnection: point, curve and surface connections) are
reactions, not member forces: they are left out, counted in one message. Results of analysis
members that stand for an element that is not an axial member (a footing, a slab) are named in a
message as not used; the reader lists such analysis members as not checked.

Example::

    idx = build_index("sample_models/mezzanine.ifc")
    forces, messages = forces_from_analysis(idx, members)
"""

from __future__ import annotations

import math
import re
from collections.abc import Iterable
from dataclasses import dataclass, field
from typing import Any

import numpy as np
import pandas as pd

from modelcheck.common.table import FORCE_COLUMNS, empty_forces, frame_of
from modelcheck.ifc.index import ModelIndex
from modelcheck.loads.messages import MessageLog
from modelcheck.loads.tables import DEFAULT_LOAD_CASE

#: curve-reaction types whose load configuration is a distribution of the internal force
DISTRIBUTION_TYPES = frozenset({"LINEAR", "POLYGONAL", "EQUIDISTANT", "SINUS", "PARABOLA"})

_START_NAME = re.compile(r"^\s*(start|begin|beginning|i|node\s*i|end\s*i|1)\s*$", re.IGNORECASE)
_END_NAME = re.compile(r"^\s*(end|finish|j|node\s*j|end\s*j|2)\s*$", re.IGNORECASE)
_ELEMENTS = ("element", "elements")
_RESULTS = ("result", "results")


@dataclass
class _Rows:
    """Column lists of the raw results before the vectorised arithmetic (one call, not shared)."""

    gid: list[str] = field(default_factory=list)
    case: list[str] = field(default_factory=list)
    kind: list[int] = field(default_factory=list)     # 0 single value of N, 1 end-force pair
    is_global: list[bool] = field(default_factory=list)
    f1: list[tuple[float, float, float]] = field(default_factory=list)  # the force / start force
    f2: list[tuple[float, float, float]] = field(default_factory=list)  # end force (kind 1)
    axis: list[tuple[float, float, float]] = field(default_factory=list)
    source: list[str] = field(default_factory=list)


#: what ``--analysis-frame`` accepts: trust each result's own flag, or read every result in one frame
ANALYSIS_FRAMES: tuple[str, ...] = ("as-flagged", "local", "global")


def forces_from_analysis(idx: ModelIndex, members: pd.DataFrame, *, rel_tol: float = 0.01,
                         abs_tol: float = 1.0, frame: str | None = None) -> tuple[pd.DataFrame, list[str]]:
    """Forces of this model's members from its structural-analysis results (see module docstring).

    ``members``: the member table; only rows with ``model == idx.path`` are used, and results of
    elements that are not members are counted in a message. ``abs_tol`` is in newtons. ``frame``:
    None tests the coordinate flag of each member's end forces (see "Doubtful coordinate flags");
    "as-flagged", "local" or "global" say which frame to trust instead. Returns the forces table
    (``FORCE_COLUMNS``; a doubtful force is NaN, its source the reason) and messages.
    """
    if frame is not None and frame not in ANALYSIS_FRAMES:
        raise ValueError(f"frame must be one of {', '.join(ANALYSIS_FRAMES)}, got {frame!r}")
    log = MessageLog(idx.path)
    f = idx.file
    reactions = _by_type(f, "IfcStructuralReaction")
    if not reactions:
        return empty_forces(), []
    if not idx.units.has("FORCEUNIT"):
        log.add(f"the model holds {len(reactions)} structural-analysis results but assigns no FORCEUNIT: "
                "no axial force is read from them (the unit is never assumed)")
        return empty_forces(), log.messages()
    factor = idx.units.factor("FORCEUNIT")
    ctx = _Context(idx, log)
    rows = _Rows()
    for r in reactions:
        ctx.collect(r, rows)
    if not rows.gid:
        return empty_forces(), log.messages()
    if ctx.supports:
        log.add(f"{ctx.supports} structural result(s) on supports (IfcStructuralConnection): reactions, not member "
                "forces; left out")
    df = _evaluate(rows, factor, rel_tol, abs_tol, log, frame)
    member_ids = set(members.loc[members["model"] == idx.path, "global_id"].dropna())
    known = df["global_id"].isin(member_ids)
    for gid in df.loc[~known, "global_id"].unique():
        log.add("has structural-analysis results but is not in the member table (not an axial member): "
                "results not used", gid, _ELEMENTS)
    df = df.loc[known]
    out = _governing(df, log)
    out.insert(0, "model", pd.Series([idx.path] * len(out), index=out.index, dtype=object))
    return out[list(FORCE_COLUMNS)].reset_index(drop=True), log.messages()


def _by_type(f: Any, cls: str) -> list[Any]:
    try:
        return list(f.by_type(cls))
    except RuntimeError:  # class not in this schema
        return []


class _Context:
    """Maps of one model walked once, and per-entity caches (axes, placements, keys)."""

    def __init__(self, idx: ModelIndex, log: MessageLog) -> None:
        self.idx = idx
        self.log = log
        f = idx.file
        self.items_of: dict[int, list[Any]] = {}
        for rel in _by_type(f, "IfcRelConnectsStructuralActivity"):
            act, item = rel.RelatedStructuralActivity, rel.RelatingElement
            if act is not None and item is not None:
                self.items_of.setdefault(act.id(), []).append(item)
        self.result_groups: dict[int, list[Any]] = {}
        self.load_groups: dict[int, list[Any]] = {}
        self.analysis_model_of: dict[int, Any] = {}
        for rel in _by_type(f, "IfcRelAssignsToGroup"):
            g = rel.RelatingGroup
            if g is None:
                continue
            if g.is_a("IfcStructuralResultGroup"):
                target = self.result_groups
            elif g.is_a("IfcStructuralLoadGroup"):
                target = self.load_groups
            elif g.is_a("IfcStructuralAnalysisModel"):
                for o in rel.RelatedObjects or ():
                    self.analysis_model_of[o.id()] = g
                continue
            else:
                continue
            for o in rel.RelatedObjects or ():
                target.setdefault(o.id(), []).append(g)
        self.products_of: dict[int, list[Any]] = {}
        for pid, objs in idx.assigned_to.items():
            prod = f.by_id(pid)
            for o in objs:
                if o.is_a("IfcStructuralItem") and not prod.is_a("IfcStructuralItem"):
                    self.products_of.setdefault(o.id(), []).append(prod)
                elif prod.is_a("IfcStructuralItem") and o.is_a("IfcElement"):
                    self.products_of.setdefault(prod.id(), []).append(o)
        self._axis: dict[int, tuple[tuple[float, float, float] | None, str]] = {}
        self._key_cache: dict[int, list[str]] = {}
        self._case_cache: dict[int, str] = {}
        self._rot: dict[int, np.ndarray] = {}
        self.supports = 0   # results on supports: counted, not read

    # ------------------------------------------------------------- one result
    def collect(self, r: Any, rows: _Rows) -> None:
        # attributes by index in the hot path (IfcStructuralActivity: 7 AppliedLoad, 8 GlobalOrLocal,
        # the same in IFC2X3, IFC4 and IFC4X3): about 5x faster than by name
        rid = f"#{r.id()}"
        items = self.items_of.get(r.id())
        if not items:
            self.log.add("structural result connected to no member (no IfcRelConnectsStructuralActivity): "
                         "not used", rid, _RESULTS)
            return
        items = [it for it in items if not it.is_a("IfcStructuralConnection")]
        if not items:   # a support's reaction: not a member force
            self.supports += 1
            return
        cases = self._cases(r, rid)
        is_global = r[8] == "GLOBAL_COORDS"
        load = r[7]
        cls = r.is_a()
        if load is None:
            self.log.add("structural result without AppliedLoad: not used", rid, _RESULTS)
            return
        if load.is_a("IfcStructuralLoadSingleForce"):
            entries = [(0, _vec(load), (0.0, 0.0, 0.0), f"IFC analysis {cls} {rid} "
                        + ("(global force on member axis)" if is_global else "(local ForceX)"))]
        elif load.is_a("IfcStructuralLoadConfiguration"):
            entries = self._configuration(r, load, rid, cls, is_global)
        else:
            self.log.add(f"structural result carries an {load.is_a()}, not a force: not used", rid, _RESULTS)
            return
        if not entries:
            return
        for item in items:
            keys = self._keys(item)
            axis: tuple[float, float, float] = _NO_AXIS
            how = ""
            if is_global:
                found, how = self._global_axis(item)
                if found is None:
                    self.log.add(f"GLOBAL_COORDS result on {item.is_a()} #{item.id()}, whose axis cannot be "
                                 f"found ({how}): not projected, not used", rid, _RESULTS)
                    continue
                axis = found
            elif any(kind == 1 for kind, *_ in entries):
                # end forces flagged local: the axis lets them be read in global axes too, to test the flag
                axis = self._global_axis(item)[0] or _NO_AXIS
            for kind, v1, v2, source in entries:
                src = f"{source}, axis from {how}" if how and how != "analysis edge" else source
                for gid in keys:
                    for case in cases:
                        rows.gid.append(gid)
                        rows.case.append(case)
                        rows.kind.append(kind)
                        rows.is_global.append(is_global)
                        rows.f1.append(v1)
                        rows.f2.append(v2)
                        rows.axis.append(axis)
                        rows.source.append(src)

    def _case_of(self, g: Any) -> str:
        """The load case a result group names (cached per group)."""
        name = self._case_cache.get(g.id())
        if name is None:
            lg = g.ResultForLoadGroup
            name = g.Name or (lg.Name if lg is not None else None)
            if not name:
                name = f"result group #{g.id()}"
                self.log.add(f"IfcStructuralResultGroup #{g.id()} and its load group have no Name: "
                             f"load case called {name!r}")
            name = self._case_cache[g.id()] = str(name)
        return name

    def _cases(self, r: Any, rid: str) -> list[str]:
        groups = self.result_groups.get(r.id(), ())
        if len(groups) == 1:
            return [self._case_of(groups[0])]
        names: list[str] = [self._case_of(g) for g in groups]
        if names:
            return list(dict.fromkeys(names))
        for g in self.load_groups.get(r.id(), ()):
            names.append(str(g.Name) if g.Name else f"load group #{g.id()}")
        if names:
            return list(dict.fromkeys(names))
        self.log.add(f"structural result in no result group: load case {DEFAULT_LOAD_CASE!r}", rid, _RESULTS)
        return [DEFAULT_LOAD_CASE]

    def _configuration(self, r: Any, load: Any, rid: str, cls: str,
                       is_global: bool) -> list[tuple[int, tuple[float, float, float], tuple[float, float, float], str]]:
        values = list(load.Values or ())
        locations = load.Locations
        forces = [(k, v) for k, v in enumerate(values) if v.is_a("IfcStructuralLoadSingleForce")]
        if not forces:
            self.log.add("IfcStructuralLoadConfiguration holds no single force: not used", rid, _RESULTS)
            return []
        frame = "global forces on member axis" if is_global else "local ForceX"
        rtype = str(getattr(r, "PredefinedType", "") or "")
        if r.is_a("IfcStructuralCurveReaction") and rtype in DISTRIBUTION_TYPES:
            return [(0, _vec(v), (0.0, 0.0, 0.0),
                     f"IFC analysis {cls} {rid} ({rtype} internal force, {frame})") for _k, v in forces]
        start = end = None
        if locations is not None and len(locations) == len(values):
            locs = [(float(locations[k][0]), v) for k, v in forces]
            lo = min(locs, key=lambda t: t[0])
            hi = max(locs, key=lambda t: t[0])
            if lo[0] == hi[0]:
                self.log.add("IfcStructuralLoadConfiguration has all its forces at one location: "
                             "no member end forces, not used", rid, _RESULTS)
                return []
            start, end = lo[1], hi[1]
        else:
            starts = [v for _k, v in forces if _START_NAME.match(v.Name or "")]
            ends = [v for _k, v in forces if _END_NAME.match(v.Name or "")]
            if len(starts) == 1 and len(ends) == 1:
                start, end = starts[0], ends[0]
            else:
                self.log.add("IfcStructuralLoadConfiguration: which force is at the member's start and which "
                             "at its end is unknown (no Locations, no start/end names): not used", rid, _RESULTS)
                return []
        return [(1, _vec(start), _vec(end),
                 f"IFC analysis {cls} {rid} (end forces, N = -Fx start = +Fx end, {frame})")]

    # ------------------------------------------------------------ members, axes
    def _keys(self, item: Any) -> list[str]:
        key = item.id()
        got = self._key_cache.get(key)
        if got is None:
            prods = self.products_of.get(key) if item.is_a("IfcStructuralItem") else None
            got = self._key_cache[key] = [p.GlobalId for p in prods] if prods else [item.GlobalId]
        return got

    def _global_axis(self, item: Any) -> tuple[tuple[float, float, float] | None, str]:
        """Unit vector of the member's local x in the global axes of the analysis results."""
        key = item.id()
        if key in self._axis:
            return self._axis[key]
        world, how = None, ""
        if item.is_a("IfcStructuralCurveMember"):
            world, how = self._edge_axis(item)
            if world is None:
                for prod in self.products_of.get(item.id(), ()):
                    world, how = self._physical_axis(prod)
                    if world is not None:
                        break
        elif item.is_a("IfcProduct"):
            world, how = self._physical_axis(item)
        else:
            how = f"{item.is_a()} has no axis"
        result: tuple[tuple[float, float, float] | None, str] = (None, how or "no axis found")
        if world is not None:
            am = self.analysis_model_of.get(item.id())
            shared = getattr(am, "SharedPlacement", None) if am is not None else None
            to_global = self._rotation(shared).T if shared is not None else np.eye(3)
            g = to_global @ world
            result = (tuple(float(c) for c in g / np.linalg.norm(g)), how)  # type: ignore[assignment]
        self._axis[key] = result
        return result

    def _rotation(self, placement: Any) -> np.ndarray:
        """3×3 rotation of an IfcObjectPlacement (local -> world), cached by entity id."""
        if placement is None:
            return np.eye(3)
        pid = placement.id()
        if pid not in self._rot:
            import ifcopenshell.util.placement

            m = np.asarray(ifcopenshell.util.placement.get_local_placement(placement), dtype=float)
            self._rot[pid] = m[:3, :3]
        return self._rot[pid]

    def _edge_axis(self, item: Any) -> tuple[np.ndarray | None, str]:
        # by index: IfcProduct 5 ObjectPlacement, 6 Representation; IfcProductRepresentation
        # 2 Representations; IfcRepresentation 3 Items; IfcEdge 0 EdgeStart, 1 EdgeEnd;
        # IfcVertexPoint 0 VertexGeometry; IfcCartesianPoint 0 Coordinates
        rep = item[6]
        for r in (rep[2] or ()) if rep is not None else ():
            for it in r[3] or ():
                forward = True
                edge = it
                if it.is_a("IfcOrientedEdge"):
                    edge, forward = it.EdgeElement, bool(it.Orientation)
                if not edge.is_a("IfcEdge"):
                    continue
                try:
                    a = _xyz(edge[0][0][0])
                    b = _xyz(edge[1][0][0])
                except (AttributeError, TypeError, IndexError):
                    continue
                d = (b - a) if forward else (a - b)
                if not d.any():
                    return None, f"IfcEdge #{edge.id()} has zero length"
                return self._rotation(item[5]) @ d, "analysis edge"
        return None, "the analysis member has no IfcEdge"

    def _physical_axis(self, el: Any) -> tuple[np.ndarray | None, str]:
        rep = getattr(el, "Representation", None)
        reps = list(rep.Representations or ()) if rep is not None else []
        local = None
        how = ""
        for r in reps:
            if r.RepresentationIdentifier == "Axis":
                local = _curve_direction(r.Items or ())
                if local is not None:
                    how = f"Axis of {el.is_a()} {el.GlobalId}"
                    break
        if local is None:
            for r in reps:
                for it in r.Items or ():
                    if it.is_a("IfcExtrudedAreaSolid"):
                        d = np.asarray(it.ExtrudedDirection.DirectionRatios, dtype=float)
                        local = _axis2_rotation(it.Position) @ d
                        how = f"extrusion of {el.is_a()} {el.GlobalId}"
                        break
                if local is not None:
                    break
        if local is None or np.linalg.norm(local) == 0:
            return None, f"{el.is_a()} {getattr(el, 'GlobalId', '')} has no Axis and no extrusion"
        return self._rotation(getattr(el, "ObjectPlacement", None)) @ local, how


_NO_AXIS = (math.nan, math.nan, math.nan)   # a local result whose member axis is not known


def _vec(force: Any) -> tuple[float, float, float]:
    """(ForceX, ForceY, ForceZ) of an IfcStructuralLoadSingleForce (attributes 1-3; unset = 0)."""
    return (float(force[1] or 0.0), float(force[2] or 0.0), float(force[3] or 0.0))


def _xyz(coords: Any) -> np.ndarray:
    c = tuple(float(x) for x in coords)
    return np.array(c + (0.0,) * (3 - len(c)))


def _curve_direction(items: Iterable[Any]) -> np.ndarray | None:
    for it in items:
        pts = None
        if it.is_a("IfcPolyline"):
            pts = [p.Coordinates for p in it.Points]
        elif it.is_a("IfcIndexedPolyCurve"):
            pts = list(it.Points.CoordList)
        if pts and len(pts) >= 2:
            a = np.pad(np.asarray(pts[0], dtype=float), (0, 3 - len(pts[0])))
            b = np.pad(np.asarray(pts[-1], dtype=float), (0, 3 - len(pts[-1])))
            if np.linalg.norm(b - a) > 0:
                return b - a
    return None


def _axis2_rotation(pos: Any) -> np.ndarray:
    """Rotation of an IfcAxis2Placement3D (columns = its x, y, z in the parent axes)."""
    if pos is None:
        return np.eye(3)
    z = np.asarray(pos.Axis.DirectionRatios, dtype=float) if getattr(pos, "Axis", None) else np.array([0.0, 0, 1])
    x = np.asarray(pos.RefDirection.DirectionRatios, dtype=float) if getattr(pos, "RefDirection", None) \
        else np.array([1.0, 0, 0])
    z = z / np.linalg.norm(z)
    x = x - (x @ z) * z
    if np.linalg.norm(x) == 0:
        x = np.array([1.0, 0, 0]) if abs(z[0]) < 0.9 else np.array([0.0, 1, 0])
        x = x - (x @ z) * z
    x = x / np.linalg.norm(x)
    return np.column_stack([x, np.cross(z, x), z])


#: a force across the member larger than this share of the force is shear: the member bends
BENDING_SHARE = 0.05
#: at most this share across the member, a force lies along it (a wrong flag's other reading)
ALONG_SHARE = 0.01


def _across(f: np.ndarray, ax: np.ndarray, in_global: bool, abs_tol: float) -> np.ndarray:
    """|F across the member| / |F| of each row: in global axes the part of F off the unit axis
    ``ax``; in member axes its y and z components. 0 where the force across is ``abs_tol`` or less
    (a member with next to no force, whose last digits point anywhere)."""
    size = np.linalg.norm(f, axis=1)
    if in_global:
        cross = np.linalg.norm(f - np.einsum("ij,ij->i", f, ax)[:, None] * ax, axis=1)
    else:
        cross = np.hypot(f[:, 1], f[:, 2])
    return np.divide(cross, size, out=np.zeros(len(f)), where=cross > abs_tol)


def _as_flagged(source: str) -> str:
    """A result's source with the reading its flag gives replaced by the flag itself."""
    for reading, flag in (("global forces on member axis", "flagged GLOBAL_COORDS"),
                          ("global force on member axis", "flagged GLOBAL_COORDS"),
                          ("local ForceX", "flagged LOCAL_COORDS")):
        source = source.replace(reading, flag)
    return source


def _kn(v: float) -> str:
    return f"{v / 1e3:.4g} kN"


def _evaluate(rows: _Rows, factor: float, rel_tol: float, abs_tol: float, log: MessageLog,
              frame: str | None = None) -> pd.DataFrame:
    """N in newtons for every raw result, vectorised (doubtful end forces: NaN, the reason as source)."""
    f1 = np.asarray(rows.f1, dtype=float) * factor
    f2 = np.asarray(rows.f2, dtype=float) * factor
    axis = np.asarray(rows.axis, dtype=float)
    flagged_global = np.asarray(rows.is_global, dtype=bool)
    kind = np.asarray(rows.kind, dtype=int)
    has_axis = np.isfinite(axis).all(axis=1)
    ax = np.where(has_axis[:, None], axis, 0.0)
    g1, g2 = np.einsum("ij,ij->i", f1, ax), np.einsum("ij,ij->i", f2, ax)   # read in global axes
    l1, l2 = f1[:, 0], f2[:, 0]                                             # read in member axes
    if frame == "local":
        glob = np.zeros(len(kind), dtype=bool)
    elif frame == "global":
        glob = flagged_global | has_axis   # a local result with no known axis stays as flagged
    else:
        glob = flagged_global
    x1, x2 = np.where(glob, g1, l1), np.where(glob, g2, l2)
    n_start, n_end = -x1, x2
    ends = kind == 1

    def balance(a: np.ndarray, b: np.ndarray) -> np.ndarray:
        return np.abs(a + b) <= np.maximum(abs_tol, rel_tol * np.maximum(np.abs(a), np.abs(b)))

    # the force across the member (shear), as a share of the force, at the start and at the end,
    # in each reading: an axial member's end and internal forces lie along it
    t_global = np.maximum(_across(f1, ax, True, abs_tol), np.where(ends, _across(f2, ax, True, abs_tol), 0.0))
    t_local = np.maximum(_across(f1, ax, False, abs_tol), np.where(ends, _across(f2, ax, False, abs_tol), 0.0))
    across = np.where(glob, t_global, t_local)
    doubtful = np.zeros(len(kind), dtype=bool)
    turned = np.zeros(len(kind), dtype=bool)
    if frame is None:
        # equilibrium along the member (start + end = 0 without span loads) as flagged and in the
        # other frame: a flag whose reading fails where the other reading holds is doubtful
        # (and the other reading carries the larger force along the member: an axial member's load
        # runs along its axis, so a flag whose literal reading picks small transverse components is
        # what a wrong flag looks like, while a right one unbalanced by a load along the member
        # (self-weight) reads smaller in the other frame and is left alone)
        o1, o2 = np.where(flagged_global, l1, g1), np.where(flagged_global, l2, g2)
        o_size = np.maximum(np.abs(o1), np.abs(o2))
        doubtful = (ends & has_axis & ~balance(x1, x2) & balance(o1, o2) & (o_size > abs_tol)
                    & (o_size >= np.maximum(np.abs(x1), np.abs(x2))))
        # end forces that lie along the member in the other frame but cross it as flagged: a
        # wrong flag too (both readings balance whenever nothing loads the member between its ends)
        other_across = np.where(flagged_global, t_local, t_global)
        turned = (ends & has_axis & ~doubtful & (across > BENDING_SHARE) & (other_across <= ALONG_SHARE)
                  & (o_size > abs_tol))
    source = np.asarray(rows.source, dtype=object)

    def frames(i: int) -> tuple[str, str, float]:
        """(the flag, the other frame, the end force read in the other frame) of row ``i``."""
        if flagged_global[i]:
            return "GLOBAL_COORDS", "member axes", float(l2[i])
        return "LOCAL_COORDS", "global axes", float(g2[i])

    for i in np.flatnonzero(turned):
        flag, other, o_end = frames(int(i))
        log.add(f"end forces flagged {flag} cross the member, but lie along it when read in {other}: the flag is "
                "doubtful and the forces are not used (--analysis-frame as-flagged|local|global says which frame "
                "to trust)", rows.gid[i])
        source[i] = (f"P: doubtful analysis end forces ({rows.case[i]}, {rows.source[i].split(' (')[0]}): flagged "
                     f"{flag}, they cross the member ({across[i]:.0%} of the force); read in {other} they lie "
                     f"along it (N = {_kn(o_end)}); --analysis-frame says which frame to trust")
    doubtful |= turned
    # a force across the member is shear, which a member carries in bending: not an axial member in
    # this analysis, and its axial force alone does not verify it
    bending = ~doubtful & (across > BENDING_SHARE)
    for i in np.flatnonzero(bending):
        log.add(f"the analysis gives it a force across its axis (more than {BENDING_SHARE:.0%} of the force): it "
                "carries bending, which these checks do not cover; its axial force is not used", rows.gid[i])
        source[i] = (f"P: the analysis gives a force across the member ({across[i]:.0%} of the force; {rows.case[i]}, "
                     f"{rows.source[i].split(' (')[0]}): it carries bending, and an axial force alone does not "
                     "verify it")
    for i in np.flatnonzero(doubtful & ~turned):
        flag, other, o_end = frames(int(i))
        log.add(f"end forces flagged {flag} do not balance along the member, but do when read in {other}: "
                "the flag is doubtful and the forces are not used (--analysis-frame as-flagged|local|global "
                "says which frame to trust)", rows.gid[i])
        source[i] = (f"P: doubtful analysis end forces ({rows.case[i]}, {rows.source[i].split(' (')[0]}): flagged "
                     f"{flag}, -Fx(start) = {_kn(n_start[i])} and +Fx(end) = {_kn(n_end[i])} do not balance; "
                     f"read in {other} they do (N = {_kn(o_end)}); --analysis-frame says which frame to trust")
    diff = np.abs(n_start - n_end)
    tol = np.maximum(abs_tol, rel_tol * np.maximum(np.abs(n_start), np.abs(n_end)))
    disagree = ends & (diff > tol) & ~doubtful & ~bending   # a force not used needs no word on its ends
    for i in np.flatnonzero(disagree):
        log.add(f"end forces disagree: N = -Fx(start) = {n_start[i]:.6g} N but N = +Fx(end) = {n_end[i]:.6g} N "
                f"({rows.case[i]}, {rows.source[i].split(' (')[0]}); the larger magnitude is used", rows.gid[i])
    n_pair = np.where(np.abs(n_end) >= np.abs(n_start), n_end, n_start)
    n = np.where(ends, n_pair, x1)
    n[doubtful | bending] = np.nan
    if frame is not None:
        read_as = np.where(glob, "read in global axes", "read in member axes")
        changed = glob != flagged_global
        # a result read in the other frame names its flag, not the reading the flag would give
        flags = np.array([_as_flagged(t) for t in source], dtype=object)
        source = np.where(changed, flags + ", " + read_as + f" (--analysis-frame {frame})", source)
    return frame_of({"global_id": np.asarray(rows.gid, dtype=object),
                     "load_case": np.asarray(rows.case, dtype=object),
                     "axial_force": np.asarray(n, dtype=float), "source": np.asarray(source, dtype=object)})


def _governing(df: pd.DataFrame, log: MessageLog) -> pd.DataFrame:
    """One row per member and load case: the result of largest magnitude."""
    if df.empty:
        return df.assign(axial_force=df["axial_force"].astype(float))
    keys = ["global_id", "load_case"]
    doubt = df[df["axial_force"].isna()].drop_duplicates(keys)
    df = df[df["axial_force"].notna()]
    if df.empty:
        return doubt
    g = df.groupby(keys, sort=False)["axial_force"]
    count = g.transform("size")
    mixed = (g.transform("max") > 0) & (g.transform("min") < 0)
    for gid, case in df.loc[mixed, keys].drop_duplicates().itertuples(index=False):
        log.add(f"results of load case {case!r} are tension in one place and compression in another; "
                "the larger magnitude is used", gid)
    order = df.assign(_abs=-df["axial_force"].abs(), _n=count).sort_values(keys + ["_abs"], kind="stable")
    best = order.drop_duplicates(keys, keep="first")
    many = best["_n"] > 1
    best = best.assign(source=best["source"].where(
        ~many, best["source"] + "; largest of " + best["_n"].astype(str) + " results"))
    best = best.drop(columns=["_abs", "_n"])
    if doubt.empty:
        return best
    # a member and case with a doubtful result has a doubtful force, whatever its other results say
    doubted = pd.MultiIndex.from_frame(doubt[keys])
    best = best[~pd.MultiIndex.from_frame(best[keys]).isin(doubted)]
    return pd.concat([best, doubt], ignore_index=True)
