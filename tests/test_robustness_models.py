"""Robustness corpus, IFC models.

Every broken model gives one line on stderr naming the file (and the line, where the file has
one) and exit code 2; where only part of a model is broken, the broken members are 'unchecked'
with a warning naming the reason, and the rest of the model is checked as usual. No traceback, no
'internal error', no hang (fresh processes run with a timeout), inputs byte-for-byte unchanged:
``tests/corpus.py`` hashes every input around every run.
"""

from __future__ import annotations

import json
import re
import zipfile
from pathlib import Path
from typing import Any

import pytest

from modelcheck.core.model import ForceOptions
from modelcheck.core.read import read_model
from modelcheck.rules.engine import run_checks
from modelcheck.rules.ruleset import load_ruleset
from modelcheck.testing.author import ModelBuilder
from tests.corpus import (
    data_lines,
    good_builder,
    line_of_entity,
    member_ids,
    profile_position,
    rich_builder,
    run_check_json,
    run_inprocess,
    run_process,
    set_ref,
    with_line,
    write_model,
)
from tests.corpus import members_by_name as members_json
from tests.helpers import REPO, axial_force

SCHEMAS = ("IFC2X3", "IFC4", "IFC4X3")
CHECK_SCHEMA = json.loads((REPO / "modelcheck" / "schemas" / "check.schema.json").read_text(encoding="utf-8"))
FORCE = axial_force(20000.0)


def check_json(capsys: Any, *paths: Path, extra: tuple[str, ...] = ()) -> tuple[Any, dict[str, Any]]:
    out = run_check_json(capsys, *paths, extra=extra)
    return out, out.json()


def statuses(doc: dict[str, Any]) -> dict[str, set[str]]:
    """Member name -> the set of statuses of its results."""
    out: dict[str, set[str]] = {}
    for r in doc["results"]:
        out.setdefault(r["name"], set()).add(r["status"])
    return out


def missing_of(doc: dict[str, Any], name: str) -> set[str]:
    """The inputs a member's results lack ('A', or 'A: why' -> 'A')."""
    return {m.split(":", 1)[0].strip() for r in doc["results"] if r["name"] == name for m in r["missing"]}


def assert_checked(doc: dict[str, Any], *names: str) -> None:
    """Each named member has results and none of them is unchecked."""
    st = statuses(doc)
    for n in names:
        assert st.get(n) and "unchecked" not in st[n] and st[n] <= {"pass", "fail"}, (n, st.get(n))


def assert_only_unchecked(doc: dict[str, Any], name: str) -> None:
    """A member whose section could not be read is never passed or failed on a wrong number."""
    assert statuses(doc)[name] == {"unchecked"}, (name, statuses(doc)[name])


# ------------------------------------------------------------------------------- unreadable files
UNREADABLE = (
    "empty.ifc", "truncated.ifc", "junk.ifc", "junk-after-header.ifc", "unknown-schema.ifc", "no-schema.ifc",
    "xml.ifc", "syntax-error.ifc", "unclosed-entity.ifc", "zip-named-ifc.ifc", "no-model.ifczip", "truncated.ifczip",
    "empty-member.ifczip", "broken-zip.ifczip",
)


