"""Terminal renderer (bomcheck.render.terminal), read back as plain text (no colour, fixed width)."""

from dataclasses import replace
from io import StringIO

import pytest
from diff_reports import NEW, OLD
from tiny_reports import tiny_report

from bomcheck.parse.values import parse_value
from bomcheck.render.terminal import (
    make_console,
    print_audit,
    print_diff,
    print_findings,
    print_quiet,
    print_uses,
    print_ruleset_names,
    print_specs,
    print_waiver_findings,
)
from bomcheck.report.diff import compare


def plain(fn, *args, **kw) -> str:
    out = StringIO()
    console = make_console(file=out, no_color=True, width=140)
    fn(console, *args, **kw)
    return out.getvalue()


@pytest.fixture(scope="module")
def sample_text(sample_report_bare):
    return plain(print_audit, sample_report_bare)


def test_audit_table_worst_first_with_findings_totals_and_cautions(sample_text):
    lines = sample_text.splitlines()
    first_row = next(i for i, line in enumerate(lines) if line.startswith("│"))
    assert "FAIL" in lines[first_row]
    assert "Findings" in sample_text and "FAIL C4: 240 V peak / 250 V rated = 96 %" in sample_text
    assert "rows read 65 = capacitor rows 37 + non-capacitor rows 28 + unreadable rows 0" in sample_text
    assert "Caution: Stored energy and high voltage can injure or kill" in sample_text
    assert "IEC 60204-1" in sample_text  # the discharge caution cites its clause
    assert sample_text.rstrip().endswith("Overall: FAIL (severe environment)")


def test_groups_table_shows_the_series_share(sample_text):
    # 2 x 220 uF +/-20 % across 400 V: the worst member takes 400 x 264 / 440 = 240 V (arithmetic).
    assert "Banks and series stacks" in sample_text
    assert "C4 240 / 202 V" in sample_text


def test_specs_table():
    text = plain(print_specs, [parse_value("4u7 50V X7R"), parse_value("4K7 RES")])
    assert "4.7 uF" in text and "50 V" in text and "X7R" in text
    assert "no" in text  # the resistor is not a capacitor


def test_compact_layout_at_80_columns_breaks_no_word(sample_report_bare):
    report = sample_report_bare
    out = StringIO()
    print_audit(make_console(file=out, no_color=True, width=80), report)
    text = out.getvalue()
    lines = text.splitlines()
    assert all(len(line) <= 80 for line in lines)
    audit_part = text.split("Findings")[0]
    assert "┃" not in audit_part and "│" not in audit_part  # a list, not a squeezed table
    # the words a squeezed table broke (issue: 'cerami|c', 'IND-CE|R-TM') come out whole
    assert "FAIL C43 row 23 IND-CER-TM: -10 °C / 10 °C" in text
    assert "aluminium-electrolytic" in audit_part
    assert len(lines) < 250  # was 326 lines at 80 columns
    out = StringIO()
    print_quiet(make_console(file=out, no_color=True, width=80), report)
    quiet = out.getvalue().splitlines()
    assert quiet[0].startswith("Placements audited 63: fail 17")
    assert quiet[-1] == "Overall: FAIL (severe environment)"


def test_findings_list_every_verdict_not_passing_worst_first():
    text = plain(print_findings, tiny_report())
    lines = [line.strip() for line in text.splitlines()[1:]]
    # worst first: fail, nodata, warn, then waived (the project's status order, DEVELOPERS.md)
    assert [line.split()[0] for line in lines] == ["FAIL", "nodata", "WARN", "waived"]
    assert lines[0] == "FAIL C2: ratio 80 % > 70 % limit"
    assert plain(print_findings, tiny_report(), placements=[0]) == ""  # C1 passes


def test_findings_beyond_the_limit_say_whose_they_are():
    # The table shows some placements; the count left out is of their findings only, and the
    # line must not read as the board's total.
    text = plain(print_findings, tiny_report(), placements=[1, 2, 3, 4], limit=1)
    assert text.splitlines()[-1].strip() == (
        "... 3 more findings of the placements above (every finding is in the JSON report)")
    text = plain(print_findings, tiny_report(), limit=1)
    assert text.splitlines()[-1].strip() == (
        "... 3 more findings (every finding is in the JSON report)")


def test_quiet_counts_every_status_and_ends_with_the_verdict():
    report = tiny_report()
    rows = {"rows_read": 7, "capacitor_rows": 6, "non_capacitor_rows": 1, "unreadable_rows": 0,
            "placements": 6, "fitted": 5, "not_fitted": 1}
    lines = plain(print_quiet, replace(report, totals={**report.totals, **rows})).splitlines()
    assert lines[0] == "Placements audited 5: fail 1  nodata 1  warn 1  waived 1  pass 1"
    assert lines[1].startswith("rows read 7 = capacitor rows 6 + non-capacitor rows 1")
    assert lines[-1] == "Overall: FAIL (severe environment)"


def test_waiver_findings_one_line_each():
    assert plain(print_waiver_findings, tiny_report().waiver_findings).strip() == (
        "waiver expired waiver 2 (C2 R-V) expired on 2026-01-31; its verdicts stand")


def test_diff_table_marks_new_problems_and_ends_with_the_counts():
    text = plain(print_diff, compare(OLD, NEW))
    assert "changed (new problem)" in text and "Placements added: C3" in text
    assert "Placements removed: C5" in text
    assert text.rstrip().splitlines()[-1].startswith("Baseline: ")


def test_ruleset_names_mark_the_default():
    text = plain(print_ruleset_names, ["industrial", "strict"], "industrial")
    assert text.splitlines()[:2] == ["industrial  (default)", "strict"]


def test_emoji_codes_in_input_text_print_as_they_are():
    # Common practice: an audit shows the designators and part numbers it was given, unaltered.
    console = make_console(file=StringIO(), width=80, no_color=True)
    console.print("MPN :fire: and :warning:")
    assert console.file.getvalue() == "MPN :fire: and :warning:\n"


def test_text_from_the_inputs_is_never_read_as_markup(tmp_path, capsys, monkeypatch):
    # Quality bar: text from an input file never becomes markup in any output. A description,
    # a value and a product name holding rich's markup brackets print as written, and a stray
    # closing tag ends no run.
    from bomcheck.cli.main import main
    monkeypatch.setenv("COLUMNS", "400")  # wide enough that no cell wraps
    bom = tmp_path / "bom.csv"
    bom.write_text("Designator,Value,Description\n"
                   "C1,10uF,CAP CER 10UF 16V X7R [/x] [red]LOT\n"
                   "C2,1uF [bold],CAP CER 1UF 50V X7R\n", encoding="utf-8")
    assert main(["import", str(bom)]) == 0
    assert main(["parse", "4u7 [/b] 50V"]) == 0
    out = capsys.readouterr().out
    assert "[/x]" in out and "[red]LOT" in out and "[/b]" in out
    console = make_console(file=StringIO(), width=200, no_color=True)
    print_uses(console, "[/mpn]", ())
    assert console.file.getvalue() == "[/mpn]: not placed in this report\n"
