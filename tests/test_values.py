"""The value parser against the marking standards, the trade's spellings and the E-series tables."""

import math
from decimal import Decimal

import eseries
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from bomcheck.spec import CapSpec
from bomcheck.parse.values import CONFLICT_MARK, UNREAD_MARK, format_capacitance, parse_value

U, N, P = 1e-6, 1e-9, 1e-12


def fields(spec: CapSpec, expected: dict) -> dict:
    """The fields of ``spec`` named in ``expected``, floats compared at 1e-9 relative."""
    out = {}
    for k, v in expected.items():
        got = getattr(spec, k)
        if isinstance(v, float) and isinstance(got, float) and math.isclose(got, v, rel_tol=1e-9):
            got = v
        out[k] = got
    return out


def no_parser_error(spec: CapSpec) -> bool:
    return not any(w.startswith("internal parser error") for w in spec.warnings)


# --- the issue's examples -------------------------------------------------------------------------

EXAMPLES = [
    # IEC 60062: RKM code (4u7 = 4.7 uF); EIA-198 class II table: X7R = -55..+125 degC, +/-15 %.
    ("4u7 50V X7R", dict(is_capacitor=True, capacitance_f=4.7 * U, voltage_v=50.0,
                         dielectric="X7R", dielectric_class=2, technology="ceramic",
                         temp_min_c=-55.0, temp_max_c=125.0, cap_change_minus_pct=15.0,
                         cap_change_plus_pct=15.0, polarized=False)),
    # Common practice description style; EIA-198: X5R = -55..+85 degC; imperial 0402 = metric 1005.
    ("CAP CER 0.1UF 16V 10% X5R 0402", dict(is_capacitor=True, capacitance_f=0.1 * U,
                                            voltage_v=16.0, tol_minus_pct=10.0, tol_plus_pct=10.0,
                                            dielectric="X5R", technology="ceramic",
                                            temp_max_c=85.0, package="0402")),
    # IEC 60062: three-digit code 104 = 100 nF, letter K = +/-10 %.
    ("104K", dict(is_capacitor=True, capacitance_f=100 * N, tol_minus_pct=10.0,
                  tol_plus_pct=10.0)),
    ("470uF 35V 105C", dict(is_capacitor=True, capacitance_f=470 * U, voltage_v=35.0,
                            temp_max_c=105.0, technology=None)),
    ("100nF", dict(is_capacitor=True, capacitance_f=100 * N)),
    # Both micro glyphs are real input: U+00B5 micro sign, U+03BC Greek mu.
    ("4.7\u00b5F", dict(is_capacitor=True, capacitance_f=4.7 * U)),
    ("4.7\u03bcF", dict(is_capacitor=True, capacitance_f=4.7 * U)),
    # IEC 60062 old forms (reference sheet 2.3): MFD = microfarad, uuF = picofarad; WVDC = DC.
    ("22 MFD 50WVDC", dict(is_capacitor=True, capacitance_f=22 * U, voltage_v=50.0,
                           voltage_kind="dc")),
    ("10 uuF", dict(is_capacitor=True, capacitance_f=10 * P)),
    # IEC 60062: 475 = 4.7 uF, M = +/-20 %.
    ("475M", dict(is_capacitor=True, capacitance_f=4.7 * U, tol_minus_pct=20.0,
                  tol_plus_pct=20.0)),
    # IEC 60062: third digit 9 = x0.1 (229 = 2.2 pF); p47 = 0.47 pF.
    ("229", dict(is_capacitor=True, capacitance_f=2.2 * P)),
    ("p47", dict(is_capacitor=True, capacitance_f=0.47 * P)),
    # Common practice: 6V3 = 6.3 V (reference sheet 2.3).
    ("6V3", dict(voltage_v=6.3, capacitance_f=None, is_capacitor=False)),
    ("2kV", dict(voltage_v=2000.0)),
    # Safety class is its own field, not a dielectric.
    ("0.1uF 275VAC X2", dict(is_capacitor=True, capacitance_f=0.1 * U, voltage_v=275.0,
                             voltage_kind="ac", safety_class="X2", dielectric=None)),
    # Reference sheet 2.5 (secondary): tantalum case B = metric 3528.
    ("10uF 25V TANT case B", dict(is_capacitor=True, capacitance_f=10 * U, voltage_v=25.0,
                                  technology="tantalum", polarized=True, package="case B")),
    ("330uF 6.3V ALU POLYMER", dict(is_capacitor=True, capacitance_f=330 * U, voltage_v=6.3,
                                    technology="aluminium-polymer", polarized=True)),
    ("1uF 630V PP film", dict(is_capacitor=True, capacitance_f=1 * U, voltage_v=630.0,
                              technology="film", film_material="PP", polarized=False)),
    # EIA-198 class II/III table: Y5V = -30..+85 degC, +22/-82 %; X6S = -55..+105, +/-22 %.
    ("Y5V", dict(is_capacitor=True, dielectric="Y5V", dielectric_class=3, temp_min_c=-30.0,
                 temp_max_c=85.0, cap_change_minus_pct=82.0, cap_change_plus_pct=22.0,
                 technology="ceramic")),
    ("X6S", dict(is_capacitor=True, dielectric="X6S", dielectric_class=2, temp_min_c=-55.0,
                 temp_max_c=105.0, cap_change_minus_pct=22.0, cap_change_plus_pct=22.0)),
]


