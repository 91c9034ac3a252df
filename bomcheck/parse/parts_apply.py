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

__all__ = ["PART_COLUMNS", "apply_parts", "curve_values", "part_keys"]


def part_keys(table: pd.DataFrame) -> pd.Series:
    """The MPN key of each placement (upper case, stripped; "" without an MPN)."""
    if "mpn" not in table.columns:
        return pd.Series("", index=table.index, dtype=object)
    mpn = table["mpn"].astype(object).where(table["mpn"].notna(), "")
    codes, uniques = pd.factorize(mpn.to_numpy(dtype=object))
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
    out = table.copy()
    at = parts.values.index.get_indexer(part_keys(out).to_numpy())
    matched = at >= 0
    take = _taker(parts.values, out.index, matched, np.where(matched, at, 0))
    new, only_ac = _part_values(out, take)
    override = (take("override", False).eq(True) | parts.override_all).to_numpy() & matched
    part_row = take("row", 0).fillna(0).astype(np.int64).to_numpy()
    findings: list[tuple[int, str, str, str, str]] = []
    report = _reporter(out, parts.path, take("mpn", "").astype(object), part_row, override,
                       findings)
    _lay_checked(out, new, override, report)
    _lay_dielectric(out, take("dielectric", "").astype(object), override, report)
    if "voltage_kind" in out:
        out["voltage_kind"] = out["voltage_kind"].astype(object).mask(
            pd.Series(only_ac, index=out.index), "ac")
    for name, (_, _, column) in FIELDS.items():
        if column in PART_COLUMNS:
            out[column] = take(name).astype(float)
    out["part_row"] = pd.array(np.where(matched, part_row, pd.NA), dtype="Int64")
    verdicts = pd.DataFrame(findings, columns=["pidx", "rule_id", "status", "message", "source"])
    verdicts.insert(1, "refdes", out["refdes"].to_numpy(dtype=object)[
        verdicts["pidx"].to_numpy(dtype=np.int64)] if len(verdicts) else [])
    return out, verdicts


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


def _part_values(out: pd.DataFrame, take: Callable[..., pd.Series]
                 ) -> tuple[dict[str, pd.Series], np.ndarray]:
    """The spec columns the parts data gives each placement (a rated voltage of the kind the
    BOM names), and where only an AC rating is known (the part becomes AC-rated)."""
    kind = (out["voltage_kind"].astype(object).where(out["voltage_kind"].notna(), "")
            if "voltage_kind" in out else pd.Series("", index=out.index, dtype=object))
    is_ac = (kind == "ac").to_numpy()
    dc, ac = take("rated_voltage").astype(float), take("rated_voltage_ac").astype(float)
    bom_v = _float(out, "voltage_v")
    part_v = pd.Series(np.where(is_ac, ac, dc), index=out.index)
    only_ac = ~is_ac & dc.isna().to_numpy() & ac.notna().to_numpy() & bom_v.isna().to_numpy()
    part_v[only_ac] = ac[only_ac]
    tol = take("tolerance").astype(float)
    new = {"capacitance_f": take("capacitance").astype(float), "voltage_v": part_v,
           "temp_min_c": take("temp_min").astype(float),
           "temp_max_c": take("temp_max").astype(float), "tol_minus_pct": tol,
           "tol_plus_pct": tol}
    return new, only_ac


def _reporter(out: pd.DataFrame, path: str, mpn_text: pd.Series, part_row: np.ndarray,
              override: np.ndarray, findings: list[tuple[int, str, str, str, str]]
              ) -> Callable[[int, str, str, str, str], None]:
    """``report(i, label, part_text, bom_text, used)``: one ``warn`` finding for placement
    ``i`` whose BOM text and parts data disagree, saying which value the verdict uses."""
    def report(i: int, label: str, part_text: str, bom_text: str, used: str) -> None:
        head = (f"{out['refdes'].iat[i]}: parts data for {mpn_text.iat[i]} ({path} row "
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


def _lay_checked(out: pd.DataFrame, new: dict[str, pd.Series], override: np.ndarray,
                 report: Callable[[int, str, str, str, str], None]) -> None:
    """Each checked spec column: the parts value where the BOM gives none, the conservative
    one (or the parts value, on override) where both differ, each conflict reported."""
    tol_flagged = np.zeros(len(out), dtype=bool)  # one tolerance finding, not one per side
    for column, label, unit, rel, absolute, choose, word in _CHECKED:
        bom, part = _float(out, column), new[column]
        with np.errstate(invalid="ignore"):
            differ = (bom.notna() & part.notna()
                      & ((bom - part).abs() > np.fmax(rel * part.abs(), absolute))).to_numpy()
        used = pd.Series(np.where(override & part.notna().to_numpy(), part, choose(bom, part)),
                         index=out.index)
        for i in np.flatnonzero(differ & ~tol_flagged):  # conflicting placements only
            report(int(i), label, format_quantity(part.iat[i], unit),
                   format_quantity(bom.iat[i], unit),
                   f"the {word} value, {format_quantity(used.iat[i], unit)}")
        if column == "tol_minus_pct":
            tol_flagged = differ
        out[column] = used


def _lay_dielectric(out: pd.DataFrame, part: pd.Series, override: np.ndarray, report) -> None:
    """Fill or resolve the dielectric code (in place): the parts file's where the BOM names none
    or the part overrides, else the less favourable of the two (``_worse``); a switched code
    brings its class, change limits and temperature range (the range only ever narrows, unless
    the part overrides)."""
    bom = (out["dielectric"].astype(object).where(out["dielectric"].notna(), "")
           if "dielectric" in out else pd.Series("", index=out.index, dtype=object))
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
    out["dielectric"] = pd.Series(np.where(switched, used, bom.to_numpy()), index=out.index)
    for code in pd.unique(used[switched]):
        d = decode_dielectric(code)
        rows = switched & (used == code)
        for column, attr in _DIELECTRIC_COLUMNS.items():
            col = _float(out, column).to_numpy().copy()
            value = getattr(d, attr)
            col[rows] = np.nan if value is None else value
            out[column] = col
        for column, attr, choose in (("temp_min_c", "temp_min_c", np.fmax),
                                     ("temp_max_c", "temp_max_c", np.fmin)):
            value = getattr(d, attr)
            if value is None:
                continue
            col = _float(out, column).to_numpy().copy()
            narrowed = choose(col, value)
            col[rows] = np.where(override[rows] & ~np.isnan(col[rows]), col[rows],
                                 narrowed[rows])
            out[column] = col


def curve_values(table: pd.DataFrame, parts: PartsData | None, name: str, x: pd.Series, *,
                 log_x: bool = False, beyond: bool = True) -> pd.Series:
    """Each placement's part curve ``name`` evaluated at ``x`` (NaN where its part has none, and
    past the curve's last point with ``beyond=False``).

    DC-bias curves given as capacitance are divided by the placement's nominal capacitance, so
    the result is always a fraction. Loops over the distinct parts with a curve, not placements.
    """
    out = pd.Series(np.nan, index=table.index, dtype=float)
    if parts is None or name not in parts.curves:
        return out
    keys = part_keys(table).to_numpy()
    xv = x.to_numpy(dtype=float)
    nominal = _float(table, "capacitance_f").to_numpy()
    for key, curve in parts.curves[name].items():
        mask = keys == key
        if not mask.any():
            continue
        y = curve.at(xv[mask], log_x=log_x, beyond=beyond)
        out[mask] = y / nominal[mask] if curve.farads else y
    return out
