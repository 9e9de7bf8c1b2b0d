"""Read a load table (CSV or XLSX) of member axial forces into a long, SI table.

A load table is what an analysis program exports: one row per member and load case.

Columns (header names are matched ignoring case, spaces, ``_`` and ``-``; other columns are
ignored):

========================  ==========================================================
``global_id``             the member's IFC GlobalId                    } at least one
``tag``                   the member's mark (IfcElement.Tag)           } of the two
``axial_force``           the axial force, **tension positive, compression negative**
``load_case``             optional; without the column every row is load case ``default``
========================  ==========================================================

A row that fills both ``global_id`` and ``tag`` is keyed by its GlobalId.

Units are never assumed. Either the header states one for the whole column —
``axial_force [kN]`` or ``axial_force (kip)`` — and the cells hold plain numbers, or the header
states none and every cell carries its own: ``12.5 kip``, ``-3 kN``, ``850 lbf``, ``4.2e3 N``.
Any pint force unit is accepted (N, kN, MN, daN, lbf, kip, kgf …); the upper-case spellings
``KN``, ``KIP``, ``KIPS`` and ``LBF`` that some exporters write are read as kN, kip, kip and
lbf. Numbers use a decimal point; a decimal comma is refused (``1,250`` is ambiguous).

The header is the first row (within the first 20) that names a key column and ``axial_force``;
title lines above it are skipped. Empty rows are skipped. Everything else that is wrong — a bare
number with no unit anywhere, a unit that is not a force, an empty or non-finite force, a row
without a key, an empty file, a binary file, an undecodable text file, a missing column — raises
:class:`~modelcheck.common.errors.LoadTableError` naming the file and the row as a spreadsheet shows it
(the header row of a plain table is row 1).

Text encodings: UTF-8 (with or without a byte-order mark) and UTF-16 with a byte-order mark are
read as such; a file that is not valid UTF-8 is read as Windows-1252 (what spreadsheet programs
on Windows save as "CSV"), and the table's ``encoding`` says so. A file that is neither
raises an error naming the line with the first bad byte.

Example::

    forces = read_load_table("exports/hangers.csv").frame
    forces.columns  # key_kind, key, load_case, axial_force [N], source ("exports/hangers.csv:row 2")
"""

from __future__ import annotations

import csv
import datetime as _dt
import io
import math
import os
import re
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd

from modelcheck.common.errors import LoadTableError
from modelcheck.common.files import input_file
from modelcheck.common.table import frame_of
from modelcheck.common.units import VALUE_PATTERN, QuantityTextError, parse_number, unit_factor

#: columns of the table ``read_load_table`` returns
LOAD_TABLE_COLUMNS: tuple[str, ...] = ("key_kind", "key", "load_case", "axial_force", "source")

#: load case given to every row of a table that has no ``load_case`` column
DEFAULT_LOAD_CASE = "default"


_CANONICAL = {"globalid": "global_id", "tag": "tag", "axialforce": "axial_force", "loadcase": "load_case"}
_HEADER_SEARCH_ROWS = 20
_HEADER_RE = re.compile(r"^\s*(?P<name>[^\[\(]*?)\s*(?:\[(?P<u1>[^\]]*)\]|\((?P<u2>[^\)]*)\))?\s*$")
#: a number and the unit after it, as a cell or a property's text gives them (modelcheck.common.units)
VALUE_RE = VALUE_PATTERN
_CONTROL_RE = re.compile(r"[\x00-\x08\x0b\x0c\x0e-\x1f]")
_OLE_MAGIC = b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1"

#: bytes of a load table: a CSV file's size, or the uncompressed size a workbook's zip declares
#: for all its parts together (checked before anything is read or inflated)
MAX_TABLE_BYTES = 512 * 1024 * 1024
#: rows of a load table (a sheet's rows, blank ones included)
MAX_TABLE_ROWS = 5_000_000
#: cells of a workbook's sheet as read (rows × the sheet's width: a cell far to the right widens
#: every row)
MAX_TABLE_CELLS = 40_000_000
#: parts (files) in a workbook's zip archive
MAX_WORKBOOK_PARTS = 10_000
_ZIP_MAGIC = b"PK\x03\x04"


