"""Code tables of the parse stage against the standards' tables as the reference sheet has them."""

import itertools

import pytest

from bomcheck.parse import codes

# --- EIA-198 class II/III -------------------------------------------------------------------------
# EIA-198 class II/III table (secondary; reference sheet section 2.1), written out here, not
# imported, so that a slip in bomcheck.parse.codes shows.
EIA_LOW_C = {"X": -55.0, "Y": -30.0, "Z": 10.0}
EIA_HIGH_C = {"2": 45.0, "4": 65.0, "5": 85.0, "6": 105.0, "7": 125.0, "8": 150.0, "9": 200.0}
EIA_CHANGE = {  # letter: (minus %, plus %)
    "A": (1.0, 1.0), "B": (1.5, 1.5), "C": (2.2, 2.2), "D": (3.3, 3.3), "E": (4.7, 4.7),
    "F": (7.5, 7.5), "P": (10.0, 10.0), "R": (15.0, 15.0), "S": (22.0, 22.0),
    "T": (33.0, 22.0), "U": (56.0, 22.0), "V": (82.0, 22.0),
}
CLASS2_CODES = ["".join(c) for c in itertools.product(EIA_LOW_C, EIA_HIGH_C, EIA_CHANGE)]


def test_every_class2_code_of_the_table_decodes_as_the_reference_says():
    # EIA-198 class II/III table (secondary): every letter and digit, in every combination.
    wrong = []
    for code in CLASS2_CODES:
        d = codes.decode_class2(code)
        expected = (EIA_LOW_C[code[0]], EIA_HIGH_C[code[1]], *EIA_CHANGE[code[2]])
        got = None if d is None else (d.temp_min_c, d.temp_max_c, d.change_minus_pct,
                                      d.change_plus_pct)
        if got != expected or d.code != code:
            wrong.append((code, got, expected))
    assert not wrong
    assert set(codes.CLASS2_CODES) == set(CLASS2_CODES)


@pytest.mark.parametrize(
    "code, low, high, minus, plus",
    [
        # EIA-198 class II/III (secondary): the reference sheet's worked decodings.
        pytest.param("X7R", -55, 125, 15, 15, id="X7R"),
        pytest.param("Y5V", -30, 85, 82, 22, id="Y5V"),
        pytest.param("X6S", -55, 105, 22, 22, id="X6S"),
        # EIA-198 class II/III (secondary), decoded by hand from the table.
        pytest.param("X5R", -55, 85, 15, 15, id="X5R"),
        pytest.param("Z5U", 10, 85, 56, 22, id="Z5U"),
        pytest.param("X8R", -55, 150, 15, 15, id="X8R"),
        pytest.param("X7T", -55, 125, 33, 22, id="X7T"),
    ],
)
def test_named_class2_codes(code, low, high, minus, plus):
    d = codes.decode_dielectric(code.lower())
    assert (d.code, d.temp_min_c, d.temp_max_c, d.change_minus_pct, d.change_plus_pct) == (
        code, low, high, minus, plus)
    assert d.tc_ppm is None


@pytest.mark.parametrize("letter, eia_class", [*(pytest.param(c, 2, id=c) for c in "ABCDEFPRS"),
                                               *(pytest.param(c, 3, id=c) for c in "TUV")])
def test_class_iii_is_the_asymmetric_change_letters(letter, eia_class):
    # Common practice: the asymmetric +22/-33..-82 % codes (Y5V, Z5U) are called class III.
    assert codes.decode_class2("X7" + letter).eia_class == eia_class


@pytest.mark.parametrize("code", ["X3R", "X1R", "W5R", "X7Q", "X7G", "Y5", "X7RR", ""])
def test_codes_outside_the_class2_table_do_not_decode(code):
    # EIA-198 class II/III table (secondary): no digit 1 or 3, no first letter W, no change
    # letter Q or G.
    assert codes.decode_class2(code) is None