@pytest.mark.parametrize("text, expected", [pytest.param(t, e, id=t) for t, e in EXAMPLES])
def test_issue_examples(text, expected):
    spec = parse_value(text)
    assert fields(spec, expected) == expected
    assert spec.text == text and no_parser_error(spec)


# --- IEC 60062 marking codes ----------------------------------------------------------------------


@pytest.mark.parametrize(
    "text, farads",
    [
        # IEC 60062 RKM code (reference sheet 2.3): the letter stands for the decimal point.
        pytest.param("4u7", 4.7 * U, id="4u7"),
        pytest.param("2n2", 2.2 * N, id="2n2"),
        pytest.param("p47", 0.47 * P, id="p47"),
        pytest.param("1n0", 1.0 * N, id="1n0"),
        pytest.param("4\u00b57", 4.7 * U, id="4micro7"),
        pytest.param("4m7", 4.7e-3, id="4m7"),
        pytest.param("100n", 100 * N, id="100n"),
        # IEC 60062 three-digit code in pF (reference sheet 2.3).
        pytest.param("104", 100 * N, id="104"),
        pytest.param("475", 4.7 * U, id="475"),
        pytest.param("229", 2.2 * P, id="229"),
        pytest.param("109", 1.0 * P, id="109"),
        pytest.param("2R2", 2.2 * P, id="2R2"),
        pytest.param("101", 100 * P, id="101"),
        # IEC 60062 old forms (reference sheet 2.3): MFD/mfd = uF; uuF and MMFD = pF.
        pytest.param("10 mfd", 10 * U, id="mfd"),
        pytest.param("33 MMFD", 33 * P, id="MMFD"),
    ],
)
def test_iec_60062_capacitance_codes(text, farads):
    spec = parse_value(text, context="value")
    assert spec.is_capacitor
    assert spec.capacitance_f == pytest.approx(farads, rel=1e-9)


@pytest.mark.parametrize(
    "text, minus, plus, abs_f",
    [
        # IEC 60062 tolerance letters after the three-digit code (reference sheet 2.3).
        pytest.param("104K", 10.0, 10.0, None, id="104K"),
        pytest.param("220J", 5.0, 5.0, None, id="220J"),
        pytest.param("473F", 1.0, 1.0, None, id="473F"),
        pytest.param("102G", 2.0, 2.0, None, id="102G"),
        pytest.param("475M", 20.0, 20.0, None, id="475M"),
        pytest.param("104Z", 20.0, 80.0, None, id="104Z"),
        pytest.param("109B", None, None, 0.1 * P, id="109B"),
        pytest.param("229C", None, None, 0.25 * P, id="229C"),
        pytest.param("479D", None, None, 0.5 * P, id="479D"),
        # Written tolerances (common practice).
        pytest.param("100nF \u00b110%", 10.0, 10.0, None, id="plusminus-sign"),
        pytest.param("100nF +/-5%", 5.0, 5.0, None, id="plus-slash-minus"),
        pytest.param("100nF 10%", 10.0, 10.0, None, id="percent"),
        pytest.param("100nF +80/-20%", 20.0, 80.0, None, id="asymmetric"),
        pytest.param("100nF -20/+80%", 20.0, 80.0, None, id="asymmetric-minus-first"),
        pytest.param("1.5pF \u00b10.25pF", None, None, 0.25 * P, id="absolute-pF"),
        pytest.param("4.7pF +/- 0.1 pF", None, None, 0.1 * P, id="absolute-spaced"),
        pytest.param("0.1uF K 50V", 10.0, 10.0, None, id="lone-letter-after-value"),
    ],
)
def test_tolerances(text, minus, plus, abs_f):
    spec = parse_value(text)
    assert (spec.tol_minus_pct, spec.tol_plus_pct) == (minus, plus)
    assert spec.tol_abs_f == (None if abs_f is None else pytest.approx(abs_f, rel=1e-9))


