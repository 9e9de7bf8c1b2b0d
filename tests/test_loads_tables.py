"""Load tables (CSV/XLSX): unit forms, keys, load cases, row numbers and every error."""

from __future__ import annotations

import time
from pathlib import Path

import numpy as np
import openpyxl
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from modelcheck.common.errors import LoadTableError
from modelcheck.common.units import Q_, normalise_unit
from modelcheck.loads import tables
from modelcheck.loads.tables import LOAD_TABLE_COLUMNS, force_unit_factor, read_load_table
from tests.helpers import KIP_NIST, LBF_NIST

# NIST SP 811 (Appendix B): 1 lbf = 4.448 221 615 260 5 N, exact by definition (LBF_NIST)
# (0.453 592 37 kg × 9.806 65 m/s²); 1 kip = 1000 lbf (KIP_NIST).


def write(tmp_path: Path, text: str, name: str = "loads.csv", encoding: str = "utf-8") -> Path:
    p = tmp_path / name
    p.write_bytes(text.encode(encoding))
    return p


# ------------------------------------------------------------------ unit conversions
@pytest.mark.parametrize("unit, newtons", [
    ("N", 1.0),             # SI: the newton itself
    ("kN", 1000.0),         # SI prefix kilo = 10³ (SI Brochure)
    ("MN", 1.0e6),          # SI prefix mega = 10⁶ (SI Brochure)
    ("lbf", LBF_NIST),      # NIST SP 811, exact definition
    ("kip", KIP_NIST),      # NIST SP 811: kip = 1000 lbf
    ("KN", 1000.0),         # exporter spelling of kN (documented alias)
    ("KIPS", KIP_NIST),     # exporter spelling of kip (documented alias)
])
def test_force_unit_factor_against_pint_and_nist(unit: str, newtons: float) -> None:
    got = force_unit_factor(unit)
    assert got == pytest.approx(newtons, rel=1e-12)
    canonical = normalise_unit(unit)              # the one documented normaliser of unit spellings
    assert got == pytest.approx(Q_(1.0, canonical).to("N").magnitude, rel=1e-15)  # pint's own definition


@pytest.mark.parametrize("unit, fragment", [
    ("kN/m", "not a force"), ("m", "not a force"), ("lb", "lbf"), ("MPa", "not a force"),
    ("furlongs_per_xyz", "not a unit"), ("", "no unit"),
])
def test_force_unit_factor_refuses_non_forces(unit: str, fragment: str) -> None:
    with pytest.raises(tables.ForceUnitError, match=fragment):
        force_unit_factor(unit)


# ------------------------------------------------------------------ unit forms
def test_header_unit_kn(tmp_path: Path) -> None:
    p = write(tmp_path, "global_id,load_case,axial_force [kN]\nG1,LC1,12.5\nG1,LC2,-3\n")
    df = read_load_table(p).frame
    assert list(df.columns) == list(LOAD_TABLE_COLUMNS)
    # 12.5 kN = 12 500 N, -3 kN = -3000 N (SI prefix kilo)
    assert df["axial_force"].tolist() == pytest.approx([12500.0, -3000.0], rel=1e-12)
    assert df["load_case"].tolist() == ["LC1", "LC2"]
    assert df["key_kind"].tolist() == ["global_id", "global_id"]
    assert df["source"].tolist() == [f"{p}:row 2", f"{p}:row 3"]


def test_header_unit_in_parentheses_kip(tmp_path: Path) -> None:
    p = write(tmp_path, "tag,axial_force (kip)\nH1,2.5\n")
    df = read_load_table(p).frame
    assert df["axial_force"].iloc[0] == pytest.approx(2.5 * KIP_NIST, rel=1e-12)  # NIST SP 811
    assert df["load_case"].iloc[0] == "default"
    assert df["key_kind"].iloc[0] == "tag"


def test_units_in_each_value_mixed(tmp_path: Path) -> None:
    p = write(tmp_path, "tag,axial_force\nH1,12.5 kip\nH2,-3 kN\nH3,850 lbf\nH4,4.2e3 N\nH5,7kN\n")
    df = read_load_table(p).frame
    expected = [12.5 * KIP_NIST,      # NIST SP 811
                -3000.0,              # SI prefix kilo
                850 * LBF_NIST,       # NIST SP 811
                4200.0,               # newtons as written
                7000.0]               # SI prefix kilo, no space before the unit
    assert df["axial_force"].tolist() == pytest.approx(expected, rel=1e-12)
    pint_values = [Q_(12.5, "kip"), Q_(-3, "kN"), Q_(850, "lbf"), Q_(4.2e3, "N"), Q_(7, "kN")]
    assert df["axial_force"].tolist() == pytest.approx([q.to("N").magnitude for q in pint_values], rel=1e-15)  # pint


