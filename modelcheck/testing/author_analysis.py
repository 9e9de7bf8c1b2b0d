"""Write an IFC structural-analysis model with results into a model built by ModelBuilder.

What it writes (IFC4 / IFC4X3; IFC2X3 where the classes exist — it has no
IfcStructuralCurveReaction and no IfcStructuralLoadConfiguration, and asking for them there
raises ValueError):

* one IfcStructuralAnalysisModel (an IfcSystem) grouping its items by IfcRelAssignsToGroup,
  with its load groups (``LoadedBy``) and result groups (``HasResults``);
* IfcStructuralCurveMember: an IfcEdge between two IfcVertexPoints in an IfcTopologyRepresentation
  (local x runs from EdgeStart to EdgeEnd), an IfcMaterialProfileSet (IFC4+) or IfcMaterial
  (IFC2X3), and an IfcRelAssignsToProduct to the physical element it stands for;
* IfcStructuralLoadGroup (IFC4+: IfcStructuralLoadCase for load cases) and
  IfcStructuralResultGroup (one per load case; ``ResultForLoadGroup`` names its load group);
* IfcStructuralCurveReaction / IfcStructuralPointReaction carrying an IfcStructuralLoadSingleForce
  or an IfcStructuralLoadConfiguration (forces at locations along the member), in LOCAL_COORDS or
  GLOBAL_COORDS, connected to its item by IfcRelConnectsStructuralActivity and put in its result
  group by IfcRelAssignsToGroup.

Numbers are in the model's own units, as for ModelBuilder (``units="m"``: kN and m).

Example::

    mb = ModelBuilder(schema="IFC4", units="m")
    rod = mb.member("IfcMember", tag="H1", profile=..., material=steel, length=3.0)
    an = AnalysisWriter(mb)
    cm = an.curve_member((0, 0, 0), (0, 0, 3.0), physical=rod, profile=..., material=steel)
    lc = an.result_group("LC1 dead", an.load_group("LC1 dead"))
    an.curve_reaction(cm, an.single_force(fx=12.5), lc)              # N = +12.5 kN, tension
    an.curve_reaction(cm, an.end_forces((-12.5, 0, 0), (12.5, 0, 0), 3.0), lc)
    an.write("hangers.ifc")
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from typing import Any

from modelcheck.testing.author import ModelBuilder

Vector = Sequence[float]


class AnalysisWriter:
    """Adds one structural analysis model and its results to ``mb``'s file."""

    def __init__(self, mb: ModelBuilder, name: str = "Analysis model", *,
                 predefined_type: str = "LOADING_3D") -> None:
        self.mb = mb
        self.f = mb.f
        self.schema = mb.schema
        f = self.f
        self.placement = f.createIfcLocalPlacement(None, mb.world)
        kwargs: dict[str, Any] = dict(GlobalId=mb.guid(), OwnerHistory=mb._owner, Name=name,
                                      PredefinedType=predefined_type)
        if self.schema != "IFC2X3":
            kwargs["SharedPlacement"] = self.placement
        self.model = f.create_entity("IfcStructuralAnalysisModel", **kwargs)
        self.ctx = f.createIfcGeometricRepresentationSubContext(
            "Reference", "Model", None, None, None, None, mb.context, None, "GRAPH_VIEW", None)
        self._items: list[Any] = []
        self._placement_used = False
        self._grouped: dict[int, list[Any]] = {}
        self._load_groups: list[Any] = []
        self._result_groups: list[Any] = []

    # ------------------------------------------------------------------ items
    def curve_member(self, start: Vector, end: Vector, *, name: str | None = None, physical: Any = None,
                     profile: Any = None, material: Any = None,
                     predefined_type: str = "RIGID_JOINED_MEMBER", axis: Vector | None = None,
                     with_topology: bool = True, oriented: bool | None = None) -> Any:
        """An IfcStructuralCurveMember from ``start`` to ``end`` (coordinates of the analysis model).

        ``physical``: the element it is assigned to (IfcRelAssignsToProduct). ``axis``: its local z
        (IFC4+; default: global Z, or global X for a vertical member). ``with_topology=False``
        leaves out the edge (a member whose axis must come from its physical element).
        ``oriented``: wrap the edge in an IfcOrientedEdge with this Orientation.
        """
        f, mb = self.f, self.mb
        shape = None
        if with_topology:
            edge = f.createIfcEdge(self._vertex(start), self._vertex(end))
            item = edge if oriented is None else f.createIfcOrientedEdge(None, None, edge, oriented)
            rep = f.createIfcTopologyRepresentation(self.ctx, "Reference", "Edge", [item])
            shape = f.createIfcProductDefinitionShape(None, None, [rep])
        kwargs: dict[str, Any] = dict(GlobalId=mb.guid(), OwnerHistory=mb._owner, Name=name,
                                      ObjectPlacement=self._item_placement(), Representation=shape,
                                      PredefinedType=predefined_type)
        if self.schema != "IFC2X3":
            kwargs["Axis"] = f.createIfcDirection(tuple(float(c) for c in (axis or _default_z(start, end))))
        cm = f.create_entity("IfcStructuralCurveMember", **kwargs)
        if material is not None:
            if profile is not None and self.schema != "IFC2X3":
                mb.associate_material([cm], mb.profile_set(material, profile))
            else:
                mb.associate_material([cm], material)
        if physical is not None:
            self.assign_to_product(cm, physical)
        self._items.append(cm)
        return cm

    def assign_to_product(self, item: Any, product: Any) -> Any:
        """IfcRelAssignsToProduct: ``item`` (analysis) stands for ``product`` (physical)."""
        return self.f.create_entity("IfcRelAssignsToProduct", GlobalId=self.mb.guid(),
                                    OwnerHistory=self.mb._owner, RelatedObjects=[item],
                                    RelatingProduct=product)

    def _item_placement(self) -> Any:
        """IFC4+: the analysis model's SharedPlacement, common to all its items and activities.
        IFC2X3 lets a placement place one product only: a copy with the same axes."""
        if self.schema != "IFC2X3" or not self._placement_used:
            self._placement_used = True
            return self.placement
        return self.f.createIfcLocalPlacement(None, self.placement.RelativePlacement)

    def _vertex(self, p: Vector) -> Any:
        return self.f.createIfcVertexPoint(self.f.createIfcCartesianPoint(tuple(float(c) for c in p)))

    # ----------------------------------------------------------------- groups
    def load_group(self, name: str, *, predefined_type: str = "LOAD_CASE", action_type: str = "PERMANENT_G",
                   action_source: str = "DEAD_LOAD_G", coefficient: float | None = None) -> Any:
        """A load case (IFC4+: IfcStructuralLoadCase) or other load group, in ``LoadedBy``.

        IFC2X3 requires every group to group at least one object (IsGroupedBy [1:1]); this
        writer groups only results, so in IFC2X3 a load group is valid only once the caller
        groups its actions into it. The result group's own Name can name the case instead.
        """
        cls = "IfcStructuralLoadCase" if self.schema != "IFC2X3" and predefined_type == "LOAD_CASE" \
            else "IfcStructuralLoadGroup"
        g = self.f.create_entity(cls, GlobalId=self.mb.guid(), OwnerHistory=self.mb._owner, Name=name,
                                 PredefinedType=predefined_type, ActionType=action_type,
                                 ActionSource=action_source, Coefficient=coefficient)
        self._load_groups.append(g)
        return g

    def result_group(self, name: str | None, load_group: Any = None, *,
                     theory: str = "FIRST_ORDER_THEORY", linear: bool = True) -> Any:
        """An IfcStructuralResultGroup (one load case's results), in ``HasResults``."""
        g = self.f.create_entity("IfcStructuralResultGroup", GlobalId=self.mb.guid(), OwnerHistory=self.mb._owner,
                                 Name=name, TheoryType=theory, ResultForLoadGroup=load_group, IsLinear=linear)
        self._result_groups.append(g)
        return g

    # ------------------------------------------------------------------ loads
    def single_force(self, fx: float = 0.0, fy: float = 0.0, fz: float = 0.0, *, name: str | None = None,
                     mx: float | None = None, my: float | None = None, mz: float | None = None) -> Any:
        """An IfcStructuralLoadSingleForce (forces in the model's FORCEUNIT)."""
        return self.f.createIfcStructuralLoadSingleForce(name, float(fx), float(fy), float(fz), mx, my, mz)

    def end_forces(self, start: Vector | Any, end: Vector | Any, length: float | None, *,
                   name: str | None = None, names: tuple[str, str] = ("start", "end")) -> Any:
        """An IfcStructuralLoadConfiguration of the member's end forces (IFC4+).

        ``start``/``end``: (Fx, Fy, Fz) or a single force; Locations are [[0], [length]] (none if
        ``length`` is None: then the ends are known by the names ``names``).
        """
        if self.schema == "IFC2X3":
            raise ValueError("IFC2X3 has no IfcStructuralLoadConfiguration")
        values = [v if not isinstance(v, Sequence) else self.single_force(*v, name=n)
                  for v, n in ((start, names[0]), (end, names[1]))]
        locations = [[0.0], [float(length)]] if length is not None else None
        return self.f.createIfcStructuralLoadConfiguration(name, values, locations)

    def configuration(self, forces: Sequence[Any], locations: Sequence[float] | None, *,
                      name: str | None = None) -> Any:
        """Any IfcStructuralLoadConfiguration: single forces at locations along the member."""
        if self.schema == "IFC2X3":
            raise ValueError("IFC2X3 has no IfcStructuralLoadConfiguration")
        locs = [[float(x)] for x in locations] if locations is not None else None
        return self.f.createIfcStructuralLoadConfiguration(name, list(forces), locs)

    # -------------------------------------------------------------- reactions
    def curve_reaction(self, item: Any, load: Any, group: Any, *, global_or_local: str = "LOCAL_COORDS",
                       predefined_type: str | None = None, name: str | None = None) -> Any:
        """An IfcStructuralCurveReaction on ``item`` (IFC4+), in result group ``group`` (or none).

        ``predefined_type`` defaults to CONST for a single force and DISCRETE (forces at points,
        e.g. the member's end forces) for a load configuration.
        """
        if self.schema == "IFC2X3":
            raise ValueError("IFC2X3 has no IfcStructuralCurveReaction")
        if predefined_type is None:
            predefined_type = "DISCRETE" if load.is_a("IfcStructuralLoadConfiguration") else "CONST"
        r = self.f.create_entity("IfcStructuralCurveReaction", GlobalId=self.mb.guid(), OwnerHistory=self.mb._owner,
                                 Name=name, ObjectPlacement=self._item_placement(), AppliedLoad=load,
                                 GlobalOrLocal=global_or_local, PredefinedType=predefined_type)
        return self._connect(item, r, group)

    def point_reaction(self, item: Any, load: Any, group: Any, *, at: Vector | None = None,
                       global_or_local: str = "LOCAL_COORDS", name: str | None = None) -> Any:
        """An IfcStructuralPointReaction on ``item`` (optionally at point ``at``), in ``group``."""
        f = self.f
        shape = None
        if at is not None:
            rep = f.createIfcTopologyRepresentation(self.ctx, "Reference", "Vertex", [self._vertex(at)])
            shape = f.createIfcProductDefinitionShape(None, None, [rep])
        r = f.create_entity("IfcStructuralPointReaction", GlobalId=self.mb.guid(), OwnerHistory=self.mb._owner,
                            Name=name, ObjectPlacement=self._item_placement(), Representation=shape,
                            AppliedLoad=load, GlobalOrLocal=global_or_local)
        return self._connect(item, r, group)

    def _connect(self, item: Any, activity: Any, group: Any) -> Any:
        self.f.create_entity("IfcRelConnectsStructuralActivity", GlobalId=self.mb.guid(), OwnerHistory=self.mb._owner,
                             RelatingElement=item, RelatedStructuralActivity=activity)
        if group is not None:
            self._grouped.setdefault(group.id(), [group]).append(activity)
        return activity

    # ----------------------------------------------------------------- output
    def finish(self) -> Any:
        """Write the grouping relationships and the model's group lists; then ``mb.finish()``."""
        f, mb = self.f, self.mb
        if self._items:
            f.create_entity("IfcRelAssignsToGroup", GlobalId=mb.guid(), OwnerHistory=mb._owner,
                            RelatedObjects=self._items, RelatingGroup=self.model)
        for _gid, (group, *acts) in self._grouped.items():
            f.create_entity("IfcRelAssignsToGroup", GlobalId=mb.guid(), OwnerHistory=mb._owner,
                            RelatedObjects=acts, RelatingGroup=group)
        if self._load_groups:
            self.model.LoadedBy = list(self.model.LoadedBy or []) + self._load_groups
        if self._result_groups:
            self.model.HasResults = list(self.model.HasResults or []) + self._result_groups
        self._items, self._grouped, self._load_groups, self._result_groups = [], {}, [], []
        return mb.finish()

    def write(self, path: str) -> None:
        self.finish().write(str(path))


def _default_z(start: Vector, end: Vector) -> tuple[float, float, float]:
    d = [float(e) - float(s) for s, e in zip(start, end, strict=True)]
    n = math.sqrt(sum(c * c for c in d)) or 1.0
    return (1.0, 0.0, 0.0) if abs(d[2] / n) > 0.9 else (0.0, 0.0, 1.0)
