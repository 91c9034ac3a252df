"""Normalise stage (bomcheck/parse/parts_cells.py): each distinct parts-file cell to an SI value,
a tolerance, a dielectric code, an override flag or a curve; errors name the file, row and
column."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

import bomcheck.parse.parts_cells as cells_mod
from bomcheck.errors import InputError
from bomcheck.parse.parts import parts_from_table
from bomcheck.parse.parts_cells import TEXT_READERS, Curve, convert_column, read_curve

ROWS = np.array([2, 3, 4, 5])


def _cells(*texts: str) -> np.ndarray:
    return np.array(texts, dtype=object)


def test_curve_points_are_sorted_and_read_in_si():
    # A DC-bias curve as a maker's datasheet plots it: 100 % left at 0 V, 30 % at 5 V (common
    # practice of class II MLCC data); points may be written in any order.
    c = read_curve("5 V: 30 %; 0 V: 100 %", "dc_bias", "voltage", path="p.csv", row=2,
                   column="dc_bias")
    assert c == Curve(xs=(0.0, 5.0), ys=(1.0, 0.3))


def test_curve_interpolates_linearly_and_is_flat_or_silent_beyond_its_end():
    c = Curve(xs=(0.0, 5.0), ys=(1.0, 0.3))
    assert c.at(np.array([0.0, 2.5, 5.0, 10.0])) == pytest.approx([1.0, 0.65, 0.3, 0.3])
    assert np.isnan(c.at(np.array([10.0]), beyond=False)[0])
    # In log10(x): halfway between 10 and 1000 is 100 (arithmetic).
    f = Curve(xs=(10.0, 1000.0), ys=(1.0, 3.0))
    assert f.at(np.array([100.0]), log_x=True)[0] == pytest.approx(2.0)


def test_convert_column_reads_each_cell_in_si_and_leaves_empty_cells_nan():
    # SI prefix m = 1e-3: 45 mohm = 0.045 ohm; a bare number takes the column's unit.
    out = convert_column(_cells("45 mohm", "0.1", "45 mohm", ""), "resistance", "ohm",
                         path="p.csv", rows=ROWS, column="esr")
    assert out[:3] == pytest.approx([0.045, 0.1, 0.045]) and np.isnan(out[3])


def test_convert_column_error_names_the_first_row_with_the_bad_cell():
    # Project rule: a bad cell is one line naming file, row and column; 5 V is no resistance.
    with pytest.raises(InputError) as info:
        convert_column(_cells("0.1", "5 V", "5 V", ""), "resistance", "ohm", path="p.csv",
                       rows=ROWS, column="esr")
    e = info.value
    assert (e.path, e.row, e.column, e.text) == ("p.csv", 3, "esr", "5 V")


def test_text_readers():
    kw = {"path": "p.csv", "rows": ROWS[:3]}
    # Symmetric tolerances written with or without the plus-minus sign (common practice).
    tol = TEXT_READERS["tolerance"](_cells("10 %", "±20 %", ""), column="tolerance", **kw)
    assert tol[:2].tolist() == [10.0, 20.0] and np.isnan(tol[2])
    # EIA-198 codes, case-blind; NP0 is the other name of C0G.
    diel = TEXT_READERS["dielectric"](_cells("x7r", "NP0", ""), column="dielectric", **kw)
    assert diel.tolist() == ["X7R", "C0G", ""]
    flags = TEXT_READERS["override"](_cells("true", "FALSE", ""), column="override", **kw)
    assert flags.tolist() == [True, False, False]


def test_each_distinct_cell_is_converted_once(monkeypatch):
    calls = []
    monkeypatch.setattr(cells_mod, "to_si", lambda text, q, u=None, *a: calls.append(text) or 1.0)
    frame = pd.DataFrame({"mpn": [f"P{i}" for i in range(50)], "esr": ["45 mohm"] * 50})
    parts_from_table(frame)
    assert calls == ["45 mohm"]
