"""Every command with every format it accepts, over every sample model and over models built here
whose members each lack one value: the run ends with exit code 0 or 1, never with an internal
error or a traceback, and no output (standard output, standard error, every file written, every
member of the BCF zip) holds the word nan, NaN, None or inf.

Missing text is None from the reader to the reporters and is shown as an em dash, null or an
empty cell; a number that is not finite is never printed. The runs are in-process
(``modelcheck.cli.main`` with capsys), with a few in a subprocess for what only a real process
shows (the default worker count, the command's own exit).
"""

from __future__ import annotations

import re
import zipfile
from pathlib import Path

import pytest

from modelcheck.cli import main
from modelcheck.rules.ruleset import list_rulesets
from modelcheck.testing.author import ModelBuilder
from tests.helpers import KN, SAMPLES, axial_force, run_modelcheck

#: words a missing or non-finite value turns into when it leaks into text
LEAK = re.compile(r"\b(?:[Nn][Aa][Nn]|None|[Ii]nf(?:inity)?|INF)\b")
#: an IFC GlobalId (22 characters of its base-64 alphabet): random ones may spell a leak word
GLOBAL_ID = re.compile(r"(?<![0-9A-Za-z_$])[0-9A-Za-z_$]{22}(?![0-9A-Za-z_$])")
CRASH = re.compile(r"internal error|Traceback", re.IGNORECASE)

SAMPLE_MODELS = sorted(SAMPLES.glob("*.ifc"))


def leaks(text: str) -> list[str]:
    """The leak words in ``text``, GlobalIds left out."""
    return LEAK.findall(GLOBAL_ID.sub("GID", text))


def lacking_model() -> ModelBuilder:
    """One complete member and one member lacking each value in turn (IFC4, millimetres)."""
    mb = ModelBuilder(schema="IFC4", units="mm")
    steel = mb.material("S355 test steel", category="steel", E=210000.0, Fy=355.0, Fu=490.0)

    def rod(name: str | None = "RD20") -> object:
        return mb.f.createIfcCircleProfileDef("AREA", name, None, 10.0)

    mb.member(name="complete rod", tag="C-1", profile=rod(), material=steel, length=2000.0, psets=axial_force(20.0 * KN))
    mb.member(name="rod without material", tag="C-2", profile=rod(), length=2000.0, psets=axial_force(20.0 * KN))
    mb.member(name="rod without section name", tag="C-3", profile=rod(None), material=steel, length=2000.0,
              psets=axial_force(20.0 * KN))
    mb.member(name="member without profile", tag="C-4", material=steel, material_via="direct", length=2000.0,
              body=None, psets=axial_force(20.0 * KN))
    typ = mb.member_type(name="Rod type RD20", profile=rod(), material=steel)
    mb.member(name="rod without length", tag="C-5", member_type=typ, length=None, body=None, axis=False,
              psets=axial_force(20.0 * KN))
    mb.member(name="rod without force", tag="C-6", profile=rod(), material=steel, length=2000.0)
    return mb


def doubtful_model() -> ModelBuilder:
    """Members whose values the reader rejects, in a US-unit IFC2X3 file: an implausible modulus,
    a cross-section quantity that disagrees with the profile, a member with no name or tag."""
    mb = ModelBuilder(schema="IFC2X3", units="inch-kip")
    psi_slip = mb.material("Steel, modulus in psi", category="steel", E=29.0e6, Fy=36.0, Fu=58.0)
    a36 = mb.material("ASTM A36", Fy=36.0, Fu=58.0)
    rod = mb.f.createIfcCircleProfileDef("AREA", "RD 3/4", None, 0.375)
    kip = axial_force(5.0)   # the model's force unit is the kip
    mb.member(name="rod with a psi modulus", tag="D-1", profile=rod, material=psi_slip, length=120.0, psets=kip)
    mb.member(name="rod whose quantity disagrees", tag="D-2", profile=rod, material=a36, length=120.0, psets=kip,
              qto={"CrossSectionArea": 0.6})
    mb.member(profile=rod, material=a36, length=120.0, psets=kip)
    return mb


@pytest.fixture(scope="module")
def built_models(tmp_path_factory) -> list[Path]:
    folder = tmp_path_factory.mktemp("matrix-models")
    out = []
    for name, mb in (("lacking.ifc", lacking_model()), ("doubtful.ifc", doubtful_model())):
        path = folder / name
        mb.write(str(path))
        out.append(path)
    return out


def _loads_for(model: Path) -> list[str]:
    table = model.with_name(model.stem + "-forces.csv")
    return ["--loads", str(table)] if table.exists() else []


def _run(capsys, args: list[str]) -> tuple[int, str]:
    code = main(args)
    out, err = capsys.readouterr()
    return code, out + "\n" + err


def _file_text(path: Path) -> str:
    if zipfile.is_zipfile(path):
        with zipfile.ZipFile(path) as z:
            return "\n".join(z.read(n).decode("utf-8") for n in z.namelist())
    return path.read_text(encoding="utf-8")


def _assert_clean(code: int, text: str, what: str, codes: tuple[int, ...] = (0, 1)) -> None:
    assert code in codes, f"{what}: exit code {code}\n{text[-2000:]}"
    assert not CRASH.search(text), f"{what}: {text[-2000:]}"
    found = leaks(text)
    assert not found, f"{what}: {found} in\n{text[-3000:]}"


def _models(built_models: list[Path]) -> list[Path]:
    return SAMPLE_MODELS + built_models


