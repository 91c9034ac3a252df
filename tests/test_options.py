"""The commands' options (bomcheck.cli.options): argparse types, the options each command takes,
and usage errors (exit status 2, argparse's convention)."""

import argparse
import datetime

import pytest

from bomcheck.cli.main import main
from bomcheck.cli.options import (COMMANDS, SUBSTITUTE_CONDITIONS, _iso_date, _positive_int,
                                  build_parser)


# Moved from test_cli.py.
def test_bad_today_is_a_usage_error(tmp_path, monkeypatch, capsys):
    monkeypatch.chdir(tmp_path)
    with pytest.raises(SystemExit) as info:
        main(["audit", "bom.csv", "--today", "31/12/2026", "--design", "design.csv",
              "--no-config"])
    assert info.value.code == 2
    assert "not a date" in capsys.readouterr().err


# Moved from test_cli.py.
@pytest.mark.parametrize("value", ["0", "-3", "abc", "1.5"])
def test_limit_options_take_whole_numbers_above_zero(tmp_path, monkeypatch, capsys, value):
    monkeypatch.chdir(tmp_path)
    with pytest.raises(SystemExit) as exc:
        main(["import", "bom.csv", "--max-rows", value])
    assert exc.value.code == 2


@pytest.mark.parametrize("text, value", [("1", 1), ("60000", 60_000), ("1e6", 1_000_000),
                                         ("1_000_000", 1_000_000), ("250.0", 250)])
def test_positive_int_reads_whole_numbers_in_the_usual_spellings(text, value):
    # Python's own numeric literals allow "_" as a digit separator (PEP 515) and 1e6
    assert _positive_int(text) == value


@pytest.mark.parametrize("text", [
    "nan", "1e15", "", "0.5", "inf", "-inf", "0", "-3", "ten",
])
def test_positive_int_refuses_what_is_no_whole_number(text):
    with pytest.raises(argparse.ArgumentTypeError, match="not a whole number above 0"):
        _positive_int(text)


def test_iso_date_reads_iso_8601_calendar_dates_only():
    # ISO 8601 extended calendar date YYYY-MM-DD
    assert _iso_date("2027-06-30") == datetime.date(2027, 6, 30)
    for text in ("30.06.2027", "2027-02-30", "tomorrow"):
        with pytest.raises(argparse.ArgumentTypeError, match="expected YYYY-MM-DD"):
            _iso_date(text)


def test_every_command_is_a_subcommand_with_the_common_options():
    parser = build_parser()
    for name, _ in COMMANDS:
        args = parser.parse_args([name, "x"] if name not in ("rules", "diff", "where-used")
                                 else {"rules": ["rules"], "diff": ["diff", "a", "b"],
                                       "where-used": ["where-used", "r.json", "MPN"]}[name])
        assert args.command == name and args.debug is False


def test_audit_limits_and_defaults_parse_to_their_values():
    args = build_parser().parse_args(["audit", "bom.csv", "--max-rows", "1e3", "--today",
                                      "2027-01-31", "--warn-as", "skipped"])
    assert (args.bom, args.max_rows, args.today, args.warn_as) == (
        "bom.csv", 1000, datetime.date(2027, 1, 31), "skipped")
    # unset outputs and flags stay None so that [tool.bomcheck] can fill them
    assert args.json is None and args.annotations is None and args.fail_on is None


def test_substitute_takes_every_inline_condition():
    flags = [flag for flag, _, _ in SUBSTITUTE_CONDITIONS]
    argv = ["substitute", "--original", "A", "--proposed", "B"]
    for i, flag in enumerate(flags):
        argv += [flag, str(i + 1)]
    args = build_parser().parse_args(argv)
    for i, (flag, _, _) in enumerate(SUBSTITUTE_CONDITIONS):
        assert getattr(args, flag[2:].replace("-", "_")) == str(i + 1)


def test_an_unknown_choice_is_a_usage_error(capsys):
    with pytest.raises(SystemExit) as exc:
        build_parser().parse_args(["audit", "bom.csv", "--warn-as", "error"])
    assert exc.value.code == 2 and "invalid choice" in capsys.readouterr().err