class ForceUnitError(ValueError):
    """A unit string that is not a force (the message says why)."""


def force_unit_factor(text: str) -> float:
    """Newtons in one ``text`` unit ('kN' -> 1000.0); raises ForceUnitError if not a force.

    >>> force_unit_factor("kip")
    4448.221615260501
    """
    t = text.strip()
    if not t:
        raise ForceUnitError("no unit")
    try:   # the project's one unit reader: 'KN', 'KIP' and the trade's spellings too
        return unit_factor(t, "force")
    except QuantityTextError as exc:
        text_ = str(exc)
        raise ForceUnitError(text_ if text_.startswith("unit ") else f"unit {text_}") from None


@dataclass(frozen=True)
class LoadTable:
    """One load table read into SI: its rows and the text encoding they were read in."""

    #: columns ``key_kind`` ('global_id' | 'tag'), ``key``, ``load_case``, ``axial_force``
    #: (newtons, tension positive) and ``source`` ('<path>:row N', for XLSX '<path>:<sheet>:row N'),
    #: in file order
    frame: pd.DataFrame
    #: "utf-8", "utf-16" or "cp1252" (a file that is not UTF-8, read as Windows-1252); None for XLSX
    encoding: str | None = None


@dataclass(frozen=True)
class _Header:
    row: int                      # 0-based index of the header record
    cols: dict[str, int]          # canonical name -> column index
    force_unit: str | None        # unit text in the force column's header, if any
    force_label: str              # the force column's header as written


def read_load_table(path: str | os.PathLike[str]) -> LoadTable:
    """Read one CSV or XLSX load table (see the module docstring) into SI (:class:`LoadTable`)."""
    name = str(path)
    p = input_file(path, LoadTableError, "a load table")
    size = p.stat().st_size
    if size > MAX_TABLE_BYTES:
        raise LoadTableError(f"is {_mib(size)}, more than a load table may be ({_mib(MAX_TABLE_BYTES)}); "
                             "split it into several tables", path=name)
    try:
        data = p.read_bytes()
    except OSError as exc:
        raise LoadTableError(f"cannot be read: {exc.strerror or exc}", path=name) from None
    if not data.strip():
        raise LoadTableError("empty file, not a load table", path=name)
    if data.startswith(_ZIP_MAGIC):
        if p.suffix.lower() not in (".xlsx", ".xlsm"):
            raise LoadTableError("is a zip archive, not CSV text (name an Excel workbook .xlsx)", path=name)
        return _read_xlsx(p, name)
    if data.startswith(_OLE_MAGIC):
        raise LoadTableError("is an old binary Excel (.xls) file; save it as .xlsx or .csv", path=name)
    if p.suffix.lower() in (".xlsx", ".xlsm"):
        raise LoadTableError("is named .xlsx but is not an Excel workbook (no zip archive inside)", path=name)
    text, encoding = _decode(data, name)
    bad = _CONTROL_RE.search(text)
    if bad is not None:
        line = text.count("\n", 0, bad.start()) + 1
        raise LoadTableError(f"holds binary data (control character {bad.group()!r}), not a CSV table",
                             path=name, where=f"line {line}")
    records = _csv_records(text, name)
    if len(records) > MAX_TABLE_ROWS:
        raise LoadTableError(f"has more than {MAX_TABLE_ROWS:,} rows; split it into several tables", path=name,
                             where=f"row {MAX_TABLE_ROWS + 1}")
    return LoadTable(_parse(records, name, None, all_text=True), encoding)


