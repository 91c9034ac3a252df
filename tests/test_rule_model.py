"""Tests of bomcheck.evaluate.rule_model: limits and curves, their texts, the rules table and
the typical data a rule set carries."""

from __future__ import annotations


import numpy as np
from rulefiles import rule_toml, write

from bomcheck.evaluate.rule_model import Limit
from bomcheck.evaluate.rules import load_rules


def test_curve_limits_linear_and_step():
    # NASA EEE-INST-002 Section C1 Table 4 (reference sheet 1.1, derived check values):
    # solid tantalum 90 degC -> 0.40 linear, 0.30 step; wet slug 90 degC -> 0.50.
    strict = load_rules(["strict"])
    x = np.array([50.0, 70.0, 90.0, 110.0, 130.0, np.nan])
    linear = strict.rule("EEE-TAN-V").fail.at(x, len(x))
    step = strict.rule("EEE-TAN-V-STEP").fail.at(x, len(x))
    wet = strict.rule("EEE-TAW-V").fail.at(x, len(x))
    np.testing.assert_allclose(linear[:5], [0.5, 0.5, 0.4, 0.3, 0.3])
    np.testing.assert_allclose(step[:5], [0.5, 0.5, 0.3, 0.3, 0.3])
    np.testing.assert_allclose(wet[:5], [0.6, 0.6, 0.5, 0.4, 0.4])
    assert np.isnan(linear[5]) and np.isnan(step[5])


def test_industrial_category_voltage_curves():
    # Makers' published practice (common practice), reference sheet 1.4, derived values:
    # tantalum 95/105/115 degC -> 91.7/83.3/75 %; film 95/100/105 degC -> 87.5/81.25/75 %.
    ind = load_rules(["industrial"])
    tan = ind.rule("IND-TAN-CAT").fail.at(np.array([85.0, 95.0, 105.0, 115.0]), 4)
    film = ind.rule("IND-FLM-CAT").fail.at(np.array([85.0, 95.0, 100.0, 105.0]), 4)
    np.testing.assert_allclose(tan, [1.0, 0.917, 0.833, 0.75], atol=5e-4)
    np.testing.assert_allclose(film, [1.0, 0.875, 0.8125, 0.75])


def test_limit_text():
    strict = load_rules(["strict"])
    assert strict.rule("EEE-CER-V").fail.text("voltage_ratio") == "60 %"
    assert strict.rule("EEE-CER-T").fail.text("t_operating_c") == "110 degC"
    assert (strict.rule("EEE-TAN-V").fail.text("voltage_ratio")
            == "50 % at 70 degC or below, linear to 30 % at 110 degC "
               "(over t_operating_c, flat beyond)")
    assert (strict.rule("EEE-TAN-V-STEP").fail.text("voltage_ratio")
            == "50 % up to 70 degC, 30 % above (t_operating_c, step)")
    assert Limit(value=0.5).at(None, 3).tolist() == [0.5, 0.5, 0.5]


def test_describe_rows_for_the_rules_table():
    rows = {row.id: row for row in load_rules(["strict"]).describe()}
    tan = rows["EEE-TAN-V"]
    assert tan.applies == "technology tantalum; DC-rated"
    assert tan.metric == "voltage_ratio" and tan.check == "max" and tan.severity == "fail"
    assert tan.fail.startswith("50 % at 70 degC or below")
    assert tan.source == "NASA EEE-INST-002 Section C1 Table 4"
    assert rows["EEE-CER-LV"].applies == "technology ceramic; DC-rated; applied peak < 10 V"
    assert rows["EEE-CER-LV"].enabled is False
    assert rows["EEE-EMI-V"].applies == "EMI filter"
    ind = {row.id: row for row in load_rules(["industrial"]).describe()}
    assert ind["IND-CER-V"].fail == "70 %" and ind["IND-CER-V"].warn == "60 %"
    assert ind["IND-TPO-V-HIGH"].applies == "technology tantalum-polymer; DC-rated; rated > 10 V"
    assert set(tan.to_dict()) == {"id", "title", "applies", "metric", "check", "fail", "warn",
                                  "severity", "enabled", "source"}


def test_generic_dc_bias_curve():
    # A generic class II curve is "typical, common practice" (reference sheet section 3): no
    # standard gives one; check its shape, not its figures.
    rs = load_rules(["strict"])
    xs, ys = rs.dc_bias_curve()
    assert xs[0] == 0.0 and ys[0] == 1.0
    assert np.all(np.diff(xs) > 0) and np.all(np.diff(ys) <= 0)
    assert rs.dc_bias.label == "typical, common practice"
    assert rs.dc_bias_curve("0805")[1].tolist() == ys.tolist()  # no case-size curve shipped


def test_case_size_dc_bias_curve(tmp_path):
    extra = ('[dc_bias]\nlabel = "typical"\nsource = "s"\nconfidence = "trade"\n'
             'points = [[0, 1.0], [1, 0.5]]\n[dc_bias.package]\n"0402" = [[0, 1.0], [1, 0.2]]\n')
    rs = load_rules([write(tmp_path, "bias", rule_toml("A") + extra)])
    assert rs.dc_bias_curve("0402")[1].tolist() == [1.0, 0.2]
    assert rs.dc_bias_curve("1206")[1].tolist() == [1.0, 0.5]
    assert load_rules([write(tmp_path, "nobias", rule_toml("A"))]).dc_bias_curve() is None


def test_aging_constants():
    # Reference sheet section 3 (trade, common practice): k in % per decade hour, X7R/X5R about
    # 1-4 (2.5 typical), Y5V 6-10, Z5U 4-7, C0G about 0.
    rs = load_rules(["industrial"])
    assert rs.aging_k("X7R") == 2.5 and rs.aging_k("x5r") == 2.5
    assert 6.0 <= rs.aging_k("Y5V") <= 10.0
    assert 4.0 <= rs.aging_k("Z5U") <= 7.0
    assert rs.aging_k("C0G") == 0.0
    assert rs.aging_k("X6S", 2) == 2.5  # no entry for the code: its EIA class
    assert rs.aging_k("ABC") is None
    assert rs.aging.t0_h == 1.0


def test_rule_needs_inputs_before_metric():
    rule = load_rules(["strict"]).rule("EEE-TAN-V")
    assert rule.needs() == ("applied_peak_v", "voltage_v", "voltage_ratio", "t_ambient_c",
                            "t_operating_c")
    assert load_rules(["strict"]).rule("EEE-CER-LV").needs() == (
        "voltage_v", "rated_voltage_v", "applied_peak_v")
