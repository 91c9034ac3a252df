"""Tests of bomcheck.evaluate.rules: loading, validating and merging rule sets."""

from __future__ import annotations

import json
import tomllib
from importlib import resources

import jsonschema
import numpy as np
import pytest

from bomcheck.errors import RuleError, RuleProblem
from bomcheck.evaluate.rules import (
    DEFAULT_RULESET,
    Limit,
    json_path,
    load_rules,
    shipped_names,
    shipped_root,
)
from bomcheck.vocabulary import METRICS

HEAD = '[ruleset]\nname = "{name}"\ntitle = "t"\nversion = "1"\n'


def rule_toml(rid: str, **keys: str) -> str:
    """A valid [[rule]] table; ``keys`` replace or add TOML lines (value text as written)."""
    lines = {
        "id": f'"{rid}"', "title": '"t"', "metric": '"voltage_ratio"', "check": '"max"',
        "fail": "0.6", "severity": '"fail"', "source": '"s"', "confidence": '"trade"',
        "rationale": '"r"',
    }
    lines.update(keys)
    return "[[rule]]\n" + "".join(f"{k} = {v}\n" for k, v in lines.items() if v is not None)


def write(tmp_path, name: str, body: str, extends: str | None = None, extra_head: str = "") -> str:
    head = HEAD.format(name=name) + (f'extends = "{extends}"\n' if extends else "") + extra_head
    path = tmp_path / f"{name}.toml"
    path.write_text(head + "\n" + body, encoding="utf-8")
    return str(path)


def problems_of(specs: list[str]) -> list[RuleProblem]:
    with pytest.raises(RuleError) as info:
        load_rules(specs)
    return info.value.problems


# ---- shipped sets --------------------------------------------------------------------------------

def _schema() -> dict:
    return json.loads(resources.files("bomcheck.schemas").joinpath("rules.schema.json")
                      .read_text("utf-8"))


def test_schema_is_a_valid_draft_2020_12_schema():
    jsonschema.Draft202012Validator.check_schema(_schema())


@pytest.mark.parametrize("name", shipped_names())
def test_every_shipped_set_validates(name):
    # At run time shipped sets skip the JSON Schema (speed); this test is their schema check.
    text = shipped_root().joinpath(f"{name}.toml").read_text("utf-8")
    errors = list(jsonschema.Draft202012Validator(_schema()).iter_errors(tomllib.loads(text)))
    assert errors == []
    rs = load_rules([name])
    assert rs.enabled_rules
    assert all(r.source and r.rationale for r in rs.rules)


def test_shipped_names_and_default():
    names = shipped_names()
    assert {"strict", "strict-step", "industrial"} <= set(names)
    assert DEFAULT_RULESET in names
    assert load_rules([]).name == DEFAULT_RULESET


def test_no_shipped_figure_is_labelled_ecss():
    # Reference sheet section 1.3: the ECSS capacitor tables were not read; label nothing "ECSS".
    for name in shipped_names():
        text = shipped_root().joinpath(f"{name}.toml").read_text("utf-8")
        assert "ECSS" not in text.upper()


def test_shipped_sets_carry_the_same_typical_data():
    strict, industrial = load_rules(["strict"]), load_rules(["industrial"])
    assert strict.dc_bias == industrial.dc_bias
    assert strict.aging == industrial.aging


def test_strict_step_switches_the_tantalum_reading():
    rs = load_rules(["strict-step"])
    assert not rs.rule("EEE-TAN-V").enabled
    assert rs.rule("EEE-TAN-V-STEP").enabled
    assert [layer.name for layer in rs.layers] == ["strict", "strict-step"]
    assert not load_rules(["strict"]).rule("EEE-TAN-V-STEP").enabled


def test_dated_low_voltage_ceramic_rule_ships_disabled():
    # EEE-INST-002 C1 Table 4 note 2, withdrawn for qualified MLCCs in 2013 (reference sheet 1.1).
    rule = load_rules(["strict"]).rule("EEE-CER-LV")
    assert not rule.enabled
    assert "2013" in rule.rationale


# ---- limits and their units ----------------------------------------------------------------------

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


# ---- describe ------------------------------------------------------------------------------------

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


# ---- typical data for the stress stage -----------------------------------------------------------

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


def test_dc_bias_fraction_out_of_range(tmp_path):
    extra = ('[dc_bias]\nlabel = "typical"\nsource = "s"\nconfidence = "trade"\n'
             'points = [[0, 1.0], [0.5, 1.2]]\n')
    path = write(tmp_path, "bad_bias", rule_toml("A") + extra)
    assert problems_of([path]) == [RuleProblem(
        path, "dc_bias.points",
        "remaining-capacitance fractions must lie between 0 and 1; found 1, 1.2")]


# ---- extends, override, merge --------------------------------------------------------------------

