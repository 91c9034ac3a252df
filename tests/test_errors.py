"""The project's error types (bomcheck/errors.py): one base class, each user error also the
matching builtin, a one-line sentence naming file, place, what was found and what was expected,
and rule errors listing every problem (project rules: bad input is one line and exit status 2)."""

from __future__ import annotations

import pytest

from bomcheck.errors import BomcheckError, InputError, RuleError, RuleProblem, UnitError


def test_every_user_error_is_a_bomcheck_error_and_a_value_error_with_exit_status_2():
    # Project rule and style guide: one error base class, each also the matching builtin, exit 2.
    for cls in (InputError, UnitError, RuleError):
        assert issubclass(cls, BomcheckError) and issubclass(cls, ValueError)
    assert BomcheckError.exit_code == 2 and InputError("x").exit_code == 2


def test_input_error_sentence_names_file_row_column_found_expected_and_hint():
    # Project rule: one line naming file, row/cell and what was expected.
    e = InputError("not a quantity", path="design.csv", row=4, column="v_dc", text="five",
                   expected="a number with a unit, such as '5 V'", hint="see the README")
    assert str(e) == ("design.csv, row 4, column 'v_dc': not a quantity; found 'five'; "
                      "expected a number with a unit, such as '5 V'; see the README")
    assert "\n" not in str(e)
    assert (e.path, e.row, e.column, e.text) == ("design.csv", 4, "v_dc", "five")


def test_input_error_without_a_place_is_the_problem_alone():
    assert str(InputError("no BOM given")) == "no BOM given"
    # Row 0 is a place (a header written as row 0 would still be named).
    assert str(InputError("bad", row=0)) == "row 0: bad"
    # An empty found text is still shown, quoted.
    assert str(InputError("empty cell", path="b.csv", text="")) == "b.csv: empty cell; found ''"


def test_unit_error_is_an_input_error():
    # A wrong unit is bad input (project rule: exit 2 with one line).
    with pytest.raises(InputError):
        raise UnitError("wrong dimension", text="5 A", expected="a voltage")


def test_rule_error_lists_every_problem_with_its_count():
    # Style guide: schema errors are collected, not raised one at a time.
    e = RuleError([RuleProblem("rules/a.toml", "rule[3].limit", "expected a number"),
                   RuleProblem("rules/a.toml", "R-V-01", "unknown check kind 'maxx'")])
    assert str(e) == ("2 problems in rule data:\n"
                      "  rules/a.toml: rule[3].limit: expected a number\n"
                      "  rules/a.toml: R-V-01: unknown check kind 'maxx'")
    assert str(RuleError([RuleProblem("r.toml", "rule[0]", "x")])).startswith(
        "1 problem in rule data:")
