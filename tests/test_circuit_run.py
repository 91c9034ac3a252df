"""Tests of bomcheck.stress.circuit_run: the options of the circuit stresses and the columns one
run shares."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from bomcheck.evaluate.rules import load_rules
from bomcheck.stress.circuit_run import CircuitOptions, CircuitRun, finite
from bomcheck.stress.placement import StressData


def _run(**columns) -> CircuitRun:
    table = pd.DataFrame({"refdes": ["C1", "c2 "], **columns})
    return CircuitRun(table, StressData(), CircuitOptions(), {}, None, dict(table.items()))


def test_numbers_are_converted_once_and_a_put_replaces_them():
    run = _run(v_dc=["12", "x"])
    first = run.num("v_dc")
    assert np.isnan(first[1]) and first[0] == 12.0
    assert run.num("v_dc") is first  # converted once
    assert np.isnan(run.num("absent")).all()
    run.put("v_dc", np.array([5.0, 6.0]))
    assert run.num("v_dc").tolist() == [5.0, 6.0]


def test_a_new_column_goes_last_and_an_existing_one_keeps_its_place():
    run = _run(a=[1, 2], b=[3, 4])
    run.put("c", np.zeros(2))
    run.put("a", np.ones(2))
    assert list(run.frame().columns) == ["refdes", "a", "b", "c"]
    assert list(run.frame(("b", "missing")).columns) == ["b"]


def test_designators_are_found_whatever_their_case_and_spaces():
    assert _run().where() == {"C1": 0, "C2": 1}


def test_tolerances_fill_from_the_absolute_tolerance_then_the_default():
    # 1 uF +/-0.1 uF is 10 % (arithmetic); none given: the stress data's default, marked assumed.
    run = _run(capacitance_f=[1e-6, 1e-6], tol_abs_f=[0.1e-6, np.nan])
    minus, plus, assumed = run.tolerances()
    assert minus.tolist() == pytest.approx([10.0, StressData().default_tol_pct])
    assert assumed.tolist() == [False, True]
    assert run.c_max().tolist() == pytest.approx([1.1e-6, 1.2e-6])


def test_options_from_the_rule_set_and_json_numbers():
    opts = CircuitOptions.from_ruleset(load_rules(["industrial"]))
    assert opts.label.startswith("typical") and opts.thermal_resistance_c_per_w
    assert CircuitOptions.from_ruleset(None).safe_voltage_v == 60.0  # IEC 60204-1 figure
    assert finite(0.1 + 0.2) == 0.3 and finite(np.inf) is None
