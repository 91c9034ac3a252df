"""Project defaults from [tool.bomcheck] in pyproject.toml (bomcheck.cli.config)."""

import argparse
import os

import pytest

from bomcheck.cli.config import Config, find_pyproject, load_config, merge
from bomcheck.errors import InputError

PYPROJECT = """
[project]
name = "kv-board"

[tool.bomcheck]
design = "hw/design.csv"
parts = "hw/parts.csv"
rules = ["industrial", "hw/overrides.toml"]
fail-on = "warn"
waivers = "hw/waivers.toml"
junit = "build/bomcheck.xml"
"""


@pytest.fixture
def project(tmp_path):
    (tmp_path / "pyproject.toml").write_text(PYPROJECT, encoding="utf-8")
    sub = tmp_path / "hw" / "deep"
    sub.mkdir(parents=True)
    return tmp_path


def test_found_in_a_parent_and_paths_resolved_against_it(project):
    start = project / "hw" / "deep"
    assert find_pyproject(start) == project / "pyproject.toml"
    cfg = load_config(start)
    assert cfg.path == str(project / "pyproject.toml")
    assert cfg.values == {
        "design": os.path.join("..", "design.csv"),
        "parts": os.path.join("..", "parts.csv"),
        "rules": ["industrial", os.path.join("..", "overrides.toml")],  # a name stays a name
        "fail_on": "warn",
        "waivers": os.path.join("..", "waivers.toml"),
        "junit": os.path.join("..", "..", "build", "bomcheck.xml"),
    }


def test_pyproject_without_the_table_is_passed_over(tmp_path):
    (tmp_path / "pyproject.toml").write_text(PYPROJECT, encoding="utf-8")
    inner = tmp_path / "pkg"
    inner.mkdir()
    (inner / "pyproject.toml").write_text("[project]\nname = 'other'\n", encoding="utf-8")
    assert find_pyproject(inner) == tmp_path / "pyproject.toml"


def test_no_config_anywhere(tmp_path):
    # tmp_path's parents hold no pyproject.toml with [tool.bomcheck] on a clean machine
    if find_pyproject(tmp_path) is not None:
        pytest.skip("a parent of the temporary directory has [tool.bomcheck]")
    assert load_config(tmp_path) == Config()


def test_command_line_wins(project):
    cfg = load_config(project)
    args = argparse.Namespace(design="mine.csv", rules=[], fail_on=None, waivers=None,
                              junit=None, json=None)
    merge(args, cfg)
    assert args.design == "mine.csv"                      # given on the command line
    assert args.rules == ["industrial", os.path.join("hw", "overrides.toml")]
    assert args.fail_on == "warn"
    assert args.junit == os.path.join("build", "bomcheck.xml")
    assert args.json is None
    args = argparse.Namespace(rules=["strict"], fail_on="fail")
    merge(args, cfg)
    assert (args.rules, args.fail_on) == (["strict"], "fail")


@pytest.mark.parametrize("line, needle", [
    ('fail_on = "sometimes"', "value not allowed"),
    ('design_file = "x.csv"', "unknown key in [tool.bomcheck]"),
    ("rules = 3", "rules must be a name or path"),
    ("design = 3", "non-empty string"),
    ('design = "unterminated', "not valid TOML"),  # the one TOML loader's message
])
def test_bad_config_names_the_key(tmp_path, line, needle):
    (tmp_path / "pyproject.toml").write_text(f"[tool.bomcheck]\n{line}\n", encoding="utf-8")
    with pytest.raises(InputError) as info:
        load_config(tmp_path)
    assert needle in str(info.value) and "pyproject.toml" in str(info.value)


def test_config_refuses_a_non_boolean_flag(tmp_path):
    (tmp_path / "pyproject.toml").write_text('[tool.bomcheck]\nannotations = "yes"\n',
                                             encoding="utf-8")
    with pytest.raises(InputError, match="true or false"):
        load_config(tmp_path)
