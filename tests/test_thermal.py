"""Tests of bomcheck.stress.thermal: ripple self-heating and the typical can thermal resistance."""

from __future__ import annotations


import pandas as pd
import pytest
from circuitcases import DATA, electrolytic

from bomcheck.evaluate.rules import load_rules
from bomcheck.stress import circuit, thermal
from bomcheck.stress.placement import compute


def test_ripple_heating():
    # P = I^2 x ESR (arithmetic): 1.5 A in 45 mohm = 0.10125 W; through 36.2 degC/W: 3.665 degC.
    p, rise = thermal.ripple_heating(1.5, 0.045, 36.2)
    assert p == pytest.approx(0.10125)
    assert rise == pytest.approx(0.10125 * 36.2)


@pytest.mark.parametrize("name", ["strict", "industrial"])
def test_typical_can_table_is_the_formula_it_cites(name):
    # Reference sheet 1.4 (common practice): dT = I^2 x ESR / (beta x can area); the shipped
    # table is that formula at its beta (value from memory), rounded to 0.1 degC/W.
    data = load_rules([name]).circuit
    assert data["label"].startswith("typical")
    for size, rth in data["thermal_resistance_c_per_w"].items():
        d, length = (float(x) for x in size.split("x"))
        expected = thermal.can_thermal_resistance(d, length, data["can_beta_w_per_cm2_k"])
        assert rth == pytest.approx(expected, abs=0.06), size


def test_ripple_rise_feeds_the_operating_temperature_and_life():
    rules = load_rules(["industrial"])
    row = electrolytic("C1", v_dc=24.0, i_ripple_a=1.0, esr_ohm=0.2, rth_c_per_w=40.0,
                       life_l0_h=2000.0, life_t0_c=105.0, life_h=10000.0, t_rise_c=3.0)
    table = compute(pd.DataFrame([row]), DATA)
    t = circuit.apply(table, DATA, rules).table.iloc[0]
    # 1 A^2 x 0.2 ohm x 40 degC/W = 8 degC > the stated 3 degC: operating 48 degC (arithmetic).
    assert t["ripple_rise_c"] == pytest.approx(8.0)
    assert t["t_operating_c"] == pytest.approx(48.0)
    assert t["t_rise_c"] == 3.0  # the condition as given stays
    assert t["life_est_h"] == pytest.approx(2000.0 * 2 ** ((105 - 48) / 10))
    assert t["life_ratio"] == pytest.approx(t["life_est_h"] / 10000.0)
    assert t["t_operating_c_basis"] == ""  # the part's own thermal resistance


def test_generic_thermal_resistance_marks_the_verdicts_generic():
    rules = load_rules(["industrial"])
    row = electrolytic("C1", v_dc=24.0, i_ripple_a=1.0, esr_ohm=0.2, package="12.5x25",
                       life_l0_h=2000.0, life_h=10000.0)
    table = compute(pd.DataFrame([row]), DATA)
    t = circuit.apply(table, DATA, rules).table.iloc[0]
    assert t["ripple_rise_c"] == pytest.approx(0.2 * 36.2)
    assert t["t_operating_c_basis"] == "generic" and t["life_ratio_basis"] == "generic"
