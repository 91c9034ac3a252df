"""Parse stage: one BOM value or description text to a ``CapSpec`` (capacitance, voltage, codes...).

The text is normalised (``bomcheck.parse.valuetext``) and cut at separators into tokens; a number and
the unit written after a space are joined (``50 V``). A token that starts with a digit is split
once into sign, number and suffix and the suffix is looked up (``uF``, ``V``, ``%``...) or
matched against the code forms (``4u7``, ``2R2``, ``6V3``); a word is looked up in one table. A
second pass settles what needs the whole text (a bare ``104``, a lone tolerance letter, a ``1H``
voltage code, capacitor or not), and the readings are checked (``bomcheck.parse.readings``: plausible
ranges, the widest of several tolerances). Code tables live in ``bomcheck.parse.codes``; no pint here:
this runs once per distinct string of a BOM.
"""

from __future__ import annotations

import math
import re
from decimal import Decimal

from bomcheck.parse import codes
from bomcheck.parse.codes import Dielectric
from bomcheck.spec import POLARIZED_TECHNOLOGIES, CapSpec
from bomcheck.parse.readings import (
    CONFLICT_MARK,
    UNREAD_MARK,
    keep_widest_tolerance,
    unread_implausible,
)
from bomcheck.parse.valuetext import normalise

__all__ = ["CONFLICT_MARK", "CONTEXTS", "UNREAD_MARK", "format_capacitance", "parse_value"]

CONTEXTS = frozenset(
    {"any", "value", "description", "voltage", "tolerance", "dielectric", "package", "temperature"}
)

# --- tokens (normalisation: bomcheck.parse.valuetext) -----------------------------------------------------------

_SEPARATORS = r"\s,;|()\[\]{}=@:/"
_HAS_SEPARATOR = re.compile(r"[,;|()\[\]{}=@:/]").search  # else str.split() will do
_TOKENS = re.compile(rf"[^{_SEPARATORS}]+").findall
# One token that starts like a number: sign, number, the rest.
_NUMERIC = re.compile(r"([-+±]?)(\d+(?:\.\d+)?|\.\d+)(.*)").fullmatch
# Suffix forms that carry digits: RKM (4u7, 4n7J, 4m7), 2R2, 4K7, 6V3, 4u7H, can sizes 8x11.5.
_SUFFIX_FORM = re.compile(
    r"(?P<rkm>[pPnNuUm])(?P<rk_b>\d{1,3})(?P<rk_t>[BCDFGJKMZ])?"
    r"|R(?P<rdec>\d+)(?P<rd_t>[BCDFGJKMZ])?"
    r"|(?P<kres>[kKM]\d+)"
    r"|[vV](?P<vrkm>\d+)"
    r"|(?P<ind>[pPnNuUm]\d*[hH])"
    r"|[xX*](?P<can>\d{1,3}(?:\.\d{1,2})?)(?:mm|MM)?"
).fullmatch
_TEMP_UNIT = r"(?:°C|°|C|[dD][eE][gG]\.?C)"
_RANGE = re.compile(
    rf"([-+]?\d+)({_TEMP_UNIT})?(?:~|\.\.\.?|…|-|/|[tT][oO])([-+]?\d+)({_TEMP_UNIT})?"
).fullmatch
_TANTALUM_METRIC = re.compile(r"(\d{4})-(\d{2})").fullmatch
_ASYMMETRIC = re.compile(r"([-+])(\d+(?:\.\d+)?)%?[/-]?([-+])(\d+(?:\.\d+)?)%").fullmatch
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
# IEC 60384-14 safety classes are for mains-connected parts; Y4, the lowest, covers rated
# voltages up to 150 V AC and no certified X/Y part is rated below 100 V (value from memory).
# A class named on a part rated below this is taken as a word about something else.
_SAFETY_MIN_RATED_V = 100.0
# Footprint names that put a short prefix before the chip code (common practice of PCB
# libraries), read in a package column only.
_PREFIXED_CHIP = re.compile(r"(?:C|CAP|CC|CP|SMD|SMC|EIA)-?(\d{4,5})[A-Z]?").fullmatch
# Class I codes also read in lower or mixed case ("c0g"); the rest only as written in upper case,
# as three-character lower-case words collide with other abbreviations.
_ANY_CASE_CLASS1 = frozenset({"C0G", "U2J"})

# --- unit tables ---------------------------------------------------------------------------------

# Capacitance units, lower case -> power of ten ("mF" millifarad is told apart by case).
_CAP_UNIT_EXP: dict[str, int] = {
    "pf": -12, "pfd": -12, "nf": -9, "nfd": -9, "uf": -6, "ufd": -6, "uuf": -12, "uufd": -12,
    "mmf": -12, "mmfd": -12, "mfd": -6, "mf": -6, "f": 0, "fd": 0, "farad": 0, "farads": 0,
}
# Voltage units, lower case -> (multiplier, kind).
_VOLT_UNITS: dict[str, tuple[float, str | None]] = {}
for _k, _mult in (("", 1.0), ("k", 1000.0)):
    _VOLT_UNITS.update({
        _k + "v": (_mult, None), _k + "volt": (_mult, None), _k + "volts": (_mult, None),
        _k + "vdc": (_mult, "dc"), _k + "wvdc": (_mult, "dc"), _k + "wv": (_mult, "dc"),
        _k + "vac": (_mult, "ac"), _k + "vrms": (_mult, "ac"), _k + "v~": (_mult, "ac"),
    })
