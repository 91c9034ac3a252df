"""The output registry (bomcheck.render.registry): one list read by the CLI and by [tool.bomcheck]."""

from __future__ import annotations

import argparse
from pathlib import Path

import pytest

from bomcheck.cli import config
from bomcheck.cli.main import build_parser, main
from bomcheck.render.registry import OUTPUTS, for_command

ROOT = Path(__file__).resolve().parents[1]


def _options(command: str) -> set[str]:
    parser = build_parser()
    sub = next(a for a in parser._actions if isinstance(a, argparse._SubParsersAction))
    return {s for a in sub.choices[command]._actions for s in a.option_strings}


@pytest.mark.parametrize("command", ["audit", "substitute"])
def test_cli_options_come_from_the_registry(command):
    options = _options(command)
    for output in for_command(command):
        assert f"--{output.name}" in options


def test_config_keys_come_from_the_registry():
    for name, output in OUTPUTS.items():
        assert name in config.KEYS
        assert (name in config.PATH_KEYS) == (output.kind == "file")


@pytest.mark.parametrize("name", sorted(OUTPUTS))
def test_every_writer_loads(name):
    assert callable(OUTPUTS[name].load())


def test_config_turns_on_html_sarif_and_annotations(tmp_path, monkeypatch, capsys):
    monkeypatch.chdir(tmp_path)
    sample = ROOT / "sample_boms"
    (tmp_path / "pyproject.toml").write_text(
        "[tool.bomcheck]\n"
        f'design = "{(sample / "bw7-design.csv").as_posix()}"\n'
        'html = "out/report.html"\nsarif = "out/report.sarif"\nannotations = true\n',
        encoding="utf-8")
    (tmp_path / "out").mkdir()
    code = main(["audit", str(sample / "bw7-controller-bom.csv"), "--quiet"])
    assert code == 1
    assert (tmp_path / "out" / "report.html").stat().st_size > 10_000
    assert (tmp_path / "out" / "report.sarif").exists()
    out = capsys.readouterr().out
    assert "::error file=" in out and "::warning file=" in out
    assert out.rstrip().endswith("Overall: FAIL (severe environment)")


def test_config_refuses_a_non_boolean_flag(tmp_path):
    (tmp_path / "pyproject.toml").write_text('[tool.bomcheck]\nannotations = "yes"\n',
                                             encoding="utf-8")
    with pytest.raises(config.InputError, match="true or false"):
        config.load_config(tmp_path)


def test_two_outputs_on_stdout_are_refused(tmp_path, monkeypatch, capsys):
    monkeypatch.chdir(tmp_path)
    sample = ROOT / "sample_boms"
    code = main(["audit", str(sample / "bw7-controller-bom.csv"), "--design",
                 str(sample / "bw7-design.csv"), "--no-config", "--json", "-", "--annotations"])
    assert code == 2
    assert "only one report can go to standard output" in capsys.readouterr().err


def test_piped_output_is_80_columns_wide(tmp_path, monkeypatch, capsys):
    """Not a terminal (a pipe, a CI log): 80 columns, so the list layout, no line longer."""
    monkeypatch.chdir(tmp_path)
    monkeypatch.delenv("COLUMNS", raising=False)
    sample = ROOT / "sample_boms"
    main(["audit", str(sample / "bw7-controller-bom.csv"), "--design",
          str(sample / "bw7-design.csv"), "--no-config"])
    out = capsys.readouterr().out
    assert max(len(line) for line in out.splitlines()) <= 80
    assert out.startswith("Capacitor derating audit (worst first)\nFAIL C43 row 23")
