"""Robustness corpus, hostile text and files on the way in and out: what a model, a load table or
a rule file holds never acts on a spreadsheet, a terminal or an XML reader; workbooks, baselines
and rule files that are broken, hostile or huge are one line naming where (exit code 2); a
device or a pipe given as an input is refused at once; a batch survives one of its processes
dying, and a stopped batch leaves no process behind; an output that cannot be written names the
file. Every case: no traceback, no 'internal error', inputs byte-for-byte unchanged, no member
passed that was not verified.

Each input is built here, in code. Limits are lowered with monkeypatch where a real-size input
would take long to build; the time each case may take is bounded by ``run_process``'s timeout
or by the limits themselves.
"""

from __future__ import annotations

import csv
import io
import json
import os
import signal
import subprocess
import sys
import textwrap
import time
import xml.etree.ElementTree as ET
import zipfile
from pathlib import Path
from typing import Any

import pytest

from modelcheck.loads import tables
from modelcheck.report.text import csv_cell, shown, xml_text
from tests.corpus import good_builder, member_ids, run_inprocess, run_process, write_model
from tests.helpers import REPO, run_modelcheck

#: text a spreadsheet would run as a formula, one for each first character OWASP names
FORMULAS = ['=HYPERLINK("http://example.invalid","x")', "+1+1", "-2+3", "@SUM(A1)", "\tA", "\rB"]
#: text that would act on a terminal: clear the screen, set the window title, ring the bell, C1 CSI
TERMINAL = "H\x1b[2J\x1b]0;title\x07\x9b31m"


def _model(tmp_path: Path, names: dict[str, str] | None = None, tags: dict[str, str] | None = None,
           file_name: str = "hangers.ifc") -> tuple[Path, dict[str, str]]:
    """good_builder's H1 and H2 (20 kN each), renamed / retagged as asked."""
    mb = good_builder()
    ids = member_ids(mb)
    for m in mb.f.by_type("IfcMember"):
        old = m.Name
        if names and old in names:
            m.Name = names[old]
        if tags and old in tags:
            m.Tag = tags[old]
    return write_model(mb, tmp_path / file_name), ids


def _one_line(out: Any, *fragments: str) -> str:
    assert out.code == 2, (out.code, out.stderr)
    assert len(out.lines) == 1 and out.lines == out.errors, out.stderr
    for f in fragments:
        assert f in out.lines[0], (f, out.lines[0])
    return out.lines[0]


# ------------------------------------------------------------------ 2. CSV: no formula runs
def test_csv_cells_that_a_spreadsheet_would_run_begin_with_an_apostrophe(capsys, tmp_path):
    # OWASP, CSV injection: a cell beginning with = + - @, a tab or a carriage return is
    # prefixed with an apostrophe; numbers stay numbers
    model, ids = _model(tmp_path, names={"H1": FORMULAS[0], "H2": FORMULAS[3]}, tags={"H1": "-42", "H2": "+7"})
    table = tmp_path / "forces.csv"
    table.write_text(f"global_id,load_case,axial_force [kN]\n{ids['H1']},-LC1,-42.0\n"
                     f"{ids['H2']},=1+2,12\n", encoding="utf-8")
    rules = tmp_path / "signed.toml"   # a signed stress, so that a negative number reaches the CSV
    rules.write_text('[ruleset]\nname = "signed"\nbasis = "test"\nunits = "SI"\n\n[[check]]\nid = "stress"\n'
                     'demand = "P / A"\ncapacity = "Fy"\n', encoding="utf-8")
    report = tmp_path / "r.csv"
    out = run_inprocess(capsys, ["check", str(model), "--loads", str(table), "--rules", str(rules), "--format", "csv",
                                 "--output", str(report), "--no-config", "--jobs", "1"], [model, table, rules])
    assert out.code in (0, 1), out.stderr
    rows = list(csv.DictReader(io.StringIO(report.read_text(encoding="utf-8"), newline="")))
    assert rows
    for row in rows:
        for col, cell in row.items():
            if col in ("demand", "capacity", "ratio", "suggestion_ratio"):
                continue
            assert not cell.startswith(("=", "+", "-", "@", "\t", "\r")), (col, cell)
    cases = {(r["global_id"], r["load_case"]) for r in rows}
    assert (ids["H1"], "'-LC1") in cases and (ids["H2"], "'=1+2") in cases
    h1 = next(r for r in rows if r["global_id"] == ids["H1"] and r["load_case"] == "'-LC1")
    assert h1["unit"] == "MPa"
    assert h1["name"] == "'" + FORMULAS[0] and h1["tag"] == "'-42"
    assert {r["tag"] for r in rows if r["global_id"] == ids["H2"]} == {"'+7"}
    # a compression stress is a number, written as one: -42 kN / (π · 10² mm²) = -133.7 MPa
    # (circle area π r², common practice)
    assert float(h1["demand"]) == pytest.approx(-42000 / (3.141592653589793 * 100.0), rel=1e-5)
    assert h1["demand"].startswith("-")
    # the member inventory's CSV too
    out = run_inprocess(capsys, ["members", str(model), "--format", "csv"], [model])
    assert out.code == 0
    rows = list(csv.DictReader(io.StringIO(out.stdout, newline="")))
    assert {r["name"] for r in rows} == {"'" + FORMULAS[0], "'" + FORMULAS[3]}


