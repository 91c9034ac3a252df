"""The shared row codes (bomcheck/rowcodes.py): one code per distinct row, equal rows sharing
it, in order of first appearance, whatever the number of columns and distinct values."""

from __future__ import annotations

import numpy as np
import pandas as pd

from bomcheck.rowcodes import combine, row_codes


def test_row_codes_number_distinct_rows_in_order_of_first_appearance_even_past_int64():
    # Invariant: equal rows (NaN equal to NaN) share a code, codes in order of first
    # appearance; 12 columns of 100 distinct values each need a renumbering inside int64.
    rng = np.random.default_rng(7)
    base = rng.integers(0, 100, size=(50, 12)).astype(float)
    base[rng.random(base.shape) < 0.1] = np.nan
    rows = base[rng.integers(0, 50, size=400)]
    frame = pd.DataFrame(rows, columns=[f"c{j}" for j in range(12)])
    frame["t"] = pd.Series(np.where(np.isnan(rows[:, 0]), None, "x"), dtype=object)
    codes = row_codes([frame[c] for c in frame.columns])
    keys = [tuple("nan" if pd.isna(v) else v for v in r) for r in frame.itertuples(index=False)]
    expected = {}
    assert codes.tolist() == [expected.setdefault(k, len(expected)) for k in keys]


def test_combine_counts_distinct_tuples_and_keeps_missing_apart():
    # A missing code (-1) is a value of its own: (1, -1) is not (0, last) in a mixed-radix key.
    codes, n = combine([np.array([1, 0, 1, 1]), np.array([-1, 2, -1, 0])], [2, 3])
    assert codes.tolist() == [0, 1, 0, 2] and n == 3
    empty, count = combine([], [])
    assert len(empty) == 0 and count == 0


def test_row_codes_compare_numbers_as_numbers_and_text_as_text():
    # 1 and 1.0 are the same number; "1" is text, another value; None and NaN are both missing.
    frame = pd.DataFrame({"n": pd.Series([1, 1.0, np.nan, None], dtype=float),
                          "t": pd.Series(["1", "1", None, np.nan], dtype=object)})
    assert row_codes([frame["n"], frame["t"]]).tolist() == [0, 0, 1, 1]
