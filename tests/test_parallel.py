"""One model shared out to several processes (``modelcheck.run.split``) gives the report one process
gives, byte for byte apart from the time stamp: a check's result must not depend on how many
cores ran it (common practice for a batch tool; the contract in the README says so).

The model is the benchmark's generator at a small size, with the awkward cases a part cannot
judge alone added: a tag two members share (one in each part), forces keyed by tag, a load-table
row for no member, a duplicate row, members left without a force, property values the property
route cannot use, and a syntax error inside an entity that only a forked part reads.
"""

from __future__ import annotations

import json
import os
import re
import signal
from pathlib import Path
from typing import Any

import ifcopenshell
import pytest

import modelcheck.run.split as parallel
from benchmarks.make_model import build
from tests.corpus import run_inprocess

pytestmark = pytest.mark.skipif(not parallel.can_split(), reason="sharing a model out needs fork (Linux)")

N = 240
_REAL_RUN_PART = parallel._run_part


def _dying(k: int) -> Any:
    """A part that is killed in its forked process (the parent's own part runs normally)."""
    if k > 0:
        os.kill(os.getpid(), signal.SIGKILL)
    return _REAL_RUN_PART(k)


@pytest.fixture(scope="module")
def shared_model(tmp_path_factory: Any) -> tuple[Path, Path, Path]:
    d = tmp_path_factory.mktemp("parallel")
    model = d / "m.ifc"
    build(N, model)
    f = ifcopenshell.open(str(model))
    members = sorted(f.by_type("IfcMember") + f.by_type("IfcColumn"), key=lambda e: e.GlobalId)
    low, high = members[3], members[-4]            # one in each half of the GlobalIds
    low.Tag = high.Tag = "SHARED-1"
    members[10].Tag = "SOLO-1"
    # property values the property route cannot use, in both halves: a length is not a force
    bad = 0
    for rel in f.by_type("IfcRelDefinesByProperties"):
        pset = rel.RelatingPropertyDefinition
        if pset.Name == "MC_MemberForces" and bad < 6 and rel.RelatedObjects[0].GlobalId in {
                m.GlobalId for m in members[::7]}:
            pset.HasProperties[0].NominalValue = f.createIfcLengthMeasure(12.5)
            bad += 1
    assert bad >= 4
    f.write(str(model))
    table = d / "m-forces.csv"
    rows = table.read_text(encoding="utf-8").splitlines()
    header, body = rows[0], rows[1:]
    dropped = {m.GlobalId for m in members[1::9]}
    body = [r for r in body if r.split(",")[0] not in dropped]
    body += [body[5], "3vvvvvvvvvvvvvvvvvvvvv,LC1,12.0"]    # a duplicate row, a row for no member
    body.append(f"{members[20].GlobalId},LC9,5000")   # far beyond any of these sections: one failure for sure
    table.write_text("\n".join([header, *body]) + "\n", encoding="utf-8")
    tags = d / "tag-forces.csv"
    tags.write_text("tag,load_case,axial_force [kN]\nSHARED-1,LC2,10\nSOLO-1,LC2,11\nNO-SUCH-TAG,LC2,12\n",
                    encoding="utf-8")
    return model, table, tags


def _report(capsys: Any, args: list[str], inputs: list[Path]) -> dict[str, Any]:
    out = run_inprocess(capsys, args, inputs)
    assert out.code == 1, out.stderr      # the generator's forces fail a few members
    doc = json.loads(out.stdout)
    doc.pop("generated")
    return doc


def test_a_model_shared_out_gives_the_report_of_one_process(capsys, monkeypatch, shared_model):
    model, table, tags = shared_model
    monkeypatch.setattr(parallel, "MIN_MEMBERS_PER_PART", 50)
    parts_run: list[int] = []
    real = parallel._run_parts
    monkeypatch.setattr(parallel, "_run_parts", lambda n: parts_run.append(n) or real(n))
    args = ["check", str(model), "--loads", str(table), "--loads", str(tags), "--format", "json", "--no-config"]
    one = _report(capsys, [*args, "--jobs", "1"], [model, table, tags])
    assert parts_run == []
    two = _report(capsys, [*args, "--jobs", "2"], [model, table, tags])
    assert parts_run == [2]
    three = _report(capsys, [*args, "--jobs", "3"], [model, table, tags])
    assert parts_run == [2, 3]
    assert two == one
    assert three == one
    # and the awkward cases were there to be judged
    lines = "\n".join(one["models"][0]["warnings"])
    assert "SHARED-1" in lines and "several members" in lines
    assert re.search(r"\d+ member\(s\) have no axial force", lines)
    assert "several force rows" in lines
    assert "MC_MemberForces.AxialForce" in lines or "AxialForce" in lines
    assert {r["key"] for r in one["unmatched_force_rows"]} == {"3vvvvvvvvvvvvvvvvvvvvv", "NO-SUCH-TAG"}
    solo = [r for r in one["results"] if r["tag"] == "SOLO-1" and r["load_case"] == "LC2"]
    assert solo and all(r["status"] != "unchecked" for r in solo)
    assert not [r for r in one["results"] if r["tag"] == "SHARED-1" and r["load_case"] == "LC2"]


