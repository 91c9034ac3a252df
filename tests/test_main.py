"""The command line's entry (bomcheck.cli.main, and ``python -m bomcheck``): one place maps errors
to exit statuses, 0 clean, 1 findings, 2 unusable input, 3 internal error."""

import subprocess
import sys

import pytest

from bomcheck import __version__
from bomcheck.cli import commands
from bomcheck.cli.main import (EXIT_CLEAN, EXIT_FINDINGS, EXIT_INTERNAL, EXIT_UNUSABLE, _one_line,
                               main)
from bomcheck.errors import InputError

# An invented one-line BOM.
BOM = "Designator,Qty,Value,Description,Manufacturer Part Number\n" \
      "C1,1,100nF,CAP CER 0.1UF 50V 10% X7R 0603,KV-0603-104-50\n"


@pytest.fixture
def bom(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    (tmp_path / "bom.csv").write_text(BOM, encoding="utf-8")
    return "bom.csv"


def test_exit_statuses_are_four_distinct_numbers():
    # common practice (POSIX shells, argparse): 0 success, 2 usage error; CI treats any non-zero
    # as failure, so an internal error must not be 0 or 1
    assert (EXIT_CLEAN, EXIT_FINDINGS, EXIT_UNUSABLE, EXIT_INTERNAL) == (0, 1, 2, 3)


# Moved from test_cli.py (issue 10: internal errors).
def test_an_internal_error_has_its_own_exit_status_and_one_line(bom, capsys, monkeypatch):
    def broken(args):
        raise KeyError("unexpected")

    monkeypatch.setattr(commands, "run_import", broken)
    assert main(["import", bom]) == 3  # never 0 (clean), 1 (findings) or 2 (input)
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "internal error" in err and "--debug" in err
    assert "Traceback" not in err
    with pytest.raises(KeyError):
        main(["--debug", "import", bom])


def test_an_input_error_is_its_exit_code_and_one_line_unless_debug(bom, capsys, monkeypatch):
    def refused(args):
        raise InputError("bom.csv, row 2: expected a designator")

    monkeypatch.setattr(commands, "run_import", refused)
    assert main(["import", bom]) == EXIT_UNUSABLE
    assert capsys.readouterr().err == "bomcheck: error: bom.csv, row 2: expected a designator\n"
    with pytest.raises(InputError):
        main(["--debug", "import", bom])


def test_no_command_prints_the_help_and_is_a_usage_error(capsys):
    assert main([]) == EXIT_UNUSABLE
    out = capsys.readouterr().out
    assert out.startswith("usage: bomcheck") and "audit" in out


def test_one_line_folds_whitespace_and_caps_the_length():
    assert _one_line("a\n  b\tc\r\n") == "a b c"
    assert len(_one_line("x" * 1000)) == 300


def test_python_dash_m_runs_the_same_main(tmp_path):
    version = subprocess.run([sys.executable, "-m", "bomcheck", "--version"],
                             capture_output=True, text=True, cwd=tmp_path)
    assert version.returncode == 0 and __version__ in version.stdout
    (tmp_path / "bom.csv").write_text(BOM, encoding="utf-8")
    run = subprocess.run([sys.executable, "-m", "bomcheck", "import", "bom.csv", "--json", "-"],
                         capture_output=True, text=True, cwd=tmp_path)
    assert run.returncode == 0 and '"C1"' in run.stdout
    missing = subprocess.run([sys.executable, "-m", "bomcheck", "import", "missing.csv"],
                             capture_output=True, text=True, cwd=tmp_path)
    assert missing.returncode == 2 and missing.stderr.startswith("bomcheck: error: ")
