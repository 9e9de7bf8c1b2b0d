"""Broken models: one clear line naming the file, exit code 2, no traceback, input untouched."""

from __future__ import annotations

import json
import zipfile
from functools import partial

import pytest

from modelcheck.testing.author import ModelBuilder
from tests.helpers import digest, run_modelcheck

GOOD_HEADER = "ISO-10303-21;\nHEADER;\nFILE_DESCRIPTION(('ViewDefinition [CoordinationView]'),'2;1');\n" \
    "FILE_NAME('x.ifc','2026-01-01T00:00:00',(''),(''),'','','');\n"


_run = partial(run_modelcheck, timeout=120)


def _make_bad(tmp_path, kind: str):
    p = tmp_path / f"{kind}.ifc"
    if kind == "empty":
        p.write_bytes(b"")
    elif kind == "junk":
        p.write_bytes(bytes(range(256)) * 8)
    elif kind == "zip":
        with zipfile.ZipFile(p, "w") as z:
            z.writestr("readme.txt", "not a model")
    elif kind == "truncated":
        mb = ModelBuilder(schema="IFC4", units="mm")
        mb.member("IfcMember", name="m", length=1000.0, body=None)
        full = tmp_path / "full.ifc"
        mb.write(str(full))
        data = full.read_bytes()
        p.write_bytes(data[: len(data) // 2])
    elif kind == "unknown_schema":
        p.write_text(GOOD_HEADER + "FILE_SCHEMA(('IFC9X9'));\nENDSEC;\nDATA;\nENDSEC;\nEND-ISO-10303-21;\n")
    elif kind == "not_utf8":
        p.write_bytes(GOOD_HEADER.encode() + b"FILE_SCHEMA(('IFC4'));\nENDSEC;\nDATA;\n#1=IFCPROJECT('\xff\xfe\xfa',$,'\xe9',$,$,$,$,$,$);\nENDSEC;\nEND-ISO-10303-21;\n")
    elif kind == "xml":
        p.write_text("<?xml version='1.0'?><ifcXML/>")
    return p


@pytest.mark.parametrize("kind", ["empty", "junk", "zip", "truncated", "unknown_schema", "xml"])
def test_unreadable_model_gives_one_line_and_exit_2(tmp_path, kind):
    p = _make_bad(tmp_path, kind)
    before = digest(p)
    r = _run("members", str(p), "--format", "json")
    assert r.returncode == 2, r.stderr
    assert "Traceback" not in r.stderr
    lines = [ln for ln in r.stderr.splitlines() if ln.strip()]
    assert len(lines) == 1 and str(p) in lines[0], r.stderr
    assert digest(p) == before


def test_non_utf8_text_is_read_or_reported(tmp_path):
    p = _make_bad(tmp_path, "not_utf8")
    before = digest(p)
    r = _run("members", str(p), "--format", "json")
    assert r.returncode in (0, 2)
    assert "Traceback" not in r.stderr
    assert digest(p) == before


def test_one_bad_model_does_not_stop_the_others(tmp_path):
    bad = _make_bad(tmp_path, "junk")
    mb = ModelBuilder(schema="IFC4", units="mm")
    mb.member("IfcMember", name="m", length=1000.0, body=None)
    good = tmp_path / "good.ifc"
    mb.write(str(good))
    r = _run("members", str(bad), str(good), "--format", "json")
    assert r.returncode == 2
    doc = json.loads(r.stdout)
    assert [m["name"] for m in doc["models"][1]["members"]] == ["m"]
    assert str(bad) in r.stderr


def test_missing_file_and_empty_folder(tmp_path):
    r = _run("members", str(tmp_path / "nope.ifc"))
    assert r.returncode == 2 and "no such file" in r.stderr and "Traceback" not in r.stderr
    r = _run("check", str(tmp_path))
    assert r.returncode == 2 and "holds no .ifc" in r.stderr
