"""Parse stage: word tokens (``X7R``, ``CAP``, ``TANT``, ``case B``, ``0805_2012Metric``, ``P100``)
read into the scan state (``bomcheck.parse.scanstate``) through one word table.

A reader returns the parts of a token written as several (``CAP-CER-0.1UF``) for the scan to
read again, or None.
"""

from __future__ import annotations

import re
from collections.abc import Callable

from bomcheck.parse import codes
from bomcheck.parse.scanstate import _PREFIX_EXP, State, scaled
from bomcheck.parse.valuenumbers import can_size

# Word forms that are not in the word table.
_WORD_FORM = re.compile(
    r"(?P<tc>[PN]\d{3,4})"
    r"|(?P<dual>[Xx][1-3][Yy][1-4])"
    r"|(?i:case|size)-?(?P<case>[A-Za-z])"
    r"|(?P<rkml>[pnu])(?P<rl_b>\d{1,3})"
    r"|(?P<rfirst>R\d+)"
    r"|(?:[A-Za-z]{1,12}_)?(?P<fp_i>\d{4,5})_(?P<fp_m>\d{4})(?i:metric)"
    r"|[DdØøΦφ⌀](?P<can_d>\d{1,2}(?:\.\d{1,2})?)[xX*](?P<can_l>\d{1,3}(?:\.\d{1,2})?)(?i:mm)?"
).fullmatch
_LOOKALIKE_CLASS2 = re.compile(r"[XYZ]\d[A-Z]").fullmatch
# Footprint names that put a short prefix before the chip code (common practice of PCB
# libraries), read in a package column only.
_PREFIXED_CHIP = re.compile(r"(?:C|CAP|CC|CP|SMD|SMC|EIA)-?(\d{4,5})[A-Z]?").fullmatch
# Class I codes also read in lower or mixed case ("c0g"); the rest only as written in upper case,
# as three-character lower-case words collide with other abbreviations.
_ANY_CASE_CLASS1 = frozenset({"C0G", "U2J"})

# --- word tables ---------------------------------------------------------------------------------

