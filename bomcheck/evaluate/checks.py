"""Check kinds of the evaluate stage: how a rule compares a metric with its limit, registered by name.

A check kind is a small pure function (the margin: positive inside the limit) with the words its
messages use. Rules name their kind (``check = "max"``); the loader refuses an unknown name and the
engine looks the kind up here, so a new kind is one entry of ``CHECKS``.
"""

from __future__ import annotations

from collections.abc import Callable

import numpy as np

from bomcheck.frozen import frozen

PASS, WARN, FAIL, NODATA = range(4)
# A value equal to the limit as written passes; allow for float rounding in ratios and curves.
REL_TOL = 1e-9


def margin_max(value: np.ndarray, limit: np.ndarray) -> np.ndarray:
    """Distance inside a ceiling: positive while ``value`` is at or below ``limit``."""
    return limit - value


def margin_min(value: np.ndarray, limit: np.ndarray) -> np.ndarray:
    """Distance inside a floor: positive while ``value`` is at or above ``limit``."""
    return value - limit


@frozen
class CheckKind:
    """A way of comparing a metric with a limit: its margin function and how messages read."""

    name: str
    margin: Callable[[np.ndarray, np.ndarray], np.ndarray]
    inside: str  # comparison printed when the value is within the limit
    outside: str  # comparison printed when it is not
    warn_side: str = ""  # where a warn limit must lie against the fail limit, in words


CHECKS: dict[str, CheckKind] = {
    "max": CheckKind("max", margin_max, "<=", ">", "at or below"),
    "min": CheckKind("min", margin_min, ">=", "<", "at or above"),
}


def check_kind(name: str) -> CheckKind:
    """The registered check kind ``name``; ValueError listing the valid names otherwise."""
    try:
        return CHECKS[name]
    except KeyError:
        valid = ", ".join(CHECKS)
        raise ValueError(f"unknown check kind {name!r}; expected one of: {valid}") from None


def status_of(kind: CheckKind, value: np.ndarray, limit: np.ndarray,
              warn_limit: np.ndarray) -> np.ndarray:
    """PASS, WARN or FAIL of each value against its limits (NaN compares as pass)."""
    with np.errstate(invalid="ignore"):
        over_fail = kind.margin(value, limit) < -REL_TOL * np.abs(limit)
        over_warn = kind.margin(value, warn_limit) < -REL_TOL * np.abs(warn_limit)
    return np.where(over_fail, FAIL, np.where(over_warn, WARN, PASS)).astype(np.int8)


def kinder(kind: CheckKind, a: np.ndarray, b: np.ndarray) -> np.ndarray:
    """Of two limits, the one kinder to the part (the higher ceiling, the lower floor)."""
    return np.fmax(a, b) if kind.name == "max" else np.fmin(a, b)


__all__ = ["CHECKS", "FAIL", "NODATA", "PASS", "REL_TOL", "WARN", "CheckKind", "check_kind", "kinder",
           "margin_max", "margin_min", "status_of"]
