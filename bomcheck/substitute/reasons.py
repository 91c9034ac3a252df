"""Substitute check, the reasons behind a verdict: the alternate's failures, new warnings and
no-data, and margins that shrink past the options' amounts, joined into sentences."""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any, NamedTuple

import numpy as np
import pandas as pd

from bomcheck.frozen import frozen
from bomcheck.substitute.phrases import margin_phrase, phrase
from bomcheck.substitute.result import SEVERITIES, Difference, Issue, SubstituteOptions
from bomcheck.substitute.words import num
from bomcheck.vocabulary import METRICS

# Spec differences named beside a verdict on a metric: per group of alternatives, the first one
# the placement has.
_RELATED: dict[str, tuple[tuple[str, ...], ...]] = {
    "voltage_ratio": (("ac_rating", "rated_voltage"), ("technology",)),
    "transient_ratio": (("rated_voltage",),),
    "reverse_ratio": (("rated_voltage",), ("technology",)),
    "temp_margin_c": (("dielectric", "temp_max"), ("technology",)),
    "t_operating_c": (("temp_max",), ("technology",)),
    "c_margin": (("capacitance",), ("dielectric",), ("tolerance",)),
    "bank_c_margin": (("capacitance",), ("dielectric",), ("tolerance",)),
}
_REVIEW_PREFIX = {"warn": "a warning appears: ",
                  "nodata-original": "the original cannot be checked, so the two cannot be "
                                     "compared: "}


@frozen
class Scene:
    """The alternate's table as the reasons read it: each placement's row and designator,
    which placements it replaces, the differences at each designator, and the options."""

    recs: Sequence[Mapping[str, Any]]
    refdes: np.ndarray
    is_replaced: np.ndarray
    diffs_at: Mapping[str, Sequence[Difference]]
    options: SubstituteOptions

    @classmethod
    def of(cls, a_table: pd.DataFrame, is_replaced: np.ndarray, diffs: Sequence[Difference],
           options: SubstituteOptions) -> Scene:
        """The scene of the alternate's evaluated table ``a_table``."""
        diffs_at: dict[str, list[Difference]] = {}
        for d in diffs:
            for r in d.refdes:
                diffs_at.setdefault(r, []).append(d)
        return cls(a_table.to_dict("records"), a_table["refdes"].astype(str).to_numpy(dtype=object),
                   is_replaced, diffs_at, options)

    def related(self, metric: str | None, p: int) -> tuple[str, ...]:
        """The short forms of the spec differences behind a verdict on ``metric`` at placement
        ``p`` (one per group of alternatives in ``_RELATED``: ``X5R replacing X7R`` rather than
        also the rated maximum)."""
        mine = {d.field: d.short for d in self.diffs_at.get(self.refdes[p], [])}
        out = []
        for choice in _RELATED.get(metric or "", ()):
            found = next((mine[f] for f in choice if f in mine), None)
            if found:
                out.append(found)
        return tuple(out)


class _Sentence(NamedTuple):
    """What placements and rules that read alike share: one sentence."""

    severity: str
    kind: str  # "verdict" or "margin"
    topic: str
    text: str
    bits: tuple[str, ...]  # the differences behind it, and more, put in brackets


@dataclass
class _Reasons:
    """Issues being collected: placements and rules that read alike share one sentence."""

    scene: Scene
    # sentence -> [placements, rule ids, the verdict speaking for all]
    groups: dict[_Sentence, list] = field(default_factory=dict)

    def add(self, sentence: _Sentence, p: int, rule_id: str, v: dict) -> None:
        """Placement ``p`` (and rule ``rule_id``, "" for none) share ``sentence``."""
        entry = self.groups.setdefault(sentence, [[], [], v])
        if p not in entry[0]:
            entry[0].append(p)
        if rule_id and rule_id not in entry[1]:
            entry[1].append(rule_id)

    def issues(self) -> list[Issue]:
        """The issues collected, in the order they were first added."""
        out = []
        for (severity, kind, topic, _, bits), (ps, rule_ids, v) in self.groups.items():
            if "_text" in v:
                text = v["_text"]
            else:
                metric = v["metric"] if isinstance(v["metric"], str) else None
                text = v.get("_prefix", "") + phrase(metric, self.scene.recs[ps[0]], v, len(ps))
            inside = [*bits, *([", ".join(rule_ids)] if rule_ids else [])]
            if inside:
                text += f" ({'; '.join(dict.fromkeys(inside))})"
            out.append(Issue(severity, kind, topic,
                             tuple(dict.fromkeys(self.scene.refdes[ps].tolist())), text))
        return out