def _decode(data: bytes, name: str) -> tuple[str, str]:
    if data.startswith((b"\xff\xfe", b"\xfe\xff")):
        try:
            return data.decode("utf-16"), "utf-16"
        except UnicodeDecodeError as exc:
            raise LoadTableError(f"is not valid UTF-16 ({exc.reason})", path=name) from None
    if b"\x00" in data:
        head = data[:400]
        if len(head) >= 8 and (head[1::2].count(0) == len(head[1::2]) or head[0::2].count(0) == len(head[0::2])):
            raise LoadTableError("looks like UTF-16 text without a byte-order mark; save it as UTF-8 "
                                 "(or as UTF-16 with one)", path=name, where="line 1")
        line = data.count(b"\n", 0, data.index(b"\x00")) + 1
        raise LoadTableError("holds binary data (NUL bytes), not a CSV table", path=name, where=f"line {line}")
    try:
        return data.decode("utf-8-sig"), "utf-8"
    except UnicodeDecodeError:
        pass
    try:
        return data.decode("cp1252"), "cp1252"
    except UnicodeDecodeError as exc:
        line = data.count(b"\n", 0, exc.start) + 1
        raise LoadTableError(
            f"is neither UTF-8 nor Windows-1252 text (byte 0x{data[exc.start]:02X}); save it as UTF-8 CSV",
            path=name, where=f"line {line}") from None


def _csv_records(text: str, name: str) -> list[list[str]]:
    # the delimiter is the one that splits a header out of the first rows (title lines may come
    # first); failing that, the one most frequent in the first non-empty line
    head = "\n".join(text.splitlines()[:_HEADER_SEARCH_ROWS])
    delimiter = ""
    for d in (",", ";", "\t"):
        if d in head and _find_header(list(csv.reader(io.StringIO(head, newline=""), delimiter=d))):
            delimiter = d
            break
    if not delimiter:
        first = next((ln for ln in text.splitlines() if ln.strip()), "")
        counts = {d: first.count(d) for d in (",", ";", "\t")}
        delimiter = max(counts, key=lambda d: counts[d]) if any(counts.values()) else ","
    reader = csv.reader(io.StringIO(text, newline=""), delimiter=delimiter)
    records: list[list[str]] = []
    line = 0
    try:
        if '"' not in text:   # without quotes no cell can span lines
            return list(reader)
        for rec in reader:
            if any("\n" in c or "\r" in c for c in rec):   # no key, case or force spans lines
                raise LoadTableError("a quote (\") opened on this line is not closed on it, so the lines after it "
                                     "were read as one cell; close or remove the quote", path=name,
                                     where=f"line {line + 1}")
            records.append(rec)
            line = reader.line_num
    except csv.Error as exc:
        raise LoadTableError(f"is not a readable CSV table: {exc}", path=name,
                             where=f"line {reader.line_num}") from None
    return records


def _mib(n: int) -> str:
    return f"{n / (1024 * 1024):,.0f} MiB" if n >= 1024 * 1024 else f"{n:,} bytes"


def _xml_part(head: bytes) -> bool:
    """Whether a part's first bytes are those of an XML text (a byte-order mark, or '<')."""
    return head.startswith((b"\xef\xbb\xbf", b"\xff\xfe", b"\xfe\xff")) or head.lstrip().startswith(b"<")


def check_workbook_archive(p: Path, name: str) -> None:
    """A workbook's zip archive judged before any part is read: its parts and the uncompressed
    size they declare (Python's zip reader never inflates a part beyond the size it declares: a
    part that holds more fails its check), then every XML part's prolog read with a hardened
    parser (defusedxml) that refuses a document type declaration, so no part can declare
    entities (nested entity expansion) or fetch anything from outside."""
    import zipfile
    import zlib
    from xml.etree.ElementTree import ParseError

    import defusedxml
    import defusedxml.ElementTree as safe_et

    try:
        with zipfile.ZipFile(p) as zf:
            infos = zf.infolist()
            if len(infos) > MAX_WORKBOOK_PARTS:
                raise LoadTableError(f"the workbook has {len(infos):,} parts, more than {MAX_WORKBOOK_PARTS:,}; "
                                     "not a load table", path=name)
            total = sum(i.file_size for i in infos)
            if total > MAX_TABLE_BYTES:
                raise LoadTableError(f"the workbook declares {_mib(total)} uncompressed, more than a load table "
                                     f"may be ({_mib(MAX_TABLE_BYTES)}); split it into several tables", path=name)
            for info in infos:
                if info.is_dir():
                    continue
                part = info.filename
                try:
                    with zf.open(info) as fh:
                        if not _xml_part(fh.read(64)):
                            continue
                    with zf.open(info) as fh:
                        for _ in safe_et.iterparse(fh, events=("start",), forbid_dtd=True):
                            break   # the root element is open: the prolog, where a DTD would be, is read
                except defusedxml.DefusedXmlException:
                    raise LoadTableError(f"part {part} holds a document type declaration (<!DOCTYPE>), which "
                                         "a workbook never needs; refused (entity expansion or outside "
                                         "references)", path=name) from None
                except ParseError as exc:
                    raise LoadTableError(f"part {part} is not well-formed XML ({exc})", path=name) from None
                except (zipfile.BadZipFile, zlib.error, EOFError, NotImplementedError, RuntimeError) as exc:
                    raise LoadTableError(f"part {part} cannot be read from the zip archive ({exc})",
                                         path=name) from None
    except (zipfile.BadZipFile, zlib.error, EOFError, OSError) as exc:
        raise LoadTableError(f"cannot be read as an Excel workbook: the zip archive is damaged or truncated "
                             f"({exc})", path=name) from None


