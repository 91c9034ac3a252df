"""Parse stage: tokens that start with a digit or a sign (``4.7uF``, ``50V``, ``2R2``, ``6V3``,
``-55~125C``, a bare ``104``) read into the scan state (``bomcheck.parse.scanstate``).

A reader returns the parts of a token written as several (``10uF-16V``) for the scan to read
again, or None.
"""

from __future__ import annotations

import re

from bomcheck.parse import codes
from bomcheck.parse.readings import UNREAD_MARK
from bomcheck.parse.scanstate import _PREFIX_EXP, State, scaled

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
TEMP_UNITS = frozenset({"°c", "°", "degc", "deg.c", "c"})
_IGNORED_UNITS = frozenset({"hz", "khz", "mhz", "ghz", "ma", "marms", "arms", "mw", "w"})
_OHM_UNITS = frozenset({"ohm", "ohms", "ω", "mω", "kω", "mohm", "kohm", "mohms", "kohms"})
_INDUCTANCE_UNITS = frozenset({"ph", "nh", "uh", "mh"})
# One-letter suffixes of quantities that have no sign: a capacitance (F, RKM p/n/u) or volts.
_SIGNLESS_LETTERS = frozenset("FfVvpnuPNU")
_HOUR_UNITS = frozenset({"h", "hr", "hrs", "hour", "hours"})
# Unit words joined to a number written before them with a space ("50 V", "0.1 uF", "125 °C").
UNIT_WORDS = (frozenset(_CAP_UNIT_EXP) | frozenset(_VOLT_UNITS) | _IGNORED_UNITS | _OHM_UNITS
               | _INDUCTANCE_UNITS | _HOUR_UNITS | {"%", "°c", "°", "degc", "deg.c", "mm"})
RANGE_WORDS = frozenset({"to", "~", "..", "...", "…"})


def numeric(st: State, tok: str, i: int) -> list[str] | None:
    """Read a token that starts like a number; the parts of a dashed token to read again."""
    m = _NUMERIC(tok)
    if m is None:
        if tok.strip("+-±.~"):
            st.unread.append(tok)
        return None
    sign, num, suf = m.groups()
    if not suf:
        _bare_number(st, sign, num, tok, i)
    elif sign == "±":
        _plus_minus(st, num, suf, tok, i)
    elif sign == "-" and (suf.lower() in _CAP_UNIT_EXP or suf.lower() in _VOLT_UNITS
                          or suf in _SIGNLESS_LETTERS):
        # "-10uF", "-16V": a sign a rating cannot have (a lost tolerance? a typo?); not read.
        st.warnings.append(f"{UNREAD_MARK}{tok!r}: a negative capacitance or rated voltage; "
                           "not read")
        st.unread.append(tok)
    elif len(suf) == 1:
        _one_letter_suffix(st, sign, num, suf, tok, i)
    elif not _unit_suffix(st, sign, num, suf, tok, i):
        return _other_suffix(st, sign, num, suf, tok, i)
    return None


def _unit_suffix(st: State, sign: str, num: str, suf: str, tok: str, i: int) -> bool:
    """A number with its unit (``4.7uF``, ``50VDC``, ``125°C``, ``10kHz``...); True when read."""
    low = suf.lower()
    exp = _CAP_UNIT_EXP.get(low)
    if exp is not None:
        if suf == "mF":
            exp = -3
        elif low == "mf":
            st.warnings.append(f"{tok!r}: 'MF' read as microfarad (old usage)")
        st.set_cap(scaled(num, exp), tok, i, weak=False)
    elif low in _VOLT_UNITS:
        volt = _VOLT_UNITS[low]
        st.set_volt(float(num) * volt[0], volt[1], tok, i)
    elif low in TEMP_UNITS:
        st.set_temp(float(sign + num), tok)
    elif low in _IGNORED_UNITS:
        pass  # frequency, ripple current, power: no field here
    elif low in _HOUR_UNITS:
        _life(st, tok)
    elif low in _OHM_UNITS:
        st.weak_noncap.append((tok, "resistor", False))  # an ESR in a capacitor text
    elif low in _INDUCTANCE_UNITS:
        st.weak_noncap.append((tok, "inductor", True))
    elif low == "metric" and num.isdigit():
        _metric_chip(st, num, tok)
    else:
        return False
    return True