@pytest.fixture(scope="module")
def unreadable(tmp_path_factory: Any) -> dict[str, tuple[Path, str]]:
    """name -> (file, a fragment its one error line must hold)."""
    d = tmp_path_factory.mktemp("unreadable")
    good = write_model(good_builder(), d / "source.ifc")
    text = good.read_text(encoding="ascii")
    raw = text.encode("ascii")
    cases: dict[str, tuple[Path, str]] = {}

    def put(name: str, data: bytes | str, fragment: str) -> None:
        p = d / name
        p.write_bytes(data if isinstance(data, bytes) else data.encode("ascii"))
        cases[name] = (p, fragment)

    def put_zip(name: str, members: dict[str, bytes], fragment: str) -> None:
        p = d / name
        with zipfile.ZipFile(p, "w", zipfile.ZIP_DEFLATED) as z:
            for n, data in members.items():
                z.writestr(n, data)
        cases[name] = (p, fragment)

    put("empty.ifc", b"", "empty file")
    put("truncated.ifc", raw[: len(raw) // 2], "truncated")
    put("junk.ifc", bytes(range(256)) * 16, "not an IFC-SPF file")
    put("junk-after-header.ifc", b"ISO-10303-21;\n" + bytes(range(256)) * 16 + b"\nEND-ISO-10303-21;\n",
        "cannot be parsed as IFC")
    put("unknown-schema.ifc", text.replace("FILE_SCHEMA(('IFC4'))", "FILE_SCHEMA(('IFC9X9'))"), "IFC9X9")
    put("no-schema.ifc", text.replace("FILE_SCHEMA(('IFC4'));\n", ""), "cannot be parsed as IFC")
    put("xml.ifc", "<?xml version='1.0'?><ifcXML/>", "XML")
    # a number no double can hold: the parser stops; the message names the line
    no, line = next((no, ln) for no, ln in data_lines(good) if "IFCCIRCLEPROFILEDEF" in ln)
    bad = line.replace(",10.)", ",1.E400)")
    assert bad != line
    p = with_line(good, d / "syntax-error.ifc", no, bad)
    cases["syntax-error.ifc"] = (p, f"line {no}")
    # an entity without its closing parenthesis swallows the rest of the file (ISO 10303-21, from
    # memory: an entity instance ends with ');'); the message names its line
    no, line = next((no, ln) for no, ln in data_lines(good) if "IFCCIRCLEPROFILEDEF" in ln)
    p = with_line(good, d / "unclosed-entity.ifc", no, line.replace(");", ";"))
    cases["unclosed-entity.ifc"] = (p, f"line {no}: an entity is not closed")
    put_zip("zip-named-ifc.ifc", {"readme.txt": b"not a model"}, "zip archive")
    put_zip("no-model.ifczip", {"readme.txt": b"not a model"}, "No .ifc")
    put_zip("truncated.ifczip", {"model.ifc": raw[: len(raw) // 2]}, "truncated")
    put_zip("empty-member.ifczip", {"model.ifc": b""}, "empty")
    put("broken-zip.ifczip", b"PK\x03\x04" + b"\x00" * 200, "not an IFC-SPF file")
    assert set(cases) == set(UNREADABLE)
    return cases


@pytest.mark.parametrize("name", UNREADABLE)
def test_an_unreadable_model_is_one_line_naming_it_and_exit_2(capsys, unreadable, name):
    path, fragment = unreadable[name]
    out, doc = check_json(capsys, path)
    assert out.code == 2
    assert out.errors == out.lines and len(out.lines) == 1, out.stderr
    assert str(path) in out.lines[0] and fragment in out.lines[0], out.lines[0]
    assert doc["models"][0]["error"] and doc["results"] == []


def test_a_batch_of_broken_models_beside_a_good_one_in_fresh_processes(unreadable, tmp_path):
    """Worker processes (--jobs 2) and the members command: one line per broken model, the good
    model still reported, every input unchanged, within the timeout."""
    good = write_model(good_builder(), tmp_path / "fine.ifc")
    bad = [p for p, _ in unreadable.values()]
    report = tmp_path / "report.json"
    out = run_process(["check", *map(str, bad + [good]), "--jobs", "2", "--no-config", "--format", "json",
                       "--output", str(report)], inputs=bad + [good], timeout=240)
    assert out.code == 2
    assert out.errors == out.lines and len(out.lines) == len(bad), out.stderr
    for p in bad:
        assert sum(f"{p}: " in ln for ln in out.lines) == 1, p
    doc = json.loads(report.read_text(encoding="utf-8"))
    assert_checked(doc, "H1", "H2")
    out = run_process(["members", *map(str, bad + [good]), "--format", "json"], inputs=bad + [good], timeout=240)
    assert out.code == 2 and len(out.errors) == len(bad) and out.errors == out.lines, out.stderr
    assert {m["name"] for m in out.json()["models"][-1]["members"]} == {"H1", "H2"}


def test_text_that_is_not_utf8_is_read_or_reported(capsys, tmp_path):
    good = write_model(good_builder(), tmp_path / "source.ifc")
    data = good.read_bytes().replace(b"'H1',$,$", b"'H\xe91\xff',$,$", 1)
    assert data != good.read_bytes()
    p = tmp_path / "latin1.ifc"
    p.write_bytes(data)
    out, doc = check_json(capsys, p)
    if out.code == 2:
        assert len(out.lines) == 1 and str(p) in out.lines[0]
    else:  # ifcopenshell 0.9 reads it (it drops the bytes it cannot decode)
        assert doc["models"][0]["error"] is None and doc["models"][0]["members"] == 2
        assert_checked(doc, "H2")


# ------------------------------------------------------------------------------ dangling references
def _dangling_cases(mb: ModelBuilder) -> dict[str, tuple[list[tuple[int, int]], str, str | None]]:
    """case -> ([(entity id, reference id) to point nowhere], member, an input it then lacks or None)."""
    f = mb.f
    ids = {m.Name: m for m in f.by_type("IfcMember")}
    h1, p1, r1 = ids["H1"], ids["P1"], ids["R1"]
    rel_props = next(r for r in f.by_type("IfcRelDefinesByProperties")
                     if h1 in r.RelatedObjects and r.RelatingPropertyDefinition.Name == "MC_MemberForces")
    rel_mat = next(r for r in f.by_type("IfcRelAssociatesMaterial") if h1 in r.RelatedObjects)
    body = next(r for r in h1.Representation.Representations if r.RepresentationIdentifier == "Body")
    extrusion = body.Items[0]
    mprofile = rel_mat.RelatingMaterial.ForProfileSet.MaterialProfiles[0]
    rel_type = next(r for r in f.by_type("IfcRelDefinesByType") if p1 in r.RelatedObjects)
    mapped = next(r for r in p1.Representation.Representations if r.RepresentationIdentifier == "Body").Items[0]
    disk = next(r for r in r1.Representation.Representations if r.RepresentationIdentifier == "Body").Items[0]
    return {
        "force property set": ([(rel_props.id(), rel_props.RelatingPropertyDefinition.id())], "H1", "P"),
        "material": ([(rel_mat.id(), rel_mat.RelatingMaterial.id())], "H1", "Fy"),
        "representation": ([(h1.id(), h1.Representation.id())], "H1", "L"),
        "profile, both routes": ([(extrusion.id(), extrusion.SweptArea.id()),
                                  (mprofile.id(), mprofile.Profile.id())], "H1", "A"),
        "type object": ([(rel_type.id(), rel_type.RelatingType.id())], "P1", "Fy"),
        # the type's profile set and the axis still give section and length: nothing is lost
        "mapped representation": ([(mapped.id(), mapped.MappingSource.id())], "P1", None),
        "swept-disk directrix": ([(disk.id(), disk.Directrix.id())], "R1", None),
    }


DANGLING = ("force property set", "material", "representation", "profile, both routes", "type object",
            "mapped representation", "swept-disk directrix")


@pytest.fixture(scope="module")
def rich_ifc4(tmp_path_factory: Any) -> tuple[ModelBuilder, Path]:
    mb = rich_builder("IFC4")
    return mb, write_model(mb, tmp_path_factory.mktemp("rich") / "rich.ifc")


@pytest.mark.parametrize("case", DANGLING)
def test_a_dangling_reference_costs_only_what_hangs_on_it(capsys, rich_ifc4, tmp_path, case):
    mb, good = rich_ifc4
    edits, member, lacks = _dangling_cases(mb)[case]
    assert case in DANGLING and len(_dangling_cases(mb)) == len(DANGLING)
    p = good
    for k, (eid, ref) in enumerate(edits):
        p = set_ref(p, tmp_path / f"dangling{k}.ifc", eid, ref, "#99999")
    out, doc = check_json(capsys, p)
    assert out.code in (0, 1) and out.lines == [], out.stderr
    others = {"H1", "H2", "P1", "R1"} - {member}
    assert_checked(doc, *others)
    if lacks is None:
        assert_checked(doc, member)
    else:
        assert "unchecked" in statuses(doc)[member]
        assert lacks in missing_of(doc, member), missing_of(doc, member)


def test_every_reference_of_a_model_pointing_nowhere_or_null(rich_ifc4, tmp_path):
    """Each reference of the model in turn made dangling (#99999) or null ($): the model reads,
    or it is one error naming the file; every member is still listed; nothing else escapes."""
    mb, good = rich_ifc4
    ruleset = load_ruleset("steel-asd-us")
    opts = ForceOptions(property=("MC_MemberForces", "AxialForce"))
    names = set(member_ids(mb).values())
    lines = good.read_text(encoding="ascii").splitlines()
    case = tmp_path / "case.ifc"
    tried = 0
    for no, line in data_lines(good):
        head, body = line.split("=", 1)
        for k, m in enumerate(re.finditer(r"#\d+", body)):
            new = "#99999" if k % 2 == 0 else "$"   # alternate: both read back as None
            lines2 = list(lines)
            lines2[no - 1] = f"{head}={body[:m.start()]}{new}{body[m.end():]}"
            case.write_text("\n".join(lines2) + "\n", encoding="ascii")
            data = read_model(str(case), opts)
            tried += 1
            if data.error is not None:
                assert str(case) in data.error
                continue
            assert data.members is not None
            listed = set(data.members["global_id"])
            assert len(listed) == len(names), (line, listed)
            run_checks(ruleset, data.members, data.forces)
    assert tried > 100


# ------------------------------------------------------------------------------- schema violations
def _violating(mb: ModelBuilder, good: Path, out: Path) -> tuple[Path, dict[str, int]]:
    """Three violations: H1's circle Radius is text, H1 has no GlobalId, the storey's Elevation is
    text. Returns the file and the entity ids."""
    f = mb.f
    h1 = next(m for m in f.by_type("IfcMember") if m.Name == "H1")
    circle = f.by_type("IfcCircleProfileDef")[0]
    storey = f.by_type("IfcBuildingStorey")[0]
    text = good.read_text(encoding="ascii").splitlines()

    def edit(eid: int, old: str, new: str) -> None:
        no = line_of_entity(good, eid)
        assert text[no - 1].count(old) == 1, (text[no - 1], old)
        text[no - 1] = text[no - 1].replace(old, new)

    edit(circle.id(), ",10.)", ",'ten')")
    edit(h1.id(), f"('{h1.GlobalId}',", "($,")
    edit(storey.id(), ",0.);", ",'ground');")
    out.write_text("\n".join(text) + "\n", encoding="ascii")
    return out, {"circle": circle.id(), "member": h1.id(), "storey": storey.id()}


@pytest.mark.parametrize("schema", SCHEMAS)
def test_validate_lists_schema_violations_and_still_checks_what_can_be_read(capsys, tmp_path, schema):
    mb = good_builder(schema)
    good = write_model(mb, tmp_path / "good.ifc")
    out, doc = check_json(capsys, good, extra=("--validate",))
    assert out.code == 1 and doc["models"][0]["warnings"] == []   # a valid model: nothing to list
    bad, ids = _violating(mb, good, tmp_path / "violating.ifc")
    out, doc = check_json(capsys, bad, extra=("--validate",))
    assert out.code in (0, 1) and out.lines == [], out.stderr
    found = [w for w in doc["models"][0]["warnings"] if re.match(rf"{re.escape(str(bad))}:\d+: #\d+ ", w)]
    assert len(found) == 3, doc["models"][0]["warnings"]
    for what, eid in ids.items():
        line = line_of_entity(bad, eid)
        assert any(w.startswith(f"{bad}:{line}: #{eid} ") for w in found), (what, found)
    assert any("Radius" in w for w in found) and any("GlobalId" in w for w in found)
    # H1 has no GlobalId: named by its entity; its section cannot be read: unchecked, never passed
    h1 = f"#{ids['member']}"
    assert {r["global_id"] for r in doc["results"] if r["name"] == "H1"} == {h1}
    assert_only_unchecked(doc, "H1")
    assert_checked(doc, "H2")
    import jsonschema

    jsonschema.validate(doc, CHECK_SCHEMA)
    members = members_json(capsys, bad)
    assert any("Radius" in w and "'ten'" in w for w in members["H1"]["warnings"]), members["H1"]["warnings"]


def _type_profile_set(mb: ModelBuilder) -> Any:
    typ = mb.f.by_type("IfcMemberType")[0]
    return next(r.RelatingMaterial for r in mb.f.by_type("IfcRelAssociatesMaterial") if typ in r.RelatedObjects)


def _pset_value(pset: str, prop: str) -> Any:
    def find(mb: ModelBuilder) -> Any:
        for ps in mb.f.by_type("IfcMaterialProperties") + mb.f.by_type("IfcPropertySet"):
            if ps.Name == pset:
                return next(p for p in getattr(ps, "Properties", None) or ps.HasProperties if p.Name == prop)
        raise AssertionError(pset)
    return find


#: a value of a type the schema does not allow where the reader follows it (ifcopenshell hands it
#: back as it is): case -> (entity, attribute index, value, member then unchecked; None: the model
#: reads and every member is checked; "model": one error line naming the file)
WRONG_TYPES: dict[str, tuple[Any, int, str, str | None]] = {
    "quantity value is text": (lambda mb: mb.f.by_type("IfcQuantityLength")[0], 3, "'long'", "R1"),
    "disk radius is text": (lambda mb: mb.f.by_type("IfcSweptDiskSolid")[0], 1, "'thick'", "R1"),
    "mapping scale is text": (lambda mb: mb.f.by_type("IfcCartesianTransformationOperator3D")[0], 3, "'big'",
                              "P1"),
    "profile list is a number": (_type_profile_set, 2, "12.", "P1"),
    "force is an untyped text": (_pset_value("MC_MemberForces", "AxialForce"), 2, "'x'", "H1"),
    "force unit is text": (_pset_value("MC_MemberForces", "AxialForce"), 3, "'kN'", "H1"),
    # E of S355 then comes from the material library, its source says so
    "material value is a bare number": (_pset_value("Pset_MaterialMechanical", "YoungModulus"), 2, "210000.",
                                        None),
    "unit exponent is text": (lambda mb: mb.f.by_type("IfcDerivedUnitElement")[0], 1, "'two'", "model"),
    "relation list is a boolean": (lambda mb: mb.f.by_type("IfcRelDefinesByType")[0], 4, ".T.", "model"),
}


@pytest.mark.parametrize("case", list(WRONG_TYPES))
def test_a_value_of_the_wrong_type_is_named_never_an_internal_error(capsys, rich_ifc4, tmp_path, case):
    mb, good = rich_ifc4
    find, index, value, member = WRONG_TYPES[case]
    target = find(mb)
    no = line_of_entity(good, target.id())
    line = good.read_text(encoding="ascii").splitlines()[no - 1]
    head, body = line.split("=", 1)
    name, args = body.split("(", 1)
    parts = _split_args(args.removesuffix(");"))
    assert parts[index] != value
    parts[index] = value
    p = with_line(good, tmp_path / "wrong-type.ifc", no, f"{head}={name}({','.join(parts)});")
    out, doc = check_json(capsys, p, extra=("--validate",))
    if member == "model":
        assert out.code == 2 and out.errors == out.lines and len(out.lines) == 1, out.stderr
        assert str(p) in out.lines[0] and "--validate" in out.lines[0], out.lines
        return
    assert out.code in (0, 1) and out.lines == [], out.stderr
    warnings = doc["models"][0]["warnings"]
    assert any(w.startswith(f"{p}:{no}: #{target.id()} ") for w in warnings), warnings  # the validator's line
    everyone = {"H1", "H2", "P1", "R1"}
    if member is None:
        assert_checked(doc, *everyone)
    else:
        assert "unchecked" in statuses(doc)[member]
        assert_checked(doc, *(everyone - {member}))


def _split_args(text: str) -> list[str]:
    """Top-level arguments of a STEP entity's argument list."""
    parts, depth, cur, quoted = [], 0, "", False
    for ch in text:
        if ch == "'":
            quoted = not quoted
        elif not quoted and ch == "(":
            depth += 1
        elif not quoted and ch == ")":
            depth -= 1
        elif not quoted and ch == "," and depth == 0:
            parts.append(cur)
            cur = ""
            continue
        cur += ch
    parts.append(cur)
    return parts


# ------------------------------------------------------------------------------- profiles
def _profile_model(schema: str, path: Path) -> tuple[Path, dict[str, str]]:
    """H1, H2 good; every other member's section is impossible, absurd or of an unknown kind.
    Returns the file and member name -> a fragment its warning must hold."""
    mb = good_builder(schema)
    f = mb.f
    steel = f.by_type("IfcMaterial")[0]

    def m(name: str, prof: Any) -> Any:
        mb.member("IfcMember", name=name, tag=name, profile=prof, material=steel, length=2400.0,
                  predefined_type="MEMBER", psets=FORCE)
        return prof

    pos = profile_position
    zero = m("ZERO", f.createIfcCircleProfileDef("AREA", "ZERO", pos(mb), 0.0))
    neg = m("NEGATIVE", f.createIfcRectangleProfileDef("AREA", "NEG", pos(mb), -40.0, 10.0))
    nan = m("NAN", f.createIfcCircleProfileDef("AREA", "NANPROF", pos(mb), 12.5))
    huge = m("HUGE", f.createIfcCircleProfileDef("AREA", "HUGE", pos(mb), 1.0e300))
    ihuge = m("HUGE-I", f.createIfcIShapeProfileDef("AREA", "IHUGE", pos(mb), 100.0, 1.0e300, 5.6, 8.5, 12.0))
    m("BIG", f.createIfcRectangleProfileDef("AREA", "BIG", pos(mb), 5.0e6, 40.0))   # 5 km wide (mm file)
    if schema == "IFC2X3":  # a profile class the reader has no function for
        unknown = f.create_entity("IfcCraneRailAShapeProfileDef", "AREA", "CRANE", pos(mb), 150.0, 120.0, None,
                                  65.0, 40.0, 20.0, 30.0, 120.0, 20.0, 15.0, 10.0, None)
        unknown_kind = "IfcCraneRailAShapeProfileDef"
    else:  # an outline of a curve class the reader cannot integrate
        pts = [f.createIfcCartesianPoint(c) for c in ((0.0, 0.0), (50.0, 0.0), (50.0, 50.0), (0.0, 50.0), (0.0, 0.0))]
        spline = f.createIfcBSplineCurveWithKnots(1, pts, "UNSPECIFIED", False, False, (2, 1, 1, 1, 2),
                                                  (0.0, 1.0, 2.0, 3.0, 4.0), "UNSPECIFIED")
        unknown = f.createIfcArbitraryClosedProfileDef("AREA", "SPLINE", spline)
        unknown_kind = "IfcBSplineCurveWithKnots"
    m("UNKNOWN", unknown)
    poly = f.createIfcPolyline([f.createIfcCartesianPoint(c) for c in ((0.0, 0.0), (30.0, 0.0), (30.0, 30.0),
                                                                        (0.0, 0.0))])
    madeup = m("MADE-UP", f.createIfcArbitraryClosedProfileDef("AREA", "MADEUP", poly))
    write_model(mb, path)
    text = path.read_text(encoding="ascii")
    # STEP has no NaN: a writer that tries leaves a word the parser cannot read; a made-up curve class
    text2 = re.sub(rf"(#{nan.id()}=IFCCIRCLEPROFILEDEF\(.*),12\.5\);", r"\1,NAN);", text)
    text2 = text2.replace(f"#{poly.id()}=IFCPOLYLINE(", f"#{poly.id()}=IFCWOBBLYCURVE(")
    assert text2.count("NAN);") == 1 and "IFCWOBBLYCURVE" in text2
    path.write_text(text2, encoding="ascii")
    return path, {
        "ZERO": f"#{zero.id()}: Radius = 0.0",
        "NEGATIVE": f"#{neg.id()}: XDim = -40.0",
        "NAN": f"#{nan.id()}: Radius = None",
        "HUGE": f"IfcCircleProfileDef #{huge.id()}",
        "HUGE-I": f"IfcIShapeProfileDef #{ihuge.id()}",
        "BIG": "not plausible",
        "UNKNOWN": unknown_kind,
        "MADE-UP": f"IfcArbitraryClosedProfileDef #{madeup.id()}",
    }


@pytest.mark.parametrize("schema", SCHEMAS)
def test_impossible_absurd_or_unknown_sections_leave_members_unchecked(capsys, tmp_path, schema):
    path, expected = _profile_model(schema, tmp_path / "profiles.ifc")
    out, doc = check_json(capsys, path)
    assert out.code == 1 and out.lines == [], out.stderr   # H1/H2 fail slenderness; nothing on stderr
    assert_checked(doc, "H1", "H2")
    for name in expected:
        assert_only_unchecked(doc, name)
        assert "A" in missing_of(doc, name)
    # the parser's complaints about NAN and the made-up class are model warnings with their lines
    model_warnings = doc["models"][0]["warnings"]
    for word, needle in (("'NAN'", ",NAN);"), ("'IFCWOBBLYCURVE'", "=IFCWOBBLYCURVE(")):
        line = next(no for no, ln in enumerate(path.read_text(encoding="ascii").splitlines(), 1) if needle in ln)
        assert any(w.startswith(f"{path}:{line}: IFC parser:") and word in w for w in model_warnings), model_warnings
    members = members_json(capsys, path)
    for name, fragment in expected.items():
        assert members[name]["section"]["area"] is None              # never a wrong number
        assert any(fragment in w for w in members[name]["warnings"]), (name, members[name]["warnings"])
        assert len(members[name]["warnings"]) == len(set(members[name]["warnings"]))


# ------------------------------------------------------------------------------- units
def _without_unit(mb: ModelBuilder, path: Path, unit_type: str) -> Path:
    write_model(mb, path)
    f = mb.f
    ua = f.by_type("IfcUnitAssignment")[0]
    drop = [u.id() for u in ua.Units if getattr(u, "UnitType", None) == unit_type]
    assert drop
    no = line_of_entity(path, ua.id())
    keep = [f"#{u.id()}" for u in ua.Units if u.id() not in drop]
    return with_line(path, path, no, f"#{ua.id()}=IFCUNITASSIGNMENT(({','.join(keep)}));")


def test_missing_unit_assignments_leave_members_unchecked_and_say_why(capsys, tmp_path):
    # no IfcUnitAssignment at all
    mb = good_builder(with_units=False)
    p = write_model(mb, tmp_path / "no-units.ifc")
    assert "IFCUNITASSIGNMENT" not in p.read_text(encoding="ascii")
    out, doc = check_json(capsys, p)
    assert out.code == 1 and out.lines == [], out.stderr   # nothing failed, but nothing could be checked
    assert "nothing could be checked" in out.stderr
    assert statuses(doc) == {"H1": {"unchecked"}, "H2": {"unchecked"}}
    assert {"A", "L", "P"} <= missing_of(doc, "H1")
    warnings = " | ".join(doc["models"][0]["warnings"])
    assert "no LENGTHUNIT" in warnings and "no FORCEUNIT" in warnings
    for gid in member_ids(mb).values():
        assert gid in warnings
    out = run_inprocess(capsys, ["check", str(p), "--jobs", "1", "--no-config", "--format", "json", "--strict"],
                        inputs=[p])
    assert out.code == 1
    # no LENGTHUNIT: no section, no length
    p = _without_unit(good_builder(), tmp_path / "no-length-unit.ifc", "LENGTHUNIT")
    out, doc = check_json(capsys, p)
    assert out.code == 1 and statuses(doc) == {"H1": {"unchecked"}, "H2": {"unchecked"}}   # nothing checked
    assert {"A", "L"} <= missing_of(doc, "H2") and "P" not in missing_of(doc, "H2")
    assert any("no LENGTHUNIT" in w for w in doc["models"][0]["warnings"])
    # no FORCEUNIT, but the forces are IfcForceMeasure: never assumed to be newtons
    mb = good_builder(force_unit=False)
    p = write_model(mb, tmp_path / "no-force-unit.ifc")
    out, doc = check_json(capsys, p)
    assert out.code == 1 and statuses(doc) == {"H1": {"unchecked"}, "H2": {"unchecked"}}   # nothing checked
    assert missing_of(doc, "H1") == {"P"}
    line = next(w for w in doc["models"][0]["warnings"] if "FORCEUNIT" in w)
    assert str(p) in line and all(gid in line for gid in member_ids(mb).values())


def test_a_syntax_error_where_no_check_reads_is_found_by_validate(capsys, tmp_path):
    """Models are parsed lazily: a bad number in an entity the check never reads (the site's
    placement) does not stop the check; --validate reads every entity and names the line
    (ifcopenshell's validator; the number 1.E400 overflows a double: IEEE 754)."""
    good = write_model(good_builder(), tmp_path / "good.ifc")
    # the first cartesian point of the file: the origin of the project's placements
    no, line = next((no, ln) for no, ln in data_lines(good) if "IFCCARTESIANPOINT((" in ln)
    bad = with_line(good, tmp_path / "bad-point.ifc", no, re.sub(r"\(\(([-0-9.E]+),", "((1.E400,", line, count=1))
    out, doc = check_json(capsys, bad)
    ref_out, ref = check_json(capsys, good)
    assert out.code == ref_out.code and out.lines == []
    assert [r["status"] for r in doc["results"]] == [r["status"] for r in ref["results"]]
    out, doc = check_json(capsys, bad, extra=("--validate",))
    assert any(w.startswith(f"{bad}:{no}: ") and "IfcCartesianPoint" in w for w in doc["models"][0]["warnings"])