def _workbook_error(exc: BaseException, name: str) -> LoadTableError:
    """One line for an error met while the workbook's parts are read."""
    from xml.etree.ElementTree import ParseError

    cause = exc.__cause__ or exc.__context__
    inner = cause if isinstance(exc, ValueError) and cause is not None else exc
    if isinstance(inner, IndexError):
        why = "a cell refers to a shared string the workbook does not hold (xl/sharedStrings.xml)"
    elif isinstance(inner, ParseError):
        why = f"a part is not well-formed XML ({inner})"
    elif isinstance(inner, KeyError):
        why = f"a part the workbook names is missing ({inner})"
    else:
        why = f"{type(inner).__name__}: {inner}"
    return LoadTableError(f"cannot be read as an Excel workbook: {why}", path=name)


def _read_xlsx(p: Path, name: str) -> LoadTable:
    import zipfile
    import zlib
    from xml.etree.ElementTree import ParseError

    import openpyxl
    from openpyxl.utils.exceptions import InvalidFileException

    check_workbook_archive(p, name)
    # what a damaged or hand-made workbook can raise from inside the reader (a shared-string index
    # out of range is an IndexError, a truncated part a zlib error or a parse error, ...)
    broken = (InvalidFileException, zipfile.BadZipFile, zlib.error, EOFError, ParseError, KeyError, IndexError,
              ValueError, TypeError, AttributeError, OverflowError, OSError)
    try:
        wb = openpyxl.load_workbook(p, read_only=True, data_only=True)
    except broken as exc:
        raise _workbook_error(exc, name) from None
    try:
        missing: list[str] = []
        for ws in wb.worksheets:
            sheet = ws.title
            try:
                records = _sheet_records(ws, name, sheet)
            except LoadTableError:
                raise
            except broken as exc:
                raise _workbook_error(exc, name) from None
            if _find_header(records) is None:
                missing.append(sheet)
                continue
            _refuse_formulas_without_values(p, getattr(ws, "_worksheet_path", None), name, sheet)
            return LoadTable(_parse(records, name, sheet))
    finally:
        wb.close()
    raise LoadTableError(
        "no sheet has a header naming a key column (global_id or tag) and axial_force "
        f"within its first {_HEADER_SEARCH_ROWS} rows (sheets: {', '.join(missing) or 'none'})", path=name)


