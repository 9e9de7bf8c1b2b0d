"""Robustness corpus, outputs and the naming of inputs: a report is never written over a file the
command reads (by any name), nor into a folder that does not exist, nor onto a folder; a pattern, a
force property or a file name that cannot be used is refused. Each case is one line naming the
path or value, exit code 2, every input byte-for-byte unchanged (common practice: a checker must
never damage what it was given).
"""

from __future__ import annotations

import json
import os
import shutil
from pathlib import Path

import pytest

from tests.corpus import run_inprocess
from tests.helpers import REPO, SAMPLES

RULES = REPO / "modelcheck" / "rulesets" / "steel-ec3.toml"


@pytest.fixture
def project(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> Path:
    for name in ("nettlebrook-hall.ifc", "nettlebrook-hall-forces.csv", "nettlebrook-canopy.ifc"):
        shutil.copy(SAMPLES / name, tmp_path / name)
    shutil.copy(RULES, tmp_path / "my.toml")
    os.link(tmp_path / "nettlebrook-hall-forces.csv", tmp_path / "linked.csv")   # one file, two names
    (tmp_path / "sub").mkdir()
    shutil.copy(SAMPLES / "nettlebrook-hall.ifc", tmp_path / "sub" / "nettlebrook-hall.ifc")
    monkeypatch.chdir(tmp_path)
    return tmp_path


CASES = {
    # a load table named by a pattern
    "table by pattern": (["members", "nettlebrook-hall.ifc", "--loads", "*-forces.csv", "--format", "csv",
                          "--output", "nettlebrook-hall-forces.csv"], "is one of the input files"),
    "rule file": (["check", "nettlebrook-hall.ifc", "--rules", "my.toml", "--format", "json",
                   "--output", "my.toml"], "is one of the input files"),
    "rule file of --capacity": (["members", "nettlebrook-hall.ifc", "--capacity", "--rules", "my.toml",
                                 "--format", "json", "--output", "my.toml"], "is one of the input files"),
    "a second name of a table": (["check", "nettlebrook-hall.ifc", "--loads", "linked.csv", "--format", "json",
                                  "--output", "nettlebrook-hall-forces.csv"], "is one of the input files"),
    "missing folder": (["check", "nettlebrook-hall.ifc", "--format", "json", "--output", "nosuch/r.json"],
                       "does not exist"),
    "missing folder, members": (["members", "nettlebrook-hall.ifc", "--output", "nosuch/m.txt"], "does not exist"),
    "a folder as the file": (["check", "nettlebrook-hall.ifc", "--format", "json", "--output", "sub"],
                             "is a folder"),
    "a file as the folder": (["check", "nettlebrook-hall.ifc", "--format", "json", "--output", "my.toml/r.json"],
                             "does not exist"),
    "a file for several formats": (["check", "nettlebrook-hall.ifc", "--format", "json,csv", "--output", "my.toml"],
                                   "several formats"),
    "two models of one name": (["check", "nettlebrook-hall.ifc", "sub/nettlebrook-hall.ifc", "--annotate", "out"],
                               "would both be written"),
}


@pytest.mark.parametrize("case", list(CASES))
def test_an_output_that_would_damage_an_input_or_cannot_be_written_is_one_line(capsys, project, case):
    args, fragment = CASES[case]
    inputs = [p for p in project.rglob("*") if p.is_file()]
    out = run_inprocess(capsys, [*args, "--no-config"] if args[0] == "check" else args, inputs)
    assert out.code == 2, out.stderr
    assert len(out.lines) == 1 and out.lines == out.errors, out.stderr
    assert fragment in out.lines[0]


def test_the_configuration_file_is_an_input_too(capsys, project):
    (project / "modelcheck.toml").write_text('models = ["nettlebrook-hall.ifc"]\nformat = "json"\n'
                                             'output = "modelcheck.toml"\n', encoding="utf-8")
    out = run_inprocess(capsys, ["check"], [project / "modelcheck.toml", project / "nettlebrook-hall.ifc"])
    assert out.code == 2 and len(out.lines) == 1 and "modelcheck.toml is one of the input files" in out.lines[0]


def test_several_formats_go_into_a_new_folder(capsys, project):
    out = run_inprocess(capsys, ["check", "nettlebrook-hall.ifc", "--loads", "nettlebrook-hall-forces.csv",
                                 "--format", "json,csv", "--output", "reports", "--no-config"],
                        [project / "nettlebrook-hall.ifc"])
    assert out.code == 1, out.stderr   # the sample's deliberate failures
    assert sorted(p.name for p in (project / "reports").iterdir()) == ["modelcheck-report.csv",
                                                                      "modelcheck-report.json"]


# ------------------------------------------------------------------ which models a pattern names


def test_a_pattern_naming_folders_searches_them_like_folders(project):
    from modelcheck.core.read import expand_paths

    (project / "proj" / "a").mkdir(parents=True)
    (project / "proj" / "b").mkdir()
    shutil.copy(project / "nettlebrook-hall.ifc", project / "proj" / "a" / "hall.ifc")
    shutil.copy(project / "nettlebrook-canopy.ifc", project / "proj" / "b" / "canopy.ifc")
    assert expand_paths(["proj/*"]) == ["proj/a/hall.ifc", "proj/b/canopy.ifc"]
    assert expand_paths(["proj/*/"]) == ["proj/a/hall.ifc", "proj/b/canopy.ifc"]


def test_a_pattern_naming_only_a_folder_without_models_is_one_line(capsys, project):
    (project / "d.ifc").mkdir()     # a folder that looks like a model
    out = run_inprocess(capsys, ["check", "d*.ifc", "--no-config"], [project / "nettlebrook-hall.ifc"])
    assert out.code == 2 and len(out.lines) == 1 and "'d*.ifc' matches no model file" in out.lines[0]


@pytest.mark.parametrize("value", ["NoDot", ".AxialForce", "MC_MemberForces.", "", " . "])
def test_a_force_property_not_written_as_pset_dot_property_is_one_line(capsys, project, value):
    out = run_inprocess(capsys, ["check", "nettlebrook-hall.ifc", "--force-property", value, "--no-config"],
                        [project / "nettlebrook-hall.ifc"])
    assert out.code == 2 and len(out.lines) == 1 and "write it as PSET.PROPERTY" in out.lines[0], out.stderr


def test_the_command_line_splits_a_force_property_where_the_rule_set_does():
    # a property-set name may hold dots (IFC names are free text): the split is at the last dot,
    # on the command line as in a rule set's force_property (common practice)
    from modelcheck.cli.common import force_options
    from modelcheck.cli.main import build_parser

    args = build_parser().parse_args(["check", "m.ifc", "--force-property", " My.Set . Force "])
    assert force_options(args).property == ("My.Set", "Force")


# ------------------------------------------------------------------ file names that are not UTF-8
LATIN1 = os.fsdecode(b"mod\xe8l")    # a name written in Latin-1: an undecodable byte in Python


@pytest.mark.parametrize("role", ["model", "model in a folder", "load table", "output"])
def test_a_file_name_that_is_not_utf8_is_one_line(capsys, project, role):
    """Reports are UTF-8 and name every file: a name they cannot write is refused up front."""
    if role == "model":
        shutil.copy(project / "nettlebrook-hall.ifc", project / f"{LATIN1}.ifc")
        args = ["check", f"{LATIN1}.ifc"]
    elif role == "model in a folder":
        shutil.copy(project / "nettlebrook-hall.ifc", project / "sub" / f"{LATIN1}.ifc")
        args = ["check", "sub"]
    elif role == "load table":
        shutil.copy(project / "nettlebrook-hall-forces.csv", project / f"{LATIN1}.csv")
        args = ["check", "nettlebrook-hall.ifc", "--loads", f"{LATIN1}.csv"]
    else:
        args = ["check", "nettlebrook-hall.ifc", "--format", "json", "--output", f"{LATIN1}.json"]
    inputs = [p for p in project.rglob("*") if p.is_file()]
    out = run_inprocess(capsys, [*args, "--format", "json", "--no-config"] if "--format" not in args
                        else [*args, "--no-config"], inputs)
    assert out.code == 2 and len(out.lines) == 1 and out.lines == out.errors, out.stderr
    assert "not UTF-8 text" in out.lines[0]
    assert out.stdout == ""


def test_an_unknown_format_in_the_configuration_names_the_file(capsys, project):
    (project / "modelcheck.toml").write_text('models = ["nettlebrook-hall.ifc"]\nformat = "jsn"\n', encoding="utf-8")
    out = run_inprocess(capsys, ["check"], [project / "modelcheck.toml"])
    assert out.code == 2 and len(out.lines) == 1
    assert "modelcheck.toml" in out.lines[0] and "unknown jsn" in out.lines[0]


def test_a_folder_given_as_the_rule_set_is_one_line(capsys, project):
    out = run_inprocess(capsys, ["check", "nettlebrook-hall.ifc", "--rules", "sub", "--no-config"],
                        [project / "nettlebrook-hall.ifc"])
    assert out.code == 2 and len(out.lines) == 1 and "sub: is a folder, not a rule-set file" in out.lines[0]


# ------------------------------------------------------------------ a report is written whole or not at all

FORMATS = ["json", "csv", "junit", "bcf", "html"]


def _check_args(fmt: str, output: str) -> list[str]:
    return ["check", "nettlebrook-hall.ifc", "--loads", "nettlebrook-hall-forces.csv", "--format", fmt,
            "--output", output, "--no-config", "--jobs", "1"]


def _partials(folder: Path) -> list[str]:
    return sorted(p.name for p in folder.iterdir() if "partial" in p.name)


@pytest.mark.parametrize("fmt", FORMATS)
def test_a_write_that_fails_midway_leaves_the_earlier_report_as_it_was(capsys, project, monkeypatch, fmt):
    # common practice: a report is replaced whole or not at all, so that a reader (a CI job, a
    # coordinator) never takes part of one for the whole; the earlier report stays until then
    from modelcheck.report import formats

    (project / "report.out").write_bytes(b"the earlier report\n")
    real = formats.write_report

    def half_then_fail(fmt_, run, target, options):   # a full disk after the first bytes
        real(fmt_, run, target, options)
        with open(target, "r+b") as fh:
            fh.truncate(max(1, os.path.getsize(target) // 2))
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(formats, "write_report", half_then_fail)
    out = run_inprocess(capsys, _check_args(fmt, "report.out"), [project / "nettlebrook-hall.ifc"])
    assert out.code == 2 and out.errors == ["modelcheck: error: report.out: cannot be written: "
                                            "No space left on device"], out.stderr
    assert (project / "report.out").read_bytes() == b"the earlier report\n"
    assert _partials(project) == []


@pytest.mark.parametrize("fmt", FORMATS)
def test_a_report_replaces_the_earlier_one_whole_and_keeps_its_permissions(capsys, project, fmt):
    target = project / "report.out"
    target.write_bytes(b"the earlier report\n")
    target.chmod(0o640)
    out = run_inprocess(capsys, _check_args(fmt, "report.out"), [project / "nettlebrook-hall.ifc"])
    assert out.code == 1, out.stderr   # the sample's deliberate failures
    assert target.read_bytes() != b"the earlier report\n" and target.stat().st_size > 1000
    assert (target.stat().st_mode & 0o777) == 0o640
    assert _partials(project) == []


def test_a_new_report_gets_the_usual_permissions(capsys, project):
    mask = os.umask(0o022)
    try:
        out = run_inprocess(capsys, _check_args("json", "new.json"), [project / "nettlebrook-hall.ifc"])
    finally:
        os.umask(mask)
    assert out.code == 1, out.stderr
    assert ((project / "new.json").stat().st_mode & 0o777) == 0o644   # 0666 less the umask (common practice)


def test_a_link_to_the_report_stays_a_link(capsys, project):
    (project / "reports").mkdir()
    (project / "reports" / "r.json").write_text("{}", encoding="utf-8")
    (project / "latest.json").symlink_to(project / "reports" / "r.json")
    out = run_inprocess(capsys, _check_args("json", "latest.json"), [project / "nettlebrook-hall.ifc"])
    assert out.code == 1, out.stderr
    assert (project / "latest.json").is_symlink()
    assert json.loads((project / "reports" / "r.json").read_text(encoding="utf-8"))["summary"]["fail"] > 0
    assert _partials(project / "reports") == [] and _partials(project) == []


def test_a_device_is_written_directly(capsys, project):
    out = run_inprocess(capsys, _check_args("json", os.devnull), [project / "nettlebrook-hall.ifc"])
    assert out.code == 1, out.stderr
    assert Path(os.devnull).exists() and not Path(os.devnull).is_file()


@pytest.mark.parametrize(("args", "name"), [
    (["members", "nettlebrook-hall.ifc", "--format", "json", "--output", "m.json"], "m.json"),
    (["members", "nettlebrook-hall.ifc", "--format", "csv", "--output", "m.csv"], "m.csv"),
    (["members", "nettlebrook-hall.ifc", "--output", "m.txt"], "m.txt"),
])
def test_the_member_list_replaces_the_earlier_one_whole(capsys, project, args, name):
    (project / name).write_bytes(b"the earlier list\n")
    out = run_inprocess(capsys, args, [project / "nettlebrook-hall.ifc"])
    assert out.code == 0, out.stderr
    assert (project / name).read_bytes() != b"the earlier list\n"
    assert _partials(project) == []


@pytest.mark.parametrize("into", ["file", "pipe", "file, appended"])
@pytest.mark.parametrize("command", ["check", "members"])
def test_standard_output_by_name_is_the_stream_itself(project, into, command):
    # `--output /dev/stdout > report.json` or `| jq`: the report is written to the stream the shell
    # opened (at its place: after what a file held, when appended), the other lines go to standard
    # error, so that what arrives is the report alone (common practice: a Unix filter's data on stdout)
    import subprocess
    import sys

    args = (_check_args("json", "/dev/stdout") if command == "check"
            else ["members", "nettlebrook-hall.ifc", "--format", "json", "--output", "/dev/stdout"])
    cmd = [sys.executable, "-m", "modelcheck", *args]
    if into == "pipe":
        res = subprocess.run(cmd, cwd=project, capture_output=True, timeout=300)
        text = res.stdout.decode("utf-8")
    else:
        target = project / "report.json"
        target.write_bytes(b"before\n" if into == "file, appended" else b"")
        with open(target, "ab" if into == "file, appended" else "wb") as fh:
            res = subprocess.run(cmd, cwd=project, stdout=fh, stderr=subprocess.PIPE, timeout=300)
        text = target.read_text(encoding="utf-8")
        if into == "file, appended":
            assert text.startswith("before\n")
            text = text[len("before\n"):]
    assert res.returncode == (1 if command == "check" else 0), res.stderr
    doc = json.loads(text)   # the whole of it: no summary line after the document
    assert doc["caution"]
    if command == "check":
        assert doc["summary"]["fail"] > 0
        assert b"30 members found" in res.stderr   # the summary line, on standard error
    assert _partials(project) == []