@pytest.mark.parametrize("text", FORMULAS)
def test_csv_cell_neutralises_each_formula_start(text):
    assert csv_cell(text) == "'" + text          # OWASP, CSV injection
    assert csv_cell(-42.0) == -42.0 and csv_cell("H1") == "H1"


# ------------------------------------------------------------------ 2. no control sequence reaches a terminal
def test_control_characters_reach_console_and_stderr_as_visible_escapes(capsys, tmp_path):
    model, ids = _model(tmp_path, names={"H1": TERMINAL}, tags={"H1": "T\x1b[5m"})
    table = tmp_path / "forces.csv"
    # 200 kN on a 20 mm rod fails (637 MPa against S355); an unknown key with a C1 control sequence
    # (a C0 control in a CSV table is refused as binary data)
    table.write_text(f"global_id,axial_force [kN]\n{ids['H1']},200\nX\x9b31mY,1\n", encoding="utf-8")
    rules = tmp_path / "rules.toml"
    rules.write_text((REPO / "modelcheck" / "rulesets" / "steel-ec3.toml").read_text(encoding="utf-8").replace(
        'basis = "', 'basis = "\\u001b[2J\\u009b', 1), encoding="utf-8")
    out = run_inprocess(capsys, ["check", str(model), "--loads", str(table), "--rules", str(rules), "--no-config",
                                 "--jobs", "1"], [model, table, rules])
    assert out.code == 1, out.stderr
    for stream in (out.stdout, out.stderr):
        assert not any(ch in stream for ch in "\x1b\x07\x9b"), repr(stream[:400])
    # the failing member's tag (the console names a member by it), the unmatched table key, the
    # rule set's basis: visible
    for fragment in ("T\\x1b[5m", "X\\x9b31mY", "\\x1b[2J\\x9b"):
        assert fragment in out.stdout, fragment
    # the member inventory, and a file name on standard error
    out = run_inprocess(capsys, ["members", str(model)], [model])
    assert "\x1b" not in out.stdout and "T\\x1b[5m" in out.stdout      # the compact table names it by its tag
    out = run_inprocess(capsys, ["members", str(model), "--details"], [model])
    assert "\x1b" not in out.stdout and "H\\x1b[2J" in out.stdout      # the details give its name too
    bad = tmp_path / "a\x1b[2Jb.ifc"
    bad.write_bytes(b"")
    out = run_inprocess(capsys, ["check", str(bad), "--no-config"], [bad])
    line = _one_line(out, "a\\x1b[2Jb.ifc")
    assert "\x1b" not in line