def test_extends_and_override_by_id(tmp_path):
    write(tmp_path, "base", rule_toml("A", fail="0.6") + rule_toml("B", fail="0.7"))
    child = write(tmp_path, "child", rule_toml("A", fail="0.5") + rule_toml("C"),
                  extends="base.toml")  # relative to the extending file
    rs = load_rules([child])
    assert [r.id for r in rs.rules] == ["A", "B", "C"]
    assert rs.rule("A").fail.value == 0.5 and rs.rule("A").origin == "child"
    assert rs.rule("B").origin == "base"
    assert [layer.name for layer in rs.layers] == ["base", "child"]
    assert rs.name == "child"


def test_several_rule_sets_merge_in_order(tmp_path):
    mine = write(tmp_path, "mine", rule_toml("EEE-CER-V", fail="0.5"),
                 extra_head='disable = ["EEE-CER-T"]\n')
    rs = load_rules(["strict", mine])
    assert rs.rule("EEE-CER-V").fail.value == 0.5
    assert rs.rule("EEE-CER-V").origin == "mine"
    assert not rs.rule("EEE-CER-T").enabled
    assert rs.name == "strict+mine"
    assert len(rs.rules) == len(load_rules(["strict"]).rules)


def test_disable_unknown_id(tmp_path):
    mine = write(tmp_path, "mine", "", extra_head='disable = ["EEE-CER-X"]\n')
    assert problems_of(["strict", mine]) == [RuleProblem(
        mine, "ruleset.disable[0]",
        "no rule 'EEE-CER-X' to disable (did you mean 'EEE-CER-V'?); expected the id of a rule "
        "in this file, its base or an earlier --rules set")]


def test_extends_loop_and_unknown_base(tmp_path):
    a = write(tmp_path, "a", rule_toml("A"), extends="b.toml")
    b = write(tmp_path, "b", rule_toml("B"), extends="a.toml")
    assert problems_of([a]) == [RuleProblem(b, "ruleset.extends",
                                            f"extends chain loops back to {a}")]
    c = write(tmp_path, "c", rule_toml("C"), extends="nosuch")
    [p] = problems_of([c])
    assert (p.path, p.where) == (c, "ruleset.extends")
    assert "expected one of industrial, strict, strict-step" in p.message
    assert p.message.endswith("found 'nosuch'")


def test_unknown_rule_set_name():
    [p] = problems_of(["no-such-set"])
    assert p.where == "rule set"
    assert "a path to a .toml file" in p.message


def test_invalid_toml(tmp_path):
    path = tmp_path / "broken.toml"
    path.write_text("[ruleset\nname = 1\n", encoding="utf-8")
    [p] = problems_of([str(path)])
    assert p.where == "TOML" and "line 1" in p.message


# ---- collected problems --------------------------------------------------------------------------

BAD = """\
[[rule]]
id = "A-1"
title = "wrong metric"
metric = "volt_ratio"
check = "max"
fail = 0.6
severity = "fail"
source = "s"
confidence = "trade"
rationale = "r"

[[rule]]
id = "A-1"
title = "duplicate id, unknown check, wrong dimension, bad severity, typo key"
metric = "t_operating_c"
check = "maxx"
fail = "5 A"
severity = "fatal"
source = "s"
confidence = "trade"
rationale = "r"
fial = 3

[[rule]]
id = "A-3"
title = "curve x not increasing, unknown example column"
metric = "voltage_ratio"
check = "max"
fail = { over = "t_operating_c", points = [[110, 0.5], [70, 0.3]] }
severity = "fail"
source = "s"
confidence = "trade"
rationale = "r"
examples = [ { given = { technologie = "ceramic" }, expect = "pass" } ]

[[rule]]
id = "A-4"
title = "warn on the wrong side, unknown technology"
applies = { technology = ["ceramik"] }
metric = "voltage_ratio"
check = "max"
fail = 0.5
warn = 0.6
severity = "fail"
source = "s"
confidence = "trade"
rationale = "r"

[[rule]]
id = "A-5"
title = "missing check and source, bad confidence"
metric = "voltage_ratio"
fail = 0.5
severity = "fail"
confidence = "sure"
rationale = "r"
"""


