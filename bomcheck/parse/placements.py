"""Normalise stage: the capacitor lines expanded to one row per placement (columns taken by
code from the distinct combinations of cells), and the findings on placements."""

from __future__ import annotations

import operator
from typing import Any

import numpy as np
import pandas as pd

from bomcheck.parse.bomresult import PLACEMENT_COLUMNS, ImportFinding, finding
from bomcheck.parse.designators import Designators
from bomcheck.parse.linecells import OWN_COLUMNS, LineCells
from bomcheck.parse.linespec import FLOAT_SPEC, SPEC_COLUMNS
from bomcheck.spec import PLAUSIBLE_CAPACITANCE_F

class _Severities(dict):
    """The severity of each finding code (``bomcheck.parse.bomresult.finding``), made once."""

    def __missing__(self, code: str) -> str:
        got = self[code] = finding(0, None, code, "").severity
        return got


_SEVERITY = _Severities()


def placements_of(cap_idx: np.ndarray, des: Designators, line: dict[str, np.ndarray],
                head_rows: np.ndarray, fitted: np.ndarray, nf_reason: np.ndarray,
                qty: np.ndarray, lc: LineCells) -> pd.DataFrame:
    counts = des.count[cap_idx]
    total = int(counts.sum())
    line_of = np.repeat(cap_idx, counts)
    if not des.lists:
        refdes = des.single[cap_idx]
    else:
        refdes = np.empty(total, dtype=object)
        starts = np.cumsum(counts) - counts
        single = counts == 1
        refdes[starts[single]] = des.single[cap_idx[single]]
        for pos, k, li in zip(starts[~single], counts[~single], cap_idx[~single]):
            refdes[pos:pos + k] = des.lists[int(li)]
    cc = lc.code[line_of]
    data: dict[str, Any] = {
        "refdes": refdes,
        "row": head_rows[line_of],
        "line": line_of.astype(np.int64),
        "fitted": fitted[line_of],
        "not_fitted_reason": nf_reason[line_of],
        "mpn": line["mpn"][line_of],
        "manufacturer": line["manufacturer"][line_of],
        "qty": qty[line_of],
    }
    # Each line's own columns, taken by combination of cells.
    own_at = lc.cells[line_of]
    for k in OWN_COLUMNS:
        data[k] = lc.own[k][own_at]
    # Per-core values as two blocks (floats, objects), each taken by code in one step.
    combos = lc.cores
    obj_cols = [k for k in SPEC_COLUMNS
                if k not in FLOAT_SPEC and k != "is_capacitor" and k not in OWN_COLUMNS]
    n_c = len(combos)
    obj_block = np.empty((n_c, len(obj_cols)), dtype=object)
    for j, k in enumerate(obj_cols):
        # fromiter keeps a tuple as one object, not a sequence to spread.
        obj_block[:, j] = np.fromiter((c.spec[k] for c in combos), dtype=object, count=n_c)
    get_floats = operator.itemgetter(*FLOAT_SPEC)
    float_block = np.array([get_floats(c.spec) for c in combos], dtype=float)  # None -> NaN
    if not combos:
        float_block = float_block.reshape(0, len(FLOAT_SPEC))
    obj_taken = obj_block.take(cc, axis=0)
    float_taken = float_block.take(cc, axis=0)
    for j, k in enumerate(obj_cols):
        data[k] = obj_taken[:, j]
    for j, k in enumerate(FLOAT_SPEC):
        data[k] = float_taken[:, j]
    data["is_capacitor"] = np.array([bool(c.spec["is_capacitor"]) for c in combos],
                                    dtype=bool)[cc] if combos else np.zeros(0, dtype=bool)
    series = {k: pd.Series(data[k], dtype=object if data[k].dtype == object else None,
                           copy=False) for k in PLACEMENT_COLUMNS}
    return pd.DataFrame(series, columns=list(PLACEMENT_COLUMNS), copy=False)


def _implausible_capacitance(lc: LineCells, line_of: np.ndarray, fitted: np.ndarray,
                             rows: np.ndarray, refdes: np.ndarray) -> list[ImportFinding]:
    """Fitted placements whose capacitance is above what their technology is ever made with
    (``spec.PLAUSIBLE_CAPACITANCE_F``): judged once per distinct reading."""
    said = []
    for core in lc.cores:
        cap, tech = core.spec["capacitance_f"], core.spec["technology"]
        high = PLAUSIBLE_CAPACITANCE_F.get(tech)
        said.append(None if cap is None or high is None or not cap > high else
                    f"capacitance {cap:g} F is implausible for a {tech} capacitor (none is "
                    f"made above {high:g} F: a unit slip such as uF written as F?); checks "
                    "that need it have no data")
    if not any(said):
        return []
    message = np.asarray(said, dtype=object)[lc.code[line_of]]
    at = np.flatnonzero(np.not_equal(message, None) & fitted)
    return [finding(int(rows[p]), str(refdes[p]), "capacitance_implausible", message[p])
            for p in at]


def placement_findings(placements: pd.DataFrame, lc: LineCells) -> list[ImportFinding]:
    """Column conflicts on fitted placements, capacitors with no capacitance read, and
    designators listed more than once."""
    out: list[ImportFinding] = []
    if not len(placements):
        return out
    line_of = placements["line"].to_numpy()
    fitted = placements["fitted"].to_numpy()
    refdes = placements["refdes"].to_numpy(dtype=object)
    rows = placements["row"].to_numpy()
    # The merge's conflicts (per core), then each cell's own (per distinct cell of a source).
    per = [(np.fromiter((c.conflicts for c in lc.cores), dtype=object, count=len(lc.cores)),
            lc.code)]
    per.extend((sc.conflicts, sc.code) for sc in lc.sources)
    for conflicts, code in per:
        if not any(conflicts):
            continue
        pc = code[line_of]
        has = np.array([bool(c) for c in conflicts], dtype=bool)[pc]
        at = np.flatnonzero(has & fitted)
        out.extend(ImportFinding(row, ref, c, msg, _SEVERITY[c])
                   for row, ref, said in zip(rows[at].tolist(), refdes[at].tolist(),
                                             conflicts[pc[at]].tolist())
                   for c, msg in said)
    # A fitted capacitor with no capacitance read (common practice: every capacitor line states
    # its capacitance; the checks that need it have no data).
    # A value cell with text gives capacitance_unread (the data is there but was not
    # understood), none capacitance_missing.
    no_cap = np.array([c.spec["capacitance_f"] is None for c in lc.cores],
                      dtype=bool)[lc.code[line_of]]
    for p in np.flatnonzero(no_cap & fitted):
        li = line_of[p]
        code = "capacitance_unread" if lc.own["value_text"][lc.cells[li]] \
            else "capacitance_missing"
        out.append(finding(int(rows[p]), str(refdes[p]), code,
                           f"no capacitance could be read from the BOM text ({lc.text(li)!r}); "
                           "checks that need it have no data"))
    out.extend(_implausible_capacitance(lc, line_of, fitted, rows, refdes))
    if len(set(refdes)) < len(refdes):
        dup = pd.Series(refdes).duplicated(keep="first").to_numpy()
        first_row = pd.Series(rows).groupby(refdes).transform("first").to_numpy()
        for p in np.flatnonzero(dup):
            out.append(finding(
                int(rows[p]), str(refdes[p]), "duplicate_refdes",
                f"{refdes[p]} is also listed on row {first_row[p]}; each designator should "
                "appear once",
            ))
    return out
