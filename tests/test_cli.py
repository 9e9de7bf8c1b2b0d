"""End-to-end CLI tests on the sample models and small models built in code.

The JSON reports are validated against the schemas shipped in modelcheck/schemas (jsonschema).
"""

from __future__ import annotations

import json
import math
import shutil
from pathlib import Path

import jsonschema
import pytest

from modelcheck.common.units import Q_
from modelcheck.testing.author import ModelBuilder
from tests.helpers import REPO, SAMPLES, axial_force, digest
from tests.helpers import run_modelcheck as run

SCHEMAS = REPO / "modelcheck" / "schemas"
LOADS = [str(p) for p in sorted(SAMPLES.glob("*-forces.csv"))]


def schema(name: str) -> dict:
    return json.loads((SCHEMAS / name).read_text())


@pytest.fixture(scope="module")
def members_doc():
    r = run("members", str(SAMPLES), "--format", "json", *sum((["--loads", p] for p in LOADS), []))
    assert r.returncode == 0, r.stderr
    return json.loads(r.stdout)


@pytest.fixture(scope="module")
def check_doc(tmp_path_factory):
    out = tmp_path_factory.mktemp("check") / "report.json"
    r = run("check", str(SAMPLES), "--rules", "steel-asd-us", "--format", "json", "--output", str(out),
            "--loads", str(SAMPLES / "*-forces.csv"), "--jobs", "1")
    assert r.returncode == 1, r.stderr  # the samples fail on purpose
    return json.loads(out.read_text())


def test_members_json_follows_the_contract(members_doc):
    jsonschema.validate(members_doc, schema("members.schema.json"))
    assert len(members_doc["models"]) == 3
    schemas = {Path(m["path"]).name: m["schema"] for m in members_doc["models"]}
    assert schemas == {"nettlebrook-canopy.ifc": "IFC2X3", "nettlebrook-hall.ifc": "IFC4",
                       "nettlebrook-pipebridge.ifc": "IFC4X3"}
    for m in members_doc["models"]:
        for mem in m["members"]:
            for q in (mem["section"]["area"], mem["length"]):
                if q is not None:
                    Q_(q["value"], q["unit"])  # every unit string parses in pint
    assert "licensed engineer" in members_doc["caution"]


def test_members_json_fills_forces_with_provenance(members_doc):
    hall = next(m for m in members_doc["models"] if m["path"].endswith("nettlebrook-hall.ifc"))
    sources = {q["source"].split(":")[0] for mem in hall["members"] for q in mem["axial_force"].values()}
    assert any("forces.csv" in s for s in sources)                    # load-table route
    assert any(s.startswith("MC_MemberForces.AxialForce") for s in sources)  # model-property route
    rows = {r["key"] for r in members_doc["unmatched_force_rows"]}
    assert {"BR-07", "PO-19"} <= rows  # the samples' deliberately unmatched rows (sample_models/README.md)
    assert hall["forces"]["members_without_force"]


def test_members_units_follow_the_model(members_doc):
    canopy = next(m for m in members_doc["models"] if m["path"].endswith("canopy.ifc"))
    hall = next(m for m in members_doc["models"] if m["path"].endswith("hall.ifc"))
    assert canopy["units"] == "US" and hall["units"] == "SI"
    a = next(mem["section"]["area"] for mem in canopy["members"] if mem["section"]["area"])
    assert a["unit"] == "in**2"


def test_check_json_follows_the_contract(check_doc):
    jsonschema.validate(check_doc, schema("check.schema.json"))
    s = check_doc["summary"]
    assert s["fail"] > 0 and s["unchecked"] > 0 and s["pass"] > 0 and s["errors"] == 0
    statuses = {r["status"] for r in check_doc["results"]}
    assert statuses == {"pass", "fail", "unchecked"}
    for r in check_doc["results"]:
        if r["status"] == "unchecked":
            assert r["missing"] and r["ratio"] is None  # never passed on missing data
        if r["status"] == "fail":
            assert r["ratio"] is None or r["ratio"] > 1.0  # null only for an infinite ratio
        if r["status"] == "pass":
            assert r["ratio"] <= 1.0 + 1e-9
    assert "licensed engineer" in check_doc["caution"]


