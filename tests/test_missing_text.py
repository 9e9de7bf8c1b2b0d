"""Missing text is None in every table from the reader to the reporters, never NaN.

pandas infers its own string dtype from texts, whose missing value is NaN; a reporter then prints
``nan`` or hands a float to a text function. Every table the pipeline makes (members, forces,
results, the load tables) keeps its text columns as objects holding ``str`` or None.
"""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pytest

from modelcheck.common.table import concat_rows, frame_of, text_column
from modelcheck.core.model import ForceOptions
from modelcheck.core.read import read_model
from modelcheck.ifc.index import build_index
from modelcheck.ifc.reader import read_members
from modelcheck.loads.tables import read_load_table
from modelcheck.rules.ruleset import load_ruleset
from modelcheck.run.runner import run_check
from tests.helpers import SAMPLES
from tests.test_command_matrix import lacking_model


def text_nans(frame: pd.DataFrame) -> dict[str, str]:
    """Columns that are not numeric and either are not object columns or hold a float NaN."""
    bad = {}
    for col in frame.columns:
        s = frame[col]
        if s.dtype.kind in "fiub" or isinstance(s.dtype, pd.CategoricalDtype):
            continue
        if s.dtype != object:
            bad[col] = f"dtype {s.dtype}"
        elif any(isinstance(v, float) and math.isnan(v) for v in s.tolist()):
            bad[col] = "NaN in an object column"
    return bad


@pytest.fixture(scope="module")
def lacking_path(tmp_path_factory):
    path = tmp_path_factory.mktemp("lacking") / "lacking.ifc"
    lacking_model().write(str(path))
    return path


def test_member_table_of_members_lacking_values(lacking_path):
    table = read_members(build_index(str(lacking_path))).frame
    assert text_nans(table) == {}
    members = table.set_index("name")
    assert members.loc["rod without material", "material"] is None
    assert members.loc["rod without section name", "section_name"] is None
    assert members.loc["member without profile", "profile_type"] is None
    assert members.loc["member without profile", "shape"] is None
    assert members.loc["rod without material", "material_grade"] is None


def test_every_table_of_a_batch_run(lacking_path):
    tables = tuple(read_load_table(str(p)) for p in sorted(SAMPLES.glob("*-forces.csv")))
    for t in tables:
        assert text_nans(t.frame) == {}
    data = read_model(str(lacking_path), ForceOptions(tables=tables))
    assert text_nans(data.forces) == {}
    models = [str(p) for p in sorted(SAMPLES.glob("*.ifc"))] + [str(lacking_path)]
    # steel-ec3: some models have failing members (suggestion columns), others none
    for rules in ("steel-asd-us", "steel-ec3", "hanger-rods"):
        run = run_check(models, load_ruleset(rules), ForceOptions(tables=tables), jobs=1)
        assert text_nans(run.results) == {}, rules
        assert text_nans(run.members) == {}, rules


def test_text_column_makes_every_missing_value_none():
    s = text_column(["a", None, math.nan, pd.NA, np.nan, "b"])
    assert s.dtype == object and s.tolist() == ["a", None, None, None, None, "b"]
    s = text_column(pd.Series(["x", None], dtype="string"))
    assert s.dtype == object and s.tolist() == ["x", None]
    pairs = text_column([(("E", "why"),), (("A", "why"),)])   # one tuple per row, not a 2-D array
    assert len(pairs) == 2 and pairs[0] == (("E", "why"),)


def test_frame_of_keeps_texts_as_objects_and_numbers_as_numbers():
    f = frame_of({"t": np.array(["a", None], dtype=object), "x": np.array([1.0, np.nan]), "l": ["p", None]})
    assert f["t"].dtype == object and f["t"].tolist() == ["a", None]
    assert f["l"].tolist() == ["p", None]
    assert f["x"].dtype == float and math.isnan(f["x"].iloc[1])


def test_concat_rows_fills_a_column_some_frames_lack_with_none():
    a = frame_of({"gid": ["A"], "suggestion": [{"designation": "M20"}], "ratio": np.array([1.2])})
    b = frame_of({"gid": ["B"], "ratio": np.array([0.5])})
    c = concat_rows([b, a])
    assert c["suggestion"].tolist() == [None, {"designation": "M20"}]
    assert c["gid"].tolist() == ["B", "A"] and c["ratio"].dtype == float
    assert text_nans(c) == {}