def test_jobs_one_and_two_write_the_same_json_file(tmp_path, capsys, monkeypatch, shared_model):
    """The file a CI job keeps (--output): the parts' encoded rows joined as they are."""
    model, table, _ = shared_model
    monkeypatch.setattr(parallel, "MIN_MEMBERS_PER_PART", 50)
    files = []
    for jobs in ("1", "2"):
        out = tmp_path / f"report-{jobs}.json"
        res = run_inprocess(capsys, ["check", str(model), "--loads", str(table), "--format", "json", "--output",
                                     str(out), "--jobs", jobs, "--no-config"], [model, table])
        assert res.code == 1, res.stderr
        files.append(re.sub(rb'"generated": "[^"]*"', b"", out.read_bytes()))
    assert files[0] == files[1]


def test_a_syntax_error_met_in_a_forked_part_is_one_line_naming_its_line(tmp_path, capsys, monkeypatch,
                                                                        shared_model):
    model, table, _ = shared_model
    monkeypatch.setattr(parallel, "MIN_MEMBERS_PER_PART", 50)
    text = model.read_text(encoding="ascii").splitlines()
    # the extrusion of the last member in the file: read by the part that holds its GlobalId
    no = max(i for i, ln in enumerate(text) if "IFCEXTRUDEDAREASOLID(" in ln)
    text[no] = re.sub(r",([0-9.]+)\);$", r",1.E400);", text[no])
    assert "1.E400" in text[no]
    broken = tmp_path / "broken.ifc"
    broken.write_text("\n".join(text) + "\n", encoding="ascii")
    out = run_inprocess(capsys, ["check", str(broken), "--loads", str(table), "--format", "json", "--jobs", "2",
                                 "--no-config"], [broken, table])
    assert out.code == 2
    assert out.errors == [out.lines[0]] and len(out.errors) == 1
    assert str(broken) in out.errors[0] and f"line {no + 1}" in out.errors[0]



def test_every_report_format_is_the_same_when_a_model_is_shared_out(tmp_path, capsys, monkeypatch, shared_model):
    """CSV, JUnit, HTML and BCF read the whole results and member tables: a model shared out gives
    the same files (the time stamps aside)."""
    model, table, _ = shared_model
    monkeypatch.setattr(parallel, "MIN_MEMBERS_PER_PART", 50)
    outs = []
    for jobs in ("1", "2"):
        folder = tmp_path / f"jobs{jobs}"
        res = run_inprocess(capsys, ["check", str(model), "--loads", str(table), "--format", "csv,junit,html,json",
                                     "--output", str(folder), "--jobs", jobs, "--no-config"], [model, table])
        assert res.code == 1, res.stderr
        texts = {}
        for f in sorted(folder.iterdir()):
            text = f.read_text(encoding="utf-8")
            texts[f.name] = re.sub(r"\d{4}-\d\d-\d\dT\d\d:\d\d:\d\d(?:\+00:00|Z)?|timestamp=\"[^\"]*\"", "T", text)
        outs.append(texts)
    assert outs[0].keys() == outs[1].keys() and len(outs[0]) == 4
    for name in outs[0]:
        assert outs[0][name] == outs[1][name], name


def test_a_part_whose_process_dies_is_one_clear_line(tmp_path, capsys, monkeypatch, shared_model):
    """A forked part killed from outside (the kernel's out-of-memory killer, say): one line naming
    the model and what to do, exit 2 (common practice: no traceback for a user)."""
    model, table, _ = shared_model
    monkeypatch.setattr(parallel, "MIN_MEMBERS_PER_PART", 50)
    monkeypatch.setattr(parallel, "_run_part", _dying)
    out = run_inprocess(capsys, ["check", str(model), "--loads", str(table), "--format", "json", "--jobs", "2",
                                 "--no-config"], [model, table])
    assert out.code == 2
    assert len(out.lines) == 1 and str(model) in out.lines[0] and "--jobs 1" in out.lines[0]


