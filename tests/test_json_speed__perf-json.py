"""Speed work on the JSON report and the evaluation (issue 13): the faster paths give the same
values as the plain ones."""

import json
import tracemalloc

import numpy as np
import orjson
import pandas as pd

from bomcheck.evaluate import engine
from bomcheck.evaluate.columns import Columns
from bomcheck.evaluate.rules import load_rules
from bomcheck.report.jsonform import column_texts


def test_float_texts_are_the_shortest_round_trip_text_of_python_floats():
    # RFC 8259 section 6 (a number is decimal text) and the shortest text that reads back as
    # the same double (common practice): the array path must write what orjson writes for the
    # same values as Python floats.
    rng = np.random.default_rng(13)
    values = np.concatenate([
        rng.random(2000) * 10.0 ** rng.integers(-15, 15, 2000),
        [0.0, -0.0, 0.1, 1 / 3, 12.0, 4.23e-05, 1e16, 1e300, 5e-324, -2.5e-310],
    ])
    texts, present = column_texts(pd.Series(values))
    assert present.all()
    assert list(texts) == orjson.dumps(values.tolist()).decode()[1:-1].split(",")
    assert [json.loads(t) for t in texts] == values.tolist()


def test_float_texts_of_a_strided_column():
    # A column taken from a wider block is not contiguous; its texts are the same.
    block = np.arange(12, dtype=float).reshape(4, 3) / 7
    texts, _ = column_texts(block[:, 1])
    assert [json.loads(t) for t in texts] == block[:, 1].tolist()


def test_unverdicted_metrics_are_blanked_without_copying_the_others():
    table = pd.DataFrame({
        "refdes": ["C1", "C2"], "voltage_ratio": [0.5, 0.9], "rated_voltage_v": [10.0, 16.0],
        "life_ratio": [2.0, 3.0], "other": [1.0, 2.0],
    })
    verdicts = pd.DataFrame({"pidx": np.array([], dtype=np.int64),
                             "rule_id": np.array([], dtype=object)})
    out = engine.without_unverdicted(table, verdicts, load_rules(("industrial",)))
    # No rule gave a verdict: every metric is blank, every other column is the input's own.
    assert out["voltage_ratio"].isna().all() and out["life_ratio"].isna().all()
    assert list(out.columns) == list(table.columns)
    assert np.shares_memory(out["other"].to_numpy(), table["other"].to_numpy())
    assert out["refdes"].tolist() == ["C1", "C2"]


def test_blanking_metrics_holds_one_new_copy_of_each_blanked_column():
    # Memory at scale (issue 13): the blanked columns are made once and form the new table; a
    # concatenation in column order copied them a second time.
    n = 200_000
    metrics = ("voltage_ratio", "rated_voltage_v", "life_ratio", "ripple_ratio")
    table = pd.DataFrame({m: np.linspace(0.1, 1.0, n) for m in metrics})
    table["refdes"] = "C1"
    verdicts = pd.DataFrame({"pidx": np.array([], dtype=np.int64),
                             "rule_id": np.array([], dtype=object)})
    rules = load_rules(("industrial",))
    tracemalloc.start()
    try:
        out = engine.without_unverdicted(table, verdicts, rules)
        _, peak = tracemalloc.get_traced_memory()
    finally:
        tracemalloc.stop()
    blanked = len(metrics) * n * 8
    assert out[list(metrics)].isna().all().all()
    assert peak < 1.5 * blanked, (peak, blanked)


def test_numeric_columns_read_alike_in_place_and_with_missing_values():
    table = pd.DataFrame({"a": [1.0, np.nan], "b": pd.array([3, None], dtype="Int64"),
                          "c": ["4.5", "x"]})
    cols = Columns(table)
    assert np.array_equal(cols.num("a"), [1.0, np.nan], equal_nan=True)
    assert np.array_equal(cols.num("b"), [3.0, np.nan], equal_nan=True)
    assert np.array_equal(cols.num("c"), [4.5, np.nan], equal_nan=True)
    assert np.isnan(cols.num("missing")).all()