# Technology hints; the combination is resolved in _technology().
_TECH_WORDS: dict[str, str] = {
    **dict.fromkeys(("CER", "CERAMIC", "MLCC", "MLC", "KERKO", "KERAMIK", "CERAMIQUE"), "ceramic"),
    **dict.fromkeys(("TANT", "TANTALUM", "TANTAL", "MNO2"), "tantalum"),
    "TA": "tantalum?",  # the chemical symbol: tantalum only when nothing else names a technology
    **dict.fromkeys(("POLYMER", "POLY", "POLYM", "POLYMR"), "polymer"),
    **dict.fromkeys(("ALU", "AL", "ALUM", "ALUMINUM", "ALUMINIUM", "ELKO", "ELCO"), "aluminium"),
    **dict.fromkeys(
        ("ELEC", "ELECT", "ELECTRO", "ELECTROLYTIC", "ELYT", "ECAP", "E-CAP", "ELECTROLYTIQUE"),
        "electrolytic",
    ),
    "WET": "wet",
    "WET-SLUG": "wet",
    "FOIL": "foil",
    **dict.fromkeys(("FILM", "FOLIE", "FOLIENKONDENSATOR"), "film"),
    "MICA": "mica",
    "GLASS": "glass",
    **dict.fromkeys(
        ("SUPERCAP", "SUPERCAPACITOR", "ULTRACAPACITOR", "EDLC", "DOUBLE-LAYER"),
        "supercapacitor",
    ),
}
# Film materials: the material words and the generic metallised-film type codes.
_FILM_WORDS: dict[str, str] = {
    **dict.fromkeys(("PP", "POLYPROPYLENE", "MKP"), "PP"),
    **dict.fromkeys(("PET", "POLYESTER", "MKT"), "PET"),
    "PPS": "PPS",
    "PEN": "PEN",
    **dict.fromkeys(("POLYCARBONATE", "MKC"), "PC"),
    "POLYSTYRENE": "PS",
    "PTFE": "PTFE",
    "PAPER": "paper",
}
_CAP_WORDS = (
    "CAP", "CAPS", "CAPACITOR", "CAPACITORS", "CAPACITANCE", "CAPA", "KONDENSATOR", "KOND",
    "CONDENSATEUR", "CONDENSATOR",
)
# Technology words only capacitors carry: with these, resistor/inductor/crystal words in the same
# text ("CAP CER 18pF crystal load") do not overrule. CER, FILM, GLASS... are also resistor or
# inductor words ("metal film resistor", "ceramic chip inductor"), so they do not count here.
_CAPACITOR_ONLY_TECH = frozenset({
    "MLCC", "TANT", "TANTALUM", "TANTAL", "ELEC", "ELECT", "ELECTROLYTIC", "ELYT", "ECAP",
    "E-CAP", "ELKO", "ELCO", "KERKO", "SUPERCAP", "SUPERCAPACITOR", "ULTRACAPACITOR", "EDLC",
})
_NONCAP_WORDS: dict[str, str] = {
    **dict.fromkeys(("RES", "RESISTOR", "RESISTORS", "WIDERSTAND", "RESISTANCE", "POT",
                     "POTENTIOMETER", "TRIMPOT", "THERMISTOR", "NTC", "PTC", "VARISTOR", "MOV"),
                    "resistor"),
    **dict.fromkeys(("IND", "INDUCTOR", "INDUCTORS", "INDUCTANCE", "CHOKE", "COIL", "FERRITE",
                     "BEAD", "SPULE", "DROSSEL", "BOBINE", "TRANSFORMER", "XFMR"), "inductor"),
    **dict.fromkeys(("CRYSTAL", "XTAL", "QUARTZ", "QUARZ", "RESONATOR", "OSC", "OSCILLATOR",
                     "LOAD"), "crystal"),
    **dict.fromkeys(("DIODE", "LED", "ZENER", "TVS", "SCHOTTKY", "TRANSISTOR", "MOSFET"),
                    "semiconductor"),
    **dict.fromkeys(("CONN", "CONNECTOR", "HEADER", "SOCKET", "JUMPER", "FUSE", "RELAY"),
                    "other part"),
    # Cables and flat flexible cables: "C30 CABLE ASSY FFC 24P" is not 24 pF (common practice).
    **dict.fromkeys(("CABLE", "CABLES", "FFC", "FPC", "WIRE", "WIRES", "HARNESS", "KABEL",
                     "KABELBAUM", "LITZE", "CÂBLE", "FAISCEAU"), "cable"),
}
_EMI_WORDS: dict[str, str] = {
    **dict.fromkeys(("FEEDTHROUGH", "FEED-THROUGH", "FEEDTHRU", "FEED-THRU", "EMI-FILTER",
                     "3-TERMINAL"), "feedthrough"),
    **dict.fromkeys(("EMI", "RFI"), "emi"),
    "FILTER": "filter",
}
_NONPOLAR_WORDS = ("NP", "BP", "NON-POLAR", "NONPOLAR", "NON-POLARIZED", "NON-POLARISED",
                   "BIPOLAR", "BI-POLAR")
# Words a capacitor description carries that fill no field; read, not reported as unread.
_FILLER_WORDS = (
    "SMD", "SMT", "THT", "TH", "CHIP", "RADIAL", "AXIAL", "SNAP-IN", "SNAPIN", "LEADED", "DIP",
    "DIPPED", "DISC", "DISK", "MULTILAYER", "MONOLITHIC", "METALLIZED", "METALIZED", "METAL",
    "GENERAL", "PURPOSE", "LOW", "ESR", "ESL", "LOW-ESR", "HIGH", "VOLTAGE", "HV", "RATED", "TOL",
    "TOLERANCE", "TEMP", "CASE", "SIZE", "PKG", "PACKAGE", "CLASS", "SAFETY", "MM", "TYPE",
    "SERIES", "AUTOMOTIVE", "SUPPRESSION", "DECOUPLING", "BYPASS", "BULK", "CAN", "TAPE", "REEL",
    "ROHS", "AT", "OF", "AND", "WITH", "FOR", "X", "UF", "PF", "NF", "MFD", "V", "METRIC",
    "IMPERIAL", "INCH",
)


