"""Parts laid over the placements as columns by name (the small-board speed work): the same
columns as the table form, the table left alone."""

import numpy as np
import pandas as pd

from bomcheck.parse.parts import read_parts
from bomcheck.parse.parts_apply import apply_parts, lay_parts

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