def test_check_ratio_is_demand_over_capacity(check_doc):
    for r in check_doc["results"]:
        if r["ratio"] is not None and r["demand"] and r["capacity"] and r["capacity"]["value"]:
            d = Q_(r["demand"]["value"], r["demand"]["unit"])
            c = Q_(r["capacity"]["value"], r["capacity"]["unit"])
            assert math.isclose((d / c).to("").m, r["ratio"], rel_tol=1e-4)  # definition of the ratio


def test_deliberate_failures_appear(check_doc):
    failing_tags = {r["tag"] for r in check_doc["results"] if r["status"] == "fail"}
    # sample_models/README.md lists these members as failing on purpose
    assert {"HR-03", "BR-03", "HR-13", "BR-13", "DG-02"} <= failing_tags


def test_exit_codes_pass_fail_strict_and_input_error(tmp_path):
    mb = ModelBuilder(schema="IFC4", units="mm")
    steel = mb.material("S355", category="steel", E=210000.0, Fy=355.0, Fu=490.0)
    rod = mb.f.createIfcCircleProfileDef("AREA", "RD20", None, 10.0)
    light = axial_force(10000.0)   # 10 kN
    mb.member("IfcMember", name="ok", tag="A1", profile=rod, material=steel, length=1000.0, psets=light)
    ok = tmp_path / "ok.ifc"
    mb.write(str(ok))
    r = run("check", str(ok), "--rules", "steel-ec3")
    assert r.returncode == 0, r.stdout + r.stderr
    # 200 kN on πr² = 314 mm² of S355: 637 MPa > 355 MPa (EN 1993-1-1 6.2.3) -> fail
    mb2 = ModelBuilder(schema="IFC4", units="mm")
    steel2 = mb2.material("S355", category="steel", E=210000.0, Fy=355.0, Fu=490.0)
    rod2 = mb2.f.createIfcCircleProfileDef("AREA", "RD20", None, 10.0)
    mb2.member("IfcMember", name="bad", profile=rod2, material=steel2, length=1000.0,
               psets=axial_force(200000.0))
    mb2.member("IfcMember", name="noforce", profile=rod2, material=steel2, length=1000.0)
    bad = tmp_path / "bad.ifc"
    mb2.write(str(bad))
    assert run("check", str(bad), "--rules", "steel-ec3").returncode == 1
    # a passing member and an unchecked one: 0 normally, 1 with --strict
    mb3 = ModelBuilder(schema="IFC4", units="mm")
    steel3 = mb3.material("S355", category="steel", E=210000.0, Fy=355.0, Fu=490.0)
    rod3 = mb3.f.createIfcCircleProfileDef("AREA", "RD20", None, 10.0)
    mb3.member("IfcMember", name="ok", profile=rod3, material=steel3, length=1000.0, psets=light)
    mb3.member("IfcMember", name="bare", length=1000.0, body=None)
    bare = tmp_path / "bare.ifc"
    mb3.write(str(bare))
    assert run("check", str(bare), "--rules", "steel-ec3").returncode == 0
    assert run("check", str(bare), "--rules", "steel-ec3", "--strict").returncode == 1
    junk = tmp_path / "junk.ifc"
    junk.write_bytes(b"\x00\x01 not a model")
    r = run("check", str(ok), str(junk), "--rules", "steel-ec3", "--format", "json")
    assert r.returncode == 2 and "Traceback" not in r.stderr
    doc = json.loads(r.stdout)
    assert [m["error"] is None for m in doc["models"]] == [True, False]  # the good model is still reported


def test_rules_commands():
    r = run("rules")
    assert r.returncode == 0 and "steel-asd-us" in r.stdout and "hanger-rods" in r.stdout
    r = run("rules", "show", "steel-ec3")
    assert r.returncode == 0 and "compression" in r.stdout
    r = run("rules", "validate", str(REPO / "modelcheck" / "rulesets" / "steel-asd-us.toml"))
    assert r.returncode == 0


