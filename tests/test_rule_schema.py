"""Tests of bomcheck.evaluate.rule_schema: the rule-file schema and its readable messages."""

from __future__ import annotations

import json
import tomllib
from importlib import resources

import jsonschema
import pytest
from rulefiles import BAD, problems_of, rule_toml, write

from bomcheck.errors import RuleProblem
from bomcheck.evaluate.rule_schema import json_path
from bomcheck.evaluate.rules import load_rules, shipped_names, shipped_root
from bomcheck.vocabulary import METRICS


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


def test_malformed_curve_reports_inside_the_curve(tmp_path):
    fail = '{ over = "t_operating_c", points = [[70, 0.5]] }'
    [p] = problems_of([write(tmp_path, "curve", rule_toml("A", fail=fail))])
    assert p.where == "rule[0].fail.points (rule A)"
    assert p.message.startswith("found [[70, 0.5]]; expected at least two [x, y] points")


def test_json_path():
    assert json_path(["rule", 3, "fail"]) == "rule[3].fail"
    assert json_path(["rule", 0, "examples", 1, "given", "v"]) == "rule[0].examples[1].given.v"
    assert json_path([]) == "(top level)"