def test_each_distinct_unit_parsed_once(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    calls: list[str] = []
    real = tables.force_unit_factor

    def counting(text: str) -> float:
        calls.append(text)
        return real(text)

    monkeypatch.setattr(tables, "force_unit_factor", counting)
    body = "".join(f"H{i},{i} {('kN', 'kip', 'lbf')[i % 3]}\n" for i in range(300))
    df = read_load_table(write(tmp_path, "tag,axial_force\n" + body)).frame
    assert len(df) == 300
    assert sorted(calls) == ["kN", "kip", "lbf"]


def test_both_keys_global_id_wins_and_tag_fills_in(tmp_path: Path) -> None:
    p = write(tmp_path, "global_id,tag,axial_force [N]\nG1,H1,1\n,H2,2\n")
    df = read_load_table(p).frame
    assert df[["key_kind", "key"]].values.tolist() == [["global_id", "G1"], ["tag", "H2"]]


def test_header_names_are_flexible_and_other_columns_ignored(tmp_path: Path) -> None:
    p = write(tmp_path, "Member,Global ID,Load-Case,Axial Force [kN],Comment\nM1,G1,ULS,1,ok\n")
    df = read_load_table(p).frame
    assert df[["key", "load_case"]].values.tolist() == [["G1", "ULS"]]
    assert df["axial_force"].iloc[0] == pytest.approx(1000.0)  # SI prefix kilo


def test_title_lines_blank_rows_and_row_numbers(tmp_path: Path) -> None:
    text = ("Member forces export\n"           # row 1: title
            "\n"                               # row 2: blank
            "tag;load_case;axial_force [kN]\n"  # row 3: header (semicolon-separated)
            "H1;LC1;1.5\n"                     # row 4
            "\n"                               # row 5: blank, skipped
            "H2;LC1;-2\n")                     # row 6
    df = read_load_table(write(tmp_path, text)).frame
    assert df["source"].str.rsplit(":", n=1).str[1].tolist() == ["row 4", "row 6"]
    assert df["axial_force"].tolist() == pytest.approx([1500.0, -2000.0])  # SI prefix kilo


def test_quoted_fields_tab_separated_crlf(tmp_path: Path) -> None:
    df = read_load_table(write(tmp_path, 'tag\taxial_force\r\n"H 1"\t"5 kN"\r\n')).frame
    assert df["key"].tolist() == ["H 1"]
    assert df["axial_force"].tolist() == pytest.approx([5000.0])  # SI prefix kilo


def test_utf8_bom_and_utf16(tmp_path: Path) -> None:
    a = read_load_table(write(tmp_path, "\ufefftag,axial_force [kN]\nHä1,1\n", "bom.csv"))
    assert a.frame["key"].tolist() == ["Hä1"] and a.encoding == "utf-8"
    b = read_load_table(write(tmp_path, "tag,axial_force [kN]\nHä1,1\n", "u16.csv", encoding="utf-16"))
    assert b.frame["key"].tolist() == ["Hä1"] and b.encoding == "utf-16"


def test_cp1252_fallback_is_reported_as_the_encoding(tmp_path: Path) -> None:
    table = read_load_table(write(tmp_path, "tag,axial_force [kN]\nHé1,1\n", encoding="cp1252"))
    df = table.frame
    assert df["key"].tolist() == ["Hé1"]
    assert table.encoding == "cp1252" and not df.attrs   # a field of the table, not the frame's attrs


# ------------------------------------------------------------------ errors
@pytest.mark.parametrize("text, where, fragment", [
    ("tag,axial_force\nH1,1 kN\nH2,12\n", "row 3", "no unit"),                       # bare number
    ("tag,axial_force [kN/m]\nH1,1\n", "row 1", "not a force"),                      # header unit
    ("tag,axial_force\nH1,1 kN\nH2,5 psi\n", "row 3", "'psi' is not a force"),        # value unit
    ("tag,axial_force\nH1,5 lb\n", "row 2", "lbf"),                                   # mass, hinted
    ("tag,axial_force\nH1,5 bogons\n", "row 2", "not a unit"),
    ("tag,axial_force [kN]\nH1,1\nH2,\n", "row 3", "empty"),                           # empty value
    ("tag,axial_force [kN]\nH1,nan\n", "row 2", "not a finite number"),
    ("tag,axial_force [kN]\nH1,inf\n", "row 2", "not a finite number"),
    ("tag,axial_force\nH1,nan kN\n", "row 2", "not a finite number"),
    ("tag,axial_force [kN]\nH1,abc\n", "row 2", "not a number"),
    ("tag,axial_force [kN]\nH1,5 kip\n", "row 2", "header already gives the unit"),
    ("tag,axial_force [kN]\nH1,\"1,5\"\n", "row 2", "decimal comma"),
    ("tag,axial_force\nH1,\"1,5 kN\"\n", "row 2", "decimal comma"),
    ("global_id,tag,axial_force [kN]\nG1,,1\n,,2\n", "row 3", "no global_id or tag"),
    ("tag,load_case,axial_force [kN]\nH1,LC1,1\nH2,,2\n", "row 3", "load_case is empty"),
    ("tag,axial_force [kN]\n", "row 1", "no rows"),
    ("tag,force [kN]\nH1,1\n", "row 1", "axial_force"),                                # missing force col
    ("mark,axial_force [kN]\nH1,1\n", "row 1", "key column"),                          # missing key col
])
def test_errors_name_file_and_row(tmp_path: Path, text: str, where: str, fragment: str) -> None:
    p = write(tmp_path, text)
    with pytest.raises(LoadTableError, match=fragment) as exc:
        read_load_table(p)
    assert str(exc.value).startswith(f"{p}:{where}:")


def test_error_counts_further_bad_rows(tmp_path: Path) -> None:
    p = write(tmp_path, "tag,axial_force\nH1,1\nH2,2\nH3,3\n")
    with pytest.raises(LoadTableError, match=r"row 2:.*\(2 more rows like this\)"):
        read_load_table(p)


@pytest.mark.parametrize("content, fragment", [
    (b"", "empty file"),
    (b"  \n\n", "empty file"),
    (b"tag,axial_force [kN]\nH1,1\x00\x00\x01\n", "binary"),
    (bytes(range(256)) * 4, "binary"),
    (b"tag,axial_force [kN]\nH\x81\x8d1,1\n", "neither UTF-8 nor Windows-1252"),
    (b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1" + b"\x00" * 100, "old binary Excel"),
    (b"tag,axial_force [kN]\nH1,1\x07\n", "binary"),
])
def test_bad_files(tmp_path: Path, content: bytes, fragment: str) -> None:
    p = tmp_path / "bad.csv"
    p.write_bytes(content)
    with pytest.raises(LoadTableError, match=fragment) as exc:
        read_load_table(p)
    assert str(exc.value).startswith(str(p))


def test_missing_file_and_folder(tmp_path: Path) -> None:
    with pytest.raises(LoadTableError, match="no such file"):
        read_load_table(tmp_path / "nope.csv")
    with pytest.raises(LoadTableError, match="folder"):
        read_load_table(tmp_path)


def test_fake_xlsx(tmp_path: Path) -> None:
    p = write(tmp_path, "tag,axial_force [kN]\nH1,1\n", "loads.xlsx")
    with pytest.raises(LoadTableError, match="not an Excel workbook"):
        read_load_table(p)


# ------------------------------------------------------------------ XLSX
def _xlsx(path: Path, sheets: dict[str, list[list[object]]]) -> Path:
    wb = openpyxl.Workbook()
    wb.remove(wb.active)
    for title, rows in sheets.items():
        ws = wb.create_sheet(title)
        for r in rows:
            ws.append(r)
    wb.save(path)
    return path


def test_xlsx_header_unit_numeric_cells(tmp_path: Path) -> None:
    p = _xlsx(tmp_path / "f.xlsx", {"Forces": [
        ["Analysis export"], [], ["tag", "load_case", "axial_force [kip]"],
        ["H1", 1, 2.5], [101, "LC2", -1]]})
    table = read_load_table(p)
    df = table.frame
    assert df["key"].tolist() == ["H1", "101"]           # a mark typed as a number stays "101"
    assert df["load_case"].tolist() == ["1", "LC2"]
    assert df["axial_force"].tolist() == pytest.approx([2.5 * KIP_NIST, -KIP_NIST], rel=1e-12)  # NIST SP 811
    assert df["source"].tolist() == [f"{p}:Forces:row 4", f"{p}:Forces:row 5"]
    assert table.encoding is None


def test_xlsx_units_in_cells_and_sheet_search(tmp_path: Path) -> None:
    p = _xlsx(tmp_path / "f.xlsx", {"Notes": [["nothing here"]],
                                     "Data": [["global_id", "axial_force"], ["G1", "3 kN"], ["G2", "10 lbf"]]})
    df = read_load_table(p).frame
    assert df["axial_force"].tolist() == pytest.approx([3000.0, 10 * LBF_NIST], rel=1e-12)  # SI; NIST SP 811
    assert df["source"].iloc[1] == f"{p}:Data:row 3"


def test_xlsx_errors_name_sheet_and_row(tmp_path: Path) -> None:
    p = _xlsx(tmp_path / "f.xlsx", {"S": [["tag", "axial_force"], ["H1", "1 kN"], ["H2", 7.0]]})
    with pytest.raises(LoadTableError, match="no unit") as exc:
        read_load_table(p)
    assert str(exc.value).startswith(f"{p}:S:row 3:")
    q = _xlsx(tmp_path / "g.xlsx", {"S": [["tag", "axial_force [kN]"], ["H1", "=1+2"]]})
    with pytest.raises(LoadTableError, match="empty") as exc:  # a formula never calculated: no value saved
        read_load_table(q)
    assert str(exc.value).startswith(f"{q}:S:row 2:")
    r = _xlsx(tmp_path / "h.xlsx", {"S": [["a", "b"], [1, 2]]})
    with pytest.raises(LoadTableError, match="no sheet has a header"):
        read_load_table(r)


# ------------------------------------------------------------------ speed
def test_hundred_thousand_rows_with_header_unit_parse_fast(tmp_path: Path) -> None:
    n = 100_000
    rng = np.random.default_rng(1)
    values = rng.uniform(-500, 500, n)
    body = "\n".join(f"G{i:08d},LC{i % 4},{v:.4f}" for i, v in enumerate(values))
    p = write(tmp_path, "global_id,load_case,axial_force [kN]\n" + body + "\n")
    t0 = time.perf_counter()
    df = read_load_table(p).frame
    elapsed = time.perf_counter() - t0
    assert len(df) == n
    assert df["axial_force"].to_numpy() == pytest.approx(np.round(values, 4) * 1000.0, rel=1e-12)  # SI kilo
    assert elapsed < 5.0, f"{elapsed:.2f} s"  # a per-row unit parse takes tens of seconds; the limit leaves room for a loaded machine


@settings(max_examples=300, deadline=None)
@given(st.lists(st.text(alphabet=st.characters(exclude_characters="\x00"), max_size=6), min_size=1, max_size=8))
def test_the_padding_search_agrees_with_str_strip(texts: list[str]) -> None:
    # reference: Python's own str.strip (the white space it removes is what the search looks for)
    assert tables._padded(pd.Series(texts, dtype=object)) == any(t != t.strip() for t in texts)


@settings(max_examples=200, deadline=None)
@given(st.lists(st.text(max_size=6), min_size=1, max_size=8))
def test_a_nul_never_hides_padding(texts: list[str]) -> None:
    # with NUL inside a text the search may say "padded" for nothing, never miss padding (str.strip)
    if any(t != t.strip() for t in texts):
        assert tables._padded(pd.Series(texts, dtype=object))


def test_cells_with_spaces_around_them_are_read_stripped(tmp_path: Path) -> None:
    # common practice: spreadsheet exports pad cells; the key, case and force are read without it
    p = tmp_path / "padded.csv"
    p.write_text("global_id , load_case, axial_force [kN]\n G1 ,  LC1 , 12.5 \nG2,LC2,3\n", encoding="utf-8")
    t = read_load_table(p).frame
    assert list(t["key"]) == ["G1", "G2"] and list(t["load_case"]) == ["LC1", "LC2"]
    assert list(t["axial_force"]) == [12500.0, 3000.0]   # kN -> N (pint: 1 kN = 1000 N)