def _word_table() -> dict[str, tuple[str, object]]:
    table: dict[str, tuple[str, object]] = {}
    table.update((w, ("filler", None)) for w in _FILLER_WORDS)
    table.update((w, ("cap", None)) for w in _CAP_WORDS)
    table.update((w, ("tech" if w not in _CAPACITOR_ONLY_TECH else "tech!", t))
                 for w, t in _TECH_WORDS.items())
    table["TA"] = ("hint", "tantalum?")  # a hint only: it makes no text a capacitor
    table.update((w, ("film", m)) for w, m in _FILM_WORDS.items())
    table.update((w, ("noncap", k)) for w, k in _NONCAP_WORDS.items())
    table.update((w, ("emi", k)) for w, k in _EMI_WORDS.items())
    table.update((w, ("nonpolar", None)) for w in _NONPOLAR_WORDS)
    table.update((w, ("vkind", k)) for w, k in (("DC", "dc"), ("AC", "ac"), ("RMS", "ac")))
    table.update((c, ("safety", c)) for c in codes.SAFETY_CLASSES)
    table.update((c, ("diel1", d)) for c, d in codes.CLASS1_CODES.items())
    table.update((c, ("diel", d)) for c, d in codes.CLASS2_CODES.items())
    table.update((c, ("diel", codes.CLASS1_CODES[v])) for c, v in codes.CLASS1_SPELLINGS.items())
    return table


_WORDS = _word_table()


def _cap_word(st: State, val: object, tok: str, key: str, i: int) -> None:
    st.strong_cap = st.cap_words = True


def _tech_word(st: State, val: object, tok: str, key: str, i: int) -> None:
    st.hints.append(val)  # type: ignore[arg-type]
    st.strong_cap = True


def _capacitor_only_tech(st: State, val: object, tok: str, key: str, i: int) -> None:
    st.hints.append(val)  # type: ignore[arg-type]
    st.strong_cap = st.cap_words = True


def _dielectric(st: State, val: object, tok: str, key: str, i: int) -> None:
    st.set_diel(val, tok)  # type: ignore[arg-type]


def _class1(st: State, val: object, tok: str, key: str, i: int) -> None:
    if tok == key or key in _ANY_CASE_CLASS1:
        st.set_diel(val, tok)  # type: ignore[arg-type]
    else:
        st.unread.append(tok)


def _film(st: State, val: object, tok: str, key: str, i: int) -> None:
    if st.film is None:
        st.film = val  # type: ignore[assignment]
    st.hints.append("film")
    st.strong_cap = True


def _safety(st: State, val: object, tok: str, key: str, i: int) -> None:
    st.set_safety(val, tok)  # type: ignore[arg-type]


def _noncap(st: State, val: object, tok: str, key: str, i: int) -> None:
    st.noncap.append(val)  # type: ignore[arg-type]


def _hint(st: State, val: object, tok: str, key: str, i: int) -> None:
    st.hints.append(val)  # type: ignore[arg-type]


def _nonpolar(st: State, val: object, tok: str, key: str, i: int) -> None:
    st.nonpolar = True


def _voltage_kind(st: State, val: object, tok: str, key: str, i: int) -> None:
    if st.volt_i == i - 1 and st.vkind is None:  # "275 V AC"
        st.vkind = val  # type: ignore[assignment]


def _filler(st: State, val: object, tok: str, key: str, i: int) -> None:
    return None


# What each kind of word-table entry does to the scan state.
_WORD_KINDS: dict[str, Callable[[State, object, str, str, int], None]] = {
    "filler": _filler, "cap": _cap_word, "tech": _tech_word, "tech!": _capacitor_only_tech,
    "diel": _dielectric, "diel1": _class1, "film": _film, "safety": _safety,
    "noncap": _noncap, "emi": _hint, "hint": _hint, "nonpolar": _nonpolar,
    "vkind": _voltage_kind,
}