def _refuse_formulas_without_values(p: Path, part: str | None, name: str, sheet: str) -> None:
    """A cell holding a formula but no stored result (a workbook written by a program that does
    not calculate, and never opened in a spreadsheet since) reads as empty: a force, a key or a
    load case the table's author sees would be lost without a word, or a whole row skipped as
    blank. Such a cell anywhere in the sheet is an error naming it (its sheet, row and cell)."""
    import zipfile

    import defusedxml.ElementTree as safe_et

    if part is None:
        return
    part = part.lstrip("/")
    with zipfile.ZipFile(p) as zf, zf.open(part) as fh:
        for _event, el in safe_et.iterparse(fh, events=("end",), forbid_dtd=True):
            tag = el.tag.rpartition("}")[2]
            if tag == "c":
                kids = {k.tag.rpartition("}")[2]: k for k in el}
                formula, value = kids.get("f"), kids.get("v")
                inline = kids.get("is")
                # no <v>, or an empty one in a cell not typed as text (t="str": a stored empty text)
                unstored = value is None or (not (value.text or "").strip() and el.get("t") != "str")
                if formula is not None and unstored and inline is None:
                    ref = el.get("r") or "?"
                    row = "".join(ch for ch in ref if ch.isdigit()) or "?"
                    raise LoadTableError(f"cell {ref} holds a formula whose result was never stored, so it reads "
                                         "as empty; open and save the workbook in a spreadsheet program (which "
                                         "calculates it), or write the value itself", path=name,
                                         where=f"{sheet}:row {row}")
            elif tag == "row":
                el.clear()   # one row in memory at a time


def _sheet_records(ws: Any, name: str, sheet: str) -> list[list[Any]]:
    """A sheet's rows as lists of cell values, within ``MAX_TABLE_ROWS`` and ``MAX_TABLE_CELLS``."""
    records: list[list[Any]] = []
    cells = 0
    # the size a sheet declares (<dimension>) may be short of its cells: read every row there is
    # (openpyxl's read-only sheet would otherwise stop at the declared size, without a word)
    ws.reset_dimensions()
    for row in ws.iter_rows(min_row=1, values_only=True):
        if len(records) >= MAX_TABLE_ROWS:
            raise LoadTableError(f"has more than {MAX_TABLE_ROWS:,} rows; split it into several tables",
                                 path=name, where=f"{sheet}:row {MAX_TABLE_ROWS + 1}")
        cells += len(row)
        if cells > MAX_TABLE_CELLS:
            raise LoadTableError(f"has more than {MAX_TABLE_CELLS:,} cells as read (rows × the sheet's width: "
                                 f"{len(row):,} columns at this row); not a load table", path=name,
                                 where=f"{sheet}:row {len(records) + 1}")
        records.append(list(row))
    return records


def _cell_text(v: Any) -> str:
    """A cell as text: None -> '', 12.0 -> '12' (marks and case numbers typed as numbers)."""
    if v is None:
        return ""
    if isinstance(v, float) and v.is_integer():
        return str(int(v))
    return str(v).strip()


def _blank(record: Sequence[Any]) -> bool:
    return not any(_cell_text(c) for c in record)


def _texts(s: pd.Series) -> pd.Series:
    """Cells as stripped text, vectorised when they are all strings already (CSV)."""
    if pd.api.types.infer_dtype(s, skipna=False) == "string":
        return s.str.strip() if _padded(s) else s
    return s.map(_cell_text).astype(object)


#: white space after a NUL: the start of a text, the texts joined with NUL between them
_AFTER_NUL_RE = re.compile(r"\x00\s")


def _padded(s: pd.Series) -> bool:
    """Whether any of these texts starts or ends with white space (what ``str.strip`` removes), in
    two searches over them all (the joined texts and the same backwards): most tables have none,
    and stripping each cell is most of the work. A NUL inside a text can only make this say True
    where False was right, never the reverse."""
    joined = "\x00" + "\x00".join(s.tolist()) + "\x00"
    return _AFTER_NUL_RE.search(joined) is not None or _AFTER_NUL_RE.search(joined[::-1]) is not None


def _find_header(records: Sequence[Sequence[Any]]) -> _Header | None:
    for i, rec in enumerate(records[:_HEADER_SEARCH_ROWS]):
        cols: dict[str, int] = {}
        unit: str | None = None
        label = ""
        for j, cell in enumerate(rec):
            m = _HEADER_RE.match(_cell_text(cell))
            if m is None:
                continue
            key = re.sub(r"[\s_\-.]", "", m.group("name").lower())
            canon = _CANONICAL.get(key)
            if canon is None or canon in cols:
                continue
            cols[canon] = j
            if canon == "axial_force":
                u = m.group("u1") if m.group("u1") is not None else m.group("u2")
                unit = u.strip() if u is not None else None
                label = _cell_text(cell)
        if "axial_force" in cols and ("global_id" in cols or "tag" in cols):
            return _Header(i, cols, unit, label)
    return None