_TEMP_UNITS = frozenset({"°c", "°", "degc", "deg.c", "c"})
_IGNORED_UNITS = frozenset({"hz", "khz", "mhz", "ghz", "ma", "marms", "arms", "mw", "w"})
_OHM_UNITS = frozenset({"ohm", "ohms", "ω", "mω", "kω", "mohm", "kohm", "mohms", "kohms"})
_INDUCTANCE_UNITS = frozenset({"ph", "nh", "uh", "mh"})
# One-letter suffixes of quantities that have no sign: a capacitance (F, RKM p/n/u) or volts.
_SIGNLESS_LETTERS = frozenset("FfVvpnuPNU")
_HOUR_UNITS = frozenset({"h", "hr", "hrs", "hour", "hours"})
# Unit words joined to a number written before them with a space ("50 V", "0.1 uF", "125 °C").
_UNIT_WORDS = (frozenset(_CAP_UNIT_EXP) | frozenset(_VOLT_UNITS) | _IGNORED_UNITS | _OHM_UNITS
               | _INDUCTANCE_UNITS | _HOUR_UNITS | {"%", "°c", "°", "degc", "deg.c", "mm"})
_RANGE_WORDS = frozenset({"to", "~", "..", "...", "…"})
_PREFIX_EXP = {"p": -12, "n": -9, "u": -6, "m": -3}
_PLAIN_VOLTAGE_CODES = frozenset({"1V", "2V"})  # also a plain "1 V", "2 V" outside a voltage column

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


# --- state ---------------------------------------------------------------------------------------


class _State:
    """What the scan has read so far; the second pass turns it into a CapSpec.

    Scalars default on the class so that a text only pays for what it sets.
    """

    cap: float | None = None
    cap_tok = ""
    cap_i = -9
    cap_weak = False
    volt: float | None = None
    vkind: str | None = None
    volt_i = -9
    tol: tuple[float | None, float | None, float | None] | None = None  # minus %, plus %, abs F
    tol_i = -9
    tol_letter: str | None = None
    tol_tok = ""
    diel: Dielectric | None = None
    film: str | None = None
    tmin: float | None = None
    tmax: float | None = None
    pkg: str | None = None
    pkg_note: str | None = None
    safety: str | None = None
    nonpolar = False
    strong_cap = False  # a farad unit, capacitor or technology words, a dielectric code
    cap_words = False  # capacitor words, or technology words only capacitors carry
    bare_numbers = 0

    def __init__(self, context: str) -> None:
        self.context = context
        self.warnings: list[str] = []
        self.unread: list[str] = []
        self.hints: list[str] = []  # technology and EMI-filter hints
        self.noncap: list[str] = []  # kinds named by words: resistor, inductor, crystal...
        self.weak_noncap: list[tuple[str, str, bool]] = []  # (token, kind, warn if capacitor)
        self.weak_cap_toks: list[str] = []
        self.bare_toks: list[str] = []
        self.more_tols: list[tuple[tuple[float | None, float | None, float | None], str]] = []
        # Decided in the second pass: (what, index, token, data...).
        self.deferred: list[tuple] = []

    def set_cap(self, value: float, tok: str, i: int, *, weak: bool) -> None:
        if self.cap is None:
            self.cap, self.cap_tok, self.cap_i, self.cap_weak = value, tok, i, weak
        elif not math.isclose(self.cap, value, rel_tol=1e-9):
            kept = self.cap_tok if self.cap <= value else tok
            self.warnings.append(
                f"{CONFLICT_MARK}two capacitance values ({self.cap_tok!r} and {tok!r}); "
                f"kept the smaller, {kept!r}"
            )
            self.cap = min(self.cap, value)
        if weak:
            self.weak_cap_toks.append(tok)
        else:
            self.strong_cap = True

    def set_volt(self, value: float, kind: str | None, tok: str, i: int) -> None:
        if self.volt is None:
            self.volt, self.vkind, self.volt_i = value, kind, i
        elif not math.isclose(self.volt, value, rel_tol=1e-9):
            if kind and self.vkind and kind != self.vkind:  # "275VAC 630VDC": two ratings
                self.warnings.append(f"second rated voltage {tok!r} ignored")
            else:
                self.warnings.append(f"{CONFLICT_MARK}two rated voltages ({self.volt:g} V and "
                                     f"{tok!r}); kept the lower, {min(self.volt, value):g} V")
                if value < self.volt:
                    self.volt, self.vkind = value, kind or self.vkind
        elif kind and not self.vkind:
            self.vkind = kind

    def set_tol(self, tol: tuple[float | None, float | None, float | None], tok: str, i: int,
                letter: str | None = None) -> None:
        if self.tol is None:
            self.tol, self.tol_i, self.tol_letter, self.tol_tok = tol, i, letter, tok
        elif self.tol != tol:
            self.more_tols.append((tol, tok))  # resolved in _build, where the value is known

    def set_diel(self, d: Dielectric, tok: str) -> None:
        if self.diel is None:
            self.diel = d
        elif self.diel.code != d.code:
            self.warnings.append(f"second dielectric code {tok!r} ignored")
        self.strong_cap = True

    def set_temp(self, value: float, tok: str) -> None:
        if value < 0:
            if self.tmin is None:
                self.tmin = value
            elif self.tmin != value:
                self.warnings.append(f"{CONFLICT_MARK}two minimum temperatures ({self.tmin:g} "
                                     f"and {tok!r}); kept the higher, {max(self.tmin, value):g} "
                                     "degC")
                self.tmin = max(self.tmin, value)
        elif self.tmax is None:
            self.tmax = value
        elif self.tmax != value:
            self.warnings.append(f"{CONFLICT_MARK}two rated temperatures ({self.tmax:g} degC "
                                 f"and {tok!r}); kept the lower, {min(self.tmax, value):g} degC")
            self.tmax = min(self.tmax, value)

    def set_pkg(self, found: tuple[str, str], tok: str) -> None:
        if self.pkg is None:
            self.pkg, self.pkg_note = found
        elif codes.IMPERIAL_TO_METRIC.get(self.pkg) == found[0]:  # "0805 (2012 Metric)"
            self.pkg_note = f"imperial {self.pkg} (metric {found[0]}), both written"
        elif codes.METRIC_TO_IMPERIAL.get(self.pkg) == found[0]:  # "1608 metric / 0603"
            self.pkg, self.pkg_note = found[0], f"imperial {found[0]} (metric {self.pkg}), " \
                "both written"
        elif self.pkg != found[0]:
            self.warnings.append(f"second package {tok!r} ignored")

    def set_safety(self, cls: str, tok: str) -> None:
        if self.safety is None or self.safety == cls:
            self.safety = cls
        elif self.safety[0] == "X" and cls[0] == "Y":  # "X1 / Y2": dual rated
            self.warnings.append(f"dual safety rating {self.safety}/{cls}; safety_class "
                                 f"records {cls}")
            self.safety = cls
        elif not (self.safety[0] == "Y" and cls[0] == "X"):
            self.warnings.append(f"second safety class {tok!r} ignored")

    def unread_number(self, tok: str) -> None:
        self.unread.append(tok)
        self.bare_numbers += 1
        self.bare_toks.append(tok)