def test_pf_letter_on_a_large_value_is_a_doubt():
    # IEC 60062 (secondary): the pF letters are for values under 10 pF.
    spec = parse_value("104C")
    assert spec.capacitance_f == pytest.approx(100 * N)
    assert any("under 10 pF" in w for w in spec.warnings)


# --- rated voltage --------------------------------------------------------------------------------


@pytest.mark.parametrize(
    "text, context, volts, kind",
    [
        pytest.param("50V", "any", 50.0, None, id="50V"),
        pytest.param("50 V", "any", 50.0, None, id="50-space-V"),
        pytest.param("50VDC", "any", 50.0, "dc", id="50VDC"),
        pytest.param("100WVDC", "any", 100.0, "dc", id="100WVDC"),
        pytest.param("250VAC", "any", 250.0, "ac", id="250VAC"),
        pytest.param("275 V AC", "any", 275.0, "ac", id="275-V-AC"),
        pytest.param("2kV", "any", 2000.0, None, id="2kV"),
        pytest.param("1KV", "any", 1000.0, None, id="1KV"),
        pytest.param("6V3", "any", 6.3, None, id="6V3"),
        pytest.param("6,3V", "any", 6.3, None, id="decimal-comma"),
        pytest.param("50", "voltage", 50.0, None, id="bare-in-voltage-column"),
        # Two-character voltage code (reference sheet 2.4, secondary), in a voltage column.
        pytest.param("1H", "voltage", 50.0, "dc", id="1H"),
        pytest.param("0J", "voltage", 6.3, "dc", id="0J"),
        pytest.param("2W", "voltage", 450.0, "dc", id="2W"),
        pytest.param("1V", "voltage", 35.0, "dc", id="1V"),
        # ... and in a voltage position: right after the value.
        pytest.param("104K 1H X7R", "any", 50.0, "dc", id="1H-after-value"),
    ],
)
def test_rated_voltage(text, context, volts, kind):
    spec = parse_value(text, context=context)
    assert (spec.voltage_v, spec.voltage_kind) == (pytest.approx(volts), kind)


@pytest.mark.parametrize("text", ["1H", "X7R 1H", "CAP 1H"])
def test_voltage_code_needs_a_voltage_column_or_position(text):
    spec = parse_value(text)
    assert spec.voltage_v is None and "1H" in spec.unread


def test_safety_class_makes_a_plain_voltage_ac_with_a_warning():
    spec = parse_value("0.1uF 275V X2")
    assert (spec.voltage_kind, spec.safety_class, spec.dielectric) == ("ac", "X2", None)
    assert any("AC rating assumed" in w for w in spec.warnings)


# --- dielectric, technology, temperature ----------------------------------------------------------


@pytest.mark.parametrize(
    "text, code, eia_class, tc",
    [
        # EIA class I (reference sheet 2.2): COG/NP0/NPO written for C0G.
        pytest.param("10pF COG", "C0G", 1, 0.0, id="COG"),
        pytest.param("10pF NP0", "C0G", 1, 0.0, id="NP0"),
        pytest.param("10pF npo", "C0G", 1, 0.0, id="npo-lower"),
        pytest.param("10pF U2J", "U2J", 1, -750.0, id="U2J"),
        pytest.param("10pF N750", "N750", 1, -750.0, id="N750"),
        pytest.param("10pF P100", "P100", 1, 100.0, id="P100"),
        pytest.param("100nF x7r", "X7R", 2, None, id="x7r-lower"),
        pytest.param("1uF Z5U", "Z5U", 3, None, id="Z5U"),
    ],
)
def test_dielectric_codes(text, code, eia_class, tc):
    spec = parse_value(text)
    assert (spec.dielectric, spec.dielectric_class, spec.tc_ppm) == (code, eia_class, tc)
    assert spec.technology == "ceramic" and spec.is_capacitor


