"""Evaluate stage (bomcheck/evaluate/messages.py): the one-line verdict messages, built from
codes and numbers only for the verdicts an output prints (each distinct body formatted once)."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from verdictcases import placement, strict, synthetic, verdict  # noqa: F401

from bomcheck.evaluate.columns import Coded
from bomcheck.evaluate.engine import evaluate, evaluate_lazily
from bomcheck.evaluate.messages import _distinct_rows, _measured, _template
from bomcheck.vocabulary import INPUT_LABELS


def test_template_splits_a_metric_explain_text_into_literals_and_fields():
    # Python str.format field syntax (string.Formatter).
    literals, fields = _template("{applied_peak_v:V} peak / {voltage_v:V} rated = ")
    assert literals == ["", " peak / ", " rated = "]
    assert fields == [("applied_peak_v", "V"), ("voltage_v", "V")]


def test_measured_part_falls_back_to_the_metric_name_where_an_input_is_unknown():
    # A message never prints "?" as a figure it rests on (project wording); arithmetic 14.2/25 =
    # 56.8 %.
    literals, _ = _template("{applied_peak_v:V} peak / {voltage_v:V} rated = ")
    texts = [["14.2 V", "?"], ["25 V", "25 V"], ["56.8 %", "92 %"]]
    assert _measured(literals, texts, "voltage_ratio") == [
        "14.2 V peak / 25 V rated = 56.8 %", "voltage ratio 92 %"]


def test_distinct_rows_numbers_each_combination_of_codes_once_in_first_seen_order():
    # Style guide: each distinct string built once (work on columns, not rows).
    a = Coded(np.array([0, 1, 0, 1, 0]), ["x", "y"])
    b = Coded(np.array([0, 0, 0, 1, 0]), ["p", "q"])
    first, inverse = _distinct_rows([a, b], 5)
    assert first.tolist() == [0, 1, 3] and inverse.tolist() == [0, 1, 0, 2, 0]


def test_a_failure_hidden_by_rounding_is_printed_with_the_digits_that_show_it(strict):
    # 15.0006 V on 25 V is 60.0024 %, above the 60 % limit of NASA EEE-INST-002 Section C1
    # Table 4 for ceramics; at four digits both would print as 60 % (arithmetic).
    v = verdict(strict, "EEE-CER-V", refdes="C3", technology="ceramic", voltage_v=25.0,
                applied_peak_v=15.0006)
    assert v.status == "fail"
    assert "= 60.002 % > 60 % limit" in v.message  # just enough digits, not more


def test_message_names_inputs_limit_curve_context_and_source(strict):
    # NASA EEE-INST-002 Section C1 Table 4: solid tantalum at 85 degC -> 0.50 - 15/40 x 0.20
    # = 0.425; 14.2 V on 25 V = 56.8 %
    v = verdict(strict, "EEE-TAN-V", refdes="C14", technology="tantalum", voltage_v=25.0,
                applied_peak_v=14.2, t_ambient_c=85.0)
    assert v.status == "fail"
    assert v.message == ("C14: 14.2 V peak / 25 V rated = 56.8 % > 42.5 % limit "
                         "(tantalum at 85 degC; NASA EEE-INST-002 Section C1 Table 4)")
    assert v.source == "NASA EEE-INST-002 Section C1 Table 4"
    assert v.margin == pytest.approx(0.425 - 0.568)


def test_pass_and_constant_messages(strict):
    v = verdict(strict, "EEE-CER-V", refdes="C3", technology="ceramic", voltage_v=50.0,
                applied_peak_v=13.2)
    assert v.message == ("C3: 13.2 V peak / 50 V rated = 26.4 % <= 60 % limit "
                         "(ceramic; NASA EEE-INST-002 Section C1 Table 4)")
    v = verdict(strict, "EEE-EMI-TM", refdes="FL1", technology="ceramic", emi_filter=True,
                temp_max_c=125.0, t_ambient_c=100.0)
    assert v.status == "fail"
    assert v.message == ("FL1: 125 degC rated max - 100 degC operating = 25 degC < 30 degC limit "
                         "(ceramic; NASA EEE-INST-002 Section F2 Table 4)")


def test_capacitance_message_uses_prefixes(strict):
    v = verdict(strict, "STRICT-CMARGIN", refdes="C9", capacitance_f=10e-6, c_worst_f=3.9e-6,
                c_min_f=4.7e-6, c_margin=3.9 / 4.7)
    assert v.status == "fail"
    assert v.message.startswith("C9: 3.9 uF worst case / 4.7 uF required = 82.98 % < 100 % limit")


def test_nodata_names_the_missing_input(strict):
    v = verdict(strict, "EEE-CER-V", refdes="C2", technology="ceramic", applied_peak_v=5.0)
    assert v.status == "nodata"
    assert np.isnan(v.value) and np.isnan(v.margin)
    assert v.message == ("C2: no data for ceramic voltage factor: missing "
                         f"{INPUT_LABELS['voltage_v']}; NASA EEE-INST-002 Section C1 Table 4")


def test_nodata_for_a_curve_without_temperature(strict):
    v = verdict(strict, "EEE-TAN-V", technology="tantalum", voltage_v=16.0, applied_peak_v=6.0)
    assert v.status == "nodata"
    assert INPUT_LABELS["t_ambient_c"] in v.message
    assert "t_operating_c" not in v.message  # the root cause, not what follows from it


def test_nodata_names_every_missing_root_input(strict):
    v = verdict(strict, "EEE-CER-V", technology="ceramic")
    assert INPUT_LABELS["applied_peak_v"] in v.message
    assert INPUT_LABELS["voltage_v"] in v.message
    assert "voltage_ratio" not in v.message


def test_metric_missing_with_its_inputs_present(strict):
    row = placement(technology="ceramic", voltage_v=25.0, applied_peak_v=10.0)
    del row["voltage_ratio"]
    rs = strict.with_rules([strict.rule("EEE-CER-V")])
    v = evaluate(pd.DataFrame([row]), rs).iloc[0]
    assert v.status == "nodata"
    assert "voltage_ratio (not computed by the stress stage)" in v.message


def test_lazy_messages_are_the_eager_ones_rendered_on_demand(strict):
    # Verdicts carry no message until an output asks (most are never printed); the text
    # rendered then is the one the eager evaluation gives, byte for byte.
    table = synthetic(2_000)
    eager = evaluate(table, strict)
    lazy, messages = evaluate_lazily(table, strict)
    passing = (lazy.status == "pass").to_numpy()
    assert passing.any() and (~passing).any()
    assert lazy.message.isna().all() and eager.message.notna().all()
    assert lazy.drop(columns="message").equals(eager.drop(columns="message"))
    rendered = messages.for_verdicts(lazy.pidx.to_numpy(), lazy.rule_id.to_numpy())
    assert rendered.tolist() == eager.message.tolist()
    # A verdict the evaluation did not give (another rule id, another placement) has none.
    assert messages.for_verdicts(np.array([0, 10**6]), np.array(["design.missing",
                                                                  "EEE-TAN-V"])).tolist() == [
        None, None]


def test_metric_present_with_a_declared_input_absent(strict):
    # An AC-rated part: the stress stage gives its voltage ratio from the AC rms voltage, with no
    # DC applied peak; the verdict stands and the message shows the ratio alone.
    v = verdict(strict, "STRICT-V-RATED", refdes="C61", technology="film", voltage_kind="ac",
                voltage_v=275.0, v_ac_rms=253.0, voltage_ratio=253.0 / 275.0)
    assert v.status == "pass"
    assert v.message == ("C61: voltage ratio 92 % <= 100 % limit (film; common practice (never "
                         "above the rated voltage))")
