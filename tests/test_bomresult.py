"""Normalise stage (bomcheck/parse/bomresult.py): the values a BOM import returns: findings with
the severity their code carries, their order, and the result's approved-source table."""

from __future__ import annotations

import dataclasses
import json

import pandas as pd
import pytest

from bomcheck.parse.bomresult import (NODATA_CODES, PLACEMENT_COLUMNS, SOURCE_COLUMNS, BomSource,
                                      ImportOptions, ImportResult, finding)
from bomcheck.spec import SPEC_KEYS


@pytest.mark.parametrize("code", sorted(NODATA_CODES))
def test_codes_whose_data_cannot_be_trusted_are_nodata(code):
    # No wrong pass (project rule): a placement whose data was not read as written is never a
    # pass, so these findings carry the nodata status, not a warning.
    assert finding(3, "C1", code, "m").severity == "nodata"


@pytest.mark.parametrize("code", ["qty_mismatch", "column_conflict", "capacitance_missing"])
def test_other_codes_are_warnings(code):
    # Usable data a reviewer should look at is a warning (project rule, ImportFinding docstring).
    assert finding(3, "C1", code, "m").severity == "warn"


def test_findings_sort_by_row_then_designator_and_a_line_finding_comes_first():
    # Reproducible output (project rule): findings in file order, a whole-line finding first.
    a = finding(4, "C2", "column_conflict", "x")
    b = finding(4, None, "qty_mismatch", "y")
    c = finding(2, "C9", "value_unread", "z")
    assert sorted([a, b, c]) == [c, b, a]


def test_finding_and_source_are_plain_json():
    # RFC 8259: the values round-trip through JSON unchanged.
    f = finding(5, "C3", "value_unread", "unread '1,500uF'")
    assert json.loads(json.dumps(f.to_dict())) == {
        "row": 5, "refdes": "C3", "code": "value_unread", "message": "unread '1,500uF'",
        "severity": "nodata"}
    src = BomSource("bom.csv", "0" * 64, "csv", "utf-8", None, 1, {"refdes": "Designator"})
    assert json.loads(json.dumps(src.to_dict()))["columns"] == {"refdes": "Designator"}


def test_options_are_frozen():
    # Frozen option values (project style guide).
    with pytest.raises(dataclasses.FrozenInstanceError):
        ImportOptions().sheet = 2  # type: ignore[misc]


def test_placement_columns_carry_every_spec_field_but_the_text():
    # One source per fact (project style guide): the placement table is the spec's fields.
    assert set(SPEC_KEYS) - {"text"} <= set(PLACEMENT_COLUMNS)
    assert len(set(PLACEMENT_COLUMNS)) == len(PLACEMENT_COLUMNS)


def _result(**kw) -> ImportResult:
    src = BomSource("bom.csv", "0" * 64, "csv", "utf-8", None, 1, {})
    return ImportResult(src, pd.DataFrame(), pd.DataFrame(), (), {}, **kw)


def test_sources_are_built_on_first_use_and_once():
    # Common practice (lazy evaluation): most callers never ask for the approved sources.
    calls = []

    def build() -> pd.DataFrame:
        calls.append(1)
        return pd.DataFrame({c: [0] for c in SOURCE_COLUMNS})

    r = _result(source_table=build)
    assert calls == []
    assert len(r.sources) == 1 and len(r.sources) == 1 and calls == [1]


def test_without_a_source_table_the_sources_are_empty_with_typed_columns():
    # An empty table keeps its column types, so joins on it still work (pandas semantics).
    s = _result().sources
    assert list(s.columns) == list(SOURCE_COLUMNS) and s.empty
    assert str(s["line"].dtype) == "int64" and str(s["mpn"].dtype) == "object"
