"""Rule files for the rule tests: a valid rule table, a file written under tmp_path, the
problems a load reports, and one file with a problem of every kind."""

from __future__ import annotations

import pytest

from bomcheck.errors import RuleError, RuleProblem
from bomcheck.evaluate.rules import load_rules

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
