"""Terminal renderer (bomcheck.render.terminal), read back as plain text (no colour, fixed width)."""

from io import StringIO

import pytest

from bomcheck.quantity import format_si
from bomcheck.render.terminal import make_console, print_audit, print_quiet, print_specs
from bomcheck.parse.values import parse_value


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


@pytest.mark.parametrize("value, unit, expected", [
    (4.7e-6, "F", "4.7 uF"), (1e-10, "F", "100 pF"), (0.1, "F", "100 mF"), (13.2, "V", "13.2 V"),
    (38056.68, "ohm", "38.06 kohm"), (0, "V", "0 V"),
])
def test_format_si(value, unit, expected):
    assert format_si(value, unit) == expected


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