#: what reorders or breaks the text around it without being a C0 or C1 control: the bidirectional
#: overrides and isolates (Unicode Standard Annex #9: U+202E shows 'LIAF' as 'FAIL'), the line
#: and paragraph separators (a new line to many log readers), the noncharacters U+FFFE, U+FFFF
REORDERING = "\u202e\u202d\u202a\u202b\u202c\u2066\u2067\u2068\u2069\u200e\u200f\u061c\u2028\u2029\ufffe\uffff"


def test_bidirectional_controls_and_line_separators_reach_the_console_as_visible_escapes(capsys, tmp_path):
    name = "H1" + "".join(f"{ch}x" for ch in REORDERING)
    model, ids = _model(tmp_path, names={"H1": name}, tags={"H1": "T\u202eLIAF"})
    table = tmp_path / "forces.csv"
    table.write_text(f"global_id,axial_force [kN]\n{ids['H1']},200\nX\u2028Y,1\n", encoding="utf-8")
    out = run_inprocess(capsys, ["check", str(model), "--loads", str(table), "--no-config", "--jobs", "1",
                                 "--details"], [model, table])
    assert out.code == 1, out.stderr
    for stream in (out.stdout, out.stderr):
        assert not any(ch in stream for ch in REORDERING), repr(stream[:400])
    assert "T\\u202eLIAF" in out.stdout and "X\\u2028Y" in out.stdout
    out = run_inprocess(capsys, ["members", str(model), "--details"], [model])   # the details name the member
    assert not any(ch in out.stdout for ch in REORDERING)
    assert "H1\\u202e" in out.stdout and "T\\u202eLIAF" in out.stdout
    assert shown("Zürich 中文") == "Zürich 中文"       # letters of any script are shown as they are


def test_a_long_text_is_cut_with_an_ellipsis_on_the_console(capsys, tmp_path):
    """A tag (the console's name of a member) of a megabyte: the console shows its start and an
    ellipsis, at once."""
    model, ids = _model(tmp_path, tags={"H1": "ж" * 1_000_000})
    table = tmp_path / "forces.csv"
    table.write_text(f"global_id,axial_force [kN]\n{ids['H1']},200\n", encoding="utf-8")
    start = time.monotonic()
    out = run_inprocess(capsys, ["check", str(model), "--loads", str(table), "--no-config", "--jobs", "1"],
                        [model, table])
    assert time.monotonic() - start < 60
    assert out.code == 1
    assert 100 < out.stdout.count("ж") < 1000 and "…" in out.stdout
    assert max(len(ln) for ln in out.stdout.splitlines()) < 2000
    assert shown("x" * 500).endswith("…") and len(shown("x" * 500)) == 200


# ------------------------------------------------------------------ 2. XML: nothing XML 1.0 forbids
def test_junit_and_bcf_hold_no_character_xml_forbids(capsys, tmp_path):
    # XML 1.0, production 2 (Char): no C0 control but tab, newline, carriage return; no U+FFFE,
    # U+FFFF; no surrogate
    model, ids = _model(tmp_path, names={"H1": "A\ufffeB\uffffC\x01D\x1bE"})
    table = tmp_path / "forces.csv"
    table.write_text(f"global_id,axial_force [kN]\n{ids['H1']},200\n", encoding="utf-8")
    folder = tmp_path / "reports"
    out = run_inprocess(capsys, ["check", str(model), "--loads", str(table), "--format", "junit,bcf",
                                 "--output", str(folder), "--no-config", "--jobs", "1"], [model, table])
    assert out.code == 1, out.stderr
    junit = (folder / "modelcheck-report.xml").read_bytes()
    assert "ABCDE" in ET.tostring(ET.fromstring(junit), encoding="unicode")   # a strict parser reads it
    with zipfile.ZipFile(folder / "modelcheck-report.bcfzip") as z:
        markups = [z.read(n) for n in z.namelist() if n.endswith(".bcf")]
    assert markups and any("ABCDE" in ET.tostring(ET.fromstring(m), encoding="unicode") for m in markups)
    assert xml_text("a\ud800b\udfffc\ufffe\uffff\x00d\te\U0001f600") == "abcd\te\U0001f600"


