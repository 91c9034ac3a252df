"""Parse stage (bomcheck/parse/valuewords.py): word tokens (dielectric codes, capacitor and
technology words, footprint names, case letters) read into the scan state through one word table."""

from __future__ import annotations

import pytest

from bomcheck.parse import codes
from bomcheck.parse.scanstate import State
from bomcheck.parse.values import parse_value
from bomcheck.parse.valuewords import case_phrase, word


def _read(tok: str, context: str = "any") -> State:
    st = State(context)
    assert word(st, tok, 1) is None
    return st


@pytest.mark.parametrize(("tok", "code", "klass"),
                         # EIA-198: C0G is class I, X7R class II, Y5V class III.
                         [("X7R", "X7R", 2), ("C0G", "C0G", 1), ("NP0", "C0G", 1),
                          ("Y5V", "Y5V", 3)])
def test_dielectric_codes(tok, code, klass):
    st = _read(tok)
    assert st.diel.code == code and st.diel.eia_class == klass and st.strong_cap


@pytest.mark.parametrize(("tok", "kind"), [("RES", "resistor"), ("INDUCTOR", "inductor")])
def test_words_of_other_parts(tok, kind):
    # Resistor and inductor words name another part (common practice of BOM descriptions).
    assert _read(tok).noncap == [kind]


def test_capacitor_words_mark_the_text_as_a_capacitor():
    # "CAP", "Kondensator", "condensateur": the word for the part in English, German, French.
    for tok in ("CAP", "Kondensator", "CONDENSATEUR"):
        st = _read(tok)
        assert st.cap_words and st.strong_cap


def test_a_dashed_description_is_given_back_in_parts():
    # "CAP-CER-0.1UF": a description written with dashes; a part number such as "KV-2210-X7R"
    # is not split (common practice of distributor descriptions).
    assert word(State("any"), "CAP-CER-0.1UF", 1) == ["CAP", "CER", "0.1UF"]
    assert word(State("any"), "KV-2210-X7R", 1) is None


def test_case_phrase_reads_a_tantalum_case_letter():
    # EIA-535 tantalum case C is metric 6032 in the common lettering; the package stays
    # "case C" and the note names the metric size.
    st = State("any")
    assert case_phrase(st, "case", "C") and st.pkg == "case C" and "6032" in st.pkg_note
    assert not case_phrase(State("any"), "case", "12")


def test_unknown_lookalike_dielectric_is_unread_with_a_warning():
    # "X9Q" has the shape of an EIA-198 class II code but is not in its table.
    st = _read("X9Q")
    assert st.diel is None and st.unread == ["X9Q"] and st.warnings


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


@pytest.mark.parametrize(("text", "code"), [("100nF 50V c0g", "C0G"), ("100n x7r 16V", "X7R"),
                                            ("1nF u2j", "U2J")])
def test_lower_case_dielectric_codes(text, code):
    # EIA-198 codes, written in lower case by some libraries.
    assert parse_value(text).dielectric == code


@pytest.mark.parametrize("text", ["C30 CABLE ASSY FFC 24P 100MM", "FPC 24P 0.5MM",
                                  "WIRE 24AWG 100MM", "HARNESS 4P 300MM"])
def test_cable_words_are_not_capacitors(text):
    s = parse_value(text)
    assert not s.is_capacitor and s.capacitance_f is None
