"""Tests of bomcheck.stress.banks: banks in parallel, their ripple share, bleeders and capacitance need."""

from __future__ import annotations

import math

import pytest
from circuitcases import electrolytic, group, run



def test_bank_meets_the_requirement_as_a_whole():
    # Three 100 uF -20 % parts: 240 uF worst case together, 80 uF each; need 200 uF.
    rows = [electrolytic(f"C{i}", v_dc=24.0) for i in (1, 2, 3)]
    res = run(rows, [group("BULK", ["C1", "C2", "C3"], "bank", c_min_f=200e-6)])
    t = res.table
    assert t["bank_c_worst_f"].tolist() == pytest.approx([240e-6] * 3)
    assert t["bank_c_margin"].tolist() == pytest.approx([1.2] * 3)
    assert t["c_margin"].isna().all()  # no member has to meet it alone
    (g,) = res.groups
    assert (g["kind"], g["c_eq_f"], g["c_min_f"]) == ("bank", pytest.approx(300e-6), 200e-6)
    assert g["c_margin"] == pytest.approx(1.2)
    # Energy of the bank: 360 uF (maximum) at 24 V (arithmetic, 1/2 C V^2).
    assert g["energy_j"] == pytest.approx(0.5 * 360e-6 * 24 ** 2)


def test_bank_shares_its_ripple_current_by_capacitance():
    rows = [electrolytic("C1", c_f=300e-6, v_dc=24.0), electrolytic("C2", c_f=100e-6, v_dc=24.0)]
    res = run(rows, [group("BULK", ["C1", "C2"], "bank", i_ripple_a=2.0)])
    assert res.table["i_ripple_a"].tolist() == pytest.approx([1.5, 0.5])


def test_bank_discharges_through_every_bleeder_on_its_node():
    # Two 100 uF members (120 uF maximum each) with 20 kohm each and 10 kohm on the bank's row:
    # 5 kohm across 240 uF (arithmetic of parallel resistances).
    rows = [electrolytic("C1", v_dc=400.0, voltage_v=450.0, r_bleeder_ohm=20e3),
            electrolytic("C2", v_dc=400.0, voltage_v=450.0, r_bleeder_ohm=20e3)]
    res = run(rows, [group("BULK", ["C1", "C2"], "bank", r_bleeder_ohm=10e3)])
    assert res.table["r_discharge_ohm"].tolist() == pytest.approx([5e3, 5e3])
    assert res.table["t_to_60v_s"].tolist() == pytest.approx(
        [5e3 * 240e-6 * math.log(400 / 60)] * 2)
    assert res.groups[0]["discharge_s"] == pytest.approx(5e3 * 240e-6 * math.log(400 / 60))
