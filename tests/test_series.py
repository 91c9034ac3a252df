"""Tests of bomcheck.stress.series: series stacks, each member's worst capacitive and DC share (reference sheet section 4)."""

from __future__ import annotations


import pytest
from circuitcases import electrolytic, group, run

from bomcheck.stress import banks, series


def test_series_and_parallel_combination():
    # Reference sheet section 4: 10 uF + 22 uF in series: 6.875 uF; in parallel the sum.
    assert series.series_f([10e-6, 22e-6]) == pytest.approx(6.875e-6, rel=1e-12)
    assert banks.parallel_f([10e-6, 22e-6]) == pytest.approx(32e-6, rel=1e-12)
    # Reference sheet section 4: 10 uF + 22 uF on 50 V: 34.375 V and 15.625 V.
    assert series.series_share(50.0, [10e-6, 22e-6]) == pytest.approx([34.375, 15.625])


@pytest.mark.parametrize("tol, worst", [
    # Reference sheet section 4: 2 x 100 uF +/-20 % on 400 V: worst 240 V on one (nominal 200 V).
    pytest.param(20.0, 240.0, id="20pct"),
    # Reference sheet section 4: +/-10 %: 220 V.
    pytest.param(10.0, 220.0, id="10pct"),
])
def test_series_capacitive_share_worst_case(tol, worst):
    v = series.series_share_worst_cap(400.0, [100e-6, 100e-6], [tol, tol], [tol, tol])
    assert v == pytest.approx([worst, worst], rel=1e-12)
    assert series.series_share(400.0, [100e-6, 100e-6]) == pytest.approx([200.0, 200.0])


def test_series_dc_share_from_balancing_resistors():
    # Reference sheet section 4: 2 x 100 kohm +/-1 % on 400 V: worst 202.0 V.
    v = series.series_share_worst_dc(400.0, [100e3, 100e3], 1.0)
    assert v == pytest.approx([202.0, 202.0], rel=1e-12)
    # Leakage through the other member's side raises the share (arithmetic of the divider
    # model: 101k x (400 V + 99k x 0.5 mA) / 200k = 227.0 V).
    v = series.series_share_worst_dc(400.0, [100e3, 100e3], 1.0, [0.5e-3, 0.5e-3])
    assert v == pytest.approx([101e3 * (400 + 99e3 * 0.5e-3) / 200e3] * 2, rel=1e-12)


def test_series_stack_feeds_each_member_its_worst_share():
    res = run([electrolytic("C1", r_balance_ohm=100e3, r_balance_tol_pct=1.0),
               electrolytic("C2", r_balance_ohm=100e3, r_balance_tol_pct=1.0)],
              [group("LINK", ["C1", "C2"], "series", v_dc=400.0)])
    t = res.table
    # Reference sheet section 4: 240 V capacitive (the worse), 202.0 V resistive.
    assert t["v_share_cap_v"].tolist() == pytest.approx([240.0, 240.0])
    assert t["v_share_dc_v"].tolist() == pytest.approx([202.0, 202.0])
    assert t["applied_peak_v"].tolist() == pytest.approx([240.0, 240.0])
    assert t["voltage_ratio"].tolist() == pytest.approx([240 / 250] * 2)
    assert t["v_dc"].tolist() == pytest.approx([200.0, 200.0])  # the nominal share
    # The stack is one node: 400 V on 120 uF / 2 = 60 uF (maximum capacitances): 4.8 J.
    assert t["node_energy_j"].tolist() == pytest.approx([0.5 * 60e-6 * 400 ** 2] * 2)
    (g,) = res.groups
    assert (g["kind"], g["members"], g["v_stack_v"]) == ("series", ["C1", "C2"], 400.0)
    assert g["c_eq_f"] == pytest.approx(50e-6)
    assert [s["v_share_cap_v"] for s in g["shares"]] == pytest.approx([240.0, 240.0])
    assert not len(res.verdicts)


def test_series_stack_resistive_share_can_govern():
    # Balancing resistors of 10 % tolerance on two 1 % capacitors: 110k/(110k+90k) x 400 V = 220 V
    # beats the capacitive 1.01/0.99 split (arithmetic).
    res = run([electrolytic("C1", tol=1.0, r_balance_ohm=100e3, r_balance_tol_pct=10.0),
               electrolytic("C2", tol=1.0, r_balance_ohm=100e3, r_balance_tol_pct=10.0)],
              [group("LINK", ["C1", "C2"], "series", v_dc=400.0)])
    assert res.table["v_share_dc_v"].tolist() == pytest.approx([220.0, 220.0])
    assert res.table["applied_peak_v"].tolist() == pytest.approx([220.0, 220.0])


def test_series_stack_without_balancing_resistors_is_no_data():
    res = run([electrolytic("C1"), electrolytic("C2")],
              [group("LINK", ["C1", "C2"], "series", v_dc=400.0)])
    v = res.verdicts
    assert v["rule_id"].tolist() == [series.SERIES_BALANCE] * 2
    assert v["status"].tolist() == ["nodata"] * 2
    assert "r_balance_ohm" in v["message"].iloc[0]
    assert res.table["v_share_dc_v"].isna().all()
    assert res.table["applied_peak_v"].tolist() == pytest.approx([240.0, 240.0])