def test_user_rule_file_with_a_new_check_needs_no_code(tmp_path):
    rules = tmp_path / "company.toml"
    rules.write_text(
        '[ruleset]\nname = "company"\nbasis = "company standard (example)"\nunits = "SI"\n'
        '[parameters]\nF_allow = "100 MPa"\n'
        '[[check]]\nid = "low-stress"\nwhen = "P > 0"\ndemand = "P / A"\ncapacity = "F_allow"\n')
    mb = ModelBuilder(schema="IFC4", units="mm")
    steel = mb.material("S355", category="steel", E=210000.0, Fy=355.0, Fu=490.0)
    rod = mb.f.createIfcCircleProfileDef("AREA", "RD20", None, 10.0)
    # 40 kN / 314.16 mm² = 127.3 MPa > 100 MPa: fails this company rule though S355 would pass
    mb.member("IfcMember", name="m", profile=rod, material=steel, length=1000.0,
              psets=axial_force(40000.0))
    p = tmp_path / "m.ifc"
    mb.write(str(p))
    out = tmp_path / "r.json"
    r = run("check", str(p), "--rules", str(rules), "--format", "json", "--output", str(out))
    assert r.returncode == 1, r.stderr
    res = json.loads(out.read_text())["results"][0]
    assert res["check"] == "low-stress"
    assert math.isclose(res["ratio"], 40000 / (math.pi * 100) / 100, rel_tol=1e-5)  # f = P/A against 100 MPa


def test_inputs_are_never_written(tmp_path):
    work = tmp_path / "s"
    shutil.copytree(SAMPLES, work)
    before = {p.name: digest(p) for p in work.iterdir() if p.is_file()}
    r = run("check", str(work), "--format", "console,json,csv,junit,bcf,html", "--output", str(tmp_path / "out"),
            "--loads", str(work / "*-forces.csv"), "--annotate", str(tmp_path / "annotated"))
    assert r.returncode == 1, r.stderr
    after = {p.name: digest(p) for p in work.iterdir() if p.is_file()}
    assert before == after
    names = sorted(p.name for p in (tmp_path / "out").iterdir())
    assert names == ["modelcheck-report.bcfzip", "modelcheck-report.csv", "modelcheck-report.html",
                     "modelcheck-report.json", "modelcheck-report.xml"]
    assert len(list((tmp_path / "annotated").glob("*.ifc"))) == 3
    r = run("check", str(work / "nettlebrook-hall.ifc"), "--format", "json",
            "--output", str(work / "nettlebrook-hall.ifc"))
    assert r.returncode == 2 and "refusing" in r.stderr
    assert digest(work / "nettlebrook-hall.ifc") == before["nettlebrook-hall.ifc"]


def test_baseline_flags_only_new_failures(tmp_path):
    mb = ModelBuilder(schema="IFC4", units="mm")
    steel = mb.material("S355", category="steel", E=210000.0, Fy=355.0, Fu=490.0)
    rod = mb.f.createIfcCircleProfileDef("AREA", "RD20", None, 10.0)
    for i in range(3):
        mb.member("IfcMember", name=f"m{i}", tag=f"T{i}", profile=rod, material=steel, length=1000.0)
    p = tmp_path / "m.ifc"
    mb.write(str(p))
    loads = tmp_path / "loads.csv"
    loads.write_text("tag,axial_force [kN]\nT0,10\nT1,10\nT2,10\n")
    base = tmp_path / "base.json"
    r = run("check", str(p), "--rules", "steel-ec3", "--loads", str(loads), "--format", "json", "--output", str(base))
    assert r.returncode == 0, r.stderr
    r = run("check", str(p), "--rules", "steel-ec3", "--loads", str(loads), "--baseline", str(base),
            "--fail-on", "new", "--format", "json")
    assert r.returncode == 0
    assert json.loads(r.stdout)["comparison"]["counts"]["new_failures"] == 0
    loads.write_text("tag,axial_force [kN]\nT0,10\nT1,500\nT2,10\n")  # T1 now fails
    r = run("check", str(p), "--rules", "steel-ec3", "--loads", str(loads), "--baseline", str(base),
            "--fail-on", "new", "--format", "json")
    assert r.returncode == 1
    cmp = json.loads(r.stdout)["comparison"]
    assert {x["global_id"] for x in cmp["new_failures"]} == {mb.f.by_type("IfcMember")[1].GlobalId}


def test_config_file_makes_check_a_one_word_step(tmp_path):
    shutil.copytree(SAMPLES, tmp_path / "models")
    (tmp_path / "modelcheck.toml").write_text(
        'models = ["models/"]\nrules = "steel-ec3"\nloads = ["models/*-forces.csv"]\n'
        'format = "json"\noutput = "report.json"\n')
    r = run("check", cwd=tmp_path)
    assert r.returncode == 1, r.stderr
    doc = json.loads((tmp_path / "report.json").read_text())
    assert doc["ruleset"]["name"] == "steel-ec3" and len(doc["models"]) == 3
    (tmp_path / "modelcheck.toml").write_text('modles = ["models/"]\n')  # a typo: one clear line, exit 2
    r = run("check", cwd=tmp_path)
    assert r.returncode == 2 and "modles" in r.stderr and "Traceback" not in r.stderr