# ------------------------------------------------------------------ 3./4. workbooks
def _workbook(tmp_path: Path, name: str, change: dict[str, bytes] | None = None, rows: int = 2) -> Path:
    import openpyxl

    wb = openpyxl.Workbook()
    ws = wb.active
    ws.append(["tag", "axial_force [kN]"])
    for i in range(rows):
        ws.append([f"H{i % 2 + 1}", 12])
    path = tmp_path / name
    wb.save(path)
    if change:
        with zipfile.ZipFile(path) as z:
            parts = {n: z.read(n) for n in z.namelist()}
        parts.update(change)
        with zipfile.ZipFile(path, "w", zipfile.ZIP_DEFLATED) as z:
            for n, data in parts.items():
                z.writestr(n, data)
    return path


SHEET = "xl/worksheets/sheet1.xml"
#: nested entities: a kilobyte of text expands a thousandfold per level (common practice: the
#: "billion laughs" attack)
LAUGHS = (b'<?xml version="1.0"?><!DOCTYPE lolz [<!ENTITY a "' + b"x" * 1000 + b'">'
          + b"".join(b'<!ENTITY %s "%s">' % (bytes([98 + i]), b"".join(b"&%s;" % bytes([97 + i]) for _ in range(1000)))
                     for i in range(4)) + b"]>")


def _sheet(path: Path) -> str:
    with zipfile.ZipFile(path) as z:
        return z.read(SHEET).decode()