# --- helpers -------------------------------------------------------------------------------------


def _scaled(number: str, exp: int) -> float:
    # float("4.7e-6") is correctly rounded; 4.7 * 1e-6 is not always the same double.
    return float(f"{number}e{exp}")


def _code3_value(digits: str) -> float:
    """IEC 60062 three-digit pF code: two significant digits and a power of ten; a third digit
    of 9 means x0.1 and 8 means x0.01."""
    last = digits[2]
    power = -1 if last == "9" else -2 if last == "8" else int(last)
    return _scaled(digits[:2], power - 12)


# --- reading one token ---------------------------------------------------------------------------


def _token(st: _State, tok: str, i: int) -> None:
    c = tok[0]
    if c.isdigit() or c in "+-±.":
        _numeric(st, tok, i)
    elif c.isalpha():
        _word(st, tok, i)
    elif c == "%" or not any(ch.isalnum() for ch in tok):
        return  # stray punctuation
    else:
        st.unread.append(tok)


def _numeric(st: _State, tok: str, i: int) -> None:
    m = _NUMERIC(tok)
    if m is None:
        if tok.strip("+-±.~"):
            st.unread.append(tok)
        return
    sign, num, suf = m.groups()
    if not suf:
        _bare_number(st, sign, num, tok, i)
        return
    if sign == "±":
        _plus_minus(st, num, suf, tok, i)
        return
    if sign == "-" and (suf.lower() in _CAP_UNIT_EXP or suf.lower() in _VOLT_UNITS
                        or suf in _SIGNLESS_LETTERS):
        # "-10uF", "-16V": a sign a rating cannot have (a lost tolerance? a typo?); not read.
        st.warnings.append(f"{UNREAD_MARK}{tok!r}: a negative capacitance or rated voltage; "
                           "not read")
        st.unread.append(tok)
        return
    if len(suf) == 1:
        _one_letter_suffix(st, sign, num, suf, tok, i)
        return
    low = suf.lower()
    exp = _CAP_UNIT_EXP.get(low)
    if exp is not None:
        if suf == "mF":
            exp = -3
        elif low == "mf":
            st.warnings.append(f"{tok!r}: 'MF' read as microfarad (old usage)")
        st.set_cap(_scaled(num, exp), tok, i, weak=False)
        return
    volt = _VOLT_UNITS.get(low)
    if volt is not None:
        st.set_volt(float(num) * volt[0], volt[1], tok, i)
        return
    if low in _TEMP_UNITS:
        st.set_temp(float(sign + num), tok)
        return
    if low in _IGNORED_UNITS:
        return  # frequency, ripple current, power: no field here
    if low in _HOUR_UNITS:
        _life(st, tok)
        return
    if low in _OHM_UNITS:
        st.weak_noncap.append((tok, "resistor", False))  # an ESR in a capacitor text
        return
    if low in _INDUCTANCE_UNITS:
        st.weak_noncap.append((tok, "inductor", True))
        return
    if low == "metric" and num.isdigit():
        _metric_chip(st, num, tok)
        return
    if suf[0] == "%":  # "-20%+80%"
        m = _ASYMMETRIC(tok)
        if m is not None and m.group(1) != m.group(3):
            _asymmetric(st, m, tok, i)
        else:
            st.unread.append(tok)
        return
    if "-" in suf or "~" in suf or ".." in suf or low[:2] == "to":
        _dashed(st, tok, i)
        return
    f = _SUFFIX_FORM(suf)
    integer = not sign and num.isdigit()
    if f is None or not integer:
        if f is not None and f.group("can") is not None:
            _can(st, num, f.group("can"), tok)
        else:
            st.unread.append(tok)
        return
    if f.group("rkm") is not None:
        p = f.group("rkm")
        st.set_cap(_scaled(f"{num}.{f.group('rk_b')}", _PREFIX_EXP[p.lower()]), tok, i,
                   weak=True)
        if f.group("rk_t"):
            st.deferred.append(("letter", i, f.group("rk_t"), True))
    elif f.group("rdec") is not None:
        st.deferred.append(("rdec", i, tok, f"{num}.{f.group('rdec')}", f.group("rd_t")))
    elif f.group("kres") is not None:
        st.weak_noncap.append((tok, "resistor", True))
    elif f.group("vrkm") is not None:
        st.set_volt(float(f"{num}.{f.group('vrkm')}"), None, tok, i)
    elif f.group("ind") is not None:
        st.weak_noncap.append((tok, "inductor", True))
    else:
        _can(st, num, f.group("can"), tok)


