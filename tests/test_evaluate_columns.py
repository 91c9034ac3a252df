"""Evaluate stage (bomcheck/evaluate/columns.py): the placement table's columns as the engine
reads them (each converted and formatted once per table) and the mask of placements a rule's
``applies`` table selects."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from bomcheck.evaluate.columns import Columns, applies_mask, coded_values, object_codes, round_sig
from bomcheck.evaluate.rule_model import Applies, Bound

TABLE = pd.DataFrame({
    "refdes": ["C1", "C2", "C3", "C4"],
    "technology": ["ceramic", "tantalum", "ceramic", None],
    "dielectric": ["x7r", None, "C0G", None],
    "dielectric_class": [2, np.nan, 1, np.nan],
    "polarized": [False, True, False, None],
    "voltage_kind": [None, "dc", "ac", None],
    "voltage_v": [50.0, 16.0, np.nan, "n/a"],
})


def test_round_sig_keeps_four_significant_digits_and_leaves_nan_and_inf():
    # Arithmetic: four significant digits, as the messages print them.
    got = round_sig(np.array([14.2345, 0.000123456, 123456.0, np.nan, np.inf, 0.0]))
    assert got[:3].tolist() == [14.23, 0.0001235, 123500.0]
    assert np.isnan(got[3]) and got[4] == np.inf and got[5] == 0.0


def test_coded_values_format_each_distinct_printed_value_once():
    # 14.2341 and 14.2349 print alike at four digits and share one string; NaN prints "?".
    c = coded_values(np.array([14.2341, 14.2349, np.nan, 5.0]), "V")
    assert [c.lookup[k] for k in c.codes] == ["14.23 V", "14.23 V", "?", "5 V"]
    assert len(c.lookup) == 3


def test_num_text_and_factor_of_present_and_missing_columns():
    cols = Columns(TABLE)
    v = cols.num("voltage_v")
    assert v[:2].tolist() == [50.0, 16.0] and np.isnan(v[2]) and np.isnan(v[3])
    assert np.isnan(cols.num("no_such_column")).all()
    assert cols.text("dielectric").tolist() == ["x7r", "", "C0G", ""]
    codes, uniques = cols.factor("technology")
    assert codes.tolist() == [0, 1, 0, -1] and uniques == ["ceramic", "tantalum"]
    assert cols.num("voltage_v") is v  # converted once per table


def test_isin_is_case_blind_and_is_true_needs_a_real_true():
    # Rule data match case-blind (rule_model.Applies docstring); a missing flag is not true (no
    # wrong pass).
    cols = Columns(TABLE)
    assert cols.isin("dielectric", ("X7R", "c0g")).tolist() == [True, False, True, False]
    assert cols.is_true("polarized").tolist() == [False, True, False, False]


@pytest.mark.parametrize(("applies", "expected"), [
    (Applies(), [True, True, True, True]),
    (Applies(technology=("Ceramic",)), [True, False, True, False]),
    (Applies(dielectric_class=(2,)), [True, False, False, False]),
    (Applies(polarized=True), [False, True, False, False]),
    (Applies(polarized=False), [True, False, True, True]),
    # A rating that says neither DC nor AC is read as DC (common practice).
    (Applies(voltage_kind="dc"), [True, True, False, True]),
    (Applies(voltage_kind="ac"), [False, False, True, False]),
    # A bound on an unknown value applies, so the verdict is "no data", never silence (project
    # rule: no wrong pass).
    (Applies(bounds=(Bound("rated_voltage_min", "voltage_v", ">=", 20.0, "rated voltage"),)),
     [True, False, True, True]),
    # only_if_given: nothing to check where the value is not stated.
    (Applies(only_if_given=("voltage_v",)), [True, True, False, False]),
])
def test_applies_mask(applies, expected):
    assert applies_mask(applies, Columns(TABLE)).tolist() == expected


def test_numeric_columns_read_alike_in_place_and_with_missing_values():
    table = pd.DataFrame({"a": [1.0, np.nan], "b": pd.array([3, None], dtype="Int64"),
                          "c": ["4.5", "x"]})
    cols = Columns(table)
    assert np.array_equal(cols.num("a"), [1.0, np.nan], equal_nan=True)
    assert np.array_equal(cols.num("b"), [3.0, np.nan], equal_nan=True)
    assert np.array_equal(cols.num("c"), [4.5, np.nan], equal_nan=True)
    assert np.isnan(cols.num("missing")).all()


# object_codes: the fast column codes give what ``pd.factorize`` gives (equivalence with pandas'
# own factorize: common practice, no outside figure involved).
def _same_as_factorize(values):
    codes, uniques = object_codes(values)
    want_codes, want_uniques = pd.factorize(np.asarray(values, dtype=object)
                                            if not isinstance(values, pd.Series) else values)
    assert codes.tolist() == np.asarray(want_codes).tolist()
    assert [str(u) for u in uniques] == [str(u) for u in list(want_uniques)]


def test_equal_texts_in_distinct_objects_share_one_code():
    a = "".join(["ru", "le.a"])  # built at run time: a distinct object equal to "rule.a"
    values = np.array(["rule.b", a, "rule.a", None, "rule.b", float("nan"), a], dtype=object)
    codes, uniques = object_codes(values)
    assert uniques == ["rule.b", "rule.a"]
    assert codes.tolist() == [0, 1, 1, -1, 0, -1, 1]
    _same_as_factorize(values)


def test_series_of_object_and_of_string_dtype_and_empty():
    rng = np.random.default_rng(7)
    ids = np.array(["x", "y", "z", 3, 2.5], dtype=object)[rng.integers(0, 5, 1000)]
    _same_as_factorize(pd.Series(ids, dtype=object))
    _same_as_factorize(pd.Series(["pass", "fail", None, "pass"], dtype="str"))
    codes, uniques = object_codes(pd.Series([], dtype=object))
    assert codes.tolist() == [] and uniques == []


def test_a_strided_object_array_gives_the_same_codes():
    values = np.array(["a", "b", "a", "c", "b", "a"], dtype=object)[::2]
    assert object_codes(values)[0].tolist() == [0, 0, 1]
