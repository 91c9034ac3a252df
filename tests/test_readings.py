"""Parse stage (bomcheck/parse/readings.py): numbers outside their plausible range are unread with
a warning, and several tolerances in one text keep the widest (conservative) reading."""

from __future__ import annotations

import math

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from bomcheck.parse import codes
from bomcheck.parse.readings import CONFLICT_MARK, keep_widest_tolerance, unread_implausible
from bomcheck.parse.scanstate import State
from bomcheck.parse.values import parse_value


def test_keep_widest_tolerance_takes_each_side_at_its_widest():
    # Common practice (conservative reading): of +/-10 % and -20/+5 % keep -20/+10 %.
    state = State("any")
    state.set_tol((10.0, 10.0, None), "10%", 1)
    state.set_tol((20.0, 5.0, None), "-20%+5%", 2)
    keep_widest_tolerance(state)
    assert state.tol == (20.0, 10.0, None)
    assert any(w.startswith(CONFLICT_MARK) and "kept the widest" in w for w in state.warnings)


def test_absolute_tolerance_is_compared_through_the_capacitance():
    # +/-0.5 pF on 10 pF is +/-5 % (arithmetic), wider than +/-2 %.
    state = State("any")
    state.cap = 10e-12
    state.set_tol((2.0, 2.0, None), "2%", 1)
    state.set_tol((None, None, 0.5e-12), "D", 2)
    keep_widest_tolerance(state)
    assert state.tol[0] == pytest.approx(5.0) and state.tol[1] == pytest.approx(5.0)


def test_absolute_tolerance_without_a_capacitance_keeps_the_first():
    # Without the capacitance a pF tolerance cannot be compared with a percentage (arithmetic):
    # the first reading stays and the doubt is said.
    state = State("any")
    state.set_tol((2.0, 2.0, None), "2%", 1)
    state.set_tol((None, None, 0.5e-12), "D", 2)
    keep_widest_tolerance(state)
    assert state.tol == (2.0, 2.0, None) and any("ignored" in w for w in state.warnings)


def test_unread_implausible_leaves_plausible_readings_alone():
    # 100 nF, 50 V, -55..125 degC are everyday ratings (EIA-198 X7R range).
    state = State("any")
    state.cap, state.volt, state.tmin, state.tmax = 100e-9, 50.0, -55.0, 125.0
    unread_implausible(state)
    assert (state.cap, state.volt, state.tmin, state.tmax) == (100e-9, 50.0, -55.0, 125.0)
    assert state.warnings == [] and state.unread == []


def test_unread_implausible_drops_a_rated_voltage_of_zero():
    # No capacitor is rated 0 V (value from memory): the reading is dropped and said.
    state = State("any")
    state.cap, state.volt = 100e-9, 0.0
    unread_implausible(state)
    assert state.volt is None and state.cap == 100e-9
    assert state.warnings and "outside the plausible range" in state.warnings[0]
    assert state.unread


@pytest.mark.parametrize(
    ("text", "field", "value"),
    [("10uF 1uF 16V", "capacitance_f", 1e-6), ("10uF 16V 25V", "voltage_v", 16.0),
     ("10uF 10% 20%", "tol_minus_pct", 20.0), ("10uF 85C 105C", "temp_max_c", 85.0)],
)
def test_two_readings_in_one_text_keep_the_conservative_one(text, field, value):
    # Common practice: smaller capacitance, lower rated voltage, wider tolerance, lower rating.
    s = parse_value(text)
    assert getattr(s, field) == pytest.approx(value)
    assert any(w.startswith(CONFLICT_MARK) for w in s.warnings)


@pytest.mark.parametrize(
    ("text", "field"),
    [("100nF 0V X7R", "voltage_v"), ("100nF 500kV", "voltage_v"),
     ("1" + "0" * 400 + "uF", "capacitance_f"), ("20000F", "capacitance_f"),
     ("100nF 551°C", "temp_max_c"), ("100nF -551C", "temp_min_c"),
     ("100nF 170000000000%", "tol_minus_pct")],
)
def test_implausible_numbers_are_unread_with_a_warning(text, field):
    s = parse_value(text)
    assert getattr(s, field) is None and s.warnings and s.unread


_NUMBER_FIELDS = ("capacitance_f", "voltage_v", "tol_minus_pct", "tol_plus_pct", "tol_abs_f",
                  "temp_min_c", "temp_max_c", "tc_ppm", "tc_tol_ppm", "cap_change_minus_pct",
                  "cap_change_plus_pct")


_RANGE_OF = {"capacitance_f": "capacitance_f", "voltage_v": "voltage_v",
             "tol_minus_pct": "tol_minus_pct", "tol_plus_pct": "tol_plus_pct",
             "tol_abs_f": "tol_abs_f", "temp_min_c": "temp_c", "temp_max_c": "temp_c"}


def assert_finite_and_plausible(spec) -> None:
    """Every number the parser returns is finite and, where a range is defined, inside it."""
    for f in _NUMBER_FIELDS:
        v = getattr(spec, f)
        if v is None:
            continue
        assert math.isfinite(v), (spec.text, f, v)
        if f in _RANGE_OF:
            assert codes.plausible(_RANGE_OF[f], v), (spec.text, f, v)


_PIECES = st.sampled_from([
    "1", "0", "9" * 30, "1e400", "uF", "pF", "F", "V", "kV", "%", "C", "°C", "-", "+", "±", "/",
    "R", "u", "n", "p", "X7R", "c0g", "_", "(", ")", "Y1", "TA", "0603", "Metric", "CAPC",
    "X", "N", "CAP", ".", ",", " ", "~", "to", "104", "-20%+80%", "1R0B", "inf", "nan",
])


@settings(max_examples=400, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.one_of(st.text(max_size=40), st.lists(_PIECES, max_size=12).map("".join),
                 st.lists(_PIECES, max_size=12).map(" ".join)))
def test_fuzz_parser_never_raises_and_stays_in_range(text):
    for context in ("any", "value", "voltage", "tolerance", "temperature", "package"):
        spec = parse_value(text, context=context)
        assert not any("internal parser error" in w for w in spec.warnings)
        assert_finite_and_plausible(spec)