def _metric_chip(st: _State, num: str, tok: str) -> None:
    """``1608Metric`` (footprint names): a metric chip code, kept as its imperial code."""
    imperial = codes.METRIC_TO_IMPERIAL.get(num)
    if imperial is None:
        st.unread.append(tok)
    elif st.pkg == imperial:
        st.pkg_note = f"imperial {imperial} (metric {num}), both written"
    else:
        st.set_pkg((imperial, f"imperial {imperial}, written as metric {num}"), tok)


def _can(st: _State, diameter: str, length: str, tok: str) -> None:
    st.set_pkg((f"{diameter}x{length}",
                f"can size: diameter {diameter} mm x length {length} mm"), tok)


def _bare_number(st: _State, sign: str, num: str, tok: str, i: int) -> None:
    ctx = st.context
    if ctx == "voltage" and sign != "±":
        st.set_volt(float(num), None, tok, i)
    elif ctx == "temperature":
        st.set_temp(float(sign.replace("±", "") + num), tok)
    elif ctx == "tolerance" or sign == "±":
        if ctx != "tolerance":
            st.warnings.append(f"{tok!r}: no unit, read as percent")
        st.set_tol((float(num), float(num), None), tok, i)
    elif sign:
        st.unread_number(tok)
    elif len(num) == 3 and num.isdigit():
        if ctx == "package":
            st.unread.append(tok)
        else:
            st.deferred.append(("code3", i, tok, num, None))
    else:
        found = codes.chip_package(num) if num.isdigit() else None
        if found is not None:
            st.set_pkg(found, tok)
        else:
            st.unread_number(tok)


def _plus_minus(st: _State, num: str, suf: str, tok: str, i: int) -> None:
    if suf == "%":
        st.set_tol((float(num), float(num), None), tok, i)
        return
    exp = _CAP_UNIT_EXP.get(suf.lower())
    if exp is not None and suf.lower() != "mf":
        st.set_tol((None, None, _scaled(num, exp)), tok, i)
    else:
        st.unread.append(tok)


def _one_letter_suffix(st: _State, sign: str, num: str, suf: str, tok: str, i: int) -> None:
    integer = not sign and num.isdigit()
    if integer and len(num) == 3 and suf in codes.TOLERANCE_LETTERS:
        # "105C" is a rated temperature (a multiple of 5), "229C" the code 2.2 pF +/-0.25 pF.
        if suf == "C" and num[2] in "05" and int(num) <= 260:
            st.set_temp(float(num), tok)
        else:
            st.deferred.append(("code3", i, tok, num, suf))
    elif suf in "Vv":
        st.set_volt(float(num), None, tok, i)
    elif suf == "%":
        st.set_tol((float(num), float(num), None), tok, i)
        if sign:
            st.warnings.append(f"{tok!r}: one-sided tolerance read as +/-{num} %")
    elif suf in "Ff":
        st.set_cap(float(num), tok, i, weak=False)
    elif suf in "kKM":
        st.weak_noncap.append((tok, "resistor", True))
    elif suf == "R":
        st.weak_noncap.append((tok, "resistor", True))  # 10R, 0R: ohms
    elif suf in "pnuPNU":
        st.set_cap(_scaled(num, _PREFIX_EXP[suf.lower()]), tok, i, weak=True)
    elif integer and len(num) == 1 and (num + suf.upper()) in codes.VOLTAGE_CODES:
        code = num + suf.upper()
        if st.context == "voltage":
            st.set_volt(codes.VOLTAGE_CODES[code], "dc", tok, i)
        else:
            st.deferred.append(("vcode", i, code))
    elif suf == "C" or suf == "°":
        st.set_temp(float(sign + num), tok)
    elif suf == "m" and integer and st.context == "value":
        st.set_cap(_scaled(num, -3), tok, i, weak=True)  # RKM "10m" = 10 mF, in a value column
    elif suf in "hH" and integer and len(num) >= 3:
        _life(st, tok)
    else:
        st.unread.append(tok)


def _life(st: _State, tok: str) -> None:
    """A life rating ("2000H"): no field of the spec; said, so it is not dropped unseen."""
    st.warnings.append(f"{tok!r}: a rated life; not used from the BOM text (give the part's "
                       "life in the parts data)")


