"""Substitute check, a verdict in the words purchasing reads: one phrase per stress (a dispatch
table by metric), and a margin that shrinks."""

from __future__ import annotations

import math
import re
from collections.abc import Callable, Mapping
from typing import Any

from bomcheck.frozen import frozen
from bomcheck.substitute.words import fq, num
from bomcheck.vocabulary import METRICS

_MARGIN_LABEL = {"voltage_ratio": "voltage stress", "transient_ratio": "transient stress",
                 "reverse_ratio": "reverse-voltage stress", "c_margin": "capacitance margin",
                 "bank_c_margin": "bank capacitance margin"}


@frozen
class Said:
    """What a phrase is built from: the placement's table row, the alternate's value and limit
    on the stress, the words past its limit, and whether several placements share it."""

    rec: Mapping[str, Any]
    value: float
    limit: float
    beyond: str
    many: bool

    @property
    def the(self) -> str:
        """"the placements" or "the placement"."""
        return "the placements" if self.many else "the placement"

    def verb(self, one: str) -> str:
        """``one`` ("sees", "runs") agreeing with the placements: "see", "run" for several."""
        return one[:-1] if self.many else one


def _limit_words(value: float, limit: float, warn: float, check: str, metric: str | None) -> str:
    """``, above the 70 % limit`` / ``, above the 60 % warn level`` / "" when inside both, in
    the metric's unit."""
    unit, percent = ("", False)
    if metric in METRICS:
        unit, percent = METRICS[metric].unit, METRICS[metric].percent
    over = (lambda x, lim: x > lim) if check != "min" else (lambda x, lim: x < lim)
    side = "above" if check != "min" else "below"
    if not math.isnan(limit) and over(value, limit):
        return f", {side} the {fq(limit, unit, percent)} limit"
    if not math.isnan(warn) and over(value, warn):
        return f", {side} the {fq(warn, unit, percent)} warn level"
    return ""


def _voltage(s: Said) -> str:
    rec = s.rec
    if rec.get("voltage_kind") == "ac":
        seen, rating = f"{fq(rec.get('v_ac_rms'), 'V')} rms", " AC"
    else:
        seen, rating = f"{fq(rec.get('applied_peak_v'), 'V')} peak", ""
    return (f"rated {fq(rec.get('voltage_v'), 'V')}{rating}, {s.the} {s.verb('sees')} {seen} = "
            f"{fq(s.value, '', True)} of the rating{s.beyond}")


def _transient(s: Said) -> str:
    return (f"rated {fq(s.rec.get('voltage_v'), 'V')}, {s.the} {s.verb('sees')} transients of "
            f"{fq(s.rec.get('transient_peak_v'), 'V')} = {fq(s.value, '', True)}{s.beyond}")


def _reverse(s: Said) -> str:
    return (f"{fq(s.rec.get('reverse_peak_v'), 'V')} reverse on a "
            f"{fq(s.rec.get('voltage_v'), 'V')} rating = {fq(s.value, '', True)}{s.beyond}")


def _temp_margin(s: Said) -> str:
    t_max, t_op = num(s.rec.get("temp_max_used_c")), num(s.rec.get("t_operating_c"))
    text = f"rated {fq(t_max, 'degC')}, {s.the} {s.verb('runs')} at {fq(t_op, 'degC')}"
    if not (t_op > t_max) and not math.isnan(s.limit):
        text += f", closer to the rating than the {fq(s.limit, 'degC')} the rule keeps"
    return text


def _t_operating(s: Said) -> str:
    return f"{s.the} {s.verb('runs')} at {fq(s.value, 'degC')}{s.beyond}"


def _capacitance(worst: str, need: str) -> Callable[[Said], str]:
    def phrase(s: Said) -> str:
        return (f"worst case {fq(s.rec.get(worst), 'F')} against {fq(s.rec.get(need), 'F')} "
                f"required{s.beyond}")
    return phrase


# The phrase of a verdict on each stress; any other metric reads as the engine's message.
PHRASES: dict[str, Callable[[Said], str]] = {
    "voltage_ratio": _voltage, "transient_ratio": _transient, "reverse_ratio": _reverse,
    "temp_margin_c": _temp_margin, "t_operating_c": _t_operating,
    "c_margin": _capacitance("c_worst_f", "c_min_f"),
    "bank_c_margin": _capacitance("bank_c_worst_f", "bank_c_min_f"),
}


def phrase(metric: str | None, rec: Mapping[str, Any], v: Mapping[str, Any], n: int) -> str:
    """The alternate's verdict ``v`` (a row of the paired verdicts) in words purchasing reads;
    ``n`` placements share it."""
    message = str(v.get("message_a") or "")
    body = message.split(": ", 1)[1] if ": " in message else message
    if v["status_a"] == "nodata":
        m = re.search(r"missing (.*?)(?:; |$)", body)
        return f"cannot be checked, missing {m.group(1)}" if m else f"cannot be checked: {body}"
    value, limit = num(v.get("value_a")), num(v.get("limit_a"))
    beyond = _limit_words(value, limit, num(v.get("warn_limit_a")), str(v.get("check") or "max"),
                          metric)
    said = PHRASES.get(metric or "")
    return said(Said(rec, value, limit, beyond, n > 1)) if said else body


def margin_phrase(metric: str, r: Mapping[str, Any], rec: Mapping[str, Any], amount: str) -> str:
    """A margin that shrinks by ``amount`` (percentage points or kelvin) in words; ``r`` holds
    both parts' closest approach to the limit, ``rec`` the placement's table row."""
    meta = METRICS[metric]
    if meta.percent:
        label = _MARGIN_LABEL.get(metric, metric.replace("_", " "))
        v_o, v_a = fq(r["value_o"], "", True), fq(r["value_a"], "", True)
        l_o, l_a = fq(r["limit_o"], "", True), fq(r["limit_a"], "", True)
        moved = f"goes from {v_o} to {v_a}" if v_o != v_a else f"stays at {v_a}"
        limit = f"the {l_a} limit" if l_o == l_a else f"its limit ({l_a} instead of {l_o})"
        return f"the {label} {moved}, {amount} percentage points closer to {limit}"
    where = f" at {fq(rec.get('t_operating_c'), 'degC')}" if metric == "temp_margin_c" else ""
    return (f"the temperature margin falls from {fq(r['margin_o'], 'degC')} to "
            f"{fq(r['margin_a'], 'degC')}{where}")