def test_rated_temperature_above_the_code_keeps_the_code_limit():
    # EIA-198: X5R is an 85 degC code; a written 125 degC contradicts it, and the conservative
    # (lower) rating is kept, with a conflict warning (issue 9 class 6).
    spec = parse_value("10uF X5R 125C")
    assert (spec.temp_min_c, spec.temp_max_c) == (-55.0, 85.0)
    assert any(w.startswith(CONFLICT_MARK) for w in spec.warnings)
    # A written rating below the code's limit is the lower one already: kept.
    assert parse_value("10uF X7R 85C").temp_max_c == 85.0


def test_lookalike_dielectric_is_not_guessed():
    # EIA-198 class II table: L is no change letter, so X8L is not decoded.
    spec = parse_value("10nF X8L")
    assert spec.dielectric is None and "X8L" in spec.unread and spec.warnings


@pytest.mark.parametrize(
    "text, technology, material, polarized",
    [
        pytest.param("CAP CER 1uF", "ceramic", None, False, id="CAP-CER"),
        pytest.param("MLCC 1uF", "ceramic", None, False, id="MLCC"),
        pytest.param("TANT 10uF", "tantalum", None, True, id="TANT"),
        pytest.param("tantalum polymer 100uF", "tantalum-polymer", None, True, id="ta-polymer"),
        pytest.param("POLYMER TANT 100uF", "tantalum-polymer", None, True, id="polymer-ta"),
        pytest.param("wet tantalum 10uF", "tantalum-wet", None, True, id="wet-ta"),
        pytest.param("ELEC 100uF", "aluminium-electrolytic", None, True, id="ELEC"),
        pytest.param("electrolytic 100uF", "aluminium-electrolytic", None, True, id="electrolytic"),
        pytest.param("alu 100uF", "aluminium-electrolytic", None, True, id="alu"),
        pytest.param("ELEC NP 10uF", "aluminium-electrolytic", None, False, id="non-polar"),
        pytest.param("aluminium polymer 100uF", "aluminium-polymer", None, True, id="al-polymer"),
        pytest.param("polymer aluminum 100uF", "aluminium-polymer", None, True, id="polymer-al"),
        pytest.param("FILM 1uF", "film", None, False, id="FILM"),
        pytest.param("MKP 1uF", "film", "PP", False, id="MKP"),
        pytest.param("MKT 1uF", "film", "PET", False, id="MKT"),
        pytest.param("polypropylene 1uF", "film", "PP", False, id="polypropylene"),
        pytest.param("polyester film 1uF", "film", "PET", False, id="polyester"),
        pytest.param("PPS film 1uF", "film", "PPS", False, id="PPS"),
        pytest.param("PEN film 1uF", "film", "PEN", False, id="PEN"),
        pytest.param("mica 100pF", "mica", None, False, id="mica"),
        pytest.param("glass 10pF", "glass", None, False, id="glass"),
        pytest.param("supercap 1F 5.5V", "supercapacitor", None, True, id="supercap"),
        pytest.param("EDLC 10F", "supercapacitor", None, True, id="EDLC"),
        pytest.param("100nF X7R", "ceramic", None, False, id="dielectric-means-ceramic"),
    ],
)
def test_technology_words(text, technology, material, polarized):
    spec = parse_value(text)
    assert (spec.technology, spec.film_material, spec.polarized) == (technology, material,
                                                                     polarized)
    assert spec.is_capacitor


