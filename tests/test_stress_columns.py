"""Stress stage: the columns as the stresses read them, by code, against the plain conversions."""

import numpy as np
import pandas as pd
import pytest

from bomcheck.stress.columns import (Columns, as_text, by_rows, empty_as, labels,
                                     read_only_nan, share_empty, text_codes)
from bomcheck.stress.placement import StressData, metric_arrays

# Arithmetic of the conversions only: no outside source is needed for any check here.
MIXED = [
    pytest.param(["X7R", None, np.nan, "c0g", "X7R"], id="text"),
    # 1, 1.0 and True are equal as keys of a hash table but print differently.
    pytest.param([1, True, 1.0, "1", None, 0, False], id="numbers-and-flags"),
    pytest.param(["ceramic", pd.NA, "", "ceramic"], id="na-and-empty"),
    pytest.param([], id="empty"),
]


@pytest.mark.parametrize("values", MIXED)
def test_text_codes_give_the_plain_text_of_every_value(values):
    array = pd.Series(values, dtype=object)
    codes, texts = text_codes(array)
    assert [texts[c] for c in codes] == as_text(array).tolist()
    assert texts[-1] == ""  # a missing value's code, -1, reads the last text


@pytest.mark.parametrize("values", MIXED)
def test_columns_read_text_flags_and_lookups_by_code(values):
    table = pd.DataFrame({"c": pd.Series(values, dtype=object)})
    cols = Columns.of(table)
    plain = as_text(table["c"]).tolist()
    assert cols.text("c").tolist() == plain
    assert cols.is_text("c", "X7R", "1").tolist() == [t in ("X7R", "1") for t in plain]
    looked = cols.lookup("c", {"X7R": 2.5, "True": 7.0})
    expected = [{"X7R": 2.5, "True": 7.0}.get(t, np.nan) for t in plain]
    np.testing.assert_array_equal(looked, np.array(expected, dtype=float))
    flags = np.array(table["c"].to_numpy(dtype=object), dtype=object)
    flags[pd.isna(flags)] = False
    assert cols.flag("c").tolist() == flags.astype(bool).tolist()


def test_an_absent_column_is_empty_text_no_flag_and_shared_nan():
    cols = Columns.of(pd.DataFrame({"c": [1.0, 2.0]}))
    assert cols.text("absent").tolist() == ["", ""]
    assert cols.flag("absent").tolist() == [False, False]
    a, b = cols.num("absent"), cols.num("other")
    assert a is b and np.isnan(a).all() and not a.flags.writeable


def test_labels_share_one_object_per_text():
    out = labels(np.array([True, False, True]), ("", "generic"))
    assert out.tolist() == ["generic", "", "generic"] and out[0] is out[2]
    assert labels(np.array([2, 0, 1]), ("", "part", "generic")).tolist() == ["generic", "", "part"]


def test_share_empty_replaces_only_float_columns_nan_throughout():
    n = 3
    columns = {"empty": np.full(n, np.nan), "late": np.array([np.nan, np.nan, 1.0]),
               "text": np.array(["", "", ""], dtype=object), "also": np.full(n, np.nan),
               "series": pd.Series([np.nan] * n), "short": np.full(n - 1, np.nan)}
    late, short, nan = columns["late"], columns["short"], read_only_nan(n)
    share_empty(columns, nan)
    assert columns["empty"] is nan and columns["also"] is nan
    assert columns["late"] is late and columns["short"] is short
    assert isinstance(columns["series"], pd.Series) and columns["text"].dtype == object
    assert empty_as(nan, nan) is nan
    with pytest.raises(ValueError):
        nan[0] = 1.0


def test_metrics_worked_a_few_rows_at_a_time_equal_the_whole():
    # Element-wise arithmetic: the same values whether worked at once or in runs of rows
    # (arithmetic identity, no outside source needed).
    rng = np.random.default_rng(7)
    n = 53
    pick = lambda *v: np.array(v, dtype=object)[rng.integers(0, len(v), n)]  # noqa: E731
    table = pd.DataFrame({
        "technology": pick("ceramic", "aluminium-electrolytic", "tantalum", None),
        "dielectric": pick("X7R", "C0G", None), "package": pick("0402", "1206", None, "10x12"),
        "voltage_kind": pick("ac", None, "dc"), "polarized": pick(True, False, None),
        "dielectric_class": rng.choice([1.0, 2.0, 3.0, np.nan], n),
        "voltage_v": rng.choice([6.3, 50.0, np.nan], n), "capacitance_f": rng.random(n) * 1e-5,
        "tol_minus_pct": rng.choice([10.0, np.nan], n), "v_dc": rng.normal(10.0, 8.0, n),
        "v_ac_rms": rng.choice([np.nan, 1.0], n), "t_ambient_c": rng.choice([25.0, 85.0], n),
        "life_h": rng.choice([np.nan, 1e4], n), "c_min_f": rng.choice([0.0, 1e-6, np.nan], n),
        "temp_max_c": rng.choice([np.nan, 105.0], n), "tc_ppm": rng.choice([0.0, np.nan], n),
    })
    data = StressData(dc_bias={"default": ((0.0, 1.0), (1.0, 0.5)),
                               "0402": ((0.0, 1.0), (1.0, 0.2))},
                      aging_k={"X7R": 2.5, "class2": 2.5}, typical_temp_max_c={"tantalum": 125.0})
    whole = metric_arrays(Columns.of(table), data)
    runs = by_rows(lambda cols: metric_arrays(cols, data), Columns.of(table), rows=7)
    assert list(runs) == list(whole)
    for name, values in whole.items():
        assert runs[name].dtype == values.dtype, name
        np.testing.assert_array_equal(runs[name], values, err_msg=name)
