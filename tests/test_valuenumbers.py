"""Parse stage (bomcheck/parse/valuenumbers.py): tokens that start with a digit or a sign read
into the scan state (units, RKM codes, tolerances, temperature ranges, can sizes)."""

from __future__ import annotations

import pytest

from bomcheck.parse.scanstate import State
from bomcheck.parse.valuenumbers import numeric
from bomcheck.parse.values import parse_value


def _read(tok: str, context: str = "any") -> State:
    st = State(context)
    assert numeric(st, tok, 1) is None
    return st


@pytest.mark.parametrize(
    ("tok", "farads"),
    [
        # SI prefixes: p = 1e-12, n = 1e-9, u = 1e-6 (SI brochure, table of prefixes).
        pytest.param("4.7uF", 4.7e-6, id="uF"), pytest.param("100nF", 100e-9, id="nF"),
        pytest.param("22pF", 22e-12, id="pF"),
        # "mF" with a lower-case m is the millifarad (SI prefix m = 1e-3).
        pytest.param("1mF", 1e-3, id="millifarad"),
        # "MFD" is the old American abbreviation for microfarad (common practice).
        pytest.param("10MFD", 10e-6, id="MFD"),
    ],
)
def test_capacitance_with_its_unit(tok, farads):
    st = _read(tok)
    assert st.cap == pytest.approx(farads) and st.strong_cap and st.unread == []


def test_uppercase_mf_is_read_as_microfarad_with_a_warning():
    # "MF" for microfarad is old usage (common practice); it is read so and the doubt is said.
    st = _read("10MF")
    assert st.cap == pytest.approx(10e-6) and any("old usage" in w for w in st.warnings)


@pytest.mark.parametrize(
    ("tok", "volts", "kind"),
    [pytest.param("50V", 50.0, None, id="V"), pytest.param("50VDC", 50.0, "dc", id="VDC"),
     pytest.param("275VAC", 275.0, "ac", id="VAC"), pytest.param("2kV", 2000.0, None, id="kV"),
     # RKM voltage: 6V3 = 6.3 V (IEC 60062 letter-for-decimal-point style, common practice).
     pytest.param("6V3", 6.3, None, id="6V3")],
)
def test_rated_voltage_and_its_kind(tok, volts, kind):
    st = _read(tok)
    assert st.volt == pytest.approx(volts) and st.vkind == kind


def test_negative_capacitance_or_voltage_is_not_read():
    # No capacitance or rated voltage is negative (value from memory): the token is unread.
    for tok in ("-10uF", "-16V"):
        st = _read(tok)
        assert st.cap is None and st.volt is None and st.unread == [tok]
        assert any(tok in w for w in st.warnings)


def test_dashed_token_is_given_back_in_parts():
    # "10uF-16V": two quantities written with a dash; the reader returns them to read again.
    st = State("any")
    parts = numeric(st, "10uF-16V", 1)
    assert parts is not None and "10uF" in parts and "16V" in parts


def test_frequency_and_resistance_units_fill_no_capacitor_field():
    # An ESR in ohms or a test frequency in a capacitor's text is not a capacitance (common
    # practice of datasheet titles).
    assert _read("100kHz").cap is None
    st = _read("10mohm")
    assert st.cap is None and st.weak_noncap and st.weak_noncap[0][1] == "resistor"


def test_can_size_is_a_package():
    # Aluminium can "8x11.5": diameter 8 mm, length 11.5 mm (common practice of can sizes).
    st = _read("8x11.5")
    assert st.pkg == "8x11.5" and "8 mm" in st.pkg_note


@pytest.mark.parametrize(
    ("text", "cap", "abs_tol"),
    [pytest.param("1R0B", 1.0e-12, 0.1e-12, id="1R0B"),  # IEC 60062: B = +/-0.1 pF
     pytest.param("2R2C", 2.2e-12, 0.25e-12, id="2R2C"),  # C = +/-0.25 pF
     pytest.param("5R6D", 5.6e-12, 0.5e-12, id="5R6D")],  # D = +/-0.5 pF
)
def test_rkm_with_tolerance_letter(text, cap, abs_tol):
    s = parse_value(text, context="value")
    assert s.capacitance_f == pytest.approx(cap) and s.tol_abs_f == pytest.approx(abs_tol)


@pytest.mark.parametrize("text", ["10uF -20%+80% 16V", "10uF +80%-20% 16V"])
def test_asymmetric_tolerance_without_separator(text):
    # Common practice (the IEC 60062 letter Z stands for -20/+80 %).
    s = parse_value(text)
    assert (s.tol_minus_pct, s.tol_plus_pct) == (20.0, 80.0)
