"""The plain-text pieces the terminal and the HTML page both print (bomcheck.render.textparts): the
row-accounting line, numbers, stored energy and a bank's or series stack's figures."""

import math
from types import SimpleNamespace

import pytest

from bomcheck.render.textparts import (accounting_line, counts_parts, energy, group_cells, number,
                                       quiet_lines)

TOTALS = {"rows_read": 10, "capacitor_rows": 6, "non_capacitor_rows": 3, "unreadable_rows": 1,
          "placements": 8, "fitted": 7, "not_fitted": 1}


def test_accounting_line_adds_up_every_row_and_placement():
    assert accounting_line(TOTALS) == (
        "rows read 10 = capacitor rows 6 + non-capacitor rows 3 + unreadable rows 1; "
        "placements 8 (fitted 7, not fitted 1)")


def test_accounting_line_names_approved_source_rows_only_when_there_are_some():
    line = accounting_line({**TOTALS, "rows_read": 12, "approved_source_rows": 2})
    assert "+ approved-source rows 2;" in line
    assert "approved-source" not in accounting_line({**TOTALS, "approved_source_rows": 0})


@pytest.mark.parametrize("value, text", [
    (1 / 3, "0.3333"), (240.0, "240"), (None, ""), (math.nan, ""),
])
def test_number_in_four_significant_digits_or_nothing(value, text):
    assert number(value) == text


def test_energy_is_half_c_v_squared_in_three_digits():
    # E = C V^2 / 2 (textbook electrostatics): 1000 uF at 26.5 V holds 0.351 J
    assert energy(0.5 * 1000e-6 * 26.5 ** 2) == "0.351 J"
    assert energy(None) == "" and energy(math.nan) == ""


def test_group_cells_show_need_discharge_and_member_shares():
    # two 220 uF -20 % parts in parallel: 2 x 176 uF = 352 uF worst case (arithmetic); here one
    # group's figures as the stress stage reports them
    g = {"c_min_f": 100e-6, "c_worst_f": 176e-6, "c_margin": 0.76, "discharge_s": 12.3,
         "r_discharge_ohm": 47_000, "shares": [{"refdes": "C4", "v_share_cap_v": 240.0,
                                                 "v_share_dc_v": 202.0}]}
    assert group_cells(g) == ("176 uF / 100 uF = 76%", "12.3 s via 47 kohm", "C4 240 / 202 V")


def test_group_cells_leave_out_what_the_group_lacks():
    assert group_cells({}) == ("", "", "")
    need, _, _ = group_cells({"c_min_f": 100e-6, "c_worst_f": 50e-6})
    assert need == "50 uF / 100 uF"  # no margin figure: none printed


def test_quiet_lines_are_the_terminal_summary_without_styles():
    # The --quiet summary (README, "Use in CI"): counts worst first, the accounting identity,
    # the overall verdict with its environment; plain text a CI log shows as it is.
    report = SimpleNamespace(
        totals={"audited": 5, "fail": 1, "nodata": 1, "warn": 1, "waived": 0, "pass": 2,
                "rows_read": 6, "capacitor_rows": 5, "non_capacitor_rows": 1,
                "unreadable_rows": 0, "placements": 5, "fitted": 5, "not_fitted": 0},
        table=range(5), status="fail", environment="severe")
    lines = quiet_lines(report)
    assert lines[0] == "Placements audited 5: fail 1  nodata 1  warn 1  waived 0  pass 2"
    assert lines[1].startswith("rows read 6 = capacitor rows 5 + non-capacitor rows 1")
    assert lines[2] == "Overall: FAIL (severe environment)"
    assert [s for s, _ in counts_parts(report)[1]] == ["fail", "nodata", "warn", "waived", "pass"]
