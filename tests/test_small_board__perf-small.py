"""The small-board speed work keeps results: parts laid as columns, spec records, spec keys."""

import numpy as np
import pandas as pd

from bomcheck.parse.parts import read_parts
from bomcheck.parse.parts_apply import apply_parts, lay_parts
from bomcheck.report.model import _block_codes, _records

PARTS = ("mpn,rated_voltage,temp_max,tolerance,dielectric\n"
         "P1,35 V,105 degC,\u00b120 %,X5R\nP2,16 V,85 degC,,\n")


def _placements() -> pd.DataFrame:
    return pd.DataFrame({
        "refdes": pd.Series(["C1", "C2", "C3", "C4"], dtype=object),
        "mpn": pd.Series(["p1", "P2", None, "P1 "], dtype=object),
        "capacitance_f": [1e-6, 2e-6, 3e-6, 4e-6], "voltage_v": [25.0, np.nan, 50.0, 63.0],
        "temp_max_c": [125.0, 85.0, np.nan, 105.0], "tol_minus_pct": [10.0, 5.0, np.nan, 20.0],
        "tol_plus_pct": [10.0, 5.0, np.nan, 20.0],
        "dielectric": pd.Series(["X7R", None, None, "X5R"], dtype=object),
        "voltage_kind": pd.Series([None, "dc", None, None], dtype=object),
    })


def test_parts_laid_as_columns_leave_the_table_alone_and_match_the_table_form(tmp_path):
    # Invariant of the implementation: the columns form is the table form, column for column.
    (tmp_path / "p.csv").write_text(PARTS, encoding="utf-8")
    parts = read_parts(str(tmp_path / "p.csv"))
    table = _placements()
    before = table.copy()
    cols, verdicts = lay_parts(table, parts)
    out, verdicts2 = apply_parts(table, parts)
    pd.testing.assert_frame_equal(table, before)  # nothing written in place
    assert list(cols) == list(out.columns)
    pd.testing.assert_frame_equal(pd.DataFrame(cols), out)
    pd.testing.assert_frame_equal(verdicts, verdicts2)
    # the rated voltage conflict of C1 (25 V in the BOM, 35 V in the parts data): the lower
    # value is used and a warning names both (common practice: the lower rating governs)
    assert out["voltage_v"].tolist()[:2] == [25.0, 16.0]
    assert (verdicts["refdes"] == "C1").any() and set(verdicts["status"]) == {"warn"}
    # a column the parts data leaves alone is the table's own (no copy)
    assert np.shares_memory(cols["refdes"].to_numpy(), table["refdes"].to_numpy())


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
