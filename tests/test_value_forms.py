"""Value forms of real exports (issue 11) and the parser's plausible ranges (issue 10)."""

from __future__ import annotations

import math

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from bomcheck.parse import codes
from bomcheck.parse.values import CONFLICT_MARK, parse_value

# --- library-style values with underscores (common practice of EDA symbol libraries) ----------


@pytest.mark.parametrize(
    ("text", "cap", "volt", "diel", "pkg", "tol"),
    [
        pytest.param("C_0603_100n_50V_X7R", 100e-9, 50.0, "X7R", "0603", None, id="C_0603"),
        pytest.param("C_0805_10u_25V_X5R", 10e-6, 25.0, "X5R", "0805", None, id="C_0805"),
        pytest.param("C_1206_22u_25V_X5R_20%", 22e-6, 25.0, "X5R", "1206", 20.0, id="C_1206"),
        pytest.param("100nF_50V_X7R_0603", 100e-9, 50.0, "X7R", "0603", None, id="value-first"),
    ],
)
def test_library_style_values(text, cap, volt, diel, pkg, tol):
    s = parse_value(text, context="value")
    assert s.is_capacitor and s.capacitance_f == pytest.approx(cap) and s.voltage_v == volt
    assert (s.dielectric, s.package, s.tol_minus_pct, s.unread) == (diel, pkg, tol, ())


@pytest.mark.parametrize("text", ["Capacitor_SMD:C_0603_1608Metric", "C_0603_1608Metric",
                                  "0603 (1608 Metric)", "CAPC1608X90N", "1608Metric"])
def test_footprint_names_give_the_imperial_chip_code(text):
    # IPC-7351 chip names: body 1.6 x 0.8 mm = metric 1608 = imperial 0603 (IEC 60062 /
    # EIA chip size table; common practice of footprint libraries).
    s = parse_value(text, context="package")
    assert s.package == "0603" and s.unread == ()


@pytest.mark.parametrize(
    ("text", "pkg", "key"),
    [
        pytest.param("1206 (3216 Metric)", "1206", "3216", id="1206"),
        pytest.param("2917 (7343 Metric)", "2917", "7343", id="2917"),
        pytest.param("CAPT6032X280N", "6032-28", "6032", id="IPC-tantalum"),
        pytest.param("case C", "case C", "6032", id="case-letter"),
        pytest.param("CAPAE530X610N", "CAPAE530X610", "CAPAE530X610", id="IPC-alu-can"),
    ],
)
def test_package_forms_and_their_case_key(text, pkg, key):
    # Tantalum case C = 6032-28, D = 7343-31 (EIA-535 case sizes, common lettering; IPC-7351
    # names give length and width in 0.1 mm, height in 0.01 mm).
    s = parse_value(text, context="package")
    assert s.package == pkg and codes.package_key(s.package) == key


@pytest.mark.parametrize(("text", "pkg"), [("C0603", "0603"), ("CAP0805", "0805"),
                                           ("SMD1206", "1206"), ("EIA-3528", "3528"),
                                           ("C1206N", "1206")])
def test_prefixed_footprint_names_in_a_package_column(text, pkg):
    # Common practice of PCB footprint libraries: a short prefix before the EIA chip code.
    assert parse_value(text, context="package").package == pkg


def test_ipc_aluminium_can_note_gives_the_sizes():
    # IPC-7351 CAPAE: base size and height in 0.01 mm.
    s = parse_value("CAPAE530X610N", context="package")
    assert "5.3 mm" in s.package_note and "6.1 mm" in s.package_note


# --- IEC 60062 RKM with a tolerance letter; asymmetric tolerances; codes in lower case --------


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


@pytest.mark.parametrize(("text", "code"), [("100nF 50V c0g", "C0G"), ("100n x7r 16V", "X7R"),
                                            ("1nF u2j", "U2J")])
def test_lower_case_dielectric_codes(text, code):
    # EIA-198 codes, written in lower case by some libraries.
    assert parse_value(text).dielectric == code


@pytest.mark.parametrize(("text", "tech"), [("10uF 16V TA", "tantalum"),
                                            ("10uF 16V TANT", "tantalum"),
                                            ("100nF X7R 50V TA", "ceramic")])
def test_ta_abbreviation(text, tech):
    # Ta, the element: tantalum only when nothing else names the technology (common practice).
    assert parse_value(text).technology == tech


def test_package_after_a_technology_phrase():
    s = parse_value("CAP TANT POLY 100UF 6.3V 20% 2917")
    assert (s.technology, s.capacitance_f, s.voltage_v, s.package) == (
        "tantalum-polymer", pytest.approx(100e-6), 6.3, "2917")
    assert s.unread == ()


# --- not a capacitor; safety classes belonging to another part -------------------------------


@pytest.mark.parametrize("text", ["C30 CABLE ASSY FFC 24P 100MM", "FPC 24P 0.5MM",
                                  "WIRE 24AWG 100MM", "HARNESS 4P 300MM"])
def test_cable_words_are_not_capacitors(text):
    s = parse_value(text)
    assert not s.is_capacitor and s.capacitance_f is None


def test_bracketed_safety_class_belongs_to_another_part():
    # IEC 60384-14 classes are for mains parts; "(Y1 load)" names a crystal's load capacitor.
    s = parse_value("CAP CER 47PF 50V C0G 0402 (Y1 load)")
    assert (s.safety_class, s.voltage_kind, s.dielectric) == (None, None, "C0G")
    assert s.voltage_v == 50.0


@pytest.mark.parametrize("text", ["CAP FILM 100NF 275VAC (X2)", "CAP FILM 100NF 275VAC (Class X2)",
                                  "CAP FILM 100NF 275VAC X2"])
def test_safety_class_of_this_part_in_brackets_is_kept(text):
    # IEC 60384-14 class X2 written as the part's own rating.
    assert parse_value(text).safety_class == "X2"


def test_safety_class_on_a_low_voltage_part_is_not_taken():
    # No IEC 60384-14 class is rated below 100 V (value from memory; Y4 covers up to 150 V AC).
    s = parse_value("CAP CER 47PF 50V C0G Y1")
    assert s.safety_class is None and s.voltage_kind is None and s.warnings
    assert parse_value("CAP CER 4.7NF 250VAC Y1").safety_class == "Y1"
    # IEC 60384-14 covers film, paper and ceramic interference-suppression parts only.
    assert parse_value("CAP ALU 100UF 400V Y2").safety_class is None


# --- conservative reading of one text that says two things (issue 9 class 6) ------------------


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


# --- plausible ranges (issue 10) ---------------------------------------------------------------


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
