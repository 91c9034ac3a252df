"""Stress stage input: a parts file's data (``bomcheck.parse.parts.PartsData``) laid over the
placements by MPN, as column joins: spec columns filled or resolved (conservatively, or by the
file on override) with one ``warn`` verdict per contradiction, the circuit columns added, and
each placement's part curves evaluated."""

from __future__ import annotations

from collections.abc import Callable
from typing import Any

import numpy as np
import pandas as pd

from bomcheck.parse.codes import Dielectric, decode_dielectric
from bomcheck.parse.parts import FIELDS, PART_COLUMNS, PARTS_FINDING, PartsData
from bomcheck.quantity import format_quantity

__all__ = ["PART_COLUMNS", "apply_parts", "curve_values", "lay_parts", "part_keys"]


def part_keys(table: pd.DataFrame) -> pd.Series:
    """The MPN key of each placement (upper case, stripped; "" without an MPN)."""
    if "mpn" not in table.columns:
        return pd.Series("", index=table.index, dtype=object)
    # A missing MPN takes the code -1: the last key, "".
    codes, uniques = pd.factorize(table["mpn"].to_numpy(dtype=object), use_na_sentinel=True)
    keys = np.array([str(u).strip().upper() for u in uniques] + [""], dtype=object)
    return pd.Series(keys[codes], index=table.index, dtype=object)


def _float(table: pd.DataFrame, name: str) -> pd.Series:
    if name in table.columns:
        return pd.to_numeric(table[name], errors="coerce").astype(float)
    return pd.Series(np.nan, index=table.index, dtype=float)


# (spec column, what the message calls it, display unit, relative and absolute tolerance of a
# match, the conservative choice of the two values, and its word in messages)
_CHECKED = (
    ("capacitance_f", "capacitance", "F", 1e-3, 0.0, np.fmin, "smaller"),
    ("voltage_v", "rated voltage", "V", 1e-3, 0.0, np.fmin, "lower"),
    ("temp_min_c", "rated minimum temperature", "degC", 0.0, 0.5, np.fmax, "higher"),
    ("temp_max_c", "rated maximum temperature", "degC", 0.0, 0.5, np.fmin, "lower"),
    ("tol_minus_pct", "tolerance", "%", 0.0, 0.05, np.fmax, "wider"),
    ("tol_plus_pct", "tolerance", "%", 0.0, 0.05, np.fmax, "wider"),
)
_DIELECTRIC_COLUMNS = {"dielectric_class": "eia_class", "cap_change_minus_pct": "change_minus_pct",
                       "cap_change_plus_pct": "change_plus_pct", "tc_ppm": "tc_ppm",
                       "tc_tol_ppm": "tc_tol_ppm"}


def _worse(d: Dielectric) -> tuple[float, ...]:
    """Order of dielectrics from favourable to unfavourable: class (III worst), then a lower
    rated maximum, a higher rated minimum, a larger capacitance change, a wider TC tolerance."""
    return (d.eia_class, -(d.temp_max_c if d.temp_max_c is not None else 1e3),
            d.temp_min_c if d.temp_min_c is not None else -1e3, d.change_minus_pct or 0.0,
            d.tc_tol_ppm or 0.0)


def apply_parts(table: pd.DataFrame, parts: PartsData) -> tuple[pd.DataFrame, pd.DataFrame]:
    """The placements with the parts data laid over them, and one verdict per value that
    contradicts the BOM text.

    Spec columns the BOM text left empty are filled from the file (a rated voltage of the kind
    the BOM names: AC for an AC-rated part, else DC); where both give a value and they differ,
    the conservative one is kept and a ``warn`` verdict names both, unless the part (or the whole
    file) is marked to override, when the parts data is kept and the verdict is still a ``warn``
    naming both values and saying so. The columns of ``PART_COLUMNS`` are added. Verdict columns: pidx, refdes, rule_id
    (``parts.conflict``), status, message, source.
    """
    cols, verdicts = lay_parts(table, parts)
    return pd.DataFrame(cols, index=table.index, copy=False), verdicts