# --- EIA class I ----------------------------------------------------------------------------------
# EIA class I code table (secondary; reference sheet section 2.2), written out here.
EIA1_SIG = {"C": 0.0, "B": 0.3, "L": 0.8, "A": 0.9, "M": 1.0, "P": 1.5, "R": 2.2, "S": 3.3,
            "T": 4.7, "V": 5.6, "U": 7.5}
EIA1_MULT = {"0": -1, "1": -10, "2": -100, "3": -1000, "4": -10000, "5": 1, "6": 10, "7": 100,
             "8": 1000, "9": 10000}
EIA1_TOL = {"G": 30, "H": 60, "J": 120, "K": 250, "L": 500, "M": 1000, "N": 2500}


def test_every_class1_code_of_the_table_decodes_as_the_reference_says():
    # EIA class I table (secondary): TC = significant figure x multiplier, +/- tolerance letter.
    wrong = []
    for s, m, t in itertools.product(EIA1_SIG, EIA1_MULT, EIA1_TOL):
        d = codes.decode_class1(s + m + t)
        expected = (EIA1_SIG[s] * EIA1_MULT[m], EIA1_TOL[t])
        if d is None or d.eia_class != 1 or d.tc_ppm != pytest.approx(expected[0], abs=1e-9) \
                or d.tc_tol_ppm != expected[1]:
            wrong.append((s + m + t, d, expected))
    assert not wrong
    assert len(codes.CLASS1_CODES) == len(EIA1_SIG) * len(EIA1_MULT) * len(EIA1_TOL)


@pytest.mark.parametrize(
    "code, tc, tol",
    [
        # EIA class I (secondary): the reference sheet's worked decodings.
        pytest.param("C0G", 0.0, 30, id="C0G"),
        pytest.param("U2J", -750.0, 120, id="U2J"),
        pytest.param("P3K", -1500.0, 250, id="P3K"),
        pytest.param("M7G", 100.0, 30, id="M7G"),
        # Reference sheet 2.2: COG (letter O), NP0 and NPO are written for C0G in practice.
        pytest.param("COG", 0.0, 30, id="COG"),
        pytest.param("NP0", 0.0, 30, id="NP0"),
        pytest.param("NPO", 0.0, 30, id="NPO"),
    ],
)
def test_named_class1_codes(code, tc, tol):
    d = codes.decode_dielectric(code)
    assert (d.code, d.eia_class, d.tc_ppm, d.tc_tol_ppm) == ("C0G" if code in (
        "COG", "NP0", "NPO") else code, 1, tc, tol)
    assert d.temp_max_c is None  # the class I code states no temperature range


@pytest.mark.parametrize("code, tc", [pytest.param("P100", 100.0, id="P100"),
                                      pytest.param("N750", -750.0, id="N750"),
                                      pytest.param("N1500", -1500.0, id="N1500")])
def test_p_n_temperature_coefficient_names(code, tc):
    # Common practice: P/N + ppm/degC names the class I temperature coefficient.
    d = codes.decode_tc_code(code)
    assert (d.code, d.eia_class, d.tc_ppm, d.tc_tol_ppm) == (code, 1, tc, None)


@pytest.mark.parametrize("code", ["C0X", "X0G", "C0", "W2J", "P10", "Q100"])
def test_invalid_class1_codes(code):
    # EIA class I table (secondary): X is no tolerance or figure letter, W no figure letter.
    assert codes.decode_dielectric(code) is None


# --- IEC 60062 tolerance letters ------------------------------------------------------------------