def _picked(pairs: pd.DataFrame, is_replaced: np.ndarray) -> dict[tuple, list[dict]]:
    """Per (severity, kind of issue, placement, stress): the verdicts behind it. A failure of
    the alternate where it sits or where it made things worse rejects; a new warning or no-data
    needs review, and so does no data on either side (the comparison stays open)."""
    with np.errstate(invalid="ignore"):
        got_worse = (pairs["worse"].to_numpy()
                     | (pairs["margin_a"] < pairs["margin_o"] - 1e-12).to_numpy())
    picked: dict[tuple, list[dict]] = {}
    for i, v in enumerate(pairs.to_dict("records")):
        p = int(v["pidx"])
        status = v["status_a"]
        topic = (v["metric"] if isinstance(v["metric"], str) else None) or v["rule_id"]
        if status == "fail" and (is_replaced[p] or got_worse[i]):
            picked.setdefault(("reject", status, p, topic), []).append(v)
        elif v["worse"] and status in ("warn", "nodata"):
            picked.setdefault(("review", status, p, topic), []).append(v)
        elif status == "nodata" or v["status_o"] == "nodata":
            key = "nodata" if status == "nodata" else "nodata-original"
            picked.setdefault(("review", key, p, topic), []).append(v)
    return picked


def _add_verdicts(out: _Reasons, pairs: pd.DataFrame) -> set[tuple[int, str | None]]:
    """Add the verdict issues, the verdict furthest past its limit speaking for all on the same
    stress (one sentence naming every rule); returns the (placement, metric) pairs covered."""
    scene = out.scene
    flagged: set[tuple[int, str | None]] = set()
    for (severity, status, p, topic), vs in _picked(pairs, scene.is_replaced).items():
        vs = sorted(vs, key=lambda v: (math.isnan(num(v["margin_a"])), num(v["margin_a"])))
        v = vs[0]
        metric = v["metric"] if isinstance(v["metric"], str) else None
        bits = scene.related(metric, p)
        if severity == "reject" and not scene.is_replaced[p]:
            bits += ("shares a bank or stack with the alternate",)
        elif severity == "reject" and any(x["status_o"] == "fail" for x in vs):
            bits += ("fails with the original part too",)
        if severity == "review":
            v = {**v, "_prefix": _REVIEW_PREFIX.get(status, "")}
        prefix = v.get("_prefix", "")
        for x in vs:
            text = prefix + phrase(metric, scene.recs[p], v, 1)
            out.add(_Sentence(severity, "verdict", topic, text, bits), p, x["rule_id"], v)
        flagged.add((p, metric))
    return flagged


def _closest(ok: pd.DataFrame, side: str) -> pd.DataFrame:
    """Per placement and metric, one side's closest approach to a limit in force."""
    cols = [f"margin_{side}", f"value_{side}", f"limit_{side}", f"status_{side}"]
    part = ok.dropna(subset=[f"margin_{side}"]).sort_values(f"margin_{side}", kind="stable")
    return part.drop_duplicates(["pidx", "metric"]).set_index(["pidx", "metric"])[cols]


def _add_margins(out: _Reasons, pairs: pd.DataFrame,
                 flagged: set[tuple[int, str | None]]) -> None:
    """Add a review for each margin (per placement and metric, the closest approach to a limit)
    that shrinks past the options' amount, where no verdict issue already speaks."""
    ok = pairs.dropna(subset=["metric"])
    if not len(ok):
        return
    scene, options = out.scene, out.scene.options
    both = _closest(ok, "o").join(_closest(ok, "a"), how="inner")
    for (p, metric), r in both.iterrows():
        meta = METRICS.get(metric)
        if meta is None or (int(p), metric) in flagged or r["status_a"] == "fail":
            continue
        drop = r["margin_o"] - r["margin_a"]
        if meta.percent:
            over, amount = drop * 100.0 > options.margin_drop_pp, f"{drop * 100.0:.3g}"
        elif meta.quantity in ("temperature", "temperature_delta"):
            over, amount = drop > options.temp_margin_drop_c, f"{drop:.3g}"
        else:
            continue
        if over:
            text = margin_phrase(metric, r, scene.recs[int(p)], amount)
            out.add(_Sentence("review", "margin", metric, text, scene.related(metric, int(p))),
                    int(p), "", {"_text": text})


def verdict_issues(scene: Scene, pairs: pd.DataFrame) -> list[Issue]:
    """Issues from the alternate's verdicts: failures (reject), warnings and no-data that appear
    (review), and margins that shrink past the options' amounts (review). Placements and rules
    that read alike are joined into one sentence."""
    out = _Reasons(scene)
    flagged = _add_verdicts(out, pairs)
    _add_margins(out, pairs, flagged)
    return out.issues()


def merge_issues(issues: Sequence[Issue]) -> tuple[Issue, ...]:
    """Issues with the same severity and text joined (their designators merged), worst first."""
    merged: dict[tuple[str, str], Issue] = {}
    for i in issues:
        key = (i.severity, i.text)
        if key in merged:
            old = merged[key]
            merged[key] = Issue(old.severity, old.kind, old.topic,
                                tuple(dict.fromkeys(old.refdes + i.refdes)), old.text)
        else:
            merged[key] = i
    order = {s: k for k, s in enumerate(SEVERITIES)}
    return tuple(sorted(merged.values(), key=lambda i: order[i.severity]))
