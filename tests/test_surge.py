"""Tests of bomcheck.stress.surge: surge current at switch-on and the series resistance solid tantalum asks for."""

from __future__ import annotations


import numpy as np
import pytest
from circuitcases import electrolytic, group, run

from bomcheck.evaluate.rules import load_rules
from bomcheck.parse.units import to_si
from bomcheck.stress import surge


def test_surge_current():
    # Reference sheet section 4: 100 uF ramped 0 -> 12 V in 1 ms: 1.2 A.
    slew = to_si("12 V/ms", "slew")
    assert slew == pytest.approx(12000.0)
    assert surge.surge_current_a(100e-6, slew) == pytest.approx(1.2, rel=1e-12)
    # Without a slew rate, the step V / R at switch-on (arithmetic): 400 V / 47 ohm.
    assert surge.surge_current_a(100e-6, np.nan, 400.0, 47.0) == pytest.approx(400 / 47)


def test_tantalum_series_resistance_top_grade():
    # Reference sheet 1.1 note 4, derived check value: solid tantalum at 5 V applied, top grade:
    # at least max(0.3 x 5, 1) = 1.5 ohm. (The per-volt reading itself is uncertain: not tested.)
    assert surge.tantalum_min_series_r(5.0, ohm_per_v=0.3) == pytest.approx(1.5)
    rule = load_rules(["strict"]).rule("EEE-TAN-SERIES-R-TOP")
    assert rule.fail.at(np.array([5.0]), 1)[0] == pytest.approx(1.5, rel=1e-12)
    assert not rule.enabled  # optional, as the grade is the project's choice
    assert "uncertain" in rule.rationale.lower()


def test_surge_from_slew_or_source_resistance_and_stack_current():
    res = run([electrolytic("C1", v_dc=12.0, slew_v_per_s=12000.0),
               electrolytic("C2", v_dc=12.0, r_source_ohm=2.0)])
    # 120 uF (maximum) x 12 V/ms = 1.44 A; 12 V / 2 ohm = 6 A (arithmetic).
    assert res.table["surge_a"].tolist() == pytest.approx([1.44, 6.0])
    res = run([electrolytic("C1", r_balance_ohm=1e5, r_balance_tol_pct=1.0),
               electrolytic("C2", r_balance_ohm=1e5, r_balance_tol_pct=1.0)],
              [group("LINK", ["C1", "C2"], "series", v_dc=400.0, slew_v_per_s=1000.0)])
    # The stack's current flows through both: 60 uF x 1 V/ms = 60 mA.
    assert res.table["surge_a"].tolist() == pytest.approx([0.06, 0.06])