@pytest.mark.parametrize(
    "text, tmin, tmax",
    [
        pytest.param("105C", None, 105.0, id="105C"),
        pytest.param("125 \u00b0C", None, 125.0, id="125-space-degC"),
        pytest.param("85\u00b0C", None, 85.0, id="85degC"),
        pytest.param("-55~+125C", -55.0, 125.0, id="range-tilde"),
        pytest.param("-55 to +125 \u00b0C", -55.0, 125.0, id="range-to"),
        pytest.param("-40/+85\u00b0C", -40.0, 85.0, id="range-slash"),
    ],
)
def test_rated_temperature(text, tmin, tmax):
    spec = parse_value(text)
    assert (spec.temp_min_c, spec.temp_max_c) == (tmin, tmax)


# --- package, safety, EMI -------------------------------------------------------------------------


@pytest.mark.parametrize(
    "text, context, package, note_has",
    [
        # Reference sheet 2.5: imperial chip codes, read as written, the reading named.
        pytest.param("100nF 0603", "any", "0603", "imperial 0603", id="0603"),
        pytest.param("0805", "package", "0805", "metric 2012", id="0805-column"),
        pytest.param("10uF case A", "any", "case A", "3216", id="case-A"),
        pytest.param("10uF D case", "any", "case D", "7343", id="D-case"),
        pytest.param("B", "package", "case B", "3528", id="letter-in-package-column"),
        pytest.param("100uF 8x11.5", "any", "8x11.5", "diameter 8 mm", id="can"),
        pytest.param("6.3x7.7mm", "any", "6.3x7.7", "length 7.7 mm", id="can-mm"),
        pytest.param("10 x 12.5 mm", "package", "10x12.5", "diameter 10 mm", id="can-spaced"),
        pytest.param("3528-21", "package", "3528-21", "tantalum case B", id="metric-case"),
        pytest.param("0805 (2012 Metric)", "package", "0805", "both written", id="both-written"),
        pytest.param("C_0603_1608Metric", "package", "0603", "metric 1608", id="footprint-name"),
    ],
)
def test_packages(text, context, package, note_has):
    spec = parse_value(text, context=context)
    assert spec.package == package
    assert note_has in spec.package_note


@pytest.mark.parametrize(
    "text, cls",
    [pytest.param("X1 0.1uF", "X1", id="X1"), pytest.param("0.1uF X2", "X2", id="X2"),
     pytest.param("Y1 1nF", "Y1", id="Y1"), pytest.param("4.7nF Y2", "Y2", id="Y2"),
     pytest.param("4.7nF X1/Y2", "Y2", id="dual")],
)
def test_safety_class_is_its_own_field(text, cls):
    spec = parse_value(text)
    assert spec.safety_class == cls and spec.dielectric is None and spec.is_capacitor


@pytest.mark.parametrize("text, emi", [pytest.param("feedthrough 1nF", True, id="feedthrough"),
                                       pytest.param("EMI filter 100pF", True, id="emi-filter"),
                                       pytest.param("100pF 0603", None, id="plain")])
def test_emi_filter(text, emi):
    assert parse_value(text).emi_filter is emi


def test_decimal_comma_with_a_unit_right_after():
    assert parse_value("4,7uF").capacitance_f == pytest.approx(4.7 * U)
    assert parse_value("0,47 \u00b5F").capacitance_f == pytest.approx(0.47 * U)


def test_thousands_separator_is_read_and_doubted():
    spec = parse_value("4,700uF 16V")
    assert spec.capacitance_f == pytest.approx(4700 * U) and spec.warnings


# --- capacitor or not -----------------------------------------------------------------------------


@pytest.mark.parametrize(
    "text, context",
    [
        # IEC 60062 (reference sheet 2.3): upper-case R, K, M mean ohms: a resistor.
        pytest.param("4K7", "value", id="4K7"),
        pytest.param("2R2 RES", "value", id="2R2-RES"),
        pytest.param("10K 1%", "value", id="10K-1pct"),
        pytest.param("4M7", "value", id="4M7"),
        pytest.param("100K", "value", id="100K"),
        # Inductors: a henry unit, or the word.
        pytest.param("4u7H", "value", id="4u7H"),
        pytest.param("3n9 IND", "value", id="3n9-IND"),
        pytest.param("10uH", "value", id="10uH"),
        # A crystal names its load capacitance.
        pytest.param("CRYSTAL 16MHz 18pF", "description", id="crystal"),
        pytest.param("XTAL 12.000MHz load 12pF", "description", id="xtal-load"),
        pytest.param("50V", "any", id="voltage-only"),
        # Technology words that resistors and inductors share do not make a capacitor.
        pytest.param("RES 10K METAL FILM", "description", id="metal-film-resistor"),
        pytest.param("IND CER 3n9", "description", id="ceramic-inductor"),
    ],
)
def test_not_a_capacitor(text, context):
    spec = parse_value(text, context=context)
    assert spec.is_capacitor is False and spec.technology is None
    assert no_parser_error(spec)


