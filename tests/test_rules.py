"""Tests of bomcheck.evaluate.rules: loading and merging rule sets (shipped names, extends
chains, overrides, enable and disable, every problem of every file collected)."""

from __future__ import annotations


import pytest
from rulefiles import BAD, problems_of, rule_toml, write

from bomcheck.errors import RuleError, RuleProblem
from bomcheck.evaluate.rules import DEFAULT_RULESET, load_rules, shipped_names, shipped_root


# ---- shipped sets --------------------------------------------------------------------------------


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


def test_user_file_may_omit_examples(tmp_path):
    rs = load_rules([write(tmp_path, "plain", rule_toml("A"))])
    assert rs.rule("A").examples == () and rs.rule("A").enabled


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


def test_shipped_sets_are_found_from_a_source_checkout(monkeypatch):
    # A checkout's own bomcheck/ shadows the installed package, which alone maps rules/ to
    # bomcheck.rulesets: the loader falls back to the checkout's rules/ folder.
    from bomcheck.evaluate import rules as rules_mod

    def missing(name):
        raise ModuleNotFoundError(name)

    monkeypatch.setattr(rules_mod.resources, "files", missing)
    root = rules_mod.shipped_root()
    assert (root / "industrial.toml").is_file() and (root / "strict.toml").is_file()
