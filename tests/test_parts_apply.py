"""Parts data laid over the placements by MPN: the key of each placement, an empty parts file,
placements without a part, and a conflict with the BOM text named once."""

import numpy as np
import pandas as pd

from bomcheck.parse.parts import PARTS_FINDING, parts_from_table
from bomcheck.parse.parts_apply import PART_COLUMNS, apply_parts, curve_values, part_keys


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