def test_reports_are_deterministic_apart_from_the_timestamp(tmp_path):
    docs, texts = [], []
    for i in range(2):
        out = tmp_path / f"r{i}"
        run("check", str(SAMPLES), "--format", "json,csv,junit", "--output", str(out),
            "--loads", str(SAMPLES / "*-forces.csv"))
        doc = json.loads((out / "modelcheck-report.json").read_text())
        doc.pop("generated")
        docs.append(json.dumps(doc))
        texts.append(((out / "modelcheck-report.csv").read_bytes(), (out / "modelcheck-report.xml").read_bytes()))
    assert docs[0] == docs[1]
    assert texts[0] == texts[1]  # CSV and JUnit carry no timestamp at all: byte-identical


def test_net_area_from_the_model_brings_in_the_rupture_check(tmp_path):
    mb = ModelBuilder(schema="IFC4", units="inch-kip")
    steel = mb.material("ASTM A36")
    flat = mb.f.createIfcRectangleProfileDef("AREA", "PL4x1/2", None, 4.0, 0.5)
    # 2.0 in² gross, 1.5 in² net; U = 1.0: a plate bolted through (AISC 360-16 Table D3.1 case 1)
    net = {"MC_NetSection": {"NetArea": ("IfcAreaMeasure", 1.5), "ShearLagFactor": ("IfcPositiveRatioMeasure", 1.0)}}
    mb.member("IfcMember", name="tie", tag="T1", profile=flat, material=steel, length=60.0,
              psets={**net, **axial_force(40.0)})  # 40 kip
    p = tmp_path / "tie.ifc"
    mb.write(str(p))
    out = tmp_path / "r.json"
    run("check", str(p), "--rules", "steel-asd-us", "--format", "json", "--output", str(out))
    res = {r["check"]: r for r in json.loads(out.read_text())["results"]}
    # AISC 360-16 D2(b), Ae = U An (D3): f = P/Ae = 40/1.5 = 26.67 ksi against Fu/2.00 = 58/2 = 29 ksi
    # (ASTM A36 Fu = 58 ksi, from memory)
    assert math.isclose(res["tension-rupture"]["ratio"], (40 / 1.5) / (58 / 2.0), rel_tol=1e-4)
    # D2(a) on the gross area: 40/2.0 = 20 ksi against 36/1.67 = 21.56 ksi (ASTM A36 Fy = 36 ksi, from memory)
    assert math.isclose(res["tension-yield"]["ratio"], (40 / 2.0) / (36 / 1.67), rel_tol=1e-4)


def test_shear_lag_factor_from_the_model_and_a_bad_one_refused(tmp_path):
    mb = ModelBuilder(schema="IFC4", units="inch-kip")
    steel = mb.material("ASTM A36")
    flat = mb.f.createIfcRectangleProfileDef("AREA", "PL4x1/2", None, 4.0, 0.5)
    for tag, u in (("T1", 0.8), ("T2", 1.5)):
        net = {"MC_NetSection": {"NetArea": ("IfcAreaMeasure", 1.5), "ShearLagFactor": ("IfcPositiveRatioMeasure", u)}}
        mb.member("IfcMember", name="tie", tag=tag, profile=flat, material=steel, length=60.0,
                  psets={**net, **axial_force(30.0)})
    p = tmp_path / "ties.ifc"
    mb.write(str(p))
    out = tmp_path / "r.json"
    run("check", str(p), "--rules", "steel-asd-us", "--format", "json", "--output", str(out))
    doc = json.loads(out.read_text())
    res = {(r["tag"], r["check"]): r for r in doc["results"]}
    # AISC 360-16 (D3-1) Ae = U An = 0.8 x 1.5 = 1.2 in²; D2(b) f = 30 / 1.2 = 25 ksi vs 58/2 = 29 ksi
    assert math.isclose(res[("T1", "tension-rupture")]["ratio"], (30 / 1.2) / 29.0, rel_tol=1e-4)
    # U = 1.5 is no ratio <= 1: not used, warned; a flat bar then needs U: unchecked, never passed
    assert res[("T2", "tension-rupture")]["status"] == "unchecked"
    members = json.loads(run("members", str(p), "--format", "json").stdout)["models"][0]["members"]
    by_tag = {m["tag"]: m for m in members}
    assert by_tag["T1"]["section"]["shear_lag_factor"]["value"] == 0.8
    assert by_tag["T2"]["section"]["shear_lag_factor"] is None
    assert any("ShearLagFactor" in w for w in by_tag["T2"]["warnings"])