def test_capacitor_words_outweigh_a_crystal_mentioned_beside_them():
    spec = parse_value("CAP CER 18pF C0G crystal load", context="description")
    assert spec.is_capacitor and spec.capacitance_f == pytest.approx(18 * P)
    assert any("crystal" in w for w in spec.warnings)


def test_inductor_rkm_is_not_kept_as_a_capacitance():
    spec = parse_value("3n9 IND", context="value")
    assert spec.capacitance_f is None and "3n9" in spec.unread


@pytest.mark.parametrize("text", ["4n7", "104", "2u2", "47p"])
def test_bare_code_in_a_value_column_is_a_capacitor(text):
    assert parse_value(text, context="value").is_capacitor


def test_bare_number_in_a_description_is_not_a_code():
    spec = parse_value("104", context="description")
    assert spec.capacitance_f is None and spec.unread == ("104",)


def test_three_digit_code_in_a_capacitor_description():
    assert parse_value("CAP CER 104 50V", context="description").capacitance_f == pytest.approx(
        100 * N)


# --- contexts and robustness ----------------------------------------------------------------------


@pytest.mark.parametrize(
    "text, context, attr, value",
    [
        pytest.param("105", "temperature", "temp_max_c", 105.0, id="temperature"),
        pytest.param("-55 to 125", "temperature", "temp_min_c", -55.0, id="temperature-range"),
        pytest.param("10", "tolerance", "tol_minus_pct", 10.0, id="tolerance-number"),
        pytest.param("J", "tolerance", "tol_plus_pct", 5.0, id="tolerance-letter"),
        pytest.param("x7r", "dielectric", "dielectric", "X7R", id="dielectric"),
    ],
)
def test_contexts(text, context, attr, value):
    assert getattr(parse_value(text, context=context), attr) == value


@pytest.mark.parametrize("text", ["", "   ", "nan", "??", "-", "+/-", "\u00b1", "1,,,2", "x" * 5000,
                                  "CAP " * 500, "1e400F", "\x00\x01", "99999999999999999999999V"])
def test_odd_text_never_raises(text):
    spec = parse_value(text)
    assert isinstance(spec, CapSpec) and spec.text == text and no_parser_error(spec)


def test_unreadable_tokens_are_kept():
    spec = parse_value("100nF KV-2210-X7R frobnicate")
    assert spec.capacitance_f == pytest.approx(100 * N)
    assert spec.unread == ("KV-2210-X7R", "frobnicate")


def test_non_string_input_does_not_raise():
    assert parse_value(None).text == ""  # type: ignore[arg-type]
    spec = parse_value(104, context="value")  # type: ignore[arg-type]
    assert spec.capacitance_f == pytest.approx(100 * N)


# --- IEC 60063 E-series ---------------------------------------------------------------------------

_PREFIXES = [("p", -12), ("n", -9), ("u", -6), ("m", -3)]


def _styles(value: float) -> dict[str, str]:
    """One E-series value written the ways BOMs write it."""
    exp10 = math.floor(math.log10(value) + 1e-9)
    sig = round(value / 10.0 ** (exp10 - 1))  # two significant digits, 10..99
    exact = Decimal(sig).scaleb(exp10 - 1)  # farads, exactly as the table means it
    prefix, pexp = next((p, e) for p, e in reversed(_PREFIXES) if exact >= Decimal(10) ** e)
    mant = format(exact.scaleb(-pexp).normalize(), "f")
    out = {
        "decimal": f"{mant}{prefix}F",
        "rkm": mant.replace(".", prefix) if "." in mant else f"{mant}{prefix}",
    }
    smaller = [(p, e) for p, e in _PREFIXES if e < pexp]
    p2, e2 = smaller[-1] if smaller else _PREFIXES[1]
    out["scaled"] = f"{format(exact.scaleb(-e2).normalize(), 'f')}{p2}F"
    power = exp10 - 1 + 12  # of the two digits, in pF
    if -1 <= power <= 7:
        out["code"] = f"{sig}{9 if power == -1 else power}"
    return out


