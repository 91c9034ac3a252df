"""The JSON report, schema version 2 (bomcheck.report.jsonform and Report.iter_json): column-wise
text, chunked streaming, defaults a reader can rebuild every verdict from."""

import json
import math
from importlib import resources

import jsonschema
import numpy as np
import orjson
import pandas as pd
import pytest

from conftest import SAMPLE_BOM as BOM
from conftest import SAMPLE_DESIGN as DESIGN
from conftest import SAMPLE_PARTS as PARTS
from hostile_cells import DESIGN as DESIGN_HEAD
from hostile_cells import HEADER as BOM_HEADER

from bomcheck.report import jsonform as report_json
from bomcheck.pipeline.audit import AuditOptions, run_audit
from bomcheck.report.jsonform import column_texts, objects

SCHEMA = json.loads(resources.files("bomcheck.schemas").joinpath("report.schema.json")
                    .read_text("utf-8"))


@pytest.fixture(scope="module")
def sample(sample_report_for):
    """The sample board with its parts data under the default rule set (``industrial``)."""
    return sample_report_for("industrial")


@pytest.fixture(scope="module")
def data(sample):
    return json.loads(sample.to_json())


def test_column_texts_leave_out_null_nan_infinity_and_empty():
    # RFC 8259 section 6: NaN and Infinity are not JSON numbers, so they are never written.
    texts, present = column_texts(pd.Series([1.5, np.nan, np.inf, -np.inf, 1e-7]))
    assert present.tolist() == [True, False, False, False, True]
    assert [json.loads(t) for t, p in zip(texts, present) if p] == [1.5, 1e-7]
    texts, present = column_texts(pd.Series(["a \"q\" µF", "", None, "b"], dtype=object))
    assert present.tolist() == [True, False, False, True]
    assert json.loads(texts[0]) == 'a "q" µF' and "µ" in texts[0]  # non-ASCII kept as is
    texts, present = column_texts(pd.Series([2.0, np.nan]), "design_row")
    assert texts[0] == "2" and not present[1]


def test_column_texts_only_where_asked():
    texts, present = column_texts(pd.Series(["x", "y", "z"]), only=np.array([True, False, True]))
    assert present.tolist() == [True, False, True] and texts[1] == ""


def test_objects_write_each_row_with_its_own_keys():
    a = column_texts(pd.Series([1.0, np.nan, 3.0]))
    b = column_texts(pd.Series(["u", "v", ""], dtype=object))
    rows = objects([("a", *a), ("b", *b)], 3)
    assert [json.loads(r) for r in rows] == [{"a": 1.0, "b": "u"}, {"b": "v"}, {"a": 3.0}]
    assert objects([], 2) == ["{}", "{}"]


def test_report_validates_and_is_byte_identical(sample, data):
    jsonschema.validate(data, SCHEMA)
    assert data["schema_version"] == 2
    # a fresh run of the same inputs (not the session's report) writes the same bytes
    again = run_audit(str(BOM), str(DESIGN), AuditOptions(parts=str(PARTS)))
    assert "".join(again.iter_json()) == sample.to_json()
    assert "NaN" not in sample.to_json() and "Infinity" not in sample.to_json()


def test_chunks_give_the_same_bytes_and_bounded_pieces(sample, monkeypatch):
    whole = sample.to_json()
    monkeypatch.setattr(report_json, "CHUNK", 7)
    pieces = list(sample.iter_json())
    assert "".join(pieces) == whole
    n = len(sample.table)
    assert len(pieces) == 2 + math.ceil(n / 7)  # head, one piece per chunk, tail
    biggest = max(len(p) for p in pieces[1:-1])
    assert biggest < len(whole) / 3


def test_every_verdict_rebuilds_from_its_defaults(sample, data):
    """A reader fills a left-out key from the rule's entry and the placement's metric, and gets
    the verdict table back exactly."""
    by_refdes = {p["refdes"]: p for p in data["placements"]}
    v = sample.with_messages(sample.verdicts)
    rebuilt = 0
    for refdes, rule, status, value, limit, margin, message in zip(
            v["refdes"], v["rule_id"], v["status"], v["value"], v["limit"], v["margin"],
            v["message"]):
        p = by_refdes[refdes]
        got = next(x for x in p["verdicts"] if x["rule"] == rule)
        entry = data["rules"][rule]
        assert got["status"] == status
        want_value = got["value"] if "value" in got else p["metrics"].get(entry["metric"])
        for mine, theirs in ((want_value, value), (got.get("limit", entry["limit"]), limit),
                             (got.get("margin"), margin)):
            if theirs is None or (isinstance(theirs, float) and math.isnan(theirs)):
                assert mine is None
            else:
                assert mine == pytest.approx(theirs, rel=0, abs=0)
        assert (got.get("message") == message) if status != "pass" else "message" not in got
        rebuilt += 1
    assert rebuilt == len(v) > 0


def test_specs_are_shared_and_placements_point_at_them(sample, data):
    specs = data["specs"]
    assert len(specs) < len(data["placements"])
    for p, (_, row) in zip(data["placements"], sample.table.iterrows()):
        spec = specs[p["spec"]]
        assert spec["technology"] == (row["technology"] if isinstance(row["technology"], str)
                                      else None)
        assert spec["voltage_v"] == (None if pd.isna(row["voltage_v"]) else row["voltage_v"])


def test_conditions_and_metrics_leave_out_what_is_unknown(data):
    c4 = next(p for p in data["placements"] if p["refdes"] == "C4")
    assert c4["conditions"]["condition_source"] == "group"
    assert all(v is not None and v != "" for p in data["placements"]
               for part in ("conditions", "metrics") for v in p[part].values())
    assert c4["mpn"]  # where-used reads the part number from the placement


def test_distinct_columns_leave_out_missing_values_too():
    texts, present = column_texts(pd.Series(["C1", None, np.nan, ""], dtype=object), "refdes")
    assert present.tolist() == [True, False, False, False] and texts[0] == '"C1"'


def test_floats_round_trip_exactly():
    values = np.array([0.1, 1 / 3, 4.23e-05, 1e300, -2.5e-310, 12.0, 0.038943750000000055])
    texts, present = column_texts(pd.Series(values))
    assert present.all()
    assert [json.loads(t) for t in texts] == values.tolist()  # shortest round-trip text


def test_flags_write_true_and_false_and_leave_out_unknown():
    texts, present = column_texts(pd.Series([True, False]))
    assert texts.tolist() == ["true", "false"] and present.all()
    texts, present = column_texts(pd.Series([True, None], dtype="boolean"))
    assert texts[0] == "true" and present.tolist() == [True, False]


# Moved from test_textsafe.py.
def test_report_json_survives_an_infinite_metric(tmp_path):
    """A 0 V rating gives an infinite stress ratio: the JSON report stays strict JSON."""
    (tmp_path / "bom.csv").write_text(BOM_HEADER + "C1,1,100nF 16V X7R,x,y,Yes\n",
                                      encoding="utf-8")
    (tmp_path / "design.csv").write_text(DESIGN_HEAD + "C1,5,55,none\n", encoding="utf-8")
    report = run_audit(str(tmp_path / "bom.csv"), str(tmp_path / "design.csv"))
    report.table.loc[:, "voltage_ratio"] = np.inf
    report.verdicts.loc[:, "value"] = np.inf
    text = report.to_json()
    data = json.loads(text, parse_constant=lambda c: pytest.fail(c))
    assert data["placements"][0]["metrics"].get("voltage_ratio") is None  # left out, or null


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