def lay_parts(table: pd.DataFrame, parts: PartsData) -> tuple[dict[str, pd.Series], pd.DataFrame]:
    """``apply_parts`` as columns by name (the table's order, the added ones last), with no copy
    of the table and no table built: the columns the parts data leaves alone are the table's own
    (the circuit stage works on columns by name; a small board pays per column written)."""
    cols, index = dict(table.items()), table.index
    at = parts.values.index.get_indexer(part_keys(table).to_numpy())
    matched = at >= 0
    take = _taker(parts.values, index, matched, np.where(matched, at, 0))
    new, only_ac = _part_values(cols, index, take)
    override = (take("override", False).eq(True) | parts.override_all).to_numpy() & matched
    part_row = take("row", 0).fillna(0).astype(np.int64).to_numpy()
    findings: list[tuple[int, str, str, str, str]] = []
    report = _reporter(cols["refdes"], parts.path, take("mpn", "").astype(object), part_row,
                       override, findings)
    _lay_checked(cols, index, new, override, report)
    _lay_dielectric(cols, index, take("dielectric", "").astype(object), override, report)
    if "voltage_kind" in cols:
        cols["voltage_kind"] = cols["voltage_kind"].astype(object).mask(
            pd.Series(only_ac, index=index), "ac")
    for name, (_, _, column) in FIELDS.items():
        if column in PART_COLUMNS:
            cols[column] = take(name).astype(float).rename(column)
    cols["part_row"] = pd.Series(pd.array(np.where(matched, part_row, pd.NA), dtype="Int64"),
                                 index=index, name="part_row")
    verdicts = pd.DataFrame(findings, columns=["pidx", "rule_id", "status", "message", "source"])
    verdicts.insert(1, "refdes", cols["refdes"].to_numpy(dtype=object)[
        verdicts["pidx"].to_numpy(dtype=np.int64)] if len(verdicts) else [])
    return cols, verdicts


def _numbers(cols: dict[str, pd.Series], name: str, n: int) -> np.ndarray:
    """Column ``name`` as floats (NaN where it is not a number; all NaN when it is missing)."""
    values = cols.get(name)
    if values is None:
        return np.full(n, np.nan)
    if values.dtype == np.float64:
        return values.to_numpy()
    return pd.to_numeric(values, errors="coerce").astype(float).to_numpy()


def _taker(values: pd.DataFrame, index: pd.Index, matched: np.ndarray,
           pick: np.ndarray) -> Callable[..., pd.Series]:
    """``take(name, empty)``: the parts file's column ``name`` for each placement (``empty``
    where the part is not in the file or the file lacks the column)."""
    def take(name: str, empty: Any = np.nan) -> pd.Series:
        if name not in values.columns:
            return pd.Series(empty, index=index)
        col = values[name].to_numpy()
        if not len(col):  # a file with a header only
            return pd.Series(empty, index=index)
        return pd.Series(np.where(matched, col[pick], empty), index=index)

    return take


def _part_values(cols: dict[str, pd.Series], index: pd.Index, take: Callable[..., pd.Series]
                 ) -> tuple[dict[str, np.ndarray], np.ndarray]:
    """The spec columns the parts data gives each placement (a rated voltage of the kind the
    BOM names), and where only an AC rating is known (the part becomes AC-rated)."""
    kind = cols.get("voltage_kind")
    is_ac = (np.zeros(len(index), dtype=bool) if kind is None
             else (kind.astype(object).where(kind.notna(), "") == "ac").to_numpy())
    dc = take("rated_voltage").to_numpy(dtype=float)
    ac = take("rated_voltage_ac").to_numpy(dtype=float)
    bom_v = _numbers(cols, "voltage_v", len(index))
    part_v = np.where(is_ac, ac, dc)
    only_ac = ~is_ac & np.isnan(dc) & ~np.isnan(ac) & np.isnan(bom_v)
    part_v[only_ac] = ac[only_ac]
    tol = take("tolerance").to_numpy(dtype=float)
    new = {"capacitance_f": take("capacitance").to_numpy(dtype=float), "voltage_v": part_v,
           "temp_min_c": take("temp_min").to_numpy(dtype=float),
           "temp_max_c": take("temp_max").to_numpy(dtype=float), "tol_minus_pct": tol,
           "tol_plus_pct": tol}
    return new, only_ac


def _reporter(refdes: pd.Series, path: str, mpn_text: pd.Series, part_row: np.ndarray,
              override: np.ndarray, findings: list[tuple[int, str, str, str, str]]
              ) -> Callable[[int, str, str, str, str], None]:
    """``report(i, label, part_text, bom_text, used)``: one ``warn`` finding for placement
    ``i`` whose BOM text and parts data disagree, saying which value the verdict uses."""
    def report(i: int, label: str, part_text: str, bom_text: str, used: str) -> None:
        head = (f"{refdes.iat[i]}: parts data for {mpn_text.iat[i]} ({path} row "
                f"{int(part_row[i])}) gives {label} {part_text}; the BOM text says {bom_text}; ")
        if override[i]:
            # Still a finding: the BOM and the parts data contradict each other, and which part
            # is fitted is for a reviewer to confirm.
            findings.append((i, PARTS_FINDING, "warn", head + "the parts data is used "
                             "(override); confirm which part is fitted", "parts data"))
        else:
            findings.append((i, PARTS_FINDING, "warn", head + f"the verdict uses {used}; mark "
                             "the part override = true to use the parts data", "parts data"))

    return report