@pytest.mark.parametrize("series", [pytest.param(eseries.E12, id="E12"),
                                    pytest.param(eseries.E24, id="E24")])
@pytest.mark.parametrize("style", ["rkm", "decimal", "scaled", "code"])
def test_every_e_series_value_parses_to_the_table_value(series, style):
    # IEC 60063 E12/E24 values from the eseries package, 1 pF to 10 mF, every decade.
    values = list(eseries.erange(series, 1e-12, 10e-3))
    assert len(values) == 10 * len(eseries.series(series)) + 1
    wrong, tried = [], 0
    for value in values:
        text = _styles(value).get(style)
        if text is None:
            continue
        tried += 1
        got = parse_value(text, context="value").capacitance_f
        if got is None or not math.isclose(got, value, rel_tol=1e-9):
            wrong.append((text, got, value))
    assert tried >= len(values) - 2 * len(eseries.series(series)) - 1
    assert not wrong


def test_e_series_style_examples():
    # Spot checks that the test helper writes what BOMs write.
    assert _styles(4.7e-6) == {"decimal": "4.7uF", "rkm": "4u7", "scaled": "4700nF", "code": "475"}
    assert _styles(2.2e-12)["code"] == "229"


# --- format_capacitance and round trips -----------------------------------------------------------


@pytest.mark.parametrize(
    "farads, text",
    [pytest.param(4.7e-6, "4.7uF", id="4.7uF"), pytest.param(1e-7, "100nF", id="100nF"),
     pytest.param(2.2e-12, "2.2pF", id="2.2pF"), pytest.param(4.7e-3, "4700uF", id="4700uF"),
     pytest.param(0.01, "10mF", id="10mF"), pytest.param(1.5, "1.5F", id="1.5F"),
     pytest.param(100.0, "100.0F", id="100F")],
)
def test_format_capacitance(farads, text):
    assert format_capacitance(farads) == text


@pytest.mark.parametrize("bad", [-1e-6, float("nan"), float("inf")])
def test_format_capacitance_rejects_non_values(bad):
    with pytest.raises(ValueError):
        format_capacitance(bad)


_BOM_PIECES = st.sampled_from([
    "4u7", "104K", "0.1uF", "50V", "X7R", "C0G", "+/-", "\u00b1", "10%", "+80/-20%", "case", "B",
    "8x11.5", "-55~125C", "CAP", "CER", "TANT", "RES", "4K7", "2R2", "1H", "0402", "\u00b5",
    "\u03bc", ",", "/", "-", " ", "4,7", "uF", "V", "°C", "X1/Y2", "229", "6V3", "mm", "x", "to",
])


@settings(max_examples=300, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.one_of(st.text(max_size=60), st.lists(_BOM_PIECES, max_size=10).map("".join),
                 st.lists(_BOM_PIECES, max_size=10).map(" ".join)))
def test_parser_never_raises(text):
    for context in ("any", "value", "voltage", "package"):
        spec = parse_value(text, context=context)
        assert spec.text == text and no_parser_error(spec)


@settings(max_examples=300, deadline=None)
# The plausible capacitance range (bomcheck.parse.codes.PLAUSIBLE, 0.01 pF .. 10 kF); 0 F is unread.
@given(st.floats(min_value=1e-14, max_value=1e4, allow_nan=False, allow_infinity=False))
def test_format_then_parse_round_trips(farads):
    spec = parse_value(format_capacitance(farads), context="value")
    assert spec.is_capacitor and spec.capacitance_f == farads


@settings(max_examples=200, deadline=None)
@given(st.sampled_from(["4u7", "104K", "2n2", "p47", "229", "0.1UF", "22 MFD", "10 uuF",
                        "4,7\u00b5F", "470uF", "1n0", "33p"]))
def test_parse_format_parse_gives_the_same_value(text):
    first = parse_value(text, context="value").capacitance_f
    assert parse_value(format_capacitance(first), context="value").capacitance_f == first


