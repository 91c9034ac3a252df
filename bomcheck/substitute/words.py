"""Substitute check, the words it writes: designator lists, quantities as the engine's messages
show them, and a placement's operating conditions in a few words."""

from __future__ import annotations

import math
import re
from collections.abc import Iterable, Mapping
from typing import Any

import pandas as pd

from bomcheck.parse.refdes import sort_key
from bomcheck.quantity import format_quantity


def designator_list(refdes: Iterable[str], limit: int | None = 24) -> str:
    """Designators in natural order, runs of three or more as ranges: ``C7-C10, C12``; past
    ``limit`` items, ``... and 1180 more`` (None: all of them)."""
    items = sorted(dict.fromkeys(refdes), key=sort_key)
    out: list[tuple[str, int]] = []  # (text, designators it stands for)
    run: list[tuple[str, int, str]] = []

    def flush() -> None:
        if len(run) >= 3:
            out.append((f"{run[0][2]}-{run[-1][2]}", len(run)))
        else:
            out.extend((r[2], 1) for r in run)
        run.clear()

    for item in items:
        m = re.fullmatch(r"([A-Za-z_]+)(\d+)", item)
        if m and run and m.group(1) == run[-1][0] and int(m.group(2)) == run[-1][1] + 1 \
                and not m.group(2).startswith("0"):
            run.append((m.group(1), int(m.group(2)), item))
            continue
        flush()
        if m and not m.group(2).startswith("0"):
            run.append((m.group(1), int(m.group(2)), item))
        else:
            out.append((item, 1))
    flush()
    if limit is not None and len(out) > limit:
        rest = sum(n for _, n in out[limit:])
        return ", ".join(t for t, _ in out[:limit]) + f" and {rest} more"
    return ", ".join(t for t, _ in out)


def fq(value: Any, unit: str, percent: bool = False) -> str:
    """A value as engine messages show it (``16 V``, ``79.69 %``, ``4.7 uF``); "?" when unknown."""
    if value is None or (isinstance(value, float) and math.isnan(value)):
        return "?"
    return format_quantity(float(value), unit, percent)


def num(value: Any) -> float:
    """``value`` as a float; NaN when it is none."""
    try:
        out = float(value)
    except (TypeError, ValueError):
        return math.nan
    return out


def given(value: Any) -> bool:
    """True unless ``value`` is missing: None, NA, NaN or empty text."""
    if value is None or value is pd.NA:
        return False
    if isinstance(value, float):
        return not math.isnan(value)
    return value != ""


def norm_text(text: str) -> str:
    """Text compared without case or runs of white space."""
    return " ".join(str(text).split()).casefold()


def norm_package(text: Any) -> str:
    """A package code compared without case, spaces or underscores ("" when not given)."""
    return re.sub(r"[\s_]+", "", str(text)).upper() if given(text) else ""


def conditions_text(rec: Mapping[str, Any]) -> str:
    """A placement's operating conditions in a few words: ``12.6 V + 0.15 V ripple, 60 degC``."""
    parts = []
    upper, ac = num(rec.get("v_upper_v")), num(rec.get("v_ac_rms"))
    if not math.isnan(upper):
        text = fq(upper, "V")
        ripple = num(rec.get("v_ripple_pk"))
        if not math.isnan(ripple) and ripple:
            text += f" + {fq(ripple, 'V')} ripple"
        parts.append(text)
    if not math.isnan(ac):
        parts.append(f"{fq(ac, 'V')} rms")
    t_op = num(rec.get("t_operating_c"))
    if not math.isnan(t_op):
        parts.append(fq(t_op, "degC"))
    return ", ".join(parts) or "no conditions"
