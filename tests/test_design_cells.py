"""Design-sheet cells and headers: the strict cell grammar, plausibility, signs, header aliases
and unknown headers (issues 9 and 10). Invented designators and rails only."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

import bomcheck.parse.design_cells as cells_mod
from bomcheck.parse.design import ALIASES, InputWarning, design_from_table, design_from_toml
from bomcheck.parse.design_cells import closest_names, parse_header
from bomcheck.errors import InputError
from bomcheck.vocabulary import CONDITIONS


def sheet(header, *rows):
    return design_from_table(pd.DataFrame([list(r) for r in rows], columns=header),
                             path="design.csv")


def refused(header, cell):
    """The InputError for one bad cell in row 3 (row 2 holds a good value)."""
    good = {"v_dc": "5", "t_ambient_c": "40"}.get(parse_header(header).field, "1")
    good = "300" if "[K]" in header else good
    with pytest.raises(InputError) as info:
        sheet(["refdes", header], ["C1", good], ["C2", cell])
    e = info.value
    assert (e.path, e.row, e.column, e.text) == ("design.csv", 3, header, cell)
    assert e.expected  # says what was expected
    return e


# --- cells are read, never evaluated (issue 9 class 9, issue 10) ----------------------------

@pytest.mark.parametrize("header, cell", [
    ("v_dc", "V"),  # was read as 1 V
    ("v_dc", "5 V * 0"),  # was 0 V
    ("v_dc", "9**9**9 V"),  # ran for minutes
    ("v_dc", "20V \u00b110%"),  # was 2 V
    ("t_ambient_c", "-40..85 degC"),  # was -34 degC
    ("v_dc", "inf V"),
    ("v_dc", "nan"),
    ("v_dc", "1e400 mV"),
    ("v_dc", "9" * 400),
    ("c_min_f", "4u7"),  # RKM is a BOM notation, not documented for the design sheet
], ids=["unit-alone", "times-zero", "power-tower", "plus-minus", "range", "inf", "nan",
        "1e400", "400-digits", "rkm"])
def test_expressions_and_absurd_numbers_are_input_errors(header, cell):
    # common practice: a cell is one number with an optional unit.
    refused(header, cell)


# --- plausibility (issue 9 class 1, issue 10) -----------------------------------------------

@pytest.mark.parametrize("header, cell, problem", [
    ("t_ambient_c [K]", "100", "implausible temperature"),  # -173 degC: a slip
    ("t_ambient_c", "450", "implausible temperature"),
    ("t_ambient_c", "-120 degC", "implausible temperature"),
    ("v_dc", "150 kV", "implausible voltage"),
    ("c_min_f", "20 kF", "implausible capacitance"),
    ("v_tol_pct", "150 %", "implausible"),
    ("life_h", "2e7 h", "implausible time"),
    ("r_bleeder_ohm", "0", "zero resistance"),  # issue 10: divided by, numpy warning
    ("f_ripple_hz", "0 Hz", "zero frequency"),
])
def test_implausible_values_are_input_errors(header, cell, problem):
    # common practice: the ranges of bomcheck.parse.units.PLAUSIBLE and their reasons.
    assert problem in refused(header, cell).problem


def test_a_bare_number_under_kelvin_converts_before_the_bounds():
    # SI: t/degC = T/K - 273.15; 358.15 K is 85 degC, inside the range.
    assert sheet(["refdes", "t_ambient_c [K]"], ["C1", "358.15"]).conditions.at[
        "C1", "t_ambient_c"] == pytest.approx(85.0)


# --- signs (issue 9 class 1) ----------------------------------------------------------------

@pytest.mark.parametrize("header, cell", [
    ("v_ripple_pk", "-50 mV"), ("v_ac_rms", "-230 V"), ("t_rise_c", "-5"),
    ("v_reverse_pk", "-1 V"), ("i_ripple_a", "-1 A"), ("c_min_f", "-10 uF"),
    ("v_transient_pk", "-60 V"), ("r_balance_ohm", "-100 kohm"), ("life_h", "-1 year"),
    ("t_discharge_max_s", "-5 s"), ("v_dc_max [V]", "x"),
])
def test_magnitudes_cannot_be_negative(header, cell):
    # common practice: a negative magnitude would lower the stress (a wrong pass).
    e = refused(header, cell)
    if cell != "x":
        assert "negative" in e.problem


def test_negative_rail_keeps_its_sign():
    # v_dc is signed: a negative rail; the stress stage uses the magnitude, and on a polarized
    # part applies it as reverse voltage (README, design sheet).
    d = sheet(["refdes", "v_dc", "v_dc_max", "t_ambient_c"], ["C1", "-12 V", "-13.2", "-40"])
    c = d.conditions
    assert (c.at["C1", "v_dc"], c.at["C1", "v_dc_max"], c.at["C1", "t_ambient_c"]) == (
        -12.0, -13.2, -40.0)


# --- headers (issue 9 class 4) --------------------------------------------------------------

@pytest.mark.parametrize("header, field", [
    ("temp rise", "t_rise_c"), ("Temp rise (C)", "t_rise_c"), ("dT", "t_rise_c"),
    ("delta T", "t_rise_c"), ("Irms", "i_ripple_a"), ("I ripple", "i_ripple_a"),
    ("Ripple current (A rms)", "i_ripple_a"), ("Operating V", "v_dc"), ("V op", "v_dc"),
    ("Ambient temp", "t_ambient_c"), ("Ambient (degC)", "t_ambient_c"), ("Tamb", "t_ambient_c"),
    ("T_amb [\u00b0C]", "t_ambient_c"), ("Vac", "v_ac_rms"), ("Vripple", "v_ripple_pk"),
    ("C min", "c_min_f"), ("Switching frequency", "f_ripple_hz"), ("Remarks", "notes"),
])
def test_obvious_spellings_are_aliases(header, field):
    # common practice: how these quantities are headed in design spreadsheets.
    assert parse_header(header).field == field


def test_temp_rise_in_celsius_header_is_a_difference():
    # A rise of 10 "C" is 10 K (a difference, never 283 K or coulombs).
    d = sheet(["refdes", "Temp rise (C)", "Ambient (degC)"], ["C1", "10", "45"])
    assert (d.conditions.at["C1", "t_rise_c"], d.conditions.at["C1", "t_ambient_c"]) == (10, 45)


def test_unknown_header_with_values_lists_closest_names():
    with pytest.raises(InputError) as info:
        sheet(["refdes", "v_dc", "tmp rise"], ["C1", "5", "10"])
    assert info.value.column == "tmp rise" and "t_rise_c" in info.value.hint
    assert "t_rise_c" in " ".join(closest_names("temprise"))


def test_notes_and_informational_columns_are_ignored():
    d = sheet(["refdes", "v_dc", "Description", "Comment", "Remarks", "Value"],
              ["C1", "5", "bulk cap", "near U3", "see review", "10uF"])
    assert d.conditions.at["C1", "v_dc"] == 5.0
    assert d.conditions.at["C1", "notes"] == "near U3"
    assert d.warnings == ()


def test_unknown_empty_header_is_a_structured_warning():
    d = sheet(["refdes", "v_dc", "Layout owner"], ["C1", "5", ""])
    (w,) = d.warnings
    assert isinstance(w, InputWarning)
    assert w.to_dict() == {"path": "design.csv", "row": 1, "column": "Layout owner",
                           "message": w.message}
    assert str(w).startswith("design.csv, row 1, column 'Layout owner': ")


def test_every_design_warning_is_structured(tmp_path):
    # Each warning the reader gives lands in Design.warnings as an InputWarning.
    d = sheet(["refdes", "group", "v_dc", "v_dc_max", "v_tol_pct", "Layout owner"],
              ["", "SPARE_RAIL", "3.3", "", "", ""], ["C1", "", "12", "11", "", ""],
              ["C2", "", "5", "", "0.05", ""])
    t = design_from_toml('x = 1\n', path="d.toml")
    found = [*d.warnings, *t.warnings]
    assert all(isinstance(w, InputWarning) for w in found)
    text = " | ".join(map(str, found))
    for part in ("'SPARE_RAIL' has no members", "v_dc_max is below v_dc", "v_tol_pct of 0.05 %",
                 "Layout owner", "top-level key 'x'", "no [defaults]"):
        assert part in text, part
    assert sorted(found)  # sortable


def test_a_rating_in_the_design_sheet_points_to_the_parts_file():
    with pytest.raises(InputError) as info:
        sheet(["refdes", "v_dc", "Rated voltage"], ["C1", "5", "16 V"])
    assert "parts file" in info.value.hint


@pytest.mark.parametrize("header", ["v_dc", "Ripple [mVpp]", "t_amb (°C)", "v_tol_pct", "c_min_f",
                                    "life", "r_bleeder [kohm]"])
def test_a_column_reads_the_same_with_and_without_the_column_path(monkeypatch, header):
    # Bare numbers go through bomcheck.parse.units.plain_to_si as a column; every other cell one
    # by one. Turning the column path off must change nothing (one grammar, one answer).
    from bomcheck.parse import design_cells

    cells = np.array(["5", " 5", "0.05", "12 V", "-", "", "none", "1e2", "3.3", "0.5", "7",
                      "±5 %", "120", "85 degC", "2.2 uF", "10 years", "0"], dtype=object)
    col = design_cells.parse_header(header)
    results = []
    for fast in (True, False):
        if not fast:
            monkeypatch.setattr(design_cells, "plain_to_si", lambda texts, *a, **k: (
                np.zeros(0, dtype=np.int64), np.zeros(0)))
        picked = []
        for text in cells:  # cells a column refuses are left out of the comparison
            try:
                design_cells.convert(np.array([text], dtype=object), col, _raise)
                picked.append(text)
            except ValueError:
                pass
        results.append(design_cells.convert(np.array(picked, dtype=object), col, _raise))
    np.testing.assert_array_equal(results[0], results[1])
    assert np.signbit(results[0]).tolist() == np.signbit(results[1]).tolist()


def _raise(at, text, exc):
    raise ValueError(text)


def test_each_distinct_string_is_converted_once(monkeypatch):
    calls: list[str] = []
    real = cells_mod.to_si
    monkeypatch.setattr(cells_mod, "to_si", lambda t, *a: (calls.append(t), real(t, *a))[1])
    cells = ["500 mV", "12 V", "500 mV", "12 V"] * 250
    d = sheet(["refdes", "v_dc"], *[[f"C{i}", c] for i, c in enumerate(cells, 1)])
    assert d.conditions["v_dc"].tolist()[:2] == [0.5, 12.0]
    assert sorted(calls) == ["12 V", "500 mV"]


def test_aliases_from_the_issue_are_known():
    for header, field in [("v_dc [V]", "v_dc"), ("Vdc (V)", "v_dc"), ("working voltage", "v_dc"),
                          ("t_amb (\u00b0C)", "t_ambient_c"), ("ambient", "t_ambient_c"),
                          ("Ripple mVpp", "v_ripple_pk"), ("t_rise", "t_rise_c"),
                          ("c_min", "c_min_f"), ("required capacitance", "c_min_f"),
                          ("life", "life_h"), ("members", "members"), ("group", "group"),
                          ("rail", "group"), ("notes", "notes"), ("V_TOL_PCT", "v_tol_pct")]:
        assert parse_header(header).field == field, header
    assert set(ALIASES) >= set(CONDITIONS)