def _other_suffix(st: State, sign: str, num: str, suf: str, tok: str, i: int
                  ) -> list[str] | None:
    """An asymmetric tolerance, a dashed token or a suffix form that carries digits."""
    if suf[0] == "%":  # "-20%+80%"
        m = _ASYMMETRIC(tok)
        if m is not None and m.group(1) != m.group(3):
            _asymmetric(st, m, tok, i)
        else:
            st.unread.append(tok)
        return None
    if "-" in suf or "~" in suf or ".." in suf or suf[:2].lower() == "to":
        return _dashed(st, tok, i)
    f = _SUFFIX_FORM(suf)
    integer = not sign and num.isdigit()
    if f is None or not integer:
        if f is not None and f.group("can") is not None:
            can_size(st, num, f.group("can"), tok)
        else:
            st.unread.append(tok)
        return None
    if f.group("rkm") is not None:
        p = f.group("rkm")
        st.set_cap(scaled(f"{num}.{f.group('rk_b')}", _PREFIX_EXP[p.lower()]), tok, i,
                   weak=True)
        if f.group("rk_t"):
            st.deferred.append(("letter", i, f.group("rk_t"), True))
    elif f.group("rdec") is not None:
        st.deferred.append(("rdec", i, tok, f"{num}.{f.group('rdec')}", f.group("rd_t")))
    elif f.group("kres") is not None or f.group("ind") is not None:
        st.weak_noncap.append((tok, "resistor" if f.group("kres") is not None else "inductor",
                               True))
    elif f.group("vrkm") is not None:
        st.set_volt(float(f"{num}.{f.group('vrkm')}"), None, tok, i)
    else:
        can_size(st, num, f.group("can"), tok)
    return None


def _metric_chip(st: State, num: str, tok: str) -> None:
    """``1608Metric`` (footprint names): a metric chip code, kept as its imperial code."""
    imperial = codes.METRIC_TO_IMPERIAL.get(num)
    if imperial is None:
        st.unread.append(tok)
    elif st.pkg == imperial:
        st.pkg_note = f"imperial {imperial} (metric {num}), both written"
    else:
        st.set_pkg((imperial, f"imperial {imperial}, written as metric {num}"), tok)


def can_size(st: State, diameter: str, length: str, tok: str) -> None:
    st.set_pkg((f"{diameter}x{length}",
                f"can size: diameter {diameter} mm x length {length} mm"), tok)


def _bare_number(st: State, sign: str, num: str, tok: str, i: int) -> None:
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


def _plus_minus(st: State, num: str, suf: str, tok: str, i: int) -> None:
    if suf == "%":
        st.set_tol((float(num), float(num), None), tok, i)
        return
    exp = _CAP_UNIT_EXP.get(suf.lower())
    if exp is not None and suf.lower() != "mf":
        st.set_tol((None, None, scaled(num, exp)), tok, i)
    else:
        st.unread.append(tok)


def _one_letter_suffix(st: State, sign: str, num: str, suf: str, tok: str, i: int) -> None:
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
        st.set_cap(scaled(num, _PREFIX_EXP[suf.lower()]), tok, i, weak=True)
    elif integer and len(num) == 1 and (num + suf.upper()) in codes.VOLTAGE_CODES:
        code = num + suf.upper()
        if st.context == "voltage":
            st.set_volt(codes.VOLTAGE_CODES[code], "dc", tok, i)
        else:
            st.deferred.append(("vcode", i, code))
    elif suf == "C" or suf == "°":
        st.set_temp(float(sign + num), tok)
    elif suf == "m" and integer and st.context == "value":
        st.set_cap(scaled(num, -3), tok, i, weak=True)  # RKM "10m" = 10 mF, in a value column
    elif suf in "hH" and integer and len(num) >= 3:
        _life(st, tok)
    else:
        st.unread.append(tok)


def _life(st: State, tok: str) -> None:
    """A life rating ("2000H"): no field of the spec; said, so it is not dropped unseen."""
    st.warnings.append(f"{tok!r}: a rated life; not used from the BOM text (give the part's "
                       "life in the parts data)")


def _dashed(st: State, tok: str, i: int) -> list[str] | None:
    """A numeric token with a dash, tilde or "to": a range, a metric case code or two tokens."""
    m = _RANGE(tok)
    if m is not None:
        lo, hi = float(m.group(1)), float(m.group(3))
        if lo < hi and (m.group(2) or m.group(4) or st.context == "temperature"):
            st.tmin, st.tmax = lo, hi
            return None
    m = _TANTALUM_METRIC(tok)
    if m is not None:
        metric, height = m.groups()
        case = next((c for c, v in codes.TANTALUM_CASES.items() if v.split("-")[0] == metric),
                    None)
        note = f"metric case {tok} (length and width in 0.1 mm, height code {height})"
        if case is not None:
            note += f"; tantalum case {case} in the common lettering"
        st.set_pkg((tok, note), tok)
        return None
    m = _ASYMMETRIC(tok)
    if m is not None and m.group(1) != m.group(3):
        _asymmetric(st, m, tok, i)
        return None
    parts = [p for p in tok.replace("~", "-").split("-") if p]
    if len(parts) < 2:
        st.unread.append(tok)
        return None
    return parts


def _asymmetric(st: State, m: re.Match[str], tok: str, i: int) -> None:
    first, second = float(m.group(2)), float(m.group(4))
    plus, minus = (first, second) if m.group(1) == "+" else (second, first)
    st.set_tol((minus, plus, None), tok, i)



def pair(st: State, first: str, second: str, i: int) -> bool:
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