def _repeated_column(rec: Sequence[Any]) -> tuple[str, str, str] | None:
    """(meaning, first label, second label) of two header cells with one meaning, or None."""
    seen: dict[str, str] = {}
    for cell in rec:
        m = _HEADER_RE.match(_cell_text(cell))
        canon = _CANONICAL.get(re.sub(r"[\s_\-.]", "", m.group("name").lower())) if m else None
        if canon is None:
            continue
        if canon in seen:
            return canon, seen[canon], _cell_text(cell)
        seen[canon] = _cell_text(cell)
    return None


def _header_name(cell: str) -> str:
    """The name part of a header cell (without its unit), or the whole cell."""
    m = _HEADER_RE.match(cell)
    return m.group("name") if m is not None else cell


def _header_problem(records: Sequence[Sequence[Any]], name: str) -> LoadTableError:
    for i, rec in enumerate(records[:_HEADER_SEARCH_ROWS]):
        cells = [_cell_text(c) for c in rec if _cell_text(c)]
        if cells:
            names = {re.sub(r"[\s_\-.]", "", _header_name(c).lower()) for c in cells}
            wanted = []
            if not names & {"globalid", "tag"}:
                wanted.append("a key column 'global_id' or 'tag'")
            if "axialforce" not in names:
                wanted.append("a force column 'axial_force' (e.g. 'axial_force [kN]')")
            shown = ", ".join(repr(c) for c in cells[:8])
            return LoadTableError(f"the header lacks {' and '.join(wanted)}; its columns are {shown}",
                                  path=name, where=f"row {i + 1}")
    return LoadTableError("has no rows with values", path=name)


def _parse(records: list[list[Any]], name: str, sheet: str | None, all_text: bool = False) -> pd.DataFrame:
    """Records (lists of cells, record i = spreadsheet row i + 1) -> the SI load table."""
    row_label = f"{sheet}:row " if sheet is not None else "row "

    def where(n: int) -> str:
        return f"{row_label}{n}"

    header = _find_header(records)
    if header is None:
        raise _header_problem(records, name)
    twice = _repeated_column(records[header.row])
    if twice is not None:
        raise LoadTableError(f"columns {twice[1]!r} and {twice[2]!r} both name the {twice[0]}; keep one",
                             path=name, where=where(header.row + 1))
    body = records[header.row + 1:]
    first_row = header.row + 2  # spreadsheet row number of body[0]
    ci = header.cols

    def column(key: str) -> list[Any]:
        j = ci.get(key)
        if j is None:
            return [None] * len(body)
        return [r[j] if j < len(r) else None for r in body]

    if all_text:  # CSV: every cell is a string
        blank = np.fromiter((not "".join(r).strip() for r in body), dtype=bool, count=len(body))
    else:
        blank = np.fromiter((_blank(r) for r in body), dtype=bool, count=len(body))
    rows = np.arange(first_row, first_row + len(body))
    keep = ~blank
    if not keep.any():
        raise LoadTableError("has a header but no rows of forces", path=name, where=where(header.row + 1))
    rows = rows[keep]
    # a value beyond the header's last column: a decimal comma or a list written unquoted would
    # otherwise lose its tail without a word ("1,200" read as 1)
    width = max((j for j, c in enumerate(records[header.row]) if _cell_text(c)), default=-1) + 1
    wide = np.fromiter((len(r) > width and not _blank(r[width:]) for r in body), dtype=bool, count=len(body))[keep]
    if wide.any():
        raise _row_error(name, where, rows, wide,
                         f"has a value beyond the header's {width} columns (a decimal comma, or a list not in "
                         "quotes?); put each value under its header, or quote a cell that holds a comma")

    def texts(key: str) -> pd.Series:
        if key not in ci:   # a column the table does not have: empty text on every row
            return pd.Series([""] * len(rows), dtype=object)
        return _texts(pd.Series(np.asarray(column(key), dtype=object)[keep], dtype=object))

    gid = texts("global_id")
    tag = texts("tag")
    by_gid = gid != ""
    key = gid.where(by_gid, tag)
    no_key = (key == "").to_numpy()
    if no_key.any():
        cols = " or ".join(c for c in ("global_id", "tag") if c in ci)
        raise _row_error(name, where, rows, no_key, f"has a force but no {cols}")
    if "load_case" in ci:
        case = texts("load_case")
        no_case = (case == "").to_numpy()
        if no_case.any():
            raise _row_error(name, where, rows, no_case, "load_case is empty (the table has a load_case column)")
    else:
        case = pd.Series([DEFAULT_LOAD_CASE] * len(rows), dtype=object)

    raw = pd.Series(np.asarray(column("axial_force"), dtype=object)[keep])
    if not all_text:   # a spreadsheet's TRUE/FALSE or date cell would otherwise read as a number
        typed = raw.map(lambda v: isinstance(v, bool | _dt.date | _dt.time | _dt.timedelta)).to_numpy(dtype=bool)
        if typed.any():
            raise _row_error(name, where, rows, typed, "a TRUE/FALSE, date or time cell is not a force",
                             value=raw.iloc[int(np.flatnonzero(typed)[0])])
    force = _forces_si(raw, header, name, where, rows)
    source_prefix = f"{name}:{row_label}"  # "<path>:row " or "<path>:<sheet>:row "
    out = frame_of({
        "key_kind": np.where(by_gid.to_numpy(), "global_id", "tag").astype(object),
        "key": key.to_numpy(dtype=object),
        "load_case": case.to_numpy(dtype=object),
        "axial_force": np.asarray(force, dtype=float),
        "source": np.array([f"{source_prefix}{r}" for r in rows.tolist()], dtype=object),
    })
    return out[list(LOAD_TABLE_COLUMNS)]


