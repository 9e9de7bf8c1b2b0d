"""The benchmark's whole-building model is what docs/performance.md says it is: members a small
share of the elements, every other element with its own placement, body and property set, and
(spaces apart) a material; the check finds exactly the members among them."""

from __future__ import annotations

from collections import Counter
from pathlib import Path

import ifcopenshell
import ifcopenshell.util.element

from benchmarks.make_model import BUILDING_ELEMENTS, build
from modelcheck.ifc.index import build_index
from modelcheck.ifc.reader import read_members

MEMBERS, OTHERS = 30, 140


def test_the_building_model_gives_every_element_placement_body_material_and_a_property_set(
        tmp_path: Path) -> None:
    path = tmp_path / "building.ifc"
    build(MEMBERS, path, others=OTHERS)
    f = ifcopenshell.open(str(path))
    products = [p for p in f.by_type("IfcProduct") if p.is_a("IfcElement") or p.is_a("IfcSpace")]
    assert len(products) == MEMBERS + OTHERS
    kinds = Counter(p.is_a() for p in products)
    for cls, *_ in BUILDING_ELEMENTS:
        assert kinds[cls] > 0, cls
    for p in products:
        assert p.ObjectPlacement is not None, p
        assert [r.RepresentationIdentifier for r in p.Representation.Representations if
                r.RepresentationIdentifier == "Body"], p
        assert ifcopenshell.util.element.get_psets(p), p
        if not p.is_a("IfcSpace"):
            assert ifcopenshell.util.element.get_material(p) is not None, p
    members = read_members(build_index(str(path))).frame
    assert len(members) == MEMBERS   # walls, slabs, windows … are not axial members
    table = path.with_name(path.stem + "-forces.csv").read_text(encoding="utf-8").splitlines()
    assert len(table) == MEMBERS + 1   # header + one row per member