@pytest.mark.parametrize(
    "letter, minus, plus, abs_f",
    [
        # IEC 60062 tolerance letters (secondary; reference sheet 2.3). H, R, S, T are left out:
        # the copies of the standard disagree on them.
        pytest.param("B", None, None, 0.1e-12, id="B"),
        pytest.param("C", None, None, 0.25e-12, id="C"),
        pytest.param("D", None, None, 0.5e-12, id="D"),
        pytest.param("F", 1.0, 1.0, None, id="F"),
        pytest.param("G", 2.0, 2.0, None, id="G"),
        pytest.param("J", 5.0, 5.0, None, id="J"),
        pytest.param("K", 10.0, 10.0, None, id="K"),
        pytest.param("M", 20.0, 20.0, None, id="M"),
        pytest.param("Z", 20.0, 80.0, None, id="Z"),
    ],
)
def test_tolerance_letters(letter, minus, plus, abs_f):
    t = codes.tolerance_letter(letter)
    assert (t.minus_pct, t.plus_pct) == (minus, plus)
    assert t.abs_f == (None if abs_f is None else pytest.approx(abs_f, rel=1e-12))


def test_absolute_letters_are_for_values_under_10_pf():
    # IEC 60062 (secondary): B, C, D in pF are for capacitances under 10 pF.
    assert codes.ABS_TOLERANCE_BELOW_F == pytest.approx(10e-12)


# --- two-character voltage code -------------------------------------------------------------------

# Reference sheet 2.4 (secondary; the defining standard was not found).
VOLTAGE_TABLE = {
    "0E": 2.5, "0G": 4, "0J": 6.3, "1A": 10, "1C": 16, "1D": 20, "1E": 25, "1V": 35, "1G": 40,
    "1H": 50, "1J": 63, "1K": 80, "2A": 100, "2B": 125, "2C": 160, "2D": 200, "2E": 250,
    "2F": 315, "2V": 350, "2G": 400, "2W": 450, "2H": 500, "2J": 630, "3A": 1000,
}


def test_voltage_code_table():
    assert codes.VOLTAGE_CODES == VOLTAGE_TABLE


# --- packages -------------------------------------------------------------------------------------

# Reference sheet 2.5 (secondary for the tantalum letters); imperial -> metric chip codes are
# common practice.
IMPERIAL_METRIC = {"0201": "0603", "0402": "1005", "0603": "1608", "0805": "2012", "1206": "3216",
                   "1210": "3225", "1812": "4532", "2220": "5750"}


@pytest.mark.parametrize("imperial, metric", [pytest.param(i, m, id=i)
                                              for i, m in IMPERIAL_METRIC.items()])
def test_imperial_chip_codes_are_read_as_imperial_with_the_metric_note(imperial, metric):
    package, note = codes.chip_package(imperial)
    assert package == imperial
    assert f"imperial {imperial}" in note and f"metric {metric}" in note


@pytest.mark.parametrize("code, other", [pytest.param("0603", "0201", id="0603"),
                                         pytest.param("0402", "01005", id="0402")])
def test_colliding_codes_name_the_other_reading(code, other):
    # Reference sheet 2.5: metric 0603 = imperial 0201, metric 0402 = imperial 01005 (the latter
    # common practice).
    assert f"imperial {other}" in codes.chip_package(code)[1]


def test_metric_only_code_is_read_as_metric():
    # Reference sheet 2.5: metric 1005 = imperial 0402.
    package, note = codes.chip_package("1005")
    assert package == "1005" and "metric 1005" in note and "imperial 0402" in note


@pytest.mark.parametrize("letter, metric", [pytest.param("A", "3216", id="A"),
                                            pytest.param("B", "3528", id="B"),
                                            pytest.param("C", "6032", id="C"),
                                            pytest.param("D", "7343", id="D"),
                                            pytest.param("E", "7343-43", id="E")])
def test_tantalum_case_letters(letter, metric):
    # Reference sheet 2.5 (secondary): tantalum case letters A-E.
    package, note = codes.tantalum_case(letter.lower())
    assert package == f"case {letter}"
    assert f"metric {metric}" in note and "vary" in note


def test_unknown_packages():
    assert codes.chip_package("1234") is None
    assert codes.tantalum_case("Q") is None


def test_safety_classes_include_the_mains_classes():
    # IEC 60384-14 classes as used in the trade (common practice): X1, X2 across the line,
    # Y1, Y2 line to earth.
    assert {"X1", "X2", "Y1", "Y2"} <= set(codes.SAFETY_CLASSES)