MEMBER_FORMATS = ("table", "json", "csv")
CHECK_FORMATS = ("console", "json", "csv", "junit", "bcf", "html")
SUFFIX = {"table": "txt", "console": "txt", "json": "json", "csv": "csv", "junit": "xml", "bcf": "bcfzip",
          "html": "html"}


@pytest.mark.parametrize("capacity", [False, True], ids=["members", "members-capacity"])
def test_members_every_format_every_model(capsys, tmp_path, built_models, capacity):
    for model in _models(built_models):
        extra = ["--capacity", "--rules", "steel-asd-us"] if capacity else []
        for fmt in MEMBER_FORMATS:
            what = f"members {model.name} --format {fmt}{' --capacity' if capacity else ''}"
            code, text = _run(capsys, ["members", str(model), "--format", fmt, *_loads_for(model), *extra])
            _assert_clean(code, text, what, codes=(0,))
            assert text.strip(), what
        out = tmp_path / f"{model.stem}-{capacity}.json"   # the file a format goes to: the same writer
        code, text = _run(capsys, ["members", str(model), "--format", "json", "--output", str(out),
                                   *_loads_for(model), *extra])
        _assert_clean(code, text + _file_text(out), f"members {model.name} --output", codes=(0,))


@pytest.mark.parametrize("fmt", CHECK_FORMATS)
def test_check_every_format_every_model(capsys, tmp_path, built_models, fmt):
    for model in _models(built_models):
        what = f"check {model.name} --format {fmt}"
        args = ["check", str(model), "--no-config", "--jobs", "1", "--format", fmt, *_loads_for(model)]
        if fmt == "console":
            code, text = _run(capsys, args)
        else:
            out = tmp_path / f"{model.stem}.{SUFFIX[fmt]}"
            code, text = _run(capsys, [*args, "--output", str(out)])
            text += "\n" + _file_text(out)
        _assert_clean(code, text, what)
        if fmt == "json":   # a text format without --output goes to standard output
            code, text = _run(capsys, args)
            _assert_clean(code, text, what + " (standard output)")


def test_check_every_format_at_once_into_a_folder(capsys, tmp_path, built_models):
    for model in _models(built_models):
        folder = tmp_path / model.stem
        folder.mkdir()
        code, text = _run(capsys, ["check", str(model), "--no-config", "--jobs", "1", "--format",
                                   ",".join(CHECK_FORMATS), "--output", str(folder), *_loads_for(model)])
        written = sorted(folder.iterdir())
        assert {p.suffix for p in written} == {".json", ".csv", ".xml", ".bcfzip", ".html"}, written
        _assert_clean(code, text + "".join(_file_text(p) for p in written), f"check {model.name} all formats")


def test_check_of_all_models_at_once_in_worker_processes(tmp_path, built_models):
    """Every sample and built model in one run, with the default worker count, as a user runs it."""
    folder = tmp_path / "reports"
    folder.mkdir()
    r = run_modelcheck("check", str(SAMPLES), *map(str, built_models), "--no-config", "--loads",
                       str(SAMPLES / "*-forces.csv"), "--format", ",".join(CHECK_FORMATS), "--output", str(folder))
    written = "".join(_file_text(p) for p in sorted(folder.iterdir()))
    _assert_clean(r.returncode, r.stdout + r.stderr + written, "check of every model")


def test_members_command_runs_as_a_process_on_the_samples():
    """The README's own `modelcheck members sample_models/...`, default format, as a process."""
    r = run_modelcheck("members", str(SAMPLES))
    _assert_clean(r.returncode, r.stdout + r.stderr, "members sample_models/", codes=(0,))
    flowing = " ".join(r.stdout.split())   # a title wraps at the console's width
    for model in SAMPLE_MODELS:   # each table's title: "<path> (<schema>, N members)"
        assert re.search(rf"{re.escape(model.name)} \(IFC\w+, \d+ members\)", flowing), model.name


@pytest.mark.parametrize("fmt", ["table", "json"])
@pytest.mark.parametrize("args", [
    ["--force", "12 kip"],
    ["--force", "50 kN", "--rules", "steel-ec3", "--length", "3 m"],
    ["--force", "-8 kip", "--shape", "catalog", "--family", "HSS", "--length", "8 ft"],
    ["--force", "20 kN", "--rules", "hanger-rods", "--shape", "threaded"],
], ids=["round", "ec3-length", "catalog-compression", "threaded"])
def test_size_every_format(capsys, fmt, args):
    code, text = _run(capsys, ["size", *args, "--format", fmt])
    _assert_clean(code, text, f"size {' '.join(args)} --format {fmt}", codes=(0,))


def test_rules_list_show_and_validate_every_shipped_rule_set(capsys):
    code, text = _run(capsys, ["rules"])
    _assert_clean(code, text, "rules", codes=(0,))
    shipped = list_rulesets()
    assert shipped
    for rs in shipped:
        name, path = rs.name, str(rs.path)
        code, text = _run(capsys, ["rules", "show", name])
        _assert_clean(code, text, f"rules show {name}", codes=(0,))
        code, text = _run(capsys, ["rules", "validate", path])
        _assert_clean(code, text, f"rules validate {path}", codes=(0,))


def test_the_leak_pattern_finds_what_it_is_for():
    # the guard itself: each leak word is found, words that merely contain one are not, and a
    # GlobalId that happens to spell one is not a leak
    assert leaks("Section: nan | E: NaN | None | inf | -inf | Infinity") == ["nan", "NaN", "None", "inf", "inf",
                                                                          "Infinity"]
    assert leaks("information, finance, nonetheless, nano, infinite, Nancy, none") == []
    assert leaks("member 1iVPgbgSbW9DELPbQO$nan: ok") == []