def _dashed(st: _State, tok: str, i: int) -> None:
    """A numeric token with a dash, tilde or "to": a range, a metric case code or two tokens."""
    m = _RANGE(tok)
    if m is not None:
        lo, hi = float(m.group(1)), float(m.group(3))
        if lo < hi and (m.group(2) or m.group(4) or st.context == "temperature"):
            st.tmin, st.tmax = lo, hi
            return
    m = _TANTALUM_METRIC(tok)
    if m is not None:
        metric, height = m.groups()
        case = next((c for c, v in codes.TANTALUM_CASES.items() if v.split("-")[0] == metric),
                    None)
        note = f"metric case {tok} (length and width in 0.1 mm, height code {height})"
        if case is not None:
            note += f"; tantalum case {case} in the common lettering"
        st.set_pkg((tok, note), tok)
        return
    m = _ASYMMETRIC(tok)
    if m is not None and m.group(1) != m.group(3):
        _asymmetric(st, m, tok, i)
        return
    parts = [p for p in tok.replace("~", "-").split("-") if p]
    if len(parts) < 2:
        st.unread.append(tok)
        return
    for part in parts:
        _token(st, part, i)


def _asymmetric(st: _State, m: re.Match[str], tok: str, i: int) -> None:
    first, second = float(m.group(2)), float(m.group(4))
    plus, minus = (first, second) if m.group(1) == "+" else (second, first)
    st.set_tol((minus, plus, None), tok, i)


