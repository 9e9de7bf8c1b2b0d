"""Robustness corpus, outputs and the naming of inputs: a report is never written over a file the
command reads (by any name), nor into a folder that does not exist, nor onto a folder; a pattern, a
force property or a file name that cannot be used is refused. Each case is one line naming the
path or value, exit code 2, every input byte-for-byte unchanged (common practice: a checker must
never damage what it was given).
"""

from __future__ import annotations

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
