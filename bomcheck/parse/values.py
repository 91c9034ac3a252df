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
from bomcheck.parse.readings import (
    CONFLICT_MARK,
    UNREAD_MARK,
    keep_widest_tolerance,
    unread_implausible,
)
from bomcheck.parse.scanstate import State, code3_value, scaled
from bomcheck.parse.valuenumbers import RANGE_WORDS, TEMP_UNITS, UNIT_WORDS, numeric, pair
from bomcheck.parse.valuetext import normalise
from bomcheck.parse.valuewords import case_phrase, word
from bomcheck.spec import POLARIZED_TECHNOLOGIES, CapSpec

__all__ = ["CONFLICT_MARK", "CONTEXTS", "UNREAD_MARK", "build", "format_capacitance", "normalised",
           "parse_value", "prepare", "scan", "tokens"]

CONTEXTS = frozenset(
    {"any", "value", "description", "voltage", "tolerance", "dielectric", "package", "temperature"}
)

# --- tokens (normalisation: bomcheck.parse.valuetext) -----------------------------------------------------------

_SEPARATORS = r"\s,;|()\[\]{}=@:/"
_HAS_SEPARATOR = re.compile(r"[,;|()\[\]{}=@:/]").search  # else str.split() will do
_TOKENS = re.compile(rf"[^{_SEPARATORS}]+").findall
# IEC 60384-14 safety classes are for mains-connected parts; Y4, the lowest, covers rated
# voltages up to 150 V AC and no certified X/Y part is rated below 100 V (value from memory).
# A class named on a part rated below this is taken as a word about something else.
_SAFETY_MIN_RATED_V = 100.0
_PLAIN_VOLTAGE_CODES = frozenset({"1V", "2V"})  # also a plain "1 V", "2 V" outside a voltage column


def _token(st: State, tok: str, i: int) -> None:
    """Read one token; the parts of a token written as several are read in turn."""
    c = tok[0]
    if c.isdigit() or c in "+-±.":
        _again(st, numeric(st, tok, i), i)
    elif c.isalpha():
        _again(st, word(st, tok, i), i)
    elif c == "%" or not any(ch.isalnum() for ch in tok):
        return  # stray punctuation
    else:
        st.unread.append(tok)


def _again(st: State, parts: list[str] | None, i: int) -> None:
    """Read the parts a reader gave back (``10uF-16V``, ``CAP-CER-0.1UF``) at the same index."""
    for part in parts or ():
        _token(st, part, i)


def tokens(s: str) -> list[str]:
    """A normalised text cut at separators (what the scan reads)."""
    return _TOKENS(s) if _HAS_SEPARATOR(s) else s.split()


def scan(st: State, toks: list[str]) -> None:
    """Join the tokens written apart and read each (the hot loop)."""
    n = len(toks)
    j = 0
    i = 0
    while j < n:
        tok = toks[j]
        j += 1
        i += 1
        c = tok[0]
        if c.isalpha():
            if j < n and (len(tok) == 1 or len(toks[j]) == 1) and case_phrase(st, tok, toks[j]):
                j += 1
                continue
            _again(st, word(st, tok, i), i)
        elif c.isdigit() or c in "+-±.":
            if j < n:
                if tok[-1].isdigit():
                    low = toks[j].lower()
                    if low in UNIT_WORDS:  # "50 V", "0.1 uF", "10 %"
                        tok += toks[j]
                        j += 1
                        if j < n and low in ("v", "kv") and toks[j].upper() in ("AC", "DC"):
                            tok += toks[j]  # "275 V AC"
                            j += 1
                    elif low in RANGE_WORDS and j + 1 < n and toks[j + 1][:1] in "+-0123456789":
                        tok = f"{tok}~{toks[j + 1]}"
                        j += 2
                        if j < n and toks[j].lower() in TEMP_UNITS:  # "-55 to +125 °C"
                            tok += toks[j]
                            j += 1
                    elif low in ("x", "*") and j + 1 < n and toks[j + 1][:1].isdigit():
                        tok = f"{tok}x{toks[j + 1]}"  # "10 x 12.5"
                        j += 2
                if c in "+-" and j < n and toks[j][:1] in "+-" and toks[j][0] != c \
                        and pair(st, tok, toks[j], i):
                    j += 1
                    continue
            _again(st, numeric(st, tok, i), i)
        else:
            _token(st, tok, i)


def _settle(st: State) -> None:
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
                value = scaled(number, -12)
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


