"""Substitute check, both parts' verdicts side by side: one row per placement and rule either
part has, which got worse, and each placement's governing verdict before and after."""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

import numpy as np
import pandas as pd

from bomcheck.status import RANK
from bomcheck.substitute.result import PlacementCheck, VerdictPair, plain
from bomcheck.substitute.words import conditions_text, given


def pair_verdicts(o: pd.DataFrame, a: pd.DataFrame, ruleset) -> pd.DataFrame:
    """One row per (placement, rule) either part has: both sides' status, value, limit, margin,
    message, the rule's metric and check kind, and whether the alternate's verdict is worse."""
    cols = ["pidx", "rule_id", "status", "value", "limit", "warn_limit", "margin", "message"]
    o = o.reindex(columns=cols)
    a = a.reindex(columns=cols)
    m = o.merge(a, on=["pidx", "rule_id"], how="outer", suffixes=("_o", "_a"))
    m = m.sort_values(["pidx", "rule_id"], kind="stable").reset_index(drop=True)
    metric = {r.id: r.metric for r in ruleset.rules}
    check = {r.id: r.check for r in ruleset.rules}
    m["metric"] = m["rule_id"].map(metric)
    m["check"] = m["rule_id"].map(check)
    rank_o = m["status_o"].map(RANK)
    rank_a = m["status_a"].map(RANK)
    # A rule only one part has (another technology's rule set) is compared with the original's
    # worst verdict on the same stress: IND-POL-REV no data is no worse than IND-TAN-REV no data.
    topic = m["metric"].where(m["metric"].notna(), m["rule_id"])
    rank_topic = rank_o.groupby([m["pidx"], topic]).transform("max")
    base = rank_o.fillna(rank_topic)
    bad = m["status_a"].isin(["warn", "nodata", "fail"])
    m["worse"] = (bad & (base.isna() | (rank_a > base))).to_numpy()
    return m


def _side(rec: Mapping[str, Any], suffix: str) -> dict | None:
    status = rec.get(f"status{suffix}")
    if not isinstance(status, str):
        return None
    return {"status": status, "value": plain(rec.get(f"value{suffix}")),
            "limit": plain(rec.get(f"limit{suffix}")),
            "margin": plain(rec.get(f"margin{suffix}")),
            "message": rec.get(f"message{suffix}")}


def _governing(v: pd.DataFrame) -> dict[int, dict]:
    """Per placement, the verdict that sets its status: the worst, then the smallest margin
    relative to the limit (as ``Report.governing``)."""
    if not len(v):
        return {}
    rank = v["status"].map(RANK)
    rel = v["margin"] / v["limit"].abs().where(v["limit"] != 0)
    key = v.assign(_rank=-rank, _rel=rel).sort_values(["pidx", "_rank", "_rel"],
                                                       na_position="last", kind="stable")
    first = key.drop_duplicates("pidx")
    return {int(r["pidx"]): {"rule": r["rule_id"], "status": r["status"],
                             "value": plain(r["value"]), "limit": plain(r["limit"]),
                             "margin": plain(r["margin"]), "message": r["message"]}
            for r in first.to_dict("records")}


def placement_checks(o_table: pd.DataFrame, a_table: pd.DataFrame, pairs: pd.DataFrame,
                      is_replaced: np.ndarray) -> tuple[PlacementCheck, ...]:
    o_side = pairs.rename(columns=lambda c: c[:-2] if c.endswith("_o") else c)
    a_side = pairs.rename(columns=lambda c: c[:-2] if c.endswith("_a") else c)
    gov_o = _governing(o_side.dropna(subset=["status"]))
    gov_a = _governing(a_side.dropna(subset=["status"]))
    by_pidx: dict[int, list[VerdictPair]] = {}
    worse_at: dict[int, bool] = {}
    for rec in pairs.to_dict("records"):
        p = int(rec["pidx"])
        metric = rec["metric"] if isinstance(rec["metric"], str) else None
        by_pidx.setdefault(p, []).append(VerdictPair(str(rec["rule_id"]), metric,
                                                     _side(rec, "_o"), _side(rec, "_a"),
                                                     bool(rec["worse"])))
        worse_at[p] = worse_at.get(p, False) or bool(rec["worse"])
    out = []
    a_recs = a_table.to_dict("records")
    for p, rec in enumerate(a_recs):
        row = rec.get("row")
        worse = worse_at.get(p, False) or (RANK[a_table["status"].iat[p]]
                                           > RANK[o_table["status"].iat[p]])
        out.append(PlacementCheck(
            refdes=str(rec["refdes"]), row=int(row) if given(row) and int(row) > 0 else None,
            role="replaced" if is_replaced[p] else "group", conditions=conditions_text(rec),
            original_status=str(o_table["status"].iat[p]),
            proposed_status=str(a_table["status"].iat[p]),
            original_governing=gov_o.get(p), proposed_governing=gov_a.get(p),
            verdicts=tuple(by_pidx.get(p, ())), worse=bool(worse)))
    return tuple(out)