def test_results_encoded_in_chunks_are_the_rows_encoded_at_once():
    from modelcheck.core.check import check_model
    from modelcheck.core.model import ForceOptions
    from modelcheck.report.check_json import encode_results, encode_rows, result_dicts

    c = check_model(str(SAMPLES / "nettlebrook-hall.ifc"), "steel-asd-us",
                    ForceOptions(property=("MC_MemberForces", "AxialForce")))
    assert encode_results(c.results, chunk=7) == encode_rows(result_dicts(c.results))


def test_rows_written_to_a_file_in_blocks_are_the_rows_joined_at_once(tmp_path: Path, monkeypatch):
    """The JSON rows a part writes into its file, a few rows at a time (after rows already there),
    are the bytes joined in memory at once (the comparison: orjson's rows, via encode_rows)."""
    from modelcheck.core.check import check_model
    from modelcheck.core.model import ForceOptions
    from modelcheck.core.read import read_model
    from modelcheck.report import check_json
    from modelcheck.report.check_json import ROW_SEPARATOR, encode_rows, result_dicts
    from modelcheck.rules.engine import check_rows
    from modelcheck.rules.ruleset import load_ruleset

    path = str(SAMPLES / "nettlebrook-hall.ifc")
    forces = ForceOptions(property=("MC_MemberForces", "AxialForce"))
    data = read_model(path, forces)
    # in the model's own system, as check_model shows it by default
    rows = check_rows(load_ruleset("steel-asd-us").in_system(data.system), data.members, data.forces)
    at_once = check_json.encode_check_rows(rows)
    monkeypatch.setattr(check_json, "JOIN_BLOCK", 3)
    assert len(rows) > 3 * 3   # several blocks, the last one partial or not
    with open(tmp_path / "rows", "wb") as sink:
        sink.write(b"ROWS")
        assert check_json.encode_check_rows(rows, sink=sink) == b""
    assert (tmp_path / "rows").read_bytes() == b"ROWS" + ROW_SEPARATOR + at_once
    # and the rows themselves are orjson's, row by row (without suggestions: none asked for here)
    table = check_model(path, "steel-asd-us", forces).results.assign(suggestion=None)
    assert at_once == encode_rows(result_dicts(table))


def test_json_only_rows_are_the_rows_of_the_full_results_table(tmp_path: Path):
    """A JSON-only check encodes its rows where the work runs (here: the batch workers), from the
    engine's arrays, without the results table; beside another format, in one process, the rows
    come from the table. Both must be the same bytes."""
    loads = str(SAMPLES / "*-forces.csv")
    only = tmp_path / "only.json"
    run("check", str(SAMPLES), "--loads", loads, "--format", "json", "--output", str(only), "--jobs", "2")
    both = tmp_path / "both"
    run("check", str(SAMPLES), "--loads", loads, "--format", "json,csv", "--output", str(both), "--jobs", "1")

    def rows(path: Path) -> list[str]:
        text = path.read_text(encoding="utf-8")
        return text[text.index('"results": ['):text.index('"unmatched_force_rows"')].splitlines()

    a, b = rows(only), rows(both / "modelcheck-report.json")
    assert a == b
    parsed = json.loads(only.read_text(encoding="utf-8"))["results"]
    # the comparison covers what the two encoders build differently
    assert {r["status"] for r in parsed} == {"pass", "fail", "unchecked"}
    assert any(r["suggestion"] for r in parsed) and any(r["missing"] for r in parsed)
    assert any(r["load_case"] is None for r in parsed) or len({r["load_case"] for r in parsed}) > 1


def test_help_describes_rules_subcommands_and_capacity():
    out = run("rules", "--help").stdout
    for action in ("rules list", "rules show", "rules validate"):
        assert action in out
    members = " ".join(run("members", "--help").stdout.split())
    assert "needs --rules" not in members
    assert "under the rule set of --rules" in members