# ---------------------------------------------------------------------------------------------
# Numbers that must be read, or reported as unread, never silently changed


@pytest.mark.parametrize(
    ("text", "tmin", "tmax", "conflict"),
    [  # Common practice of electrolytic descriptions: "-40/105C" is the category range (lower
       # and upper category temperature, IEC 60384-4 wording); two positive temperatures are two
       # ratings, and the lower rated maximum is the conservative reading.
        ("CAP ALU 10uF 16V -40/110C", -40.0, 110.0, False),
        ("CAP ALU 10uF 16V -55/+125 °C", -55.0, 125.0, False),
        ("CAP ALU 100uF 35V 85/105C 20%", None, 85.0, True),
        ("CAP ALU 100uF 35V 105C/85C 20%", None, 85.0, True),
    ],
)
def test_two_temperatures_around_a_slash(text, tmin, tmax, conflict):
    s = parse_value(text, context="description")
    assert (s.temp_min_c, s.temp_max_c) == (tmin, tmax)
    assert s.unread == ()
    assert any(w.startswith(CONFLICT_MARK) for w in s.warnings) is conflict


@pytest.mark.parametrize("text", ["-10uF", "CAP CER -10uF 16V X7R", "CAP CER 10uF -16V X7R",
                                  "-10u", "CAP ALU -1F 5V"])
def test_negative_capacitance_or_voltage_is_unread_not_made_positive(text):
    # Common practice: a capacitance or rated voltage has no sign; a minus is a typo or a lost
    # tolerance, so the number is not read (and says so) rather than read without its sign.
    s = parse_value(text, context="value")
    assert s.capacitance_f is None or s.voltage_v is None
    assert any(w.startswith(UNREAD_MARK) and "negative" in w for w in s.warnings)
    assert any(u.startswith("-") for u in s.unread)


@pytest.mark.parametrize(("text", "farads"), [("1E-05", 10 * U), ("4.7e-7", 470 * N),
                                              ("2.2E-11", 22 * P)])
def test_scientific_notation_in_a_value_column_is_farads(text, farads):
    # SI: a bare number in a capacitance column written by a spreadsheet is in farads (the
    # coherent SI unit); only the e-notation with a negative exponent is unambiguous.
    s = parse_value(text, context="value")
    assert s.capacitance_f == pytest.approx(farads, rel=1e-12)
    assert s.is_capacitor


def test_thousands_comma_is_flagged_unread():
    # Common practice: "1,500uF" is 1500 uF with a thousands separator or 1.5 uF with a decimal
    # comma; the reading is a guess, so the warning carries the unread mark.
    s = parse_value("CAP ALU ELEC 1,500uF 25V 105C 20%", context="description")
    assert any(w.startswith(UNREAD_MARK) and "1,500" in w for w in s.warnings)


def test_bare_number_warning_names_the_number():
    # Common practice: a number with no unit in a description is not guessed at; the warning
    # names it, with the unread mark the importer turns into a finding.
    s = parse_value("CAP CER 10uF 16V X7R 85", context="description")
    assert s.unread == ("85",)
    assert f"{UNREAD_MARK}a number without a unit was not read ('85')" in s.warnings


def test_life_rating_is_said_not_dropped():
    # Common practice of electrolytic descriptions: "2000H" is the rated life (endurance); the
    # spec has no field for it, so the parse says so instead of dropping it unseen.
    s = parse_value("CAP ALU 10uF 16V 2000H 105C", context="description")
    assert (s.capacitance_f, s.voltage_v, s.temp_max_c) == (1e-5, 16.0, 105.0)
    assert any("2000H" in w and "rated life" in w for w in s.warnings)


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


def test_safety_class_on_a_low_voltage_part_is_not_taken():
    # No IEC 60384-14 class is rated below 100 V (value from memory; Y4 covers up to 150 V AC).
    s = parse_value("CAP CER 47PF 50V C0G Y1")
    assert s.safety_class is None and s.voltage_kind is None and s.warnings
    assert parse_value("CAP CER 4.7NF 250VAC Y1").safety_class == "Y1"
    # IEC 60384-14 covers film, paper and ceramic interference-suppression parts only.
    assert parse_value("CAP ALU 100UF 400V Y2").safety_class is None
