"""Parse stage, first step (bomcheck/parse/valuetext.py): the value text normalised before it is
cut into tokens (glyphs, decimal commas, library-style underscores, bracketed safety classes)."""

from __future__ import annotations

import pytest

from bomcheck.parse.valuetext import normalise
from bomcheck.parse.values import parse_value


def _normalised(text: str) -> tuple[str, list[str]]:
    warnings: list[str] = []
    return normalise(text, warnings), warnings


@pytest.mark.parametrize(
    ("text", "expected"),
    [
        # Both micro glyphs are real input: U+00B5 MICRO SIGN and U+03BC GREEK SMALL LETTER MU
        # (Unicode code charts; common practice of BOM exports) both read as "u".
        pytest.param("4.7\u00b5F", "4.7uF", id="micro-sign"),
        pytest.param("4.7\u03bcF", "4.7uF", id="greek-mu"),
        # U+2212 MINUS SIGN and U+2013 EN DASH are written for a minus (Unicode code charts).
        pytest.param("\u221255\u2013125C", "-55-125C", id="minus-and-dash"),
        # U+2103 DEGREE CELSIUS is the single-glyph form of "°C" (Unicode code charts).
        pytest.param("125\u2103", "125°C", id="degree-celsius-glyph"),
        # "+/-" is the ASCII way of writing the plus-minus sign (common practice).
        pytest.param("10% +/- 1", "10% ±1", id="plus-minus"),
    ],
)
def test_glyphs_become_the_ascii_the_tokenizer_reads(text, expected):
    assert _normalised(text)[0] == expected


def test_ascii_text_without_special_forms_is_unchanged():
    # Nothing to fold in plain ASCII (the fast path): the text is returned as it is.
    assert _normalised("100nF 50V X7R 0603") == ("100nF 50V X7R 0603", [])


@pytest.mark.parametrize(
    ("text", "expected"),
    [
        # A temperature pair around a slash with one unit: a range when it straddles 0 degC,
        # two upper temperatures otherwise (common practice of datasheet headers).
        pytest.param("-40/110C", "-40~110C", id="range"),
        pytest.param("85/105C", "85C 105C", id="two-ratings"),
    ],
)
def test_temperature_pairs_around_a_slash(text, expected):
    assert _normalised(text)[0] == expected


def test_iec_climatic_category_without_a_unit_stays():
    # IEC 60068-1 climatic category "40/105/56" carries no unit and is not a temperature pair.
    assert "40/105/56" in _normalised("40/105/56")[0]


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