def word(st: State, tok: str, i: int) -> list[str] | None:
    """Read a token that starts with a letter; the parts of a dashed description to read
    again."""
    key = tok.upper()
    if key[-1] == ".":
        key = key.rstrip(".")
        if not key:
            return None
    entry = _WORDS.get(key)
    if entry is not None:
        _WORD_KINDS[entry[0]](st, entry[1], tok, key, i)
    elif len(key) == 1:
        _letter(st, tok, key, i)
    elif st.context == "package" and _footprint(st, tok, key):
        pass
    elif "-" in tok and _dashed_description(key):
        return [part for part in tok.split("-") if part]
    elif key[:3] == "CAP" and (found := codes.ipc_footprint(key)) is not None:
        st.set_pkg(found, tok)
    else:
        _word_form(st, tok, key, i)
    return None


def _letter(st: State, tok: str, key: str, i: int) -> None:
    """A lone letter: a tantalum case in a package column, a tolerance letter, or unread."""
    if st.context == "package" and key in codes.TANTALUM_CASES:
        st.set_pkg(codes.tantalum_case(key), tok)  # type: ignore[arg-type]
    elif key in codes.TOLERANCE_LETTERS and tok == key:
        st.deferred.append(("letter", i, key, False))
    else:
        st.unread.append(tok)


def _footprint(st: State, tok: str, key: str) -> bool:
    """``C0603``, ``CAP0805``, ``SMD1206``, ``EIA-3528`` footprint names; True when read."""
    m = _PREFIXED_CHIP(key)
    found = codes.chip_package(m.group(1)) if m else None
    if found is not None:
        st.set_pkg(found, tok)
        return True
    return False


def _word_form(st: State, tok: str, key: str, i: int) -> None:
    """The word forms that are not in the table (``P100``, ``X1Y2``, ``caseB``, ``n47``...)."""
    m = _WORD_FORM(tok)
    if m is None:
        if _LOOKALIKE_CLASS2(key):
            st.warnings.append(f"{tok!r} looks like a dielectric code but is not in the EIA-198 "
                               "class II/III table")
        st.unread.append(tok)
    elif m.group("tc") is not None:
        d = codes.decode_tc_code(tok)
        st.set_diel(d, tok)  # type: ignore[arg-type]
    elif m.group("dual") is not None:
        st.set_safety(key[:2], tok)
        st.set_safety(key[2:], tok)
    elif m.group("case") is not None:
        _case_letter(st, m.group("case"), tok)
    elif m.group("rkml") is not None:
        st.set_cap(scaled("0." + m.group("rl_b"), _PREFIX_EXP[m.group("rkml")]), tok, i,
                   weak=True)
    elif m.group("rfirst") is not None:
        st.weak_noncap.append((tok, "resistor", True))  # R47: 0.47 ohm
    elif m.group("fp_i") is not None:
        imp, met = m.group("fp_i"), m.group("fp_m")
        if codes.IMPERIAL_TO_METRIC.get(imp) == met:
            st.set_pkg((imp, f"imperial {imp} (metric {met}), both written"), tok)
        else:
            st.unread.append(tok)
    else:
        can_size(st, m.group("can_d"), m.group("can_l"), tok)


def _case_letter(st: State, letter: str, tok: str) -> None:
    found = codes.tantalum_case(letter)
    if found is None:
        found = (f"case {letter.upper()}", "case letter not in the tantalum table (A-E)")
        st.warnings.append(f"{tok!r}: case letter not in the tantalum table (A-E)")
    st.set_pkg(found, tok)


def _dashed_description(key: str) -> bool:
    """``CAP-CER-0.1UF`` is a description written with dashes; ``KV-2210-X7R`` a part number."""
    entry = _WORDS.get(key.split("-", 1)[0])
    return entry is not None and entry[0] in ("cap", "tech", "film", "noncap")


def case_phrase(st: State, tok: str, nxt: str) -> bool:
    """``case B`` / ``size B`` / ``B case``: a tantalum case letter. True when read."""
    if len(nxt) == 1 and nxt.isalpha() and tok.upper() in ("CASE", "SIZE"):
        _case_letter(st, nxt, f"{tok} {nxt}")
        return True
    if len(tok) == 1 and nxt.upper() == "CASE" and tok.upper() in codes.TANTALUM_CASES:
        _case_letter(st, tok, f"{tok} {nxt}")
        return True
    return False