def test_bad_file_reports_every_problem(tmp_path):
    path = write(tmp_path, "bad", BAD)
    got = problems_of([path])
    expected = [
        ("rule[0].metric (rule A-1)",
         "unknown metric 'volt_ratio' (did you mean 'voltage_ratio'?); expected one of: "
         + ", ".join(METRICS)),
        ("rule[1].check (rule A-1)",
         "unknown check kind 'maxx' (did you mean 'max'?); expected one of: max, min"),
        ("rule[1].fail (rule A-1)",
         "wrong dimension ([current]); found '5 A'; expected a temperature such as '85 degC'"),
        ("rule[1].fial (rule A-1)",
         "unknown key 'fial' (did you mean 'fail'?); expected one of: id, title, applies, "
         "metric, check, fail, warn, fail_severe, backstop, severity, enabled, source, confidence, rationale, examples"),
        ("rule[1].id (rule A-1)",
         "duplicate id 'A-1' (first at rule[0]); expected each id once per file (override an "
         "inherited rule from another file)"),
        ("rule[1].severity (rule A-1)", "found 'fatal'; expected one of \"fail\", \"warn\""),
        ("rule[2].examples[0].given.technologie (rule A-3)",
         "unknown column 'technologie' (did you mean 'technology'?); expected refdes, a spec "
         "field, a design-sheet condition, a metric or <metric>_basis"),
        ("rule[2].fail.points (rule A-3)", "curve x values must increase strictly; found 110, 70"),
        ("rule[3].applies.technology[0] (rule A-4)",
         "unknown technology 'ceramik' (did you mean 'ceramic'?); expected one of: ceramic, "
         "tantalum, tantalum-polymer, tantalum-wet, tantalum-foil, aluminium-electrolytic, "
         "aluminium-polymer, film, mica, glass, supercapacitor"),
        ("rule[3].warn (rule A-4)",
         "warn limit 60 % is on the wrong side of the fail limit 50 %; expected it at or below "
         "the fail limit for a 'max' check"),
        ("rule[4].check (rule A-5)",
         "missing required key; expected a check kind such as \"max\" or \"min\""),
        ("rule[4].confidence (rule A-5)",
         "found 'sure'; expected one of \"standard\", \"secondary\", \"trade\", \"derived\", "
         "\"uncertain\""),
        ("rule[4].source (rule A-5)", "missing required key; expected a non-empty string"),
    ]
    assert got == [RuleProblem(path, where, message) for where, message in expected]


def test_rule_error_text_lists_every_problem(tmp_path):
    path = write(tmp_path, "bad", BAD)
    with pytest.raises(RuleError) as info:
        load_rules([path])
    text = str(info.value)
    assert text.startswith("13 problems in rule data:\n")
    assert f"  {path}: rule[1].fail (rule A-1): wrong dimension" in text
    assert info.value.exit_code == 2


def test_problems_of_several_files_are_collected(tmp_path):
    a = write(tmp_path, "a", rule_toml("A", metric='"nope"'))
    b = write(tmp_path, "b", rule_toml("B", check='"between"'))
    assert [p.path for p in problems_of([a, b])] == [a, b]


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


def test_malformed_curve_reports_inside_the_curve(tmp_path):
    fail = '{ over = "t_operating_c", points = [[70, 0.5]] }'
    [p] = problems_of([write(tmp_path, "curve", rule_toml("A", fail=fail))])
    assert p.where == "rule[0].fail.points (rule A)"
    assert p.message.startswith("found [[70, 0.5]]; expected at least two [x, y] points")


def test_json_path():
    assert json_path(["rule", 3, "fail"]) == "rule[3].fail"
    assert json_path(["rule", 0, "examples", 1, "given", "v"]) == "rule[0].examples[1].given.v"
    assert json_path([]) == "(top level)"


def test_user_file_may_omit_examples(tmp_path):
    rs = load_rules([write(tmp_path, "plain", rule_toml("A"))])
    assert rs.rule("A").examples == () and rs.rule("A").enabled


def test_rule_needs_inputs_before_metric():
    rule = load_rules(["strict"]).rule("EEE-TAN-V")
    assert rule.needs() == ("applied_peak_v", "voltage_v", "voltage_ratio", "t_ambient_c",
                            "t_operating_c")
    assert load_rules(["strict"]).rule("EEE-CER-LV").needs() == (
        "voltage_v", "rated_voltage_v", "applied_peak_v")



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


def test_extends_chain_is_capped_without_recursion_error(tmp_path):
    # 1,500 files each extending the next once raised RecursionError (issue 10).
    n = 1500
    for i in range(n):
        write(tmp_path, f"r{i}", rule_toml(f"R{i}"),
              extends=f"r{i + 1}.toml" if i + 1 < n else "industrial")
    problems = problems_of([str(tmp_path / "r0.toml")])
    assert len(problems) == 1 and problems[0].where == "ruleset.extends"
    assert "longer than 32 files" in problems[0].message
    # A chain within the cap loads.
    for i in range(5):
        write(tmp_path, f"s{i}", rule_toml(f"S{i}"),
              extends=f"s{i + 1}.toml" if i + 1 < 5 else "industrial")
    assert "S0" in {r.id for r in load_rules([str(tmp_path / "s0.toml")]).rules}


def test_rule_file_nested_thousands_deep_is_one_problem(tmp_path):
    path = tmp_path / "deep.toml"
    path.write_text("a = " + "[" * 5000 + "]" * 5000 + "\n", encoding="utf-8")
    [p] = problems_of([str(path)])
    assert p.path == str(path) and "nested more than 32 levels" in p.message