def _bad_workbooks(tmp_path: Path) -> dict[str, tuple[Path, str]]:
    good = _workbook(tmp_path, "good.xlsx")
    sheet = _sheet(good)
    cell = sheet[sheet.index('<c r="A2"'):sheet.index("</c>", sheet.index('<c r="A2"')) + 4]
    out = {
        "entities": (_workbook(tmp_path, "laughs.xlsx", {SHEET: LAUGHS + sheet.replace(">H1<", ">&e;<").encode()}),
                     "document type declaration"),
        "external entity": (_workbook(tmp_path, "external.xlsx", {"xl/workbook.xml": (
            b'<?xml version="1.0"?><!DOCTYPE w [<!ENTITY x SYSTEM "file:///etc/passwd">]>'
            + zipfile.ZipFile(good).read("xl/workbook.xml"))}), "document type declaration"),
        "shared string out of range": (_workbook(tmp_path, "sst.xlsx", {
            SHEET: sheet.replace(cell, '<c r="A2" t="s"><v>999</v></c>').encode(),
            "xl/sharedStrings.xml": b'<sst xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main" '
                                    b'count="1" uniqueCount="1"><si><t>H1</t></si></sst>'}), "shared string"),
        "malformed part": (_workbook(tmp_path, "malformed.xlsx", {SHEET: sheet[: len(sheet) // 2].encode()}),
                           "not well-formed XML"),
    }
    truncated = tmp_path / "truncated.xlsx"
    truncated.write_bytes(good.read_bytes()[:-200])
    out["truncated"] = (truncated, "damaged or truncated")
    return out


@pytest.mark.parametrize("case", ["entities", "external entity", "shared string out of range", "malformed part",
                                  "truncated"])
def test_a_broken_or_hostile_workbook_is_one_line(capsys, tmp_path, case):
    model, _ = _model(tmp_path)
    path, fragment = _bad_workbooks(tmp_path)[case]
    with pytest.raises(tables.LoadTableError) as info:
        tables.read_load_table(path)
    message = str(info.value)
    assert message.startswith(f"{path}: ") and fragment in message, message
    out = run_inprocess(capsys, ["check", str(model), "--loads", str(path), "--format", "json", "--no-config",
                                 "--jobs", "1"], [model, path])
    assert _one_line(out) == f"modelcheck: error: {message}"
    assert out.stdout == ""


def test_workbook_and_table_sizes_are_bounded(capsys, tmp_path, monkeypatch):
    model, _ = _model(tmp_path)
    # the uncompressed size the zip declares, judged before anything is inflated
    monkeypatch.setattr(tables, "MAX_TABLE_BYTES", 50_000)
    big = _workbook(tmp_path, "big.xlsx", {"xl/padding.xml": b"<a>" + b" " * 100_000 + b"</a>"})
    assert big.stat().st_size < 50_000
    out = run_inprocess(capsys, ["check", str(model), "--loads", str(big), "--no-config", "--jobs", "1"], [model, big])
    _one_line(out, str(big), "declares", "uncompressed")
    csv_big = tmp_path / "big.csv"
    csv_big.write_text("tag,axial_force [kN]\n" + "H1,1\n" * 20_000, encoding="utf-8")
    out = run_inprocess(capsys, ["check", str(model), "--loads", str(csv_big), "--no-config", "--jobs", "1"],
                        [model, csv_big])
    _one_line(out, str(csv_big), "split it")
    # rows
    monkeypatch.setattr(tables, "MAX_TABLE_BYTES", 512 * 1024 * 1024)
    monkeypatch.setattr(tables, "MAX_TABLE_ROWS", 10)
    many = _workbook(tmp_path, "many.xlsx", rows=30)
    out = run_inprocess(capsys, ["check", str(model), "--loads", str(many), "--no-config", "--jobs", "1"],
                        [model, many])
    _one_line(out, f"{many}:Sheet:row 11", "more than 10 rows")
    csv_many = tmp_path / "many.csv"
    csv_many.write_text("tag,axial_force [kN]\n" + "H1,1\n" * 30, encoding="utf-8")
    out = run_inprocess(capsys, ["check", str(model), "--loads", str(csv_many), "--no-config", "--jobs", "1"],
                        [model, csv_many])
    _one_line(out, f"{csv_many}:row 11", "more than 10 rows")
    # cells: one cell far to the right widens every row as read
    monkeypatch.setattr(tables, "MAX_TABLE_ROWS", 2_000_000)
    monkeypatch.setattr(tables, "MAX_TABLE_CELLS", 10_000)
    wide = _workbook(tmp_path, "wide.xlsx")
    sheet = _sheet(wide).replace("</sheetData>", '<row r="500"><c r="XFD500"><v>1</v></c></row></sheetData>')
    wide = _workbook(tmp_path, "wide.xlsx", {SHEET: sheet.encode()})
    out = run_inprocess(capsys, ["check", str(model), "--loads", str(wide), "--no-config", "--jobs", "1"],
                        [model, wide])
    _one_line(out, str(wide), "cells")


def test_rows_beyond_the_size_a_sheet_declares_are_read(tmp_path):
    """A sheet's <dimension> may be wrong (hand-made or exported workbooks): every row is read."""
    path = _workbook(tmp_path, "short.xlsx")
    assert '<dimension ref="A1:B3"' in _sheet(path)
    sheet = _sheet(path).replace("</sheetData>", '<row r="7"><c r="A7" t="inlineStr"><is><t>H9</t></is></c>'
                                                 '<c r="B7"><v>7</v></c></row></sheetData>')
    path = _workbook(tmp_path, "short.xlsx", {SHEET: sheet.encode()})
    df = tables.read_load_table(path).frame
    assert df["key"].tolist() == ["H1", "H2", "H9"] and df["source"].iloc[-1] == f"{path}:Sheet:row 7"
    assert df["axial_force"].iloc[-1] == pytest.approx(7000.0)   # 7 kN = 7000 N (SI, by definition)


# ------------------------------------------------------------------ 4. devices and pipes as inputs
@pytest.mark.skipif(not hasattr(os, "mkfifo") or not Path("/dev/zero").exists(), reason="POSIX devices and FIFOs")
@pytest.mark.parametrize("option", ["--loads", "--baseline", "--rules", "model"])
def test_a_device_or_a_pipe_as_an_input_is_refused_at_once(tmp_path, option):
    model, _ = _model(tmp_path)
    fifo = tmp_path / "pipe.csv"
    os.mkfifo(fifo)   # nobody writes to it: reading it would wait for ever
    for target in (str(fifo), "/dev/zero"):
        args = ["check", str(model), "--no-config", "--format", "json"]
        args = [*args[:1], target, *args[2:]] if option == "model" else [*args, option, target]
        out = run_process(args, [model], timeout=60)
        _one_line(out, target, "not a regular file")


# ------------------------------------------------------------------ 3. baselines
@pytest.mark.parametrize(("case", "where"), [
    ("deeply nested", "nested far deeper"),
    ("a list for a name", "results[1].name is list"),
    ("an object for a message", "results[0].message is dict"),
    ("an object for a warning", "models[0].warnings[0] is dict"),
])
def test_a_baseline_that_is_not_a_check_report_is_one_line(capsys, tmp_path, case, where):
    model, _ = _model(tmp_path)
    report = tmp_path / "base.json"
    out = run_inprocess(capsys, ["check", str(model), "--format", "json", "--output", str(report), "--no-config",
                                 "--jobs", "1"], [model])
    doc = json.loads(report.read_text(encoding="utf-8"))
    assert len(doc["results"]) > 1
    if case == "deeply nested":
        text = report.read_text(encoding="utf-8").replace('"results": [', '"results": [' + "[" * 100_000 + "]" * 100_000
                                                          + ",", 1)
    else:
        if case == "a list for a name":
            doc["results"][1]["name"] = ["H1", ["H2"]]
        elif case == "an object for a message":
            doc["results"][0]["message"] = {"a": 1}
        else:
            doc["models"][0]["warnings"] = [{"text": "x"}]
        text = json.dumps(doc)
    base = tmp_path / "prev.json"
    base.write_text(text, encoding="utf-8")
    out = run_inprocess(capsys, ["check", str(model), "--baseline", str(base), "--no-config", "--jobs", "1"],
                        [model, base])
    _one_line(out, str(base), where)
    assert out.stdout == ""


@pytest.mark.parametrize(("token", "where"), [
    ("NaN", "NaN is not a JSON number"),
    ("Infinity", "Infinity is not a JSON number"),
    ("-Infinity", "-Infinity is not a JSON number"),
    ("duplicate", "the name 'results' is given twice"),
])
def test_a_baseline_python_reads_but_json_forbids_is_one_line(capsys, tmp_path, token, where):
    # RFC 8259 section 6: NaN and Infinity are no JSON numbers; its section 4: names within an
    # object should be unique (a reader keeping the last would silently drop the earlier results)
    model, _ = _model(tmp_path)
    report = tmp_path / "base.json"
    run_inprocess(capsys, ["check", str(model), "--format", "json", "--output", str(report), "--no-config",
                           "--jobs", "1"], [model])
    doc = json.loads(report.read_text(encoding="utf-8"))
    assert doc["results"]
    doc["results"][0]["ratio"] = "TOKEN"
    text = json.dumps(doc)
    if token == "duplicate":
        text = text[:-1] + ', "results": []}'
    else:
        text = text.replace('"TOKEN"', token, 1)
    base = tmp_path / "prev.json"
    base.write_text(text, encoding="utf-8")
    out = run_inprocess(capsys, ["check", str(model), "--baseline", str(base), "--no-config", "--jobs", "1",
                                 "--format", "json"], [model, base])
    _one_line(out, str(base), where)
    assert out.stdout == ""


# ------------------------------------------------------------------ 4. rule files
def test_message_formats_and_the_number_of_checks_are_bounded(capsys, tmp_path):
    model, _ = _model(tmp_path)
    head = '[ruleset]\nname = "x"\nbasis = "test"\nunits = "SI"\n\n'
    check = '[[check]]\nid = "c{i}"\ndemand = "P / A"\ncapacity = "Fy"\n'
    cases = {
        "wide.toml": (head + check.format(i=1) + 'message = "{demand:99999999}"\n', ":10:", "at most 40 wide"),
        "precise.toml": (head + check.format(i=1) + 'message = "{demand:.999999f}"\n', ":10:", "at most 17 digits"),
        "many.toml": (head + "\n".join(check.format(i=i) for i in range(600)), ":2506:", "more than 500"),
    }
    for name, (text, where, fragment) in cases.items():
        rules = tmp_path / name
        rules.write_text(text, encoding="utf-8")
        start = time.monotonic()
        out = run_inprocess(capsys, ["check", str(model), "--rules", str(rules), "--no-config", "--jobs", "1"],
                            [model, rules])
        assert time.monotonic() - start < 60
        line = _one_line(out, f"{rules}{where}", fragment)
        assert len(line) < 400
    ok = tmp_path / "ok.toml"
    ok.write_text(head + check.format(i=1) + 'message = "{demand:>12.3f}, {ratio:.2%}"\n', encoding="utf-8")
    out = run_inprocess(capsys, ["check", str(model), "--rules", str(ok), "--no-config", "--jobs", "1"], [model, ok])
    assert out.code in (0, 1) and not out.errors


# ------------------------------------------------------------------ 5. faults
def test_a_number_that_overflows_once_converted_is_refused_where_it_is_read(capsys, tmp_path):
    model, _ = _model(tmp_path)
    for text, row in (("tag,axial_force [kip]\nH1,1\nH2,1e308\n", "row 3"),
                      ("tag,axial_force\nH1,1e306 kip\n", "row 2")):
        table = tmp_path / "forces.csv"
        table.write_text(text, encoding="utf-8")
        out = run_inprocess(capsys, ["check", str(model), "--loads", str(table), "--no-config", "--jobs", "1"],
                            [model, table])
        _one_line(out, f"{table}:{row}", "overflows")
    out = run_inprocess(capsys, ["size", "--force", "1e308 kip"])
    _one_line(out, "--force", "overflows")
    # a rule set's parameter and literal: 1 mi = 1609.344 m (pint; international mile, by definition)
    head = '[ruleset]\nname = "x"\nbasis = "test"\nunits = "SI"\n\n'
    for text, line in ((head + '[parameters]\nbig = "1e308 mi"\n\n[[check]]\nid = "c1"\ndemand = "L"\n'
                        'capacity = "big"\n', ":7:"),
                       (head + '[[check]]\nid = "c1"\ndemand = "L"\ncapacity = "1e308 [mi]"\n', ":9:")):
        rules = tmp_path / "big.toml"
        rules.write_text(text, encoding="utf-8")
        out = run_inprocess(capsys, ["check", str(model), "--rules", str(rules), "--no-config", "--jobs", "1"],
                            [model, rules])
        _one_line(out, f"{rules}{line}", "overflows")


def test_no_numpy_warning_reaches_the_user_and_nothing_unverified_passes(tmp_path):
    """A force of 1e305 N is finite, its stress on a 20 mm rod (1e305 / 3.1e-4 m²) is not: numpy
    would warn of an overflow. The member must not pass, and standard error must stay silent."""
    model, ids = _model(tmp_path)
    table = tmp_path / "forces.csv"
    table.write_text(f"global_id,axial_force [N]\n{ids['H1']},1e305\n", encoding="utf-8")
    folder = tmp_path / "reports"
    out = run_process(["check", str(model), "--loads", str(table), "--format", "json,csv,junit,html,bcf",
                       "--output", str(folder), "--no-config", "--jobs", "1"], [model, table], timeout=120)
    assert "Warning" not in out.stderr and out.lines == [], out.stderr
    doc = json.loads((folder / "modelcheck-report.json").read_text(encoding="utf-8"))
    h1 = [r for r in doc["results"] if r["global_id"] == ids["H1"] and r["load_case"] == "default"]
    assert h1 and all(r["status"] != "pass" for r in h1 if r["check"] != "slenderness-tension")


@pytest.mark.skipif(not Path("/dev/full").exists(), reason="needs /dev/full")
@pytest.mark.parametrize("fmt", ["json", "csv", "junit", "html"])
def test_an_output_that_cannot_be_written_names_the_file(capsys, tmp_path, fmt):
    model, _ = _model(tmp_path)
    out = run_inprocess(capsys, ["check", str(model), "--format", fmt, "--output", "/dev/full", "--no-config",
                                 "--jobs", "1"], [model])
    _one_line(out, "/dev/full", "cannot be written")


@pytest.mark.skipif(not Path("/dev/full").exists(), reason="needs /dev/full")
def test_a_report_on_a_full_standard_output_is_one_line(tmp_path):
    model, _ = _model(tmp_path)
    with open("/dev/full", "w") as full:
        r = run_modelcheck("check", str(model), "--no-config", "--jobs", "1", stdout=full, stderr=subprocess.PIPE,
                           timeout=120)
    lines = [ln for ln in r.stderr.splitlines() if ln.strip()]
    assert r.returncode == 2 and lines == ["modelcheck: error: standard output: cannot be written: "
                                           "No space left on device"], r.stderr


def _batch(tmp_path: Path) -> tuple[list[Path], dict[str, str]]:
    paths, ids = [], {}
    for name in ("a.ifc", "b.ifc", "c.ifc"):
        path, these = _model(tmp_path, file_name=name)
        paths.append(path)
        ids.update({f"{name}:{k}": v for k, v in these.items()})
    return paths, ids


@pytest.mark.skipif(not hasattr(os, "fork"), reason="the killed process is forked from the test")
def test_a_batch_process_that_dies_makes_its_model_an_error_and_the_others_report(capsys, tmp_path, monkeypatch):
    import modelcheck.run.runner as runner

    paths, _ = _batch(tmp_path)
    real = runner.check_one

    def dies_on_b(path: str, *args: Any) -> Any:   # runs in the batch's process for that model
        if path.endswith("b.ifc"):
            os.kill(os.getpid(), signal.SIGKILL)
        return real(path, *args)

    monkeypatch.setattr(runner, "check_one", dies_on_b)
    out = run_inprocess(capsys, ["check", *map(str, paths), "--format", "json", "--no-config", "--jobs", "2"], paths)
    line = _one_line(out, str(paths[1]), "SIGKILL", "not checked")
    assert "BrokenProcessPool" not in line
    doc = out.json()
    assert [m["error"] is None for m in doc["models"]] == [True, False, True]
    assert {r["model"] for r in doc["results"]} == {str(paths[0]), str(paths[2])}   # b: no result, so no pass
    assert doc["summary"]["errors"] == 1


_SLOW = textwrap.dedent("""
    import os, sys, time
    import modelcheck.run.runner as runner

    def slow(path, *args):
        with open(os.path.join(os.environ["PIDS"], str(os.getpid())), "w"):
            pass
        time.sleep(300)

    runner.check_one = slow
    sys.argv = ["modelcheck", *sys.argv[1:]]
    from modelcheck.cli import run
    run()
""")


def _alive(pid: int) -> bool:
    try:
        state = Path(f"/proc/{pid}/stat").read_text().rsplit(")", 1)[1].split()[0]
    except (FileNotFoundError, ProcessLookupError):
        return False
    return state != "Z"


@pytest.mark.skipif(not Path("/proc/self/stat").exists(), reason="reads /proc")
def test_sigterm_ends_the_batch_and_every_process_it_started(tmp_path):
    paths, _ = _batch(tmp_path)
    pids = tmp_path / "pids"
    pids.mkdir()
    proc = subprocess.Popen([sys.executable, "-c", _SLOW, "check", *map(str, paths), "--jobs", "2", "--no-config"],
                            stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True, cwd=REPO,
                            env={**os.environ, "PIDS": str(pids)})
    try:
        deadline = time.monotonic() + 60
        while len(list(pids.iterdir())) < 2 and time.monotonic() < deadline:
            time.sleep(0.1)
        workers = [int(p.name) for p in pids.iterdir()]
        assert len(workers) == 2 and all(_alive(w) for w in workers)
        proc.send_signal(signal.SIGTERM)
        _, err = proc.communicate(timeout=30)
    finally:
        if proc.poll() is None:
            proc.kill()
    assert proc.returncode == 128 + 15 and err.strip() == "modelcheck: terminated", err
    deadline = time.monotonic() + 10
    while any(_alive(w) for w in workers) and time.monotonic() < deadline:
        time.sleep(0.1)
    assert not any(_alive(w) for w in workers), "a batch process outlived the command"
