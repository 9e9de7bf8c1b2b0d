"""Robustness corpus, load tables: through ``read_load_table`` and through the CLI (``--loads``).

A table that cannot be read is one line on stderr naming the file and the row (or line), exit code
2, and the CLI's line is exactly the function's error. A table that reads but does not fit the
model (unknown ids, several rows for one member) is checked anyway and every such row is named
with its file and row. Encodings other than UTF-8 are read where they can be told apart, and
said so. No traceback, no hang, the table and the model byte-for-byte unchanged.
"""

from __future__ import annotations

import datetime as dt
import io
import zipfile
from pathlib import Path
from typing import Any

import pytest

from modelcheck.common.errors import LoadTableError
from modelcheck.loads.tables import read_load_table
from tests.corpus import good_builder, member_ids, profile_position, run_inprocess, run_process, write_model


def _zip(members: dict[str, bytes]) -> bytes:
    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w") as z:
        for name, data in members.items():
            z.writestr(name, data)
    return buf.getvalue()


#: file name -> (content, where the error must point: 'row N' / 'line N' / None = the file, fragment)
BAD_TABLES: dict[str, tuple[bytes, str | None, str]] = {
    # no units
    "no-unit.csv": (b"tag,axial_force\nH1,12\nH2,3\n", "row 2", "no unit"),
    "empty-unit-brackets.csv": (b"tag,axial_force []\nH1,3\n", "row 1", "no unit"),
    # units that are not forces
    "header-kn-per-m.csv": (b"tag,axial_force [kN/m]\nH1,1\n", "row 1", "not a force"),
    "header-kg.csv": (b"tag,axial_force [kg]\nH1,1\n", "row 1", "lbf"),
    "cell-psi.csv": (b"tag,axial_force\nH1,1 kN\nH2,5 psi\n", "row 3", "not a force"),
    "cell-metre.csv": (b"tag,axial_force\nH1,3 m\n", "row 2", "not a force"),
    "header-unknown-unit.csv": (b"tag,axial_force [bogons]\nH1,3\n", "row 1", "not a unit"),
    # not finite numbers
    "nan.csv": (b"tag,axial_force [kN]\nH1,NaN\n", "row 2", "not a finite number"),
    "nan-with-unit.csv": (b"tag,axial_force\nH1,nan kN\n", "row 2", "not a finite number"),
    "minus-inf.csv": (b"tag,axial_force [kN]\nH1,4\nH2,-inf\n", "row 3", "not a finite number"),
    "overflow.csv": (b"tag,axial_force [kN]\nH1,1e400\n", "row 2", "not a finite number"),
    # empty
    "empty.csv": (b"", None, "empty file"),
    "blank.csv": (b"  \n\t\r\n", None, "empty file"),
    "header-only.csv": (b"tag,axial_force [kN]\n", "row 1", "no rows"),
    "commas-only.csv": (b",,,\n,,,\n", None, "no rows with values"),
    "empty-cell.csv": (b"tag,axial_force [kN]\nH1,\n", "row 2", "empty"),
    # binary junk
    "binary.csv": (bytes(range(256)) * 8, "line 1", "binary"),
    "png.csv": (b"\x89PNG\r\n\x1a\n" + bytes(range(256)), "line", "binary"),
    "zip.csv": (_zip({"a.txt": b"x"}), None, "zip archive"),
    "zip.xlsx": (_zip({"a.txt": b"x"}), None, "Excel workbook"),
    "text.xlsx": (b"tag,axial_force [kN]\nH1,1\n", None, "not an Excel workbook"),
    "old-excel.xls": (b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1" + bytes(200), None, "old binary Excel"),
    # encodings that cannot be told apart from junk
    "utf16-no-bom.csv": ("tag,axial_force [kN]\nH1,12\n".encode("utf-16-le"), "line 1", "UTF-16"),
    "undecodable.csv": (b"tag,axial_force [kN]\nH\x81\x8d1,1\n", "line 2", "neither UTF-8 nor Windows-1252"),
    # keys
    "no-key-in-row.csv": (b"global_id,tag,axial_force [kN]\nG1,,1\n,,2\n", "row 3", "no global_id or tag"),
    "no-key-column.csv": (b"mark,axial_force [kN]\nH1,1\n", "row 1", "key column"),
    "two-tag-columns.csv": (b"tag,tag,axial_force [kN]\nH1,H2,3\n", "row 1", "keep one"),
    "two-force-columns.csv": (b"tag,axial_force [kN],axial_force [kip]\nH1,1,2\n", "row 1", "keep one"),
    # a value beyond the header: a decimal comma or an unquoted list would lose its tail
    "decimal-comma.csv": (b"tag,axial_force [kN]\nH1,12\nH2,1,5\n", "row 3", "beyond the header"),
    "extra-cells.csv": (b"tag,load_case,axial_force [kN]\nH1,LC1,18,5\n", "row 2", "beyond the header"),
    "unclosed-quote.csv": (b'tag,axial_force [kN]\nH1,"12\nH2,5\n', "line 2", "not closed"),
}


@pytest.fixture(scope="module")
def model(tmp_path_factory: Any) -> tuple[Path, dict[str, str]]:
    """good_builder's H1, H2 and 'Hé1' (a tag beyond ASCII), a 16 mm rod without a force of its own."""
    mb = good_builder()
    steel = mb.f.by_type("IfcMaterial")[0]
    rod = mb.f.createIfcCircleProfileDef("AREA", "RD16", profile_position(mb), 8.0)
    mb.member("IfcMember", name="Hé1", tag="Hé1", profile=rod, material=steel, length=1200.0,
              predefined_type="MEMBER")
    path = write_model(mb, tmp_path_factory.mktemp("loads") / "hangers.ifc")
    return path, member_ids(mb)


def _table(tmp_path: Path, name: str, data: bytes) -> Path:
    p = tmp_path / name
    p.write_bytes(data)
    return p


@pytest.mark.parametrize("name", list(BAD_TABLES))
def test_a_bad_table_is_one_line_naming_file_and_row_through_function_and_cli(capsys, model, tmp_path, name):
    data, where, fragment = BAD_TABLES[name]
    table = _table(tmp_path, name, data)
    with pytest.raises(LoadTableError) as info:
        read_load_table(table)
    message = str(info.value)
    prefix = f"{table}:{where}" if where else f"{table}:"
    assert message.startswith(prefix), message
    assert fragment in message, message
    model_path, _ = model
    for command in (["check", str(model_path), "--jobs", "1", "--no-config", "--format", "json"],
                    # one model, two processes: the table is read by a helper while the model opens
                    ["check", str(model_path), "--jobs", "2", "--no-config", "--format", "json"],
                    ["members", str(model_path), "--format", "json"]):
        out = run_inprocess(capsys, [*command, "--loads", str(table)], inputs=[table, model_path])
        assert out.code == 2
        assert out.lines == [f"modelcheck: error: {message}"], out.stderr
        assert out.stdout == ""   # nothing is checked against half a table


def test_a_bad_table_in_a_fresh_process(model, tmp_path):
    model_path, _ = model
    table = _table(tmp_path, "binary.csv", BAD_TABLES["binary.csv"][0])
    out = run_process(["check", str(model_path), "--loads", str(table), "--jobs", "1", "--no-config"],
                      inputs=[table, model_path], timeout=120)
    assert out.code == 2 and out.lines == out.errors and len(out.lines) == 1
    assert f"{table}:line 1:" in out.lines[0]


def _members(capsys: Any, model_path: Path, *tables: Path) -> tuple[Any, dict[str, Any], dict[str, Any]]:
    args = ["members", str(model_path), "--format", "json"] + [a for t in tables for a in ("--loads", str(t))]
    out = run_inprocess(capsys, args, inputs=[model_path, *tables])
    assert out.code == 0 and out.lines == [], out.stderr
    doc = out.json()
    return out, doc, {m["name"]: m for m in doc["models"][0]["members"]}


def test_unknown_ids_are_listed_with_file_and_row_and_the_rest_is_used(capsys, model, tmp_path):
    model_path, ids = model
    table = _table(tmp_path, "unknown.csv", (
        "global_id,tag,axial_force [kN]\n"
        f"{ids['H1']},,12\n"
        ",HX-99,4\n"
        "0000000000000000000000,,5\n"
        ",h1,6\n").encode())   # tags are matched as written: 'h1' is not 'H1'
    _, doc, members = _members(capsys, model_path, table)
    assert {(r["key"], r["source"]) for r in doc["unmatched_force_rows"]} == {
        ("HX-99", f"{table}:row 3"), ("0000000000000000000000", f"{table}:row 4"), ("h1", f"{table}:row 5")}
    force = members["H1"]["axial_force"]["default"]
    assert force["source"] == f"{table}:row 2"
    assert force["value"] == pytest.approx(12.0) and force["unit"] == "kN"  # the table's own value (input)
    # the console says the same on one line per table
    out = run_inprocess(capsys, ["members", str(model_path), "--loads", str(table)], inputs=[model_path, table])
    text = " ".join(out.stdout.split())   # a long warning wraps at word boundaries: read as one line
    line = text[text.index(f"{table}: 3 row(s) match no member"):][:400]
    assert "row 3" in line and "row 5" in line
    # and a check run reports them without failing on them
    out = run_inprocess(capsys, ["check", str(model_path), "--loads", str(table), "--jobs", "1", "--no-config",
                                 "--format", "json"], inputs=[model_path, table])
    assert out.code in (0, 1) and out.lines == []
    assert len(out.json()["unmatched_force_rows"]) == 3


def test_several_rows_for_one_member_name_every_row(capsys, model, tmp_path):
    model_path, ids = model
    table = _table(tmp_path, "duplicates.csv", (
        "global_id,tag,load_case,axial_force [kN]\n"
        ",H1,LC1,12\n"
        ",H1,LC1,13\n"
        f"{ids['H1']},,LC1,14\n"       # the same member by GlobalId
        ",H1,LC2,15\n").encode())       # another load case: not a duplicate
    _, doc, members = _members(capsys, model_path, table)
    warning = next(w for w in doc["models"][0]["warnings"] if "several force rows" in w)
    assert ids["H1"] in warning and "[LC1]" in warning
    for row in (2, 3, 4):
        assert f"{table}:row {row}" in warning
    used = members["H1"]["axial_force"]
    assert used["LC2"]["value"] == pytest.approx(15.0)                 # the table's own value (input)
    assert used["LC1"]["source"] in {f"{table}:row {n}" for n in (2, 3, 4)}
    assert f"{used['LC1']['source']} used" in warning


#: encoding -> bytes of the same table; every one must give 'Hé1' its 7.5 kN
ENCODED = {
    "utf-8": "tag,axial_force [kN],note\nHé1,7.5,été – 20 °C\n".encode(),
    "utf-8-sig": "tag,axial_force [kN],note\nHé1,7.5,été – 20 °C\n".encode("utf-8-sig"),
    "utf-16": "tag,axial_force [kN],note\nHé1,7.5,été – 20 °C\n".encode("utf-16"),        # with a BOM
    "utf-16-be-bom": b"\xfe\xff" + "tag,axial_force [kN],note\nHé1,7.5,été – 20 °C\n".encode("utf-16-be"),
    "cp1252": "tag,axial_force [kN],note\nHé1,7.5,été – 20 °C\n".encode("cp1252"),
    "latin-1": "tag,axial_force [kN],note\nHé1,7.5,été ÿ 20 °C\n".encode("latin-1"),
}


@pytest.mark.parametrize("encoding", list(ENCODED))
def test_encodings_are_read_and_a_guess_is_said(capsys, model, tmp_path, encoding):
    model_path, _ = model
    table = _table(tmp_path, f"{encoding}.csv", ENCODED[encoding])
    read = read_load_table(table)
    df = read.frame
    assert df["key"].tolist() == ["Hé1"]
    _, doc, members = _members(capsys, model_path, table)
    force = members["Hé1"]["axial_force"]["default"]
    assert force["value"] == pytest.approx(7.5) and force["source"] == f"{table}:row 2"  # the input's value
    guessed = [w for w in doc["models"][0]["warnings"] if "Windows-1252" in w]
    if encoding in ("cp1252", "latin-1"):   # not UTF-8: read as Windows-1252, and the report says so
        assert read.encoding == "cp1252" and guessed and str(table) in guessed[0]
    else:
        assert not guessed


@pytest.mark.parametrize(("cell", "shown"), [(True, "True"), (dt.datetime(2024, 1, 1), "datetime"),
                                             (dt.time(12, 0), "time")])
def test_a_spreadsheet_cell_of_truth_value_or_date_is_not_a_force(tmp_path, cell, shown):
    """Excel stores TRUE as 1 and a date as a day count: neither is a force (common practice)."""
    import openpyxl

    wb = openpyxl.Workbook()
    ws = wb.active
    ws.append(["tag", "axial_force [kN]"])
    ws.append(["H1", 12])
    ws.append(["H2", cell])
    path = tmp_path / "typed.xlsx"
    wb.save(path)
    with pytest.raises(LoadTableError) as info:
        read_load_table(path)
    message = str(info.value)
    assert message.startswith(f"{path}:Sheet:row 3: axial_force ") and shown in message, message
    assert "not a force" in message


def test_formulas_whose_results_were_never_stored_are_one_line(capsys, model, tmp_path):
    """A workbook written by a program that does not calculate (openpyxl stores a formula without
    its result): a row whose tag and force are both such formulas reads as blank and would be
    skipped without a word, the model's own force used in its place. It is an error naming the
    sheet, the row and the cell; a stored empty text (<v></v>) and a calculated formula are read."""
    import openpyxl

    model_path, _ = model
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.append(["tag", "axial_force [kN]", "note"])
    ws.append(["H1", 12, "plain"])
    ws.append(['="H"&"2"', "=2*30", None])
    path = tmp_path / "computed.xlsx"
    wb.save(path)
    out = run_inprocess(capsys, ["check", str(model_path), "--loads", str(path), "--jobs", "1", "--no-config",
                                 "--format", "json"], inputs=[path, model_path])
    assert out.code == 2 and out.stdout == ""
    assert out.lines == [f"modelcheck: error: {path}:Sheet:row 3: cell A3 holds a formula whose result was never "
                         "stored, so it reads as empty; open and save the workbook in a spreadsheet program "
                         "(which calculates it), or write the value itself"], out.stderr
    # the same sheet as a spreadsheet program saves it: every formula with its result
    stored = tmp_path / "stored.xlsx"
    with zipfile.ZipFile(path) as src, zipfile.ZipFile(stored, "w") as dst:
        for info in src.infolist():
            data = src.read(info)
            if info.filename == "xl/worksheets/sheet1.xml":
                text = data.decode("utf-8")
                text = text.replace('<c r="A3"><f>"H"&amp;"2"</f><v /></c>',
                                    '<c r="A3" t="str"><f>"H"&amp;"2"</f><v>H2</v></c>')
                text = text.replace("<f>2*30</f><v /></c>", '<f>2*30</f><v>60</v></c><c r="C3" t="str">'
                                    '<f>""</f><v></v></c>')
                assert "<v>H2</v>" in text and "<v>60</v>" in text, text
                data = text.encode("utf-8")
            dst.writestr(info, data)
    df = read_load_table(stored).frame
    assert df.set_index("key")["axial_force"].to_dict() == {"H1": 12_000.0, "H2": 60_000.0}   # kN → N
