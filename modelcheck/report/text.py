"""Small text helpers shared by the reporters: numbers, and text from the inputs made safe for
where it goes.

Text read from a model, a load table or a rule file is the user's and may be hostile. Three
places need it made safe, each with one helper used by every writer of that kind of output:

* a terminal (the console reports and every line on standard error): ``shown`` replaces control
  characters with a visible escape (``\\x1b``) and cuts a text longer than ``MAX_SHOWN`` characters
  with an ellipsis;
* a spreadsheet (every CSV the project writes): ``csv_cell`` neutralises a text cell that a
  spreadsheet would read as a formula;
* XML 1.0 (JUnit, BCF): ``xml_text`` and ``xml_clean`` drop every character XML 1.0 forbids.
"""

from __future__ import annotations

import math
import re
from typing import Any

#: console width from which the failing and unchecked lists show every detail (the console
#: report's wide layout; here, not in ``report.console``, so that the command line's help can
#: name it without loading rich)
DETAILS_WIDTH = 160

#: the caution every report ends with
CAUTION = ("modelcheck screens models for data and axial-stress problems; it does not replace design "
           "and checking by a licensed engineer under the governing local code.")

#: characters of one text in a console table cell or a warning line; longer texts end in "…"
MAX_SHOWN = 200
#: characters of one line on standard error (an error naming a file, row and GlobalId)
MAX_LINE = 2000

#: beyond C0 and C1, what changes how the text around it is shown or where a line ends: the
#: Unicode bidirectional controls (an 'H1' + U+202E + 'LIAF' reads as 'H1FAIL' reversed; Unicode
#: Standard Annex #9), the line and paragraph separators U+2028 and U+2029 (a new line to many
#: readers of a log) and the noncharacters U+FFFE and U+FFFF
_FORMAT = "\u061c\u200e\u200f\u2028\u2029\u202a-\u202e\u2066-\u2069\ufffe\uffff"
#: C0 controls, DEL, C1 controls and ``_FORMAT``: what a terminal may act on instead of showing
_CONTROL_RE = re.compile(f"[\\x00-\\x1f\\x7f-\\x9f{_FORMAT}]")
#: the same, but tab and newline are left for a text whose layout they are
_CONTROL_BUT_LAYOUT_RE = re.compile(f"[\\x00-\\x08\\x0b-\\x1f\\x7f-\\x9f{_FORMAT}]")
#: lone surrogates (undecodable bytes of a file name, kept by Python as U+DC80…U+DCFF)
_SURROGATE_RE = re.compile(r"[\ud800-\udfff]")
#: every character XML 1.0 does not allow (its production 'Char')
_NOT_XML_RE = re.compile(r"[^\t\n\r\x20-\ud7ff\ue000-\ufffd\U00010000-\U0010ffff]")
#: the first characters of a cell that a spreadsheet takes for a formula (OWASP, CSV injection)
CSV_FORMULA_STARTS = ("=", "+", "-", "@", "\t", "\r")


def number(v: Any) -> str:
    """Four significant figures in plain decimals (19480, 0.01948; never 1.948e+04), or an em
    dash for a missing / non-finite value."""
    if v is None or (isinstance(v, float) and not math.isfinite(v)):
        return "—"
    return plain(float(v))


def plain(v: float, digits: int = 4) -> str:
    """``v`` to ``digits`` significant figures without an exponent, trailing zeros dropped; an
    exponent only beyond 10¹⁵ or below 10⁻⁹, where plain decimals would be unreadable."""
    if v == 0 or not math.isfinite(v):
        return f"{v:g}"
    mag = math.floor(math.log10(abs(v)))
    if mag >= 15 or mag < -9:
        return f"{v:.{digits}g}"
    if mag >= digits - 1:
        text = f"{round(v, digits - 1 - mag):.0f}"
    else:
        text = f"{v:.{digits - 1 - mag}f}"
        text = text.rstrip("0").rstrip(".") if "." in text else text
    return "0" if text in ("-0", "") else text


def _escape(m: re.Match[str]) -> str:
    code = ord(m.group())
    return f"\\x{code:02x}" if code < 0x100 else f"\\u{code:04x}"


def shown(text: Any, limit: int | None = MAX_SHOWN, *, layout: bool = False) -> str:
    """``text`` as it may reach a terminal: every control character (C0, DEL, C1; with ``layout``
    tab and newline are kept), every bidirectional control, line or paragraph separator and
    noncharacter (``_FORMAT``) and every lone surrogate written as a visible escape (ESC becomes
    ``\\x1b``, U+202E ``\\u202e``), and cut to ``limit`` characters with an ellipsis (None: not cut).

    >>> shown("H1\\x1b[2J")
    'H1\\\\x1b[2J'
    """
    s = "" if text is None else str(text)
    if limit is not None and len(s) > limit:
        s = s[:limit - 1] + "…"
    s = (_CONTROL_BUT_LAYOUT_RE if layout else _CONTROL_RE).sub(_escape, s)
    return _SURROGATE_RE.sub(_escape, s)


def shown_line(text: Any) -> str:
    """One line for standard error: ``shown`` with newlines escaped too, at most ``MAX_LINE``."""
    return shown(text, MAX_LINE)


def csv_cell(value: Any) -> Any:
    """A cell for a CSV file: a text beginning with ``= + - @``, a tab or a carriage return gets
    a leading apostrophe, so that a spreadsheet shows it as text instead of running it as a
    formula (OWASP, CSV injection). Numbers are numbers and stay as they are (-42.0 is written
    -42.0, never a formula); only texts are touched."""
    if isinstance(value, str) and value.startswith(CSV_FORMULA_STARTS):
        return "'" + value
    return value


def csv_frame(df: Any) -> Any:
    """A copy of a table whose text cells and column names went through ``csv_cell`` (only the
    text columns are scanned; a column of numbers is left as it is)."""
    import pandas as pd

    out = df.copy()
    for col in out.columns:
        s = out[col]
        if not (s.dtype == object or isinstance(s.dtype, pd.StringDtype)):
            continue
        try:   # one vectorised test over the column's texts (None and numbers are not texts)
            starts = s.str.startswith(CSV_FORMULA_STARTS, na=False).to_numpy(dtype=bool)
        except AttributeError:   # no text in the column at all
            continue
        if starts.any():
            fixed = s.copy()
            fixed[starts] = "'" + s[starts].astype(str)
            out[col] = fixed
    out.columns = [csv_cell(str(c)) for c in out.columns]
    return out


def xml_text(text: Any) -> str:
    """Text safe for XML 1.0: missing -> "", every character XML 1.0 forbids dropped (C0
    controls but tab, newline and carriage return; lone surrogates; U+FFFE and U+FFFF)."""
    s = "" if text is None or (isinstance(text, float) and math.isnan(text)) else str(text)
    return _NOT_XML_RE.sub("", s)


def xml_clean(root: Any) -> Any:
    """Every text, tail and attribute of an ElementTree element and its descendants made XML 1.0
    text (``xml_text``), in place; returns ``root``. Called on a whole tree just before it is
    written, so no attribute or text can be missed."""
    for el in root.iter():
        if el.text is not None:
            el.text = xml_text(el.text)
        if el.tail is not None:
            el.tail = xml_text(el.tail)
        for k, v in list(el.attrib.items()):
            el.attrib[k] = xml_text(v)
    return root
