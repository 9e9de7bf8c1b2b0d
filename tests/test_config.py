"""Project configuration: modelcheck.toml or [tool.modelcheck] in pyproject.toml."""

from __future__ import annotations

import pytest

from modelcheck.cli.config import KEYS, config_path, load_config
from modelcheck.common.errors import UsageError

FULL = """
models = ["models/", "extra/*.ifc"]
rules = "steel-asd-us"
loads = ["loads/forces.csv"]
format = ["console", "junit", "html"]
output = "reports/"
baseline = "reports/main.json"
fail_on = "new"
strict = true
jobs = 4
force_property = "MC_MemberForces.AxialForce"
annotate = "reports/annotated/"
validate = false
scheduler = "tcp://127.0.0.1:8786"
analysis_frame = "local"
units = "SI"
details = true
"""


def test_no_configuration_gives_an_empty_dict(tmp_path):
    assert load_config(tmp_path) == {}
    (tmp_path / "pyproject.toml").write_text('[project]\nname = "x"\n', encoding="utf-8")
    assert load_config(tmp_path) == {} and config_path(tmp_path) is None


def test_modelcheck_toml_with_every_key(tmp_path):
    (tmp_path / "modelcheck.toml").write_text(FULL, encoding="utf-8")
    cfg = load_config(tmp_path)
    assert set(cfg) == set(KEYS)
    assert cfg["models"] == ["models/", "extra/*.ifc"]
    assert cfg["format"] == "console,junit,html"  # a list becomes the --format text
    assert (cfg["fail_on"], cfg["strict"], cfg["jobs"], cfg["validate"]) == ("new", True, 4, False)
    assert cfg["analysis_frame"] == "local"
    assert (cfg["units"], cfg["details"]) == ("SI", True)


def test_pyproject_tool_table(tmp_path):
    (tmp_path / "pyproject.toml").write_text(
        '[project]\nname = "x"\n\n[tool.modelcheck]\nmodels = ["m.ifc"]\nformat = "junit, bcf"\n', encoding="utf-8")
    assert load_config(tmp_path) == {"models": ["m.ifc"], "format": "junit,bcf"}
    assert config_path(tmp_path).name == "pyproject.toml"


def test_both_files_is_an_error(tmp_path):
    (tmp_path / "modelcheck.toml").write_text('rules = "a"\n', encoding="utf-8")
    (tmp_path / "pyproject.toml").write_text('[tool.modelcheck]\nrules = "b"\n', encoding="utf-8")
    with pytest.raises(UsageError, match="keep one"):
        load_config(tmp_path)


@pytest.mark.parametrize("line, key", [
    ("jobs = 0", "jobs"),
    ("jobs = true", "jobs"),
    ('jobs = "4"', "jobs"),
    ('fail_on = "worse"', "fail_on"),
    ('strict = "yes"', "strict"),
    ('models = "one.ifc"', "models"),
    ("loads = [1, 2]", "loads"),
    ('force_property = "NoDot"', "force_property"),
    ('format = ""', "format"),
    ('format = ["junit", 3]', "format"),
    ('rules = ""', "rules"),
    ('units = "metric"', "units"),
    ('details = "yes"', "details"),
])
def test_wrong_type_names_file_and_key(tmp_path, line, key):
    p = tmp_path / "modelcheck.toml"
    p.write_text(line + "\n", encoding="utf-8")
    with pytest.raises(UsageError) as exc:
        load_config(tmp_path)
    assert str(p) in str(exc.value) and f"{key} must be" in str(exc.value)


def test_unknown_key_names_file_and_key(tmp_path):
    p = tmp_path / "pyproject.toml"
    p.write_text('[tool.modelcheck]\nfail-on = "new"\n', encoding="utf-8")
    with pytest.raises(UsageError) as exc:
        load_config(tmp_path)
    msg = str(exc.value)
    assert str(p) in msg and "tool.modelcheck.fail-on" in msg and "'fail_on'" in msg


def test_invalid_toml_names_file_and_line(tmp_path):
    p = tmp_path / "modelcheck.toml"
    p.write_text('rules = "a"\njobs = = 3\n', encoding="utf-8")
    with pytest.raises(UsageError) as exc:
        load_config(tmp_path)
    assert str(p) in str(exc.value) and "line 2" in str(exc.value)


def test_a_configuration_that_is_not_utf8_names_the_file(tmp_path):
    p = tmp_path / "modelcheck.toml"
    p.write_bytes('rules = "Stahl-\u00fc"\n'.encode("latin-1"))
    with pytest.raises(UsageError) as exc:
        load_config(tmp_path)
    assert str(p) in str(exc.value) and "not UTF-8" in str(exc.value)