@pytest.mark.parametrize("name", ["nettlebrook-hall.ifc", "nettlebrook-canopy.ifc", "nettlebrook-pipebridge.ifc"])
def test_the_sample_models_shared_out_give_their_single_process_reports(capsys, monkeypatch, name):
    """The demo models carry all three force routes (a load table, model properties, IFC
    structural-analysis results) and three schemas and unit systems: shared out in parts of a
    few members each, every report is the single-process one."""
    from tests.helpers import REPO

    model = REPO / "sample_models" / name
    tables = sorted((REPO / "sample_models").glob("*-forces.csv"))
    monkeypatch.setattr(parallel, "MIN_MEMBERS_PER_PART", 4)
    args = ["check", str(model), *[a for t in tables for a in ("--loads", str(t))], "--format", "json",
            "--no-config"]
    one = run_inprocess(capsys, [*args, "--jobs", "1"], [model, *tables])
    two = run_inprocess(capsys, [*args, "--jobs", "2"], [model, *tables])
    assert one.code == two.code and one.code in (0, 1), one.stderr + two.stderr
    a, b = json.loads(one.stdout), json.loads(two.stdout)
    a.pop("generated")
    b.pop("generated")
    assert a == b


def test_repeated_and_missing_globalids_shared_out_give_the_single_process_report(tmp_path, capsys, monkeypatch,
                                                                                 shared_model):
    """A broken model: two members share a GlobalId, one has none ('$', which IFC forbids). The
    members of one GlobalId stay in one part, the unnamed one is '#id' in both runs."""
    model, table, _ = shared_model
    monkeypatch.setattr(parallel, "MIN_MEMBERS_PER_PART", 50)
    text = model.read_text(encoding="ascii")
    lines = text.splitlines()
    rows = [i for i, ln in enumerate(lines) if re.match(r"#\d+=IFCMEMBER\('", ln)]
    gid_of = [re.match(r"#\d+=IFCMEMBER\('([^']+)'", lines[i]).group(1) for i in rows]
    lines[rows[5]] = lines[rows[5]].replace(f"'{gid_of[5]}'", f"'{gid_of[60]}'", 1)   # a repeated GlobalId
    lines[rows[9]] = lines[rows[9]].replace(f"'{gid_of[9]}'", "$", 1)                  # no GlobalId
    broken = tmp_path / "broken-ids.ifc"
    broken.write_text("\n".join(lines) + "\n", encoding="ascii")
    args = ["check", str(broken), "--loads", str(table), "--format", "json", "--no-config"]
    one = run_inprocess(capsys, [*args, "--jobs", "1"], [broken, table])
    two = run_inprocess(capsys, [*args, "--jobs", "2"], [broken, table])
    assert one.code == two.code
    a, b = json.loads(one.stdout), json.loads(two.stdout)
    a.pop("generated")
    b.pop("generated")
    assert a == b
    gids = [r["global_id"] for r in a["results"]]
    assert any(g.startswith("#") for g in gids) and gid_of[60] in gids


def test_members_evaluated_in_runs_give_the_report_of_one_run(capsys, monkeypatch, shared_model):
    """Beyond EVALUATE_CHUNK members the rules, suggestions and JSON rows go run by run of
    GlobalIds (a memory bound); the rows must be those of one run over all members (common
    practice: how the work is cut never shows in the result)."""
    import modelcheck.core.check as check

    model, table, tags = shared_model
    args = ["check", str(model), "--loads", str(table), "--loads", str(tags), "--format", "json", "--no-config"]
    whole = _report(capsys, [*args, "--jobs", "1"], [model, table, tags])
    monkeypatch.setattr(check, "EVALUATE_CHUNK", 37)       # several runs, none aligned with anything
    monkeypatch.setattr(parallel, "MIN_MEMBERS_PER_PART", 50)
    assert _report(capsys, [*args, "--jobs", "2"], [model, table, tags]) == whole


@pytest.mark.parametrize("off", ["memfd", "slim", "memfd,slim,split"])
def test_a_speed_trick_turned_off_changes_no_byte_of_the_report(tmp_path, capsys, monkeypatch, shared_model, off):
    """``MODELCHECK_WITHOUT`` (``modelcheck.run.tricks``) is for measuring a trick's gain: the
    report is the same file with the trick on or off (common practice: a speed-up must not change
    a result)."""
    model, table, tags = shared_model
    monkeypatch.setattr(parallel, "MIN_MEMBERS_PER_PART", 50)
    files = []
    for without in ("", off):
        monkeypatch.setenv("MODELCHECK_WITHOUT", without)
        out = tmp_path / f"report-{len(files)}.json"
        res = run_inprocess(capsys, ["check", str(model), "--loads", str(table), "--loads", str(tags), "--format",
                                     "json", "--output", str(out), "--jobs", "2", "--no-config"], [model, table, tags])
        assert res.code == 1, res.stderr
        files.append(re.sub(rb'"generated": "[^"]*"', b"", out.read_bytes()))
    assert files[0] == files[1]
