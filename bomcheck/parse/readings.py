"""Parse stage, last checks on the readings of one text: numbers outside their plausible range
are unread with a warning, and several tolerances in one text keep the widest reading.

Both work on the parser's scan state (``bomcheck.parse.values``): its ``cap``, ``volt``, ``tmin``,
``tmax``, ``tol`` (minus %, plus %, absolute F), ``more_tols``, ``warnings`` and ``unread``.
"""

from __future__ import annotations

from typing import Any

from bomcheck.parse import codes

__all__ = ["CONFLICT_MARK", "UNREAD_MARK", "keep_widest_tolerance", "unread_implausible"]

# Warnings that start with this mark report two readings of one quantity in the same text
# ("10uF X5R 125C": 125 degC above X5R's 85 degC); the parser keeps the conservative one (smaller
# capacitance, lower rated voltage, wider tolerance, lower rated maximum temperature) and the
# importer turns these warnings into findings.
CONFLICT_MARK = "conflict: "
# Warnings that start with this mark report a number in the text that was not read, or read only
# by a guess ("-10uF": a sign a capacitance cannot have; "1,500uF": a thousands separator or a
# decimal comma; "85" with no unit). The importer turns them into ``value_unread`` findings at
# severity nodata: the placement's data cannot be trusted as read.
UNREAD_MARK = "unread: "

_PLAUSIBLE_CHECKS = (("capacitance_f", "cap", "capacitance", "F"),
                     ("voltage_v", "volt", "rated voltage", "V"),
                     ("temp_c", "tmin", "minimum temperature", "degC"),
                     ("temp_c", "tmax", "rated temperature", "degC"))
_CAP_LO, _CAP_HI = codes.PLAUSIBLE["capacitance_f"]
_V_LO, _V_HI = codes.PLAUSIBLE["voltage_v"]
_T_LO, _T_HI = codes.PLAUSIBLE["temp_c"]


def unread_implausible(st: Any) -> None:
    """Unread, with a warning, every number outside its plausible range (codes.PLAUSIBLE)."""
    cap, volt, tmin, tmax, tol = st.cap, st.volt, st.tmin, st.tmax, st.tol
    if ((cap is None or _CAP_LO <= cap <= _CAP_HI) and (volt is None or _V_LO < volt <= _V_HI)
            and (tmin is None or _T_LO <= tmin <= _T_HI)
            and (tmax is None or _T_LO <= tmax <= _T_HI)
            and (tol is None or (tol[2] is None and (tol[0] is None or 0 <= tol[0] <= 100)
                                 and (tol[1] is None or 0 <= tol[1] <= 200)))):
        return  # the common case: everything in range (the full check is below)
    for quantity, attr, name, unit in _PLAUSIBLE_CHECKS:
        v = getattr(st, attr)
        if v is not None and not codes.plausible(quantity, v):
            lo, hi = codes.PLAUSIBLE[quantity]
            st.warnings.append(f"{name} {v:g} {unit} is outside the plausible range "
                               f"({lo:g} .. {hi:g} {unit}); not read")
            st.unread.append(st.cap_tok if attr == "cap" else f"{v:g} {unit}")
            setattr(st, attr, None)
            if attr == "volt":
                st.vkind = None
    tol = st.tol
    if tol is not None:
        ok = all(x is None or codes.plausible(q, x) for q, x in
                 zip(("tol_minus_pct", "tol_plus_pct", "tol_abs_f"), tol))
        if not ok:
            st.warnings.append(f"tolerance {tol[0]}/{tol[1]} %, absolute {tol[2]} F is outside "
                               "the plausible range (0..100 % minus, 0..200 % plus, up to 1 mF "
                               "absolute); not read")
            st.unread.append("tolerance")
            st.tol = None


def keep_widest_tolerance(st: Any) -> None:
    """Several tolerances in one text: keep the widest reading of each side (the conservative
    one); an absolute tolerance is compared through the capacitance when it is known."""
    cap = st.cap
    tols = [(st.tol, st.tol_tok)] + st.more_tols
    sides: list[tuple[float, float]] = []
    for (minus, plus, absf), _ in tols:
        if absf is not None:
            if not cap:
                st.warnings.append(f"second tolerance {tols[1][1]!r} ignored")
                return
            minus = plus = absf / cap * 100.0
        sides.append((minus if minus is not None else 0.0, plus if plus is not None else 0.0))
    minus_w = max(m for m, _ in sides)
    plus_w = max(p for _, p in sides)
    st.warnings.append(f"{CONFLICT_MARK}several tolerances ("
                       + ", ".join(repr(t) for _, t in tols)
                       + f"); kept the widest, -{minus_w:g}/+{plus_w:g} %")
    st.tol = (minus_w, plus_w, None)
