"""Parts data laid over the placements by MPN: the key of each placement, an empty parts file,
placements without a part, and a conflict with the BOM text named once."""

import numpy as np
import pandas as pd

from bomcheck.parse.parts import PARTS_FINDING, parts_from_table, read_parts
from bomcheck.parse.parts_apply import (PART_COLUMNS, apply_parts, curve_values, lay_parts,
                                        part_keys)


def _parts(rows):
    frame = pd.DataFrame(rows[1:], columns=rows[0])
    return parts_from_table(frame, path="parts.csv")


def test_part_keys_are_stripped_upper_case_mpns():
    table = pd.DataFrame({"mpn": [" kv-1 ", None, "KV-1", np.nan]})
    assert part_keys(table).tolist() == ["KV-1", "", "KV-1", ""]
    assert part_keys(pd.DataFrame({"refdes": ["C1"]})).tolist() == [""]


def test_a_header_only_parts_file_changes_nothing():
    table = pd.DataFrame({"refdes": ["C1"], "mpn": ["KV-1"], "voltage_v": [16.0]})
    out, verdicts = apply_parts(table, _parts([["mpn", "rated_voltage"]]))
    assert out["voltage_v"].tolist() == [16.0] and verdicts.empty
    assert set(PART_COLUMNS) <= set(out.columns) and out["part_row"].isna().all()


def test_only_placements_of_a_listed_part_change():
    table = pd.DataFrame({"refdes": ["C1", "C2"], "mpn": ["kv-1", "OTHER"],
                          "voltage_v": [np.nan, np.nan]})
    out, verdicts = apply_parts(table, _parts([["mpn", "rated_voltage"], ["KV-1", "25 V"]]))
    assert out["voltage_v"].iat[0] == 25.0 and np.isnan(out["voltage_v"].iat[1])
    assert out["part_row"].tolist()[0] == 2 and pd.isna(out["part_row"].tolist()[1])
    assert verdicts.empty


def test_a_conflict_keeps_the_lower_rating_and_is_one_warning():
    # Rated voltage: the lower of two contradicting ratings is the conservative reading
    # (common practice in derating reviews).
    table = pd.DataFrame({"refdes": ["C1"], "mpn": ["KV-1"], "voltage_v": [50.0]})
    out, verdicts = apply_parts(table, _parts([["mpn", "rated_voltage"], ["KV-1", "25 V"]]))
    assert out["voltage_v"].tolist() == [25.0]
    assert verdicts[["refdes", "rule_id", "status"]].values.tolist() == [
        ["C1", PARTS_FINDING, "warn"]]
    assert "gives rated voltage 25 V; the BOM text says 50 V" in verdicts["message"].iat[0]


def test_curve_values_are_nan_without_a_curve():
    table = pd.DataFrame({"refdes": ["C1"], "mpn": ["KV-1"], "capacitance_f": [1e-6]})
    got = curve_values(table, None, "dc_bias", pd.Series([5.0]))
    assert np.isnan(got.iat[0])


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