def _settle_code3(st: State, i: int, tok: str, digits: str, letter: str | None, blocked: bool,
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
    value = code3_value(digits)
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


def _technology(st: State) -> str | None:
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


def _verdict(st: State) -> bool:
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


def build(text: str, st: State) -> CapSpec:
    """The second pass and the checks, then the spec."""
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
    tol = st.tol
    if (tol is not None and tol[2] is not None and st.cap is not None
            and st.cap >= codes.ABS_TOLERANCE_BELOW_F):
        w.append(f"absolute tolerance {format_capacitance(tol[2])} on "
                 f"{format_capacitance(st.cap)}: IEC 60062 gives the pF letters for values under "
                 "10 pF")
    tmin, tmax = _temperatures(st)
    polarized: bool | None = None
    if tech is not None:
        polarized = tech in POLARIZED_TECHNOLOGIES
    elif "polymer" in st.hints:
        polarized = True
    if st.nonpolar:
        polarized = False
    vkind = _safety_class(st, tech)
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
    diel_fields = _NO_DIELECTRIC if diel is None else (
        diel.code, diel.eia_class, diel.change_minus_pct, diel.change_plus_pct, diel.tc_ppm,
        diel.tc_tol_ppm)
    return CapSpec(
        text, is_cap, st.cap, st.volt, vkind, *(tol if tol is not None else _NO_TOLERANCE),
        *diel_fields, tech, st.film, tmin, tmax, pkg, pkg_note, st.safety, emi_filter,
        polarized, tuple(w), tuple(st.unread))


_NO_TOLERANCE = (None, None, None)
_NO_DIELECTRIC = (None,) * 6


def _temperatures(st: State) -> tuple[float | None, float | None]:
    """The rated temperatures: as written, held to the dielectric code's range (EIA-198)."""
    tmin, tmax = st.tmin, st.tmax
    diel = st.diel
    if diel is not None and diel.temp_max_c is not None:
        if tmax is None:
            tmax = diel.temp_max_c
        elif tmax > diel.temp_max_c:
            st.warnings.append(
                f"{CONFLICT_MARK}rated temperature {tmax:g} degC is above {diel.code}'s upper "
                f"limit of {diel.temp_max_c:g} degC (EIA-198); kept {diel.temp_max_c:g} degC")
            tmax = diel.temp_max_c
        elif tmax < diel.temp_max_c:
            st.warnings.append(f"rated temperature {tmax:g} degC is below {diel.code}'s upper "
                               f"limit {diel.temp_max_c:g} degC; kept {tmax:g} degC")
        if tmin is None:
            tmin = diel.temp_min_c
    return tmin, tmax


def _safety_class(st: State, tech: str | None) -> str | None:
    """Drop a safety class the rating or technology rules out; the voltage kind it implies."""
    w = st.warnings
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
    return vkind


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
    try:
        st, s = prepare(text, context)
        scan(st, tokens(s))
        return build(text, st)
    except Exception as exc:  # a parser bug must not stop an import; the tests hunt for these
        return internal_error(text, exc)


def internal_error(text: str, exc: Exception) -> CapSpec:
    """The spec of a text the parser failed on (a bug): all of it unread, the error said."""
    return CapSpec(text=text, unread=(text,),
                   warnings=(f"internal parser error: {type(exc).__name__}: {exc}",))


def prepare(text: str, context: str) -> tuple[State, str]:
    """The scan state before the tokens are read, and the normalised text to cut into them."""
    st = State(context if context in CONTEXTS else "any")
    if context not in CONTEXTS:
        st.warnings.append(f"unknown context {context!r}; read as 'any'")
    if st.context != "voltage":
        return st, normalised(text, st.context, st.warnings)
    s = normalise(text, st.warnings)
    key = s.strip().upper()
    if key in codes.VOLTAGE_CODES:
        st.set_volt(codes.VOLTAGE_CODES[key], "dc", key, 1)
        if key in _PLAIN_VOLTAGE_CODES:
            st.warnings.append(f"{key!r} read as the two-character voltage code "
                               f"({codes.VOLTAGE_CODES[key]:g} V), not {key[0]} V")
        s = ""
    return st, s


def normalised(text: str, context: str, warnings: list[str]) -> str:
    """The text to cut into tokens in a context other than ``voltage`` (``prepare`` without
    the scan state); doubts go to ``warnings``."""
    s = normalise(text, warnings)
    if context == "value" and "e" in s.lower() and _SI_NUMBER(s.strip()):
        s = _si_farads(s.strip(), warnings)
    return s


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
