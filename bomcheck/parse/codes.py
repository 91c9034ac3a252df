"""Code tables the parse stage reads value text with: dielectric, tolerance, voltage, package codes.

Each table is data in the standard's own layout, and the small decoders build every valid code
from it (a code is never looked up in a list of popular codes). Figures and their sources are in
the project's reference sheet of capacitor figures, sections 2.1 to 2.5.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

from bomcheck.spec import SAFETY_CLASSES

__all__ = [
    "ABS_TOLERANCE_BELOW_F",
    "CLASS1_CODES",
    "CLASS1_MULTIPLIER",
    "CLASS1_SIGNIFICANT",
    "CLASS1_SPELLINGS",
    "CLASS1_TOLERANCE_PPM",
    "CLASS2_CHANGE_PCT",
    "CLASS2_CODES",
    "CLASS2_HIGH_TEMP_C",
    "CLASS2_LOW_TEMP_C",
    "CLASS3_CHANGE_LETTERS",
    "IMPERIAL_TO_METRIC",
    "PLAUSIBLE",
    "METRIC_TO_IMPERIAL",
    "SAFETY_CLASSES",
    "SAFETY_CLASS_USE",
    "TANTALUM_CASES",
    "TOLERANCE_LETTERS",
    "VOLTAGE_CODES",
    "Dielectric",
    "Tolerance",
    "chip_package",
    "decode_class1",
    "decode_class2",
    "decode_dielectric",
    "decode_tc_code",
    "ipc_footprint",
    "package_key",
    "plausible",
    "tantalum_case",
    "tolerance_letter",
]


@dataclass(frozen=True, slots=True)
class Dielectric:
    """A decoded ceramic dielectric code.

    Class II/III codes fill the temperature range and the maximum capacitance change over it
    (positive percentages, at 0 V bias); class I codes fill the temperature coefficient and its
    tolerance in ppm/degC and leave the range None (the class I code does not state one).
    """

    code: str
    eia_class: int
    temp_min_c: float | None = None
    temp_max_c: float | None = None
    change_minus_pct: float | None = None
    change_plus_pct: float | None = None
    tc_ppm: float | None = None
    tc_tol_ppm: float | None = None


# --- EIA-198 class II/III: low temperature, high temperature, maximum capacitance change -------

CLASS2_LOW_TEMP_C: dict[str, float] = {"X": -55.0, "Y": -30.0, "Z": 10.0}
CLASS2_HIGH_TEMP_C: dict[str, float] = {
    "2": 45.0, "4": 65.0, "5": 85.0, "6": 105.0, "7": 125.0, "8": 150.0, "9": 200.0,
}
# Third character: (minus, plus) percent change over the range.
CLASS2_CHANGE_PCT: dict[str, tuple[float, float]] = {
    "A": (1.0, 1.0), "B": (1.5, 1.5), "C": (2.2, 2.2), "D": (3.3, 3.3), "E": (4.7, 4.7),
    "F": (7.5, 7.5), "P": (10.0, 10.0), "R": (15.0, 15.0), "S": (22.0, 22.0),
    "T": (33.0, 22.0), "U": (56.0, 22.0), "V": (82.0, 22.0),
}
# The asymmetric change letters are the class III codes (Y5V, Z5U...).
CLASS3_CHANGE_LETTERS = frozenset("TUV")


def decode_class2(code: str) -> Dielectric | None:
    """Decode a three-character class II/III code such as ``X7R`` (upper case); None if invalid."""
    if len(code) != 3:
        return None
    low = CLASS2_LOW_TEMP_C.get(code[0])
    high = CLASS2_HIGH_TEMP_C.get(code[1])
    change = CLASS2_CHANGE_PCT.get(code[2])
    if low is None or high is None or change is None:
        return None
    return Dielectric(
        code=code,
        eia_class=3 if code[2] in CLASS3_CHANGE_LETTERS else 2,
        temp_min_c=low,
        temp_max_c=high,
        change_minus_pct=change[0],
        change_plus_pct=change[1],
    )


# --- EIA class I: significant figure x multiplier, +/- tolerance (ppm/degC) ---------------------

CLASS1_SIGNIFICANT: dict[str, float] = {
    "C": 0.0, "B": 0.3, "L": 0.8, "A": 0.9, "M": 1.0, "P": 1.5, "R": 2.2, "S": 3.3, "T": 4.7,
    "V": 5.6, "U": 7.5,
}
CLASS1_MULTIPLIER: dict[str, int] = {
    "0": -1, "1": -10, "2": -100, "3": -1000, "4": -10000,
    "5": 1, "6": 10, "7": 100, "8": 1000, "9": 10000,
}
CLASS1_TOLERANCE_PPM: dict[str, float] = {
    "G": 30.0, "H": 60.0, "J": 120.0, "K": 250.0, "L": 500.0, "M": 1000.0, "N": 2500.0,
}
# Written for C0G in practice (the letter O for the digit 0, and the old "negative-positive zero").
CLASS1_SPELLINGS: dict[str, str] = {"COG": "C0G", "NP0": "C0G", "NPO": "C0G"}


def decode_class1(code: str) -> Dielectric | None:
    """Decode a three-character class I code such as ``C0G`` or ``U2J`` (upper case)."""
    code = CLASS1_SPELLINGS.get(code, code)
    if len(code) != 3:
        return None
    sig = CLASS1_SIGNIFICANT.get(code[0])
    mult = CLASS1_MULTIPLIER.get(code[1])
    tol = CLASS1_TOLERANCE_PPM.get(code[2])
    if sig is None or mult is None or tol is None:
        return None
    # round() removes binary noise such as 2.2 * -100 = -220.00000000000003; + 0.0 turns -0.0 to 0.
    return Dielectric(code=code, eia_class=1, tc_ppm=round(sig * mult, 6) + 0.0, tc_tol_ppm=tol)


def decode_tc_code(code: str) -> Dielectric | None:
    """Decode the older temperature-coefficient names: ``P100`` = +100 ppm/degC, ``N750`` =
    -750 ppm/degC (no tolerance stated), ``NP0`` = C0G."""
    if code in CLASS1_SPELLINGS:
        return decode_class1(code)
    if 4 <= len(code) <= 5 and code[0] in "PN" and code[1:].isdigit():
        ppm = float(code[1:])
        return Dielectric(code=code, eia_class=1, tc_ppm=ppm if code[0] == "P" else -ppm)
    return None


def decode_dielectric(text: str) -> Dielectric | None:
    """Decode any ceramic dielectric code (class I, II or III, or a P/N temperature coefficient),
    case-insensitively; COG/NP0/NPO come back as C0G. None when the text is not a valid code."""
    code = text.strip().upper()
    return decode_class2(code) or decode_class1(code) or decode_tc_code(code)


# Every valid three-character code, decoded from the tables above (used for fast look-up).
CLASS2_CODES: dict[str, Dielectric] = {
    c: d
    for c in (lo + hi + ch for lo in CLASS2_LOW_TEMP_C for hi in CLASS2_HIGH_TEMP_C
              for ch in CLASS2_CHANGE_PCT)
    if (d := decode_class2(c)) is not None
}
CLASS1_CODES: dict[str, Dielectric] = {
    c: d
    for c in (s + m + t for s in CLASS1_SIGNIFICANT for m in CLASS1_MULTIPLIER
              for t in CLASS1_TOLERANCE_PPM)
    if (d := decode_class1(c)) is not None
}


# --- IEC 60062 tolerance letters -----------------------------------------------------------------


@dataclass(frozen=True, slots=True)
class Tolerance:
    """A capacitance tolerance: percentages (positive numbers) or an absolute value in farads."""

    minus_pct: float | None = None
    plus_pct: float | None = None
    abs_f: float | None = None


# B, C and D are absolute, in pF, for capacitances under 10 pF. The letters H, R, S, T and those
# past Z differ between copies of the standard and are deliberately left out.
TOLERANCE_LETTERS: dict[str, Tolerance] = {
    "B": Tolerance(abs_f=0.1e-12),
    "C": Tolerance(abs_f=0.25e-12),
    "D": Tolerance(abs_f=0.5e-12),
    "F": Tolerance(1.0, 1.0),
    "G": Tolerance(2.0, 2.0),
    "J": Tolerance(5.0, 5.0),
    "K": Tolerance(10.0, 10.0),
    "M": Tolerance(20.0, 20.0),
    "Z": Tolerance(20.0, 80.0),
}
ABS_TOLERANCE_BELOW_F = 10e-12


def tolerance_letter(letter: str) -> Tolerance | None:
    """The tolerance an IEC 60062 letter stands for (upper case), or None."""
    return TOLERANCE_LETTERS.get(letter)


# --- Two-character rated-voltage code ------------------------------------------------------------

# A look-up table, not a rule: the letters of the extended codes are not uniform.
VOLTAGE_CODES: dict[str, float] = {
    "0E": 2.5, "0G": 4.0, "0J": 6.3, "1A": 10.0, "1C": 16.0, "1D": 20.0, "1E": 25.0,
    "1V": 35.0, "1G": 40.0, "1H": 50.0, "1J": 63.0, "1K": 80.0, "2A": 100.0, "2B": 125.0,
    "2C": 160.0, "2D": 200.0, "2E": 250.0, "2F": 315.0, "2V": 350.0, "2G": 400.0, "2W": 450.0,
    "2H": 500.0, "2J": 630.0, "3A": 1000.0,
}


# --- Packages ------------------------------------------------------------------------------------

IMPERIAL_TO_METRIC: dict[str, str] = {
    "01005": "0402", "0201": "0603", "0402": "1005", "0603": "1608", "0805": "2012",
    "1206": "3216", "1210": "3225", "1812": "4532", "2220": "5750",
    # Moulded tantalum cases by their inch codes (EIA-535 case sizes, common practice): case B,
    # C and D (case A is 1206/3216 above).
    "1411": "3528", "2312": "6032", "2917": "7343",
}
METRIC_TO_IMPERIAL: dict[str, str] = {m: i for i, m in IMPERIAL_TO_METRIC.items()}
# Tantalum case letters in the common lettering; makers' letters beyond these vary.
TANTALUM_CASES: dict[str, str] = {
    "A": "3216", "B": "3528", "C": "6032", "D": "7343", "E": "7343-43",
}
_CASE_OF_METRIC = {m.split("-")[0]: c for c, m in TANTALUM_CASES.items() if "-" not in m}


def chip_package(code: str) -> tuple[str, str] | None:
    """``(package, note)`` for a four- or five-digit chip code, or None.

    An imperial code is read as imperial (as BOMs write it) and the note says so, with the
    metric equivalent and, where the digits are also a metric code, the other reading.
    """
    return _CHIP_PACKAGES.get(code)


def _chip_package(code: str) -> tuple[str, str] | None:
    metric = IMPERIAL_TO_METRIC.get(code)
    if metric is not None:
        note = f"read as imperial {code} (metric {metric})"
        other = METRIC_TO_IMPERIAL.get(code)
        if other is not None:
            note += f"; as a metric code it would be imperial {other}"
        return code, note
    imperial = METRIC_TO_IMPERIAL.get(code)
    case = _CASE_OF_METRIC.get(code)
    if imperial is None and case is None:
        return None
    parts = [f"read as metric {code}"]
    if imperial is not None:
        parts.append(f"imperial {imperial}")
    if case is not None:
        parts.append(f"tantalum case {case} in the common lettering")
    return code, parts[0] + " (" + "; ".join(parts[1:]) + ")"


_CHIP_PACKAGES: dict[str, tuple[str, str]] = {
    c: found
    for c in (*IMPERIAL_TO_METRIC, *METRIC_TO_IMPERIAL, *_CASE_OF_METRIC)
    if (found := _chip_package(c)) is not None
}


def tantalum_case(letter: str) -> tuple[str, str] | None:
    """``(package, note)`` for a tantalum case letter A-E, or None."""
    metric = TANTALUM_CASES.get(letter.upper())
    if metric is None:
        return None
    return (
        f"case {letter.upper()}",
        f"tantalum case {letter.upper()} (metric {metric} in the common lettering; "
        "case letters vary between makers, check the datasheet)",
    )


# --- Safety classes (mains interference-suppression capacitors) ----------------------------------

SAFETY_CLASS_USE: dict[str, str] = {"X": "across the line", "Y": "line to protective earth"}


# --- IPC-7351 footprint names ------------------------------------------------------------------

# IPC-7351 land-pattern names: a family prefix, the body length and width in 0.1 mm (chip and
# moulded families) or the base size in 0.01 mm (aluminium SMD cans), then X and the height in
# 0.01 mm, then a density letter (M, N, L). Families read here: CAPC chip capacitor, CAPT
# tantalum, CAPM moulded (polarised) body, CAPAE aluminium electrolytic SMD can.
_IPC = re.compile(
    r"(?P<fam>CAPC|CAPT|CAPM|CAPMP|CAPAE)(?P<body>\d{3,6})X(?P<h>\d{2,4})(?P<dens>[LMN])?",
    re.IGNORECASE,
)


def ipc_footprint(name: str) -> tuple[str, str] | None:
    """``(package, note)`` for an IPC-7351 capacitor land-pattern name, or None.

    ``CAPC1608X90N`` is the chip 1.6 x 0.8 mm, package ``0603`` (the imperial code, as BOMs write
    it); ``CAPT6032X280N`` the moulded tantalum 6.0 x 3.2 x 2.8 mm, package ``6032-28`` (the
    metric case code, with its case letter in the note); ``CAPAE530X610N`` an aluminium SMD can
    on a 5.3 mm base, 6.1 mm high, package ``CAPAE530X610`` with the sizes in the note.
    """
    m = _IPC.fullmatch(name.strip())
    if m is None:
        return None
    fam, body, h = m.group("fam").upper(), m.group("body"), m.group("h")
    height_mm = int(h) / 100
    if fam == "CAPAE":
        base_mm = int(body) / 100
        return (f"CAPAE{body}X{h}",
                f"IPC-7351 aluminium electrolytic SMD can, base {base_mm:g} mm, "
                f"height {height_mm:g} mm")
    if len(body) != 4:
        return None
    imperial = METRIC_TO_IMPERIAL.get(body)
    if fam == "CAPC" and imperial is not None:
        return imperial, (f"IPC-7351 chip {body[:2]}x{body[2:]} (0.1 mm): imperial {imperial} "
                          f"(metric {body})")
    case = _CASE_OF_METRIC.get(body)
    code = f"{body}-{round(height_mm * 10):02d}"
    note = f"IPC-7351 moulded body {body} (0.1 mm), height {height_mm:g} mm"
    if case is not None:
        note += f"; tantalum case {case} in the common lettering"
    return code, note


def package_key(package: str | None) -> str | None:
    """One spelling per physical case, to tell whether two package texts name the same case:
    a tantalum case letter, its metric code (``6032``, ``6032-28``) and its inch code (``2312``)
    all give the metric code, and so do a chip's imperial and metric codes (``0603``, ``1608``;
    a package field holds codes already read one way, so the digits are not ambiguous here). Other texts come back folded
    (upper case, letters and digits only)."""
    if package is None:
        return None
    p = package.strip().upper()
    if p.startswith("CASE "):
        metric = TANTALUM_CASES.get(p[5:].strip())
        return metric.split("-")[0] if metric and "-" not in metric else (metric or p)
    head = p.split("-")[0] if re.fullmatch(r"\d{4}-\d{2}", p) else p
    if head.isdigit():
        return IMPERIAL_TO_METRIC.get(head, head)
    return re.sub(r"[^0-9A-Z]", "", p)


# --- Plausible ranges of parsed quantities ------------------------------------------------------

# What a capacitor in a BOM can have; a parsed number outside its range is a misreading or a typo
# and is left unread with a warning (never used, never inf or nan). Reasons:
# - capacitance 0.01 pF .. 10 kF: the smallest trimmed RF chip values are tenths of a pF; the
#   largest single supercapacitor cells are a few kF (value from memory);
# - rated voltage above 0 V and up to 100 kV: a 0 V rating is no rating (and divides by zero);
#   the largest HV pulse and power capacitors are rated in tens of kV (value from memory);
# - rated temperatures -100 .. 400 degC: EIA-198 codes span -55 .. +200 degC, high-temperature
#   ceramics and glass reach about 250-300 degC (value from memory), nothing in a BOM beyond;
# - tolerance: 0 .. 100 % on the minus side (a part cannot lose more than all of its value),
#   0 .. 200 % on the plus side (old electrolytic tolerances such as -10/+150 %, value from
#   memory); an absolute tolerance above 0 and up to 1 mF.
PLAUSIBLE: dict[str, tuple[float, float]] = {
    "capacitance_f": (0.01e-12, 10e3),
    "voltage_v": (0.0, 100e3),  # lower bound exclusive
    "temp_c": (-100.0, 400.0),
    "tol_minus_pct": (0.0, 100.0),
    "tol_plus_pct": (0.0, 200.0),
    "tol_abs_f": (0.0, 1e-3),  # lower bound exclusive
}
_EXCLUSIVE_LOW = frozenset({"voltage_v", "tol_abs_f"})


def plausible(quantity: str, value: float) -> bool:
    """True when ``value`` is finite and inside the plausible range of ``quantity`` (a key of
    ``PLAUSIBLE``); NaN and infinities are never plausible."""
    lo, hi = PLAUSIBLE[quantity]
    if not (lo <= value <= hi):  # also False for NaN
        return False
    return not (quantity in _EXCLUSIVE_LOW and value <= lo)
