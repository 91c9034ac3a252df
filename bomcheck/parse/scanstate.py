"""Parse stage: the scan state of one value text (what has been read so far) and the number
helpers its token readers share (``bomcheck.parse.valuenumbers``, ``bomcheck.parse.valuewords``)."""

from __future__ import annotations

import math

from bomcheck.parse import codes
from bomcheck.parse.codes import Dielectric
from bomcheck.parse.readings import CONFLICT_MARK

_PREFIX_EXP = {"p": -12, "n": -9, "u": -6, "m": -3}


class State:
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


def scaled(number: str, exp: int) -> float:
    # float("4.7e-6") is correctly rounded; 4.7 * 1e-6 is not always the same double.
    return float(f"{number}e{exp}")


def code3_value(digits: str) -> float:
    """IEC 60062 three-digit pF code: two significant digits and a power of ten; a third digit
    of 9 means x0.1 and 8 means x0.01."""
    last = digits[2]
    power = -1 if last == "9" else -2 if last == "8" else int(last)
    return scaled(digits[:2], power - 12)
