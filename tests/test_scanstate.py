"""Parse stage (bomcheck/parse/scanstate.py): the scan state of one value text, where two
readings of one quantity keep the conservative one, and the number helpers its readers share."""

from __future__ import annotations

import pytest

from bomcheck.parse.readings import CONFLICT_MARK
from bomcheck.parse.scanstate import State, code3_value, scaled


@pytest.mark.parametrize(
    ("digits", "farads"),
    [
        # IEC 60062 three-digit code: two significant digits and a power of ten, in pF;
        # third digit 9 means x0.1 and 8 means x0.01.
        pytest.param("104", 100e-9, id="104=100nF"), pytest.param("475", 4.7e-6, id="475=4.7uF"),
        pytest.param("220", 22e-12, id="220=22pF"), pytest.param("109", 1e-12, id="109=1pF"),
        pytest.param("478", 0.47e-12, id="478=0.47pF"),
    ],
)
def test_three_digit_code(digits, farads):
    assert code3_value(digits) == pytest.approx(farads, rel=1e-12)


def test_scaled_is_the_correctly_rounded_double():
    # float("4.7e-6") is correctly rounded (IEEE 754 / Python float()); the product 4.7 * 1e-6
    # need not be the same double.
    assert scaled("4.7", -6) == 4.7e-6 and scaled("100", -9) == 1e-7


def test_two_capacitances_keep_the_smaller():
    # Common practice (conservative reading): the smaller capacitance, with a conflict warning.
    st = State("any")
    st.set_cap(10e-6, "10uF", 1, weak=False)
    st.set_cap(1e-6, "1uF", 2, weak=False)
    assert st.cap == 1e-6 and st.warnings[0].startswith(CONFLICT_MARK)


def test_two_rated_voltages_of_one_kind_keep_the_lower_and_of_two_kinds_the_first():
    # Common practice: "16V 25V" keeps 16 V; "275VAC 630VDC" are two ratings, the first is kept.
    st = State("any")
    st.set_volt(25.0, None, "25V", 1)
    st.set_volt(16.0, None, "16V", 2)
    assert st.volt == 16.0 and st.warnings[0].startswith(CONFLICT_MARK)
    st = State("any")
    st.set_volt(275.0, "ac", "275VAC", 1)
    st.set_volt(630.0, "dc", "630VDC", 2)
    assert (st.volt, st.vkind) == (275.0, "ac") and "ignored" in st.warnings[0]


def test_temperatures_sort_by_sign_and_keep_the_conservative_one():
    # A negative temperature is the minimum; of two rated maxima the lower is kept, of two
    # minima the higher (common practice: the narrower range).
    st = State("any")
    for value, tok in ((-55.0, "-55C"), (125.0, "125C"), (105.0, "105C"), (-40.0, "-40C")):
        st.set_temp(value, tok)
    assert (st.tmin, st.tmax) == (-40.0, 105.0)
    assert sum(w.startswith(CONFLICT_MARK) for w in st.warnings) == 2


def test_imperial_and_metric_chip_code_of_one_size_agree():
    # EIA 0805 imperial = 2012 metric (IEC 60062 / EIA chip size table): no second package.
    st = State("any")
    st.set_pkg(("0805", ""), "0805")
    st.set_pkg(("2012", ""), "2012")
    assert st.pkg == "0805" and "both written" in st.pkg_note and st.warnings == []
    st.set_pkg(("1206", ""), "1206")
    assert st.pkg == "0805" and "second package" in st.warnings[0]


def test_dual_safety_rating_records_the_y_class():
    # IEC 60384-14: a part rated X1/Y2 meets both; the Y class is the stricter (line-to-earth).
    st = State("any")
    st.set_safety("X1", "X1")
    st.set_safety("Y2", "Y2")
    assert st.safety == "Y2" and "dual" in st.warnings[0]
