"""Every approved source of a BOM line audited where the line is placed (middle of the pipeline).

Purchasing may build a line with any of its approved manufacturer parts, so a placement is only as
good as its worst source. Each source other than the line's own is audited as a variant of the
whole placement table (its MPN, its parts data when the parts file has it, its own text where the
source row gives one, else the line's text), so banks and series stacks see the swapped part
beside their other members. The placement takes the worst status; the verdicts of every source
are kept with their source number, and the source that governs is named.
"""

from __future__ import annotations

from collections.abc import Callable

import numpy as np
import pandas as pd

from bomcheck.evaluate.columns import wide_table_edits
from bomcheck.status import RANK, STATUS_ORDER

# How a source's part was described: its parts data, the text of its own row, or the line's.
FROM_PARTS, FROM_OWN_TEXT, FROM_LINE_TEXT = "parts data", "own text", "line text"
SOURCE_STATUS_COLUMNS = ("pidx", "refdes", "source", "manufacturer", "mpn", "status", "described_by")


def variant(table: pd.DataFrame, sources: pd.DataFrame, index: int,
            spec_of: Callable[[str], dict]) -> tuple[pd.DataFrame, np.ndarray, np.ndarray]:
    """The placement table with every placement whose line has approved source ``index`` swapped
    to that source. Returns (table, positions swapped, "own text"/"line text" per swapped row)."""
    mine = sources[sources["source"] == index].set_index("line")
    lines = table["line"].to_numpy()
    pos = np.flatnonzero(np.isin(lines, mine.index.to_numpy()))
    out = table.copy(deep=False)
    if not len(pos):
        return out, pos, np.array([], dtype=object)
    rows = mine.loc[lines[pos]]
    for col in ("manufacturer", "mpn"):
        values = out[col].to_numpy(dtype=object, copy=True) if col in out else np.full(
            len(out), None, dtype=object)
        values[pos] = rows[col].to_numpy(dtype=object)
        out[col] = values
    own = rows["text"].fillna("").astype(str).to_numpy()
    has_own = own != ""
    for text in pd.unique(own[has_own]):  # each distinct text parsed once
        spec = spec_of(text)
        at = pos[own == text]
        for key, value in spec.items():
            if key in out.columns:
                col = out[key].to_numpy(dtype=object, copy=True)
                col[at] = [value] * len(at)
                out[key] = col
        out.loc[out.index[at], "text"] = text
    described = np.where(has_own, FROM_OWN_TEXT, FROM_LINE_TEXT).astype(object)
    return out, pos, described


def worst_of_sources(statuses: list[np.ndarray]) -> tuple[np.ndarray, np.ndarray]:
    """(worst status, the source index that gives it, first on ties) per placement, from the
    statuses under each source (NaN/None where the placement has no such source)."""
    ranks = np.vstack([pd.Series(st, dtype=object).map(RANK).fillna(-1).to_numpy(dtype=np.int64)
                       for st in statuses])
    governing = np.argmax(ranks, axis=0)
    worst = np.asarray(STATUS_ORDER, dtype=object)[ranks.max(axis=0)]
    return worst, governing


def audit_sources(table: pd.DataFrame, primary, sources: pd.DataFrame,
                  evaluate: Callable[[pd.DataFrame], object], spec_of: Callable[[str], dict]):
    """Audit every approved source beside the line's own (``primary``, an ``audit.Evaluated``).

    ``evaluate`` runs the middle of the pipeline on a placement table. Returns (table with the
    worst status and ``governing_source``/``governing_mpn``, verdicts with a ``source`` column,
    the per-placement source statuses ``SOURCE_STATUS_COLUMNS``).
    """
    out = primary.table.copy(deep=False)
    verdicts = [primary.verdicts.assign(approved_source=0)]
    n = len(out)
    mpn0 = out["mpn"].to_numpy(dtype=object) if "mpn" in out else np.full(n, None, object)
    statuses = [out["status"].to_numpy(dtype=object)]
    mpns = [mpn0]
    has_parts0 = out["part_row"].notna().to_numpy() if "part_row" in out else np.zeros(n, bool)
    rows = [pd.DataFrame({
        "pidx": np.arange(n), "refdes": out["refdes"].to_numpy(dtype=object), "source": 0,
        "manufacturer": out["manufacturer"].to_numpy(dtype=object) if "manufacturer" in out
        else None, "mpn": mpn0, "status": statuses[0],
        "described_by": np.where(has_parts0, FROM_PARTS, FROM_LINE_TEXT)})]
    top = int(sources["source"].max()) if len(sources) else 0
    for index in range(1, top + 1):
        swapped, pos, described = variant(table, sources, index, spec_of)
        if not len(pos):
            continue
        ev = evaluate(swapped)
        st = np.full(n, None, dtype=object)
        st[pos] = ev.table["status"].to_numpy(dtype=object)[pos]
        statuses.append(st)
        mpn = np.full(n, None, dtype=object)
        mpn[pos] = swapped["mpn"].to_numpy(dtype=object)[pos]
        mpns.append(mpn)
        has_parts = (ev.table["part_row"].notna().to_numpy()[pos] if "part_row" in ev.table
                     else np.zeros(len(pos), bool))
        rows.append(pd.DataFrame({
            "pidx": pos, "refdes": out["refdes"].to_numpy(dtype=object)[pos], "source": index,
            "manufacturer": swapped["manufacturer"].to_numpy(dtype=object)[pos],
            "mpn": mpn[pos], "status": st[pos],
            "described_by": np.where(has_parts, FROM_PARTS, described)}))
        v = ev.verdicts
        v = v[v["pidx"].isin(pos)]
        label = pd.Series(mpn, dtype=object).fillna("?").to_numpy()[v["pidx"].to_numpy()]
        refdes = v["refdes"].astype(str).to_numpy()
        body = [m[len(r):] for m, r in zip(v["message"].astype(str).tolist(), refdes.tolist())]
        verdicts.append(v.assign(approved_source=index, message=[
            f"{r} (approved source {index}, {lab}){b}" for r, lab, b in zip(refdes, label, body)]))
    worst, governing = worst_of_sources(statuses)
    with wide_table_edits():
        out["status"] = worst
        out["governing_source"] = governing
        out["governing_mpn"] = np.choose(governing, mpns) if len(mpns) > 1 else mpn0
    all_verdicts = pd.concat(verdicts, ignore_index=True).sort_values(
        ["pidx", "approved_source", "rule_id"], kind="stable").reset_index(drop=True)
    table_of_sources = pd.concat(rows, ignore_index=True).sort_values(
        ["pidx", "source"], kind="stable").reset_index(drop=True)
    return out, all_verdicts, table_of_sources
