"""The JSON report's fast row encoder writes exactly what orjson writes for the same rows.

References: orjson (PyPI) for the bytes of each row and string, Python's own float formatting
(``f"{v:.6g}"``) for six-significant-digit rounding.
"""

from __future__ import annotations

import json
import math

import numpy as np
import orjson
import pandas as pd
from hypothesis import given, settings
from hypothesis import strategies as st

from modelcheck.report.check_json import (
    _identity_texts,
    _json_texts,
    _text,
    encode_results,
    encode_rows,
    result_dicts,
    round_sig6,
)
from tests.report_runs import NASTY, result_row


@settings(max_examples=400, deadline=None)
@given(st.lists(st.floats(allow_nan=True, allow_infinity=True), max_size=40))
def test_six_digit_rounding_matches_python_formatting(values):
    got = round_sig6(values)
    for v, g in zip(values, got.tolist(), strict=True):
        if math.isfinite(v):
            assert g == float(f"{v:.6g}"), v       # Python's correctly rounded %g
        else:
            assert math.isnan(g)


@settings(max_examples=400, deadline=None)
@given(st.text())
def test_json_strings_are_the_bytes_orjson_writes(text):
    try:
        expected = orjson.dumps(text)
    except orjson.JSONEncodeError:     # lone surrogates: not UTF-8, neither encoder writes them
        return
    assert _text(text).encode("utf-8") == expected


@settings(max_examples=300, deadline=None)
@given(st.lists(st.text(), max_size=8))
def test_json_texts_at_once_are_the_bytes_orjson_writes(texts):
    """Texts needing no escape are quoted all at once; the bytes are orjson's either way."""
    try:
        expected = [orjson.dumps(t) for t in texts]
    except orjson.JSONEncodeError:     # lone surrogates: not UTF-8, neither encoder writes them
        return
    assert _json_texts(texts).tolist() == expected


_IDENTITY_VALUE = st.one_of(st.text(), st.none(), st.just(float("nan")))


@settings(max_examples=300, deadline=None)
@given(st.lists(st.tuples(*[_IDENTITY_VALUE] * 5), max_size=8))
def test_identity_texts_are_the_start_of_the_row_orjson_writes(members):
    """A member's identity, encoded column by column (all at once where no text needs an escape),
    is the start of the row orjson writes (None and NaN both null)."""
    keys = ("model", "global_id", "ifc_class", "name", "tag")
    try:
        expected = [orjson.dumps({k: (None if isinstance(v, float) else v) for k, v in zip(keys, m, strict=True)}
                                 | {"check": 0})[:-2] for m in members]
    except orjson.JSONEncodeError:     # lone surrogates: not UTF-8, neither encoder writes them
        return
    columns = [list(c) for c in zip(*members, strict=True)] if members else [[]] * 5
    assert _identity_texts(*columns).tolist() == expected


def test_encoded_rows_are_the_rows_of_the_dict_encoder():
    rows = [
        result_row("a.ifc", "0aaaaaaaaaaaaaaaaaaaaA", "tension-yield", "LC1", 123.456789, 250.0,
                   name=NASTY, tag="T-1", message="f = P/Ag = 123.5 MPa vs Fy/Ωt = 250 MPa"),
        result_row("a.ifc", "0aaaaaaaaaaaaaaaaaaaaA", "elongation", None, 1e-7, 3.0, unit="mm",
                   message='quote " backslash \\ newline \n tab \t'),
        result_row("a.ifc", "0bbbbbbbbbbbbbbbbbbbbB", "tension-yield", "LC2", None, 250.0,
                   missing=["P: load case 'LC2' has no axial force value for this member"]),
        result_row("b.ifc", "0cccccccccccccccccccc$", "compression", "LC1", 9.99999949e12, 1.0),
        result_row("b.ifc", "0dddddddddddddddddddd_", "compression", "LC1", -0.000123456789, 1.0),
    ]
    frame = pd.DataFrame(rows)
    frame.loc[3, ["capacity", "ratio"]] = [0.0, math.inf]   # zero capacity: a fail with no finite ratio
    frame["suggestion"] = [None, None, None,
                           {"designation": "RD 24", "area": {"value": 452.4, "unit": "mm²", "source": "stock"},
                            "ratio": 0.91, "family": "round bar", "check": "compression", "unchecked": []}, np.nan]
    expected = encode_rows(result_dicts(frame))
    assert encode_results(frame) == expected
    assert encode_results(frame, chunk=2) == expected
    parsed = json.loads(b"[" + expected + b"]")
    assert parsed[3]["ratio"] is None and parsed[3]["suggestion"]["designation"] == "RD 24"
    assert all("suggestion" in r for r in parsed)
    assert parsed[0]["demand"]["value"] == 123.457   # six significant digits


@settings(max_examples=300, deadline=None)
@given(st.lists(st.floats(allow_nan=True, allow_infinity=True), max_size=30))
def test_message_numbers_are_formatted_as_one_by_one(values):
    """The engine formats a message's numbers a magnitude class at a time: the same text as
    formatting each number on its own (Python's own format, the reference)."""
    from modelcheck.rules.engine import _number_text, _number_texts

    arr = np.asarray(values, dtype=float)
    assert _number_texts(arr).tolist() == [_number_text(x) for x in arr.tolist()]
    assert _number_texts(arr, ".2f").tolist() == [format(x, ".2f") if x == x else "n/a" for x in arr.tolist()]