def _lay_checked(cols: dict[str, pd.Series], index: pd.Index, new: dict[str, np.ndarray],
                 override: np.ndarray, report: Callable[[int, str, str, str, str], None]) -> None:
    """Each checked spec column: the parts value where the BOM gives none, the conservative
    one (or the parts value, on override) where both differ, each conflict reported."""
    tol_flagged = np.zeros(len(index), dtype=bool)  # one tolerance finding, not one per side
    for column, label, unit, rel, absolute, choose, word in _CHECKED:
        bom, part = _numbers(cols, column, len(index)), new[column]
        part_given = ~np.isnan(part)
        with np.errstate(invalid="ignore"):
            differ = (~np.isnan(bom) & part_given
                      & (np.abs(bom - part) > np.fmax(rel * np.abs(part), absolute)))
        used = np.where(override & part_given, part, choose(bom, part))
        for i in np.flatnonzero(differ & ~tol_flagged):  # conflicting placements only
            report(int(i), label, format_quantity(part[i], unit), format_quantity(bom[i], unit),
                   f"the {word} value, {format_quantity(used[i], unit)}")
        if column == "tol_minus_pct":
            tol_flagged = differ
        cols[column] = pd.Series(used, index=index, name=column)


def _lay_dielectric(cols: dict[str, pd.Series], index: pd.Index, part: pd.Series,
                    override: np.ndarray, report) -> None:
    """Fill or resolve the dielectric code (in place): the parts file's where the BOM names none
    or the part overrides, else the less favourable of the two (``_worse``); a switched code
    brings its class, change limits and temperature range (the range only ever narrows, unless
    the part overrides)."""
    bom = (cols["dielectric"].astype(object).where(cols["dielectric"].notna(), "")
           if "dielectric" in cols else pd.Series("", index=index, dtype=object))
    bom_u, part_u = bom.astype(str).str.upper(), part.astype(str).str.upper()
    given = (part_u != "").to_numpy()
    if not given.any():
        return
    codes, pairs = pd.factorize(pd.MultiIndex.from_arrays([bom_u, part_u]))
    chosen = np.empty(len(pairs), dtype=object)
    for k, (b, p) in enumerate(pairs):  # distinct pairs, not placements
        db, dp = decode_dielectric(b) if b else None, decode_dielectric(p) if p else None
        worse = dp is not None and (db is None or _worse(dp) > _worse(db))
        chosen[k] = p if worse else b
    used = np.where(given & override, part_u.to_numpy(dtype=object), chosen[codes])
    differ = given & (bom_u != "").to_numpy() & (bom_u != part_u).to_numpy()
    for i in np.flatnonzero(differ):
        report(int(i), "dielectric", part_u.iat[i], bom_u.iat[i], f"{used[i]}, the less "
               "favourable code")
    switched = used != bom_u.to_numpy()
    if not switched.any():
        return
    cols["dielectric"] = pd.Series(np.where(switched, used, bom.to_numpy()), index=index,
                                   name="dielectric")
    for code in pd.unique(used[switched]):
        d = decode_dielectric(code)
        rows = switched & (used == code)
        for column, attr in _DIELECTRIC_COLUMNS.items():
            col = _numbers(cols, column, len(index)).copy()
            value = getattr(d, attr)
            col[rows] = np.nan if value is None else value
            cols[column] = pd.Series(col, index=index, name=column)
        for column, attr, choose in (("temp_min_c", "temp_min_c", np.fmax),
                                     ("temp_max_c", "temp_max_c", np.fmin)):
            value = getattr(d, attr)
            if value is None:
                continue
            col = _numbers(cols, column, len(index)).copy()
            narrowed = choose(col, value)
            col[rows] = np.where(override[rows] & ~np.isnan(col[rows]), col[rows],
                                 narrowed[rows])
            cols[column] = pd.Series(col, index=index, name=column)


def curve_values(table: pd.DataFrame, parts: PartsData | None, name: str, x: pd.Series, *,
                 log_x: bool = False, beyond: bool = True) -> pd.Series:
    """Each placement's part curve ``name`` evaluated at ``x`` (NaN where its part has none, and
    past the curve's last point with ``beyond=False``).

    DC-bias curves given as capacitance are divided by the placement's nominal capacitance, so
    the result is always a fraction. Loops over the distinct parts with a curve, not placements.
    """
    out = np.full(len(table), np.nan)
    if parts is not None and name in parts.curves:
        keys = part_keys(table).to_numpy()
        xv = x.to_numpy(dtype=float)
        nominal = _float(table, "capacitance_f").to_numpy()
        for key, curve in parts.curves[name].items():
            mask = keys == key
            if not mask.any():
                continue
            y = curve.at(xv[mask], log_x=log_x, beyond=beyond)
            out[mask] = y / nominal[mask] if curve.farads else y
    return pd.Series(out, index=table.index, dtype=float)