def _row_error(name: str, where: Callable[[int], str], rows: np.ndarray, mask: np.ndarray, message: str,
               value: Any = None) -> LoadTableError:
    bad = np.flatnonzero(mask)
    more = f" ({len(bad) - 1} more row{'s' if len(bad) > 2 else ''} like this)" if len(bad) > 1 else ""
    shown = f"axial_force {value!r}: " if value is not None else ""
    return LoadTableError(f"{shown}{message}{more}", path=name, where=where(int(rows[bad[0]])))


def _forces_si(raw: pd.Series, header: _Header, name: str, where: Callable[[int], str], rows: np.ndarray) -> np.ndarray:
    """The force column in newtons, vectorised; every problem named by row."""
    if pd.api.types.infer_dtype(raw, skipna=False) == "string":
        raw = raw.str.strip() if _padded(raw) else raw
        is_empty = (raw == "").to_numpy()
    else:
        is_empty = raw.map(lambda v: v is None or (isinstance(v, str) and not v.strip())
                           or (isinstance(v, float) and math.isnan(v))).to_numpy(dtype=bool)
    if is_empty.any():
        raise _row_error(name, where, rows, is_empty, "axial_force is empty")
    if header.force_unit is not None:
        try:
            factor = force_unit_factor(header.force_unit)
        except ForceUnitError as exc:
            raise LoadTableError(f"column {header.force_label!r}: {exc}", path=name,
                                 where=where(header.row + 1)) from None
        numbers = pd.to_numeric(raw, errors="coerce").to_numpy(dtype=float)
        bad = np.isnan(numbers)
        if bad.any():
            first = raw.iloc[int(np.flatnonzero(bad)[0])]
            why = _why_not_number(first, header.force_unit)
            raise _row_error(name, where, rows, bad, why, value=first)
        _check_finite(numbers, raw, name, where, rows)
        return _in_newtons(numbers, np.full(len(numbers), factor), raw, name, where, rows)
    # units in each cell: split number and unit, convert each distinct unit once
    if pd.api.types.infer_dtype(raw, skipna=False) == "string":
        text = raw
    else:
        text = raw.map(lambda v: v if isinstance(v, str) else None)

    def no_unit(bad: np.ndarray) -> LoadTableError:
        return _row_error(name, where, rows, bad,
                          f"a number with no unit, and the header {header.force_label!r} states none; "
                          "give the unit in the header ('axial_force [kN]') or in the cell ('12.5 kN')",
                          value=raw.iloc[int(np.flatnonzero(bad)[0])])

    numeric_cell = text.isna().to_numpy()
    if numeric_cell.any():
        raise no_unit(numeric_cell)
    parts = text.str.extract(VALUE_RE)
    unmatched = parts["num"].isna().to_numpy()
    if unmatched.any():
        first = raw.iloc[int(np.flatnonzero(unmatched)[0])]
        raise _row_error(name, where, rows, unmatched, _why_not_number(first, None), value=first)
    units = parts["unit"].fillna("").str.strip()
    unitless = (units == "").to_numpy()
    if unitless.any():
        raise no_unit(unitless)
    codes, uniques = pd.factorize(units)
    factors = np.empty(len(uniques), dtype=float)
    for k, u in enumerate(uniques):
        try:
            factors[k] = force_unit_factor(u)
        except ForceUnitError as exc:
            first = raw.iloc[int(np.argmax(codes == k))]
            why = _why_not_number(first, None) if re.match(r"^,\d", u) else str(exc)
            raise _row_error(name, where, rows, codes == k, why, value=first) from None
    numbers = _numbers(parts["num"], raw, name, where, rows)
    _check_finite(numbers, raw, name, where, rows)
    return _in_newtons(numbers, factors[codes], raw, name, where, rows)


