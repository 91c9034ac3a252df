"""Every example of every rule in every shipped rule set, run by one data-driven test.

The examples are the rules' own worked cases (the figures come from each rule's source, named in
the rule); the meta-test below guards that every rule carries a source and both kinds of example.
"""

from __future__ import annotations

from dataclasses import replace

import pandas as pd
import pytest

from bomcheck.evaluate.engine import evaluate
from bomcheck.evaluate.rule_model import Rule, RuleSet
from bomcheck.evaluate.rules import load_rules, shipped_names

SETS: dict[str, RuleSet] = {name: load_rules([name]) for name in shipped_names()}


def own_rules(name: str) -> list[Rule]:
    """Rules a shipped set defines itself (not those it inherits unchanged)."""
    return [r for r in SETS[name].rules if r.origin == name]


CASES = [
    pytest.param(name, rule, i, id=f"{name}:{rule.id}:{i}")
    for name in SETS
    for rule in own_rules(name)
    for i in range(len(rule.examples))
]


@pytest.mark.parametrize("name, rule, i", CASES)
def test_rule_example(name: str, rule: Rule, i: int) -> None:
    example = rule.examples[i]
    ruleset = SETS[name].with_rules([replace(rule, enabled=True)])
    verdicts = evaluate(pd.DataFrame([example.row()]), ruleset)
    assert len(verdicts) == 1, f"the rule does not apply to its example {example.given}"
    got = verdicts.iloc[0]
    assert got.status == example.expect, got.message
    assert got.rule_id == rule.id and got.source == rule.source


def test_there_are_examples_to_run():
    assert len(CASES) > 100
    assert {c.values[0] for c in CASES} >= {"strict", "industrial"}


@pytest.mark.parametrize("name", list(SETS))
def test_every_rule_has_a_source_and_passing_and_failing_examples(name: str) -> None:
    for rule in SETS[name].rules:
        assert rule.source.strip(), rule.id
        assert rule.rationale.strip(), rule.id
        expects = {e.expect for e in rule.examples}
        # The failing example reaches the worst status the rule can give: "fail", or "warn"
        # for an advisory rule (severity "warn").
        assert {"pass", rule.severity} <= expects, f"{rule.id}: {sorted(expects)}"


def test_common_practice_rules_say_so():
    # House rule: trade facts are labelled "common practice" in rule data and name no company.
    for ruleset in SETS.values():
        for rule in ruleset.rules:
            if rule.confidence == "trade":
                assert "common practice" in rule.source, rule.id