def _word(st: _State, tok: str, i: int) -> None:
    key = tok.upper()
    if key[-1] == ".":
        key = key.rstrip(".")
        if not key:
            return
    entry = _WORDS.get(key)
    if entry is not None:
        kind, val = entry
        if kind == "filler":
            return
        if kind == "cap":
            st.strong_cap = st.cap_words = True
        elif kind == "tech":
            st.hints.append(val)  # type: ignore[arg-type]
            st.strong_cap = True
        elif kind == "tech!":
            st.hints.append(val)  # type: ignore[arg-type]
            st.strong_cap = st.cap_words = True
        elif kind == "diel":
            st.set_diel(val, tok)  # type: ignore[arg-type]
        elif kind == "diel1":
            if tok == key or key in _ANY_CASE_CLASS1:
                st.set_diel(val, tok)  # type: ignore[arg-type]
            else:
                st.unread.append(tok)
        elif kind == "film":
            if st.film is None:
                st.film = val  # type: ignore[assignment]
            st.hints.append("film")
            st.strong_cap = True
        elif kind == "safety":
            st.set_safety(val, tok)  # type: ignore[arg-type]
        elif kind == "noncap":
            st.noncap.append(val)  # type: ignore[arg-type]
        elif kind in ("emi", "hint"):
            st.hints.append(val)  # type: ignore[arg-type]
        elif kind == "nonpolar":
            st.nonpolar = True
        elif kind == "vkind":  # "275 V AC"
            if st.volt_i == i - 1 and st.vkind is None:
                st.vkind = val  # type: ignore[assignment]
        return
    if len(key) == 1:
        if st.context == "package" and key in codes.TANTALUM_CASES:
            st.set_pkg(codes.tantalum_case(key), tok)  # type: ignore[arg-type]
        elif key in codes.TOLERANCE_LETTERS and tok == key:
            st.deferred.append(("letter", i, key, False))
        else:
            st.unread.append(tok)
        return
    if st.context == "package":
        m = _PREFIXED_CHIP(key)
        found = codes.chip_package(m.group(1)) if m else None
        if found is not None:  # "C0603", "CAP0805", "SMD1206", "EIA-3528" footprint names
            st.set_pkg(found, tok)
            return
    if "-" in tok and _dashed_description(key):
        for part in tok.split("-"):
            if part:
                _token(st, part, i)
        return
    if key[:3] == "CAP":
        found = codes.ipc_footprint(key)
        if found is not None:
            st.set_pkg(found, tok)
            return
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
        st.set_cap(_scaled("0." + m.group("rl_b"), _PREFIX_EXP[m.group("rkml")]), tok, i,
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
        _can(st, m.group("can_d"), m.group("can_l"), tok)


def _case_letter(st: _State, letter: str, tok: str) -> None:
    found = codes.tantalum_case(letter)
    if found is None:
        found = (f"case {letter.upper()}", "case letter not in the tantalum table (A-E)")
        st.warnings.append(f"{tok!r}: case letter not in the tantalum table (A-E)")
    st.set_pkg(found, tok)


def _dashed_description(key: str) -> bool:
    """``CAP-CER-0.1UF`` is a description written with dashes; ``KV-2210-X7R`` a part number."""
    entry = _WORDS.get(key.split("-", 1)[0])
    return entry is not None and entry[0] in ("cap", "tech", "film", "noncap")


def _pair(st: _State, first: str, second: str, i: int) -> bool:
    """Two signed tokens split at '/': ``+80/-20%`` or ``-55/+125C``. True when read."""
    joined = f"{first}/{second}"
    m = _ASYMMETRIC(joined)
    if m is not None and m.group(1) != m.group(3):
        _asymmetric(st, m, joined, i)
        return True
    m = _RANGE(joined)
    if m is not None and (m.group(2) or m.group(4) or st.context == "temperature"):
        lo, hi = float(m.group(1)), float(m.group(3))
        if lo < hi:
            st.tmin, st.tmax = lo, hi
            return True
    return False


def _scan(st: _State, s: str) -> None:
    """Cut ``s`` into tokens, join the ones written apart, and read each (the hot loop)."""
    toks = _TOKENS(s) if _HAS_SEPARATOR(s) else s.split()
    n = len(toks)
    j = 0
    i = 0
    while j < n:
        tok = toks[j]
        j += 1
        i += 1
        c = tok[0]
        if c.isalpha():
            if j < n and (len(tok) == 1 or len(toks[j]) == 1) and _case_phrase(st, tok, toks[j]):
                j += 1
                continue
            _word(st, tok, i)
        elif c.isdigit() or c in "+-±.":
            if j < n:
                if tok[-1].isdigit():
                    low = toks[j].lower()
                    if low in _UNIT_WORDS:  # "50 V", "0.1 uF", "10 %"
                        tok += toks[j]
                        j += 1
                        if j < n and low in ("v", "kv") and toks[j].upper() in ("AC", "DC"):
                            tok += toks[j]  # "275 V AC"
                            j += 1
                    elif low in _RANGE_WORDS and j + 1 < n and toks[j + 1][:1] in "+-0123456789":
                        tok = f"{tok}~{toks[j + 1]}"
                        j += 2
                        if j < n and toks[j].lower() in _TEMP_UNITS:  # "-55 to +125 °C"
                            tok += toks[j]
                            j += 1
                    elif low in ("x", "*") and j + 1 < n and toks[j + 1][:1].isdigit():
                        tok = f"{tok}x{toks[j + 1]}"  # "10 x 12.5"
                        j += 2
                if c in "+-" and j < n and toks[j][:1] in "+-" and toks[j][0] != c \
                        and _pair(st, tok, toks[j], i):
                    j += 1
                    continue
            _numeric(st, tok, i)
        else:
            _token(st, tok, i)


def _case_phrase(st: _State, tok: str, nxt: str) -> bool:
    """``case B`` / ``size B`` / ``B case``: a tantalum case letter. True when read."""
    if len(nxt) == 1 and nxt.isalpha() and tok.upper() in ("CASE", "SIZE"):
        _case_letter(st, nxt, f"{tok} {nxt}")
        return True
    if len(tok) == 1 and nxt.upper() == "CASE" and tok.upper() in codes.TANTALUM_CASES:
        _case_letter(st, tok, f"{tok} {nxt}")
        return True
    return False


# --- the second pass -----------------------------------------------------------------------------


def _settle(st: _State) -> None:
    """Decide what needed the whole text: bare codes, lone letters, voltage codes."""
    ctx = st.context
    blocked = bool(st.noncap) and not st.cap_words
    letters: list[tuple[int, str, bool]] = []
    vcodes: list[tuple[int, str]] = []
    for item in st.deferred:
        what, i, tok = item[0], item[1], item[2]
        if what == "code3":
            _settle_code3(st, i, tok, item[3], item[4], blocked, letters)
        elif what == "rdec":
            if not blocked and (ctx in ("value", "any") or st.strong_cap):
                number, letter = item[3], item[4]
                value = _scaled(number, -12)
                st.set_cap(value, tok, i, weak=True)
                st.warnings.append(
                    f"{tok!r} read as {number} pF (R as the decimal point in pF); "
                    f"it is also the resistor value {number} ohm"
                )
                if letter:  # IEC 60062: 2R2C = 2.2 pF +/-0.25 pF
                    letters.append((i, letter, True))
            else:
                st.weak_noncap.append((tok, "resistor", False))
        elif what == "letter":
            letters.append((i, tok, item[3]))
        else:
            vcodes.append((i, tok))
    for i, letter, own in letters:
        if own or ctx == "tolerance" or i == st.cap_i + 1:
            t = codes.TOLERANCE_LETTERS[letter]
            st.set_tol((t.minus_pct, t.plus_pct, t.abs_f), letter, i, letter)
        else:
            st.unread.append(letter)
    for i, code in vcodes:
        after = i == st.cap_i + 1 or (st.tol_i == st.cap_i + 1 and i == st.tol_i + 1)
        if st.volt is None and st.cap is not None and after:
            st.set_volt(codes.VOLTAGE_CODES[code], "dc", code, i)
            st.warnings.append(f"{code!r} read as the two-character voltage code "
                               f"({codes.VOLTAGE_CODES[code]:g} V)")
        else:
            st.unread.append(code)


def _settle_code3(st: _State, i: int, tok: str, digits: str, letter: str | None, blocked: bool,
                  letters: list[tuple[int, str, bool]]) -> None:
    if letter == "F" and "supercapacitor" in st.hints:
        st.set_cap(float(digits), tok, i, weak=False)  # "100F" on a supercapacitor is farads
        return
    if blocked:
        st.unread.append(tok)
        return
    if letter is None and st.context not in ("value", "any") and not st.strong_cap:
        st.unread_number(tok)
        return
    value = _code3_value(digits)
    if letter in ("K", "M") and digits[2] == "0":
        ohms = f"{digits} {'kohm' if letter == 'K' else 'Mohm'}"
        if not st.strong_cap:
            st.weak_noncap.append((tok, "resistor", False))
            st.warnings.append(f"{tok!r} read as a resistor value ({ohms}); as a capacitor code "
                               f"it would be {format_capacitance(value)}")
            return
        st.warnings.append(f"{tok!r} read as the three-digit code ({format_capacitance(value)}); "
                           f"it could also be {ohms}")
    elif letter is None and digits[2] == "0":
        st.warnings.append(f"{tok!r} read as the three-digit code ({format_capacitance(value)}); "
                           f"it could also mean {int(digits)} pF")
    st.set_cap(value, tok, i, weak=True)
    if letter:
        letters.append((i, letter, True))


def _technology(st: _State) -> str | None:
    hints = st.hints
    families: list[str] = []
    for h in hints:
        f = "aluminium" if h == "electrolytic" else h
        if f in ("polymer", "wet", "foil", "feedthrough", "emi", "filter", "tantalum?"):
            continue
        if f not in families:
            families.append(f)
    if "tantalum" in families and "aluminium" in families and "aluminium" not in hints:
        families.remove("aluminium")  # "tantalum electrolytic"
    if len(families) > 1:
        st.warnings.append(f"several technologies named ({', '.join(families)}); "
                           f"kept {families[0]}")
    if not families and "tantalum?" in hints and not st.diel:
        families.append("tantalum")  # "TA" alone
    if not families:
        if "polymer" in hints:
            st.warnings.append("'polymer' without tantalum or aluminium: technology unknown")
        return None
    first = families[0]
    if first == "tantalum":
        if "polymer" in hints:
            return "tantalum-polymer"
        if "wet" in hints:
            return "tantalum-wet"
        if "foil" in hints:
            return "tantalum-foil"
        return "tantalum"
    if first == "aluminium":
        return "aluminium-polymer" if "polymer" in hints else "aluminium-electrolytic"
    return first


def _verdict(st: _State) -> bool:
    """The text's own verdict on being a capacitor; drops a unit-less reading that is not one."""
    w = st.warnings
    if st.noncap and st.cap_words:
        is_cap = True
        w.append(f"capacitor words and {'/'.join(sorted(set(st.noncap)))} words together; "
                 "read as a capacitor")
    elif st.noncap:
        is_cap = False
    elif st.strong_cap:
        is_cap = True
        for tok, kind, warn in st.weak_noncap:
            if warn:
                w.append(f"{tok!r} reads as a {kind} value")
    else:
        is_cap = st.cap is not None and not st.weak_noncap
    if not is_cap and st.cap is not None and st.cap_weak:
        what = "/".join(sorted(set(st.noncap) or {k for _, k, _ in st.weak_noncap}))
        article = "an" if what[0] in "aeiou" else "a"
        w.append(f"{st.cap_tok!r} not read as a capacitance: the text describes {article} {what}")
        st.unread.extend(st.weak_cap_toks)
        if st.tol_letter and st.tol_i == st.cap_i:
            st.tol = None
        st.cap = None
    return is_cap


def _build(text: str, st: _State) -> CapSpec:
    _settle(st)
    unread_implausible(st)
    if st.more_tols and st.tol is not None:
        keep_widest_tolerance(st)
        unread_implausible(st)
    w = st.warnings
    tech = _technology(st) if st.hints else None
    diel = st.diel
    if diel is not None:
        if tech is None:
            tech = "ceramic"
        elif tech != "ceramic":
            w.append(f"dielectric code {diel.code} on a {tech} part")
    is_cap = _verdict(st)
    if st.noncap and not is_cap:
        tech = None  # "metal film" on a resistor, "ceramic" on an inductor

    cap = st.cap
    tol = st.tol
    if (tol is not None and tol[2] is not None and cap is not None
            and cap >= codes.ABS_TOLERANCE_BELOW_F):
        w.append(f"absolute tolerance {format_capacitance(tol[2])} on "
                 f"{format_capacitance(cap)}: IEC 60062 gives the pF letters for values under "
                 "10 pF")

    tmin, tmax = st.tmin, st.tmax
    if diel is not None and diel.temp_max_c is not None:
        if tmax is None:
            tmax = diel.temp_max_c
        elif tmax > diel.temp_max_c:
            w.append(f"{CONFLICT_MARK}rated temperature {tmax:g} degC is above {diel.code}'s "
                     f"upper limit of {diel.temp_max_c:g} degC (EIA-198); kept "
                     f"{diel.temp_max_c:g} degC")
            tmax = diel.temp_max_c
        elif tmax < diel.temp_max_c:
            w.append(f"rated temperature {tmax:g} degC is below {diel.code}'s upper limit "
                     f"{diel.temp_max_c:g} degC; kept {tmax:g} degC")
        if tmin is None:
            tmin = diel.temp_min_c

    polarized: bool | None = None
    if tech is not None:
        polarized = tech in POLARIZED_TECHNOLOGIES
    elif "polymer" in st.hints:
        polarized = True
    if st.nonpolar:
        polarized = False

    vkind = st.vkind
    if st.safety is not None and st.volt is not None and st.volt < _SAFETY_MIN_RATED_V:
        w.append(f"{st.safety!r} not taken as the safety class: the part is rated "
                 f"{st.volt:g} V, below the mains voltages IEC 60384-14 classes are for")
        st.safety = None
    if st.safety is not None and tech in POLARIZED_TECHNOLOGIES:
        w.append(f"{st.safety!r} not taken as the safety class: IEC 60384-14 classes are for "
                 f"film, paper and ceramic parts, not {tech}")
        st.safety = None
    if st.safety is not None and st.volt is not None and vkind is None:
        vkind = "ac"
        w.append(f"AC rating assumed for a safety-class {st.safety} capacitor")

    emi_filter = None
    if st.hints and ("feedthrough" in st.hints or ("emi" in st.hints and "filter" in st.hints)):
        emi_filter = True

    pkg, pkg_note = st.pkg, st.pkg_note
    if pkg is None and st.context == "package" and st.unread:
        pkg, pkg_note = text.strip(), "not a chip, case or can code this parser knows"
        st.unread.clear()
    if st.bare_numbers and st.context in ("value", "any", "description"):
        w.append(f"{UNREAD_MARK}a number without a unit was not read ("
                 + ", ".join(repr(t) for t in st.bare_toks) + ")")

    return CapSpec(
        text=text,
        is_capacitor=is_cap,
        capacitance_f=st.cap,
        voltage_v=st.volt,
        voltage_kind=vkind,
        tol_minus_pct=None if tol is None else tol[0],
        tol_plus_pct=None if tol is None else tol[1],
        tol_abs_f=None if tol is None else tol[2],
        dielectric=None if diel is None else diel.code,
        dielectric_class=None if diel is None else diel.eia_class,
        cap_change_minus_pct=None if diel is None else diel.change_minus_pct,
        cap_change_plus_pct=None if diel is None else diel.change_plus_pct,
        tc_ppm=None if diel is None else diel.tc_ppm,
        tc_tol_ppm=None if diel is None else diel.tc_tol_ppm,
        technology=tech,
        film_material=st.film,
        temp_min_c=tmin,
        temp_max_c=tmax,
        package=pkg,
        package_note=pkg_note,
        safety_class=st.safety,
        emi_filter=emi_filter,
        polarized=polarized,
        warnings=tuple(w),
        unread=tuple(st.unread),
    )


# --- public API ----------------------------------------------------------------------------------


def parse_value(text: str, *, context: str = "any") -> CapSpec:
    """Read a capacitor specification from one BOM text; never raises.

    ``context`` names the BOM column the text came from (one of ``CONTEXTS``): ``"voltage"`` lets
    a bare number or a two-character code (``1H`` = 50 V) be the rated voltage, ``"value"`` lets a
    bare ``104`` be the three-digit pF code, ``"tolerance"``, ``"temperature"`` and ``"package"``
    read bare numbers and letters their way; ``"any"`` (the CLI) and ``"description"`` read
    free text. What cannot be read goes to ``unread``, doubts to ``warnings``.
    """
    if not isinstance(text, str):
        text = "" if text is None else str(text)
    st = _State(context if context in CONTEXTS else "any")
    if context not in CONTEXTS:
        st.warnings.append(f"unknown context {context!r}; read as 'any'")
    try:
        s = normalise(text, st.warnings)
        if st.context == "voltage":
            key = s.strip().upper()
            if key in codes.VOLTAGE_CODES:
                st.set_volt(codes.VOLTAGE_CODES[key], "dc", key, 1)
                if key in _PLAIN_VOLTAGE_CODES:
                    st.warnings.append(f"{key!r} read as the two-character voltage code "
                                       f"({codes.VOLTAGE_CODES[key]:g} V), not {key[0]} V")
                s = ""
        elif st.context == "value" and "e" in s.lower() and _SI_NUMBER(s.strip()):
            s = _si_farads(s.strip(), st.warnings)
        _scan(st, s)
        return _build(text, st)
    except Exception as exc:  # a parser bug must not stop an import; the tests hunt for these
        return CapSpec(text=text, unread=(text,),
                       warnings=(f"internal parser error: {type(exc).__name__}: {exc}",))


# A plain number in scientific notation with a negative exponent: how a spreadsheet writes a
# capacitance in farads (1E-05 = 10 uF) when the value cell holds a number, not text.
_SI_NUMBER = re.compile(r"\d+(?:\.\d+)?[eE]-\d{1,2}").fullmatch


def _si_farads(s: str, warnings: list[str]) -> str:
    """``1E-05`` in a value column -> ``10000000pF`` (read as farads, SI), with a note."""
    pf = format(Decimal(s).scaleb(12).normalize(), "f")
    warnings.append(f"{s!r}: a plain number in scientific notation, read as farads (SI)")
    return f"{pf}pF"


# Prefix steps for display: below the limit, use (prefix, power of ten).
_FORMAT_STEPS = ((1e-9, "p", 12), (1e-6, "n", 9), (1e-2, "u", 6), (1.0, "m", 3))


def format_capacitance(farads: float) -> str:
    """Capacitance as BOM text that ``parse_value`` reads back to the same float: ``4.7uF``,
    ``100nF``, ``2.2pF``, ``4700uF``, ``10mF``, ``1.5F``, ``100.0F``.

    The digits are the shortest that round-trip (``repr``), shifted exactly with ``Decimal``.
    Raises ``ValueError`` for a negative or non-finite value.
    """
    x = float(farads)
    if not math.isfinite(x) or x < 0:
        raise ValueError(f"not a capacitance: {farads!r}")
    prefix, exp = "", 0
    for limit, p, e in _FORMAT_STEPS:
        if x < limit:
            prefix, exp = p, e
            break
    digits = format(Decimal(repr(x)).scaleb(exp).normalize(), "f")
    if not prefix and "." not in digits:
        digits += ".0"  # "100F" would read as the three-digit code 10 pF +/-1 %
    return f"{digits}{prefix}F"