def _in_newtons(numbers: np.ndarray, factors: np.ndarray, raw: pd.Series, name: str, where: Callable[[int], str],
                rows: np.ndarray) -> np.ndarray:
    """``numbers`` × ``factors``; a force too large for a floating-point number once converted
    ('1e308 kip') is refused with its row instead of becoming infinite."""
    with np.errstate(over="ignore", invalid="ignore"):
        newtons = numbers * factors
    bad = ~np.isfinite(newtons)
    if bad.any():
        first = raw.iloc[int(np.flatnonzero(bad)[0])]
        raise _row_error(name, where, rows, bad, "too large a force: it overflows when converted to newtons",
                         value=first)
    return newtons


def _numbers(text: pd.Series, raw: pd.Series, name: str, where: Callable[[int], str], rows: np.ndarray) -> np.ndarray:
    """The numbers of a column of number texts: decimals at once, fractions ('3/8', '1 1/2')
    each as modelcheck.common.units.parse_number reads them."""
    frac = text.str.contains("/", regex=False).to_numpy(dtype=bool)
    if not frac.any():
        return text.astype(float).to_numpy()
    numbers = np.empty(len(text), dtype=float)
    numbers[~frac] = text[~frac].astype(float).to_numpy()
    for i in np.flatnonzero(frac).tolist():
        try:
            numbers[i] = float(parse_number(text.iloc[i]))
        except (ZeroDivisionError, OverflowError):
            bad = np.zeros(len(text), dtype=bool)
            bad[i] = True
            raise _row_error(name, where, rows, bad, "division by zero", value=raw.iloc[i]) from None
    return numbers


def _check_finite(numbers: np.ndarray, raw: pd.Series, name: str, where: Callable[[int], str], rows: np.ndarray) -> None:
    bad = ~np.isfinite(numbers)
    if bad.any():
        first = raw.iloc[int(np.flatnonzero(bad)[0])]
        raise _row_error(name, where, rows, bad, "not a finite number", value=first)


def _why_not_number(value: Any, header_unit: str | None) -> str:
    s = str(value).strip()
    if re.match(r"^[+-]?\d+,\d", s):
        return "a decimal comma or thousands separator; write numbers with a decimal point and no separators"
    if s.split(" ")[0].lower() in ("nan", "inf", "-inf", "+inf", "infinity", "#n/a", "n/a", "na", "#value!", "#div/0!"):
        return "not a finite number"
    if header_unit is not None and re.match(VALUE_RE, s):
        return f"the header already gives the unit {header_unit!r}; the cells must hold plain numbers"
    return "not a number"
