"""Report model helpers after the small-board speed work: spec records of chosen rows, spec codes
numbered in order of first appearance."""

import numpy as np
import pandas as pd

from bomcheck.report.model import _block_codes, _records


def test_spec_records_of_chosen_rows_match_the_records_of_those_rows():
    # Invariant of the implementation: records of rows picked by position equal the records of
    # the sub-table; NaN, None and NA become None, tuples lists, numpy scalars Python values.
    table = pd.DataFrame({
        "a": [1.5, np.nan, 3.0], "b": pd.Series(["x", None, "z"], dtype=object),
        "c": pd.array([1, None, 3], dtype="Int64"),
        "d": pd.Series([(1, 2), (), None], dtype=object), "e": [True, False, True],
    })
    rows = np.array([2, 1])
    fields = ("a", "b", "c", "d", "e", "missing")
    assert _records(table, fields, rows) == _records(table.iloc[rows], fields)
    assert _records(table, fields) == [
        {"a": 1.5, "b": "x", "c": 1, "d": [1, 2], "e": True, "missing": None},
        {"a": None, "b": None, "c": None, "d": [], "e": False, "missing": None},
        {"a": 3.0, "b": "z", "c": 3, "d": None, "e": True, "missing": None},
    ]
    assert all(type(r["a"]) in (float, type(None)) for r in _records(table, fields))


def test_spec_codes_number_distinct_rows_in_order_of_first_appearance_even_past_int64():
    # Invariant: equal rows (NaN equal to NaN) share a code, codes in order of first
    # appearance; 12 columns of 100 distinct values each need a renumbering inside int64.
    rng = np.random.default_rng(7)
    base = rng.integers(0, 100, size=(50, 12)).astype(float)
    base[rng.random(base.shape) < 0.1] = np.nan
    rows = base[rng.integers(0, 50, size=400)]
    frame = pd.DataFrame(rows, columns=[f"c{j}" for j in range(12)])
    frame["t"] = pd.Series(np.where(np.isnan(rows[:, 0]), None, "x"), dtype=object)
    codes = _block_codes(frame)
    keys = [tuple("nan" if pd.isna(v) else v for v in r) for r in frame.itertuples(index=False)]
    expected = {}
    assert codes.tolist() == [expected.setdefault(k, len(expected)) for k in keys]
