"""Tests of bomcheck.evaluate.rule_build: the cross-field checks of a rule file and the values
built (limits converted to SI once, plausible, on the right side)."""

from __future__ import annotations


import pytest
from rulefiles import problems_of, rule_toml, write

from bomcheck.errors import RuleProblem
from bomcheck.evaluate.rules import load_rules


def test_limits_are_converted_to_si_once(tmp_path):
    body = (
        rule_toml("T", metric='"t_operating_c"', fail='"110 degC"')
        + rule_toml("M", metric='"temp_margin_c"', check='"min"', fail='"30 degC"')
        + rule_toml("P", fail='"60 %"', warn='"0.5"')
        + rule_toml("R", metric='"rated_voltage_v"', check='"min"', fail='"0.1 kV"',
                    applies='{ applied_peak_below = "500 mV" }')
    )
    rs = load_rules([write(tmp_path, "units", body)])
    assert rs.rule("T").fail.value == 110.0
    assert rs.rule("M").fail.value == 30.0
    assert rs.rule("P").fail.value == pytest.approx(0.6)
    assert rs.rule("P").warn.value == pytest.approx(0.5)
    r = rs.rule("R")
    assert r.fail.value == pytest.approx(100.0)  # pint: 0.1 kV = 100 V
    assert r.applies.bounds[0].value == pytest.approx(0.5)
    assert r.applies.bounds[0].op == "<"


def test_dc_bias_fraction_out_of_range(tmp_path):
    extra = ('[dc_bias]\nlabel = "typical"\nsource = "s"\nconfidence = "trade"\n'
             'points = [[0, 1.0], [0.5, 1.2]]\n')
    path = write(tmp_path, "bad_bias", rule_toml("A") + extra)
    assert problems_of([path]) == [RuleProblem(
        path, "dc_bias.points",
        "remaining-capacitance fractions must lie between 0 and 1; found 1, 1.2")]


def test_wrong_dimension_in_curve_and_bound(tmp_path):
    body = rule_toml("A", fail='{ over = "t_operating_c", points = [["70 V", 0.5], [110, "3 A"]] }',
                     applies='{ rated_voltage_min = "10 uF" }')
    path = write(tmp_path, "dims", body)
    wheres = [p.where for p in problems_of([path])]
    assert wheres == ["rule[0].applies.rated_voltage_min (rule A)",
                      "rule[0].fail.points[0][0] (rule A)", "rule[0].fail.points[1][1] (rule A)"]


def test_unknown_curve_axis_lists_valid_names(tmp_path):
    fail = '{ over = "t_op", points = [[70, 0.5], [110, 0.3]] }'
    path = write(tmp_path, "axis", rule_toml("A", fail=fail))
    [p] = problems_of([path])
    assert p.where == "rule[0].fail.over (rule A)"
    assert "unknown curve axis 't_op'" in p.message and "t_operating_c" in p.message


def test_warn_side_for_min_checks_and_curves(tmp_path):
    curve = '{ over = "t_operating_c", points = [[70, 0.5], [110, 0.3]] }'
    lower = '{ over = "t_operating_c", points = [[70, 0.4], [110, 0.2]] }'
    body = (rule_toml("MIN", metric='"c_margin"', check='"min"', fail="1.0", warn="0.9")
            + rule_toml("CURVE", fail=curve, warn="0.4")
            + rule_toml("OK", fail=curve, warn=lower))
    path = write(tmp_path, "sides", body)
    wheres = [p.where for p in problems_of([path])]
    assert wheres == ["rule[0].warn (rule MIN)", "rule[1].warn (rule CURVE)"]


def test_ratio_written_as_percent_number(tmp_path):
    [p] = problems_of([write(tmp_path, "pct", rule_toml("A", fail="60"))])
    assert p.message.startswith("ratio limit 60 reads as 6000 %")


def test_only_if_given_names_known_columns(tmp_path):
    ok = load_rules([write(tmp_path, "given", rule_toml(
        "A", metric='"c_margin"', check='"min"', fail="1.0",
        applies='{ only_if_given = ["c_min_f"] }'))])
    assert ok.rule("A").applies.only_if_given == ("c_min_f",)
    assert ok.rule("A").applies.text() == "where c_min_f given"
    path = write(tmp_path, "bad_given", rule_toml("A", applies='{ only_if_given = ["c_need"] }'))
    [p] = problems_of([path])
    assert p.where == "rule[0].applies.only_if_given[0] (rule A)"
    assert p.message.startswith("unknown column 'c_need'")


@pytest.mark.parametrize("limit, problem", [
    ('"5 V * 0"', "not a quantity"),  # issue 10: never evaluated as an expression
    ('"9**9**9 V"', "not a quantity"),
    ('"V"', "not a quantity"),
    ('"1e400 V"', "out of range"),  # issue 10: was an infinite limit
    ('"inf V"', "not a finite number"),
    ('"200 kV"', "implausible voltage"),  # common practice: units.PLAUSIBLE
    ("2e5", "implausible voltage"),
])
def test_limit_strings_are_strict_and_plausible(tmp_path, limit, problem):
    [p] = problems_of([write(tmp_path, "bad", rule_toml(
        "R", metric='"rated_voltage_v"', check='"min"', fail=limit))])
    assert problem in p.message and "fail" in p.where


def test_ratio_limit_1e400_percent_is_refused(tmp_path):
    # issue 10: a rule limit "1e400 %" made the JSON report invalid.
    [p] = problems_of([write(tmp_path, "bad", rule_toml("R", fail='"1e400 %"'))])
    assert "out of range" in p.message
