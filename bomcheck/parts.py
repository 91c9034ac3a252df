"""Normalise stage for part data: a parts file keyed by MPN (CSV, TSV, XLSX or TOML) read into SI
values, laid over the placements' spec columns before the circuit-level stresses.

Tables (CSV, TSV, XLSX)
-----------------------
One header row (``mpn`` and any of the fields below), then one row per part number::

    mpn,             rated_voltage, temp_max, esr,     life,   dc_bias
    KV-1006-X5R,     6.3 V,         85 degC,  ,        ,       "0 V: 100 %; 5 V: 30 %"
    RX-108-35-12X25, 35 V,          105 degC, 45 mohm, 5000 h,

Fields (header aliases in ``ALIASES``; a unit in brackets, ``esr [mohm]``, is the unit of the
column's bare numbers, else the unit shown): ``capacitance`` (F), ``rated_voltage`` (V DC),
``rated_voltage_ac`` (V rms), ``temp_min`` and ``temp_max`` (degC, the rated range), ``esr``
(ohm), ``ripple_current`` (A rms, rated at ``ripple_freq`` (Hz) and ``temp_max``),
``ripple_freq_mult`` and ``ripple_temp_mult`` (multipliers of the rated ripple current over
frequency and over ambient temperature), ``surge_current`` (A), ``life`` (h, the rated life L0)
at ``life_temp`` (degC, T0; default ``temp_max``), ``leakage`` (A, the rated maximum),
``thermal_resistance`` (degC/W), ``dc_bias`` (applied voltage against the capacitance left, as a
fraction, a percentage or a capacitance), ``notes``.

A curve is written ``x: y; x: y`` (``"120 Hz: 0.6; 1 kHz: 0.85; 100 kHz: 1"``); in TOML it may
also be a list of pairs (``[["0 V", "100 %"], ["5 V", "30 %"]]``).

TOML
----
::

    [parts."KV-1006-X5R"]
    rated_voltage = "6.3 V"
    dc_bias = "0 V: 100 %; 2 V: 72 %; 5 V: 30 %"

Laying the data over the placements
-----------------------------------
A placement whose MPN (case-insensitive, stripped) is in the file takes the file's values:
they override the spec columns the BOM text gave (rated voltage, rated temperatures,
capacitance) and add the part's ratings (``esr_ohm``, ``ripple_rated_a``, ``surge_rated_a``,
``life_l0_h``...). Where the BOM text says something else, the placement gets a warning naming
both values (the parts data is used).
"""

from __future__ import annotations

import re
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd

from bomcheck.errors import InputError, UnitError
from bomcheck.units import to_si

PARTS_FINDING = "parts.conflict"

# Field -> (quantity, unit of bare numbers, placement column it fills).
FIELDS: dict[str, tuple[str, str, str]] = {
    "capacitance": ("capacitance", "F", "capacitance_f"),
    "rated_voltage": ("voltage", "V", "part_voltage_dc_v"),
    "rated_voltage_ac": ("voltage", "V", "part_voltage_ac_v"),
    "temp_min": ("temperature", "degC", "temp_min_c"),
    "temp_max": ("temperature", "degC", "temp_max_c"),
    "esr": ("resistance", "ohm", "esr_ohm"),
    "ripple_current": ("current", "A", "ripple_rated_a"),
    "ripple_freq": ("frequency", "Hz", "ripple_rated_hz"),
    "surge_current": ("current", "A", "surge_rated_a"),
    "life": ("time", "h", "life_l0_h"),
    "life_temp": ("temperature", "degC", "life_t0_c"),
    "leakage": ("current", "A", "leakage_a"),
    "thermal_resistance": ("thermal_resistance", "delta_degC / W", "rth_c_per_w"),
}
# Curve -> (quantity of x, quantity of y; "fraction" for a multiplier or remaining fraction).
CURVES: dict[str, tuple[str, str]] = {
    "dc_bias": ("voltage", "fraction"),
    "ripple_freq_mult": ("frequency", "fraction"),
    "ripple_temp_mult": ("temperature", "fraction"),
}
# The part-rating columns a placement gains (spec columns are overridden in place).
PART_COLUMNS: tuple[str, ...] = ("esr_ohm", "ripple_rated_a", "ripple_rated_hz", "surge_rated_a",
                                 "life_l0_h", "life_t0_c", "leakage_a", "rth_c_per_w")

ALIASES: dict[str, tuple[str, ...]] = {
    "mpn": ("mpn", "manufacturer part number", "mfr part number", "mfr pn", "part number", "pn",
            "part", "mpn number"),
    "capacitance": ("capacitance", "c", "value", "nominal capacitance"),
    "rated_voltage": ("rated_voltage", "rated voltage", "voltage", "rated voltage dc",
                      "voltage dc", "v_rated", "vr"),
    "rated_voltage_ac": ("rated_voltage_ac", "rated voltage ac", "voltage ac", "v_rated_ac",
                         "ac rating"),
    "temp_min": ("temp_min", "t_min", "min temperature", "rated temperature min",
                 "lower category temperature"),
    "temp_max": ("temp_max", "t_max", "max temperature", "rated temperature",
                 "rated temperature max", "upper category temperature"),
    "esr": ("esr", "esr_ohm", "equivalent series resistance"),
    "ripple_current": ("ripple_current", "ripple current", "rated ripple current", "i_ripple",
                       "ripple"),
    "ripple_freq": ("ripple_freq", "ripple frequency", "ripple current frequency"),
    "ripple_freq_mult": ("ripple_freq_mult", "frequency multipliers",
                         "ripple frequency multipliers", "frequency multiplier"),
    "ripple_temp_mult": ("ripple_temp_mult", "temperature multipliers",
                         "ripple temperature multipliers", "temperature multiplier"),
    "surge_current": ("surge_current", "surge current", "surge current rating", "surge",
                      "inrush current rating"),
    "life": ("life", "rated life", "l0", "endurance", "load life"),
    "life_temp": ("life_temp", "life temperature", "t0", "endurance temperature"),
    "leakage": ("leakage", "leakage current", "dcl", "i_leak"),
    "thermal_resistance": ("thermal_resistance", "thermal resistance", "rth", "r_th"),
    "dc_bias": ("dc_bias", "dc bias", "dc bias curve", "dc-bias curve"),
    "notes": ("notes", "note", "comment", "comments"),
}


def _norm(name: str) -> str:
    return re.sub(r"[^0-9a-z]+", "", name.casefold())


_ALIAS_KEY = {_norm(s): canonical for canonical, spellings in ALIASES.items() for s in spellings}
_BRACKET_UNIT = re.compile(r"^(?P<name>.*?)\s*[\[(](?P<unit>[^\[\]()]*)[\])]\s*$")
_NO_VALUE = frozenset({"", "-", "\u2013", "\u2014", "n/a", "na"})


@dataclass(frozen=True)
class Curve:
    """A part's curve: x values (SI, increasing) and y values (a fraction, or farads)."""

    xs: tuple[float, ...]
    ys: tuple[float, ...]
    farads: bool = False  # y given as capacitance (DC-bias curves only)

    def at(self, x: np.ndarray, *, log_x: bool = False) -> np.ndarray:
        """Values at ``x`` by linear interpolation (in log10 x when ``log_x``), flat beyond."""
        xs = np.asarray(self.xs, dtype=float)
        ys = np.asarray(self.ys, dtype=float)
        x = np.asarray(x, dtype=float)
        with np.errstate(divide="ignore", invalid="ignore"):
            out = (np.interp(np.log10(x), np.log10(xs), ys) if log_x else np.interp(x, xs, ys))
        return np.where(np.isnan(x), np.nan, out)


@dataclass(frozen=True, eq=False)
class PartsData:
    """A parts file read: one row per MPN key (upper case) with SI values, plus the curves.

    ``values`` is indexed by the MPN key with a float column per ``FIELDS`` name, ``mpn`` (as
    written) and ``row`` (source row or TOML line); ``curves`` maps a ``CURVES`` name to the
    parts that give one.
    """

    path: str
    sha256: str
    values: pd.DataFrame
    curves: Mapping[str, Mapping[str, Curve]] = field(default_factory=dict)
    warnings: tuple[str, ...] = ()


# --- reading ----------------------------------------------------------------------------------


def is_parts_header(cells: list[str]) -> bool:
    """True for the header row of a parts table: an MPN column and at least one data column."""
    found = {_field_of(str(c))[0] for c in cells if str(c).strip()}
    return "mpn" in found and bool(found & (set(FIELDS) | set(CURVES)))


def _field_of(header: str) -> tuple[str | None, str | None]:
    name, unit = header.strip(), None
    m = _BRACKET_UNIT.match(name)
    if m and m.group("name").strip():
        name, unit = m.group("name").strip(), (m.group("unit").strip() or None)
    return _ALIAS_KEY.get(_norm(name)), unit


def read_parts(path: str, *, sheet: str | int | None = None) -> PartsData:
    """Read a parts file (CSV/TSV/XLSX through ``bomcheck.reader``, or TOML) into ``PartsData``.

    Raises ``InputError`` naming the file, row and column for a cell that cannot be used, an
    MPN given twice, or a file without an MPN column.
    """
    from bomcheck.reader import read_input, toml_text

    data, sha256 = read_input(str(path), "parts file")
    if Path(path).suffix.lower() == ".toml":
        text = toml_text(data, str(path))
        parts = parts_from_toml(text, path=str(path))
    else:
        from bomcheck.reader import read_input_table

        raw = read_input_table(
            str(path), sheet=sheet, header_predicate=is_parts_header, what="parts-file",
            expected="a header row with an mpn column and data columns such as rated_voltage, "
                     "esr or dc_bias")
        parts = parts_from_table(raw.frame, raw.rows, path=str(path))
    return PartsData(path=str(path), sha256=sha256, values=parts.values, curves=parts.curves,
                     warnings=parts.warnings)


def parts_from_table(frame: pd.DataFrame, rows: Sequence[int] | np.ndarray | None = None, *,
                     path: str = "<table>") -> PartsData:
    """Parts data from a table of text cells (headers as columns; ``rows`` the source rows)."""
    n = len(frame)
    src = np.arange(2, n + 2) if rows is None else np.asarray(rows, dtype=np.int64)
    columns: dict[str, tuple[int, str, str | None]] = {}
    warnings: list[str] = []
    for pos, header in enumerate(frame.columns):
        canonical, unit = _field_of(str(header))
        if canonical is None:
            if str(header).strip():
                warnings.append(f"{path}: column {header!r} is not a parts-file field; ignored")
            continue
        if canonical in columns:
            raise InputError(f"two columns give {canonical}: {columns[canonical][1]!r} and "
                             f"{header!r}", path=path, column=str(header),
                             expected="one column per field")
        columns[canonical] = (pos, str(header), unit)
    if "mpn" not in columns:
        raise InputError("no MPN column", path=path, expected="a column named mpn (or "
                         + ", ".join(ALIASES["mpn"][1:4]) + ")")
    cells = {k: np.array([str(v).strip() for v in frame.iloc[:, pos].tolist()], dtype=object)
             for k, (pos, _, _) in columns.items()}
    entries = _Entries(src, cells, {k: h for k, (_, h, _) in columns.items()},
                       {k: u for k, (_, _, u) in columns.items()})
    return _build(entries, path=path, warnings=warnings)


def parts_from_toml(text: str, *, path: str = "<toml>") -> PartsData:
    """Parts data from TOML: ``[parts."MPN"]`` tables whose keys are the fields."""
    from bomcheck.reader import load_toml

    doc = load_toml(text, path)
    table = doc.get("parts")
    if not isinstance(table, dict):
        raise InputError("no [parts] table", path=path, expected='[parts."MPN"] tables')
    lines = _toml_lines(text)
    names = list(table)
    rows = np.array([lines.get(str(n), 1) for n in names], dtype=np.int64)
    cells: dict[str, np.ndarray] = {"mpn": np.array([str(n).strip() for n in names], dtype=object)}
    headers: dict[str, str] = {"mpn": "parts table name"}
    units: dict[str, str | None] = {}
    warnings: list[str] = []
    for i, name in enumerate(names):
        body = table[name]
        if not isinstance(body, dict):
            raise InputError(f"parts.{name} must be a table", path=path, row=int(rows[i]),
                             expected=f'[parts."{name}"] with keys')
        for key, value in body.items():
            canonical, unit = _field_of(str(key))
            if canonical is None or canonical == "mpn":
                warnings.append(f"{path}: key parts.{name}.{key} is not a parts-file field; "
                                "ignored")
                continue
            if canonical in units and units[canonical] != unit:
                raise InputError(f"{canonical} is written with two header units", path=path,
                                 row=int(rows[i]), column=f"parts.{name}.{key}",
                                 expected="one spelling of each key in the file")
            units[canonical] = unit
            headers.setdefault(canonical, str(key))
            col = cells.setdefault(canonical, np.full(len(names), "", dtype=object))
            col[i] = _toml_cell(value, canonical, path=path, row=int(rows[i]),
                                label=f"parts.{name}.{key}")
    return _build(_Entries(rows, cells, headers, units), path=path, warnings=warnings)


def _toml_lines(text: str) -> dict[str, int]:
    out: dict[str, int] = {}
    pattern = re.compile(r"""^\s*\[\s*parts\s*\.\s*"""
                         r"""(?:"((?:[^"\\]|\\.)*)"|'([^']*)'|([A-Za-z0-9_-]+))\s*\]""")
    for n, line in enumerate(text.splitlines(), start=1):
        m = pattern.match(line)
        if m:
            out.setdefault(next(g for g in m.groups() if g is not None), n)
    return out


def _toml_cell(value: Any, canonical: str, *, path: str, row: int, label: str) -> str:
    if isinstance(value, bool):
        raise InputError("not a value", path=path, row=row, column=label, text=str(value),
                         expected="a number or a text with a unit")
    if isinstance(value, (int, float, str)):
        return str(value).strip()
    if canonical in CURVES and isinstance(value, list) and all(
            isinstance(p, list) and len(p) == 2 for p in value):
        return "; ".join(f"{x}: {y}" for x, y in value)
    raise InputError("not a value", path=path, row=row, column=label, text=str(value),
                     expected="a number, a text with a unit, or for a curve a list of "
                              "[x, y] pairs")


@dataclass(frozen=True)
class _Entries:
    rows: np.ndarray
    cells: dict[str, np.ndarray]  # canonical -> text cells
    headers: dict[str, str]
    units: dict[str, str | None]


def _build(e: _Entries, *, path: str, warnings: list[str]) -> PartsData:
    mpn = e.cells["mpn"]
    keep = mpn != ""
    for k in e.cells:
        if k not in ("mpn", "notes") and k in FIELDS | CURVES:
            filled = e.cells[k] != ""
            if (filled & ~keep).any():
                i = int(np.flatnonzero(filled & ~keep)[0])
                raise InputError("row gives part data but no MPN", path=path,
                                 row=int(e.rows[i]), column=e.headers["mpn"], text="",
                                 expected="the manufacturer part number the data is for")
    keys = np.array([m.upper() for m in mpn], dtype=object)
    seen: dict[str, int] = {}
    for i in np.flatnonzero(keep):
        if keys[i] in seen:
            raise InputError(f"MPN {mpn[i]!r} is given by rows {seen[keys[i]]} and "
                             f"{int(e.rows[i])}", path=path, row=int(e.rows[i]),
                             column=e.headers["mpn"], text=mpn[i], expected="each MPN once")
        seen[keys[i]] = int(e.rows[i])
    at = np.flatnonzero(keep)
    values = pd.DataFrame(index=pd.Index(keys[at], dtype=object, name="mpn_key"))
    values["mpn"] = mpn[at]
    values["row"] = e.rows[at]
    for name, (quantity, default_unit, _) in FIELDS.items():
        if name not in e.cells:
            values[name] = np.nan
            continue
        unit = e.units.get(name) or default_unit
        values[name] = _convert(e.cells[name][at], quantity, unit, path=path,
                                rows=e.rows[at], column=e.headers[name])
    curves: dict[str, dict[str, Curve]] = {}
    for name, (x_quantity, _) in CURVES.items():
        if name not in e.cells:
            continue
        found: dict[str, Curve] = {}
        for i in at:
            cell = e.cells[name][i]
            if cell.casefold() in _NO_VALUE:
                continue
            found[keys[i]] = _curve(cell, name, x_quantity, path=path, row=int(e.rows[i]),
                                    column=e.headers[name])
        if found:
            curves[name] = found
    if not len(values):
        warnings.append(f"{path}: no parts entries")
    return PartsData(path=path, sha256="", values=values, curves=curves,
                     warnings=tuple(warnings))


def _convert(cells: np.ndarray, quantity: str, unit: str, *, path: str, rows: np.ndarray,
             column: str) -> np.ndarray:
    """Floats (SI) of a column of text cells, each distinct text converted once."""
    codes, uniques = pd.factorize(np.asarray(cells, dtype=object), use_na_sentinel=True)
    out = np.full(len(uniques) + 1, np.nan)
    for k, u in enumerate(uniques):
        text = str(u).strip()
        if text.casefold() in _NO_VALUE:
            continue
        try:
            out[k] = to_si(text, quantity, unit)
        except UnitError as exc:
            i = int(np.argmax(codes == k))
            raise InputError(f"{exc.problem} ({column})", path=path, row=int(rows[i]),
                             column=column, text=text, expected=exc.expected) from None
    return out[codes]


def _curve(cell: str, name: str, x_quantity: str, *, path: str, row: int, column: str) -> Curve:
    """``"0 V: 100 %; 5 V: 30 %"`` to a Curve; points sorted by x, x strictly increasing."""
    def bad(problem: str, text: str) -> InputError:
        return InputError(f"{problem} ({name})", path=path, row=row, column=column, text=text,
                          expected="points 'x: y' separated by ';', such as "
                                   + ("'0 V: 100 %; 5 V: 45 %'" if name == "dc_bias"
                                      else "'120 Hz: 0.6; 100 kHz: 1.0'"))

    xs: list[float] = []
    ys: list[float] = []
    farads: set[bool] = set()
    for point in (p for p in cell.split(";") if p.strip()):
        if ":" not in point:
            raise bad("curve point without ':'", point.strip())
        x_text, y_text = (s.strip() for s in point.split(":", 1))
        try:
            xs.append(to_si(x_text, x_quantity))
        except UnitError as exc:
            raise bad(exc.problem, x_text) from None
        y, is_f = _curve_y(y_text, name)
        if y is None:
            raise bad("not a fraction, percentage" + (" or capacitance" if name == "dc_bias"
                                                      else ""), y_text)
        ys.append(y)
        farads.add(is_f)
    if len(xs) < 1:
        raise bad("empty curve", cell)
    if len(farads) > 1:
        raise bad("curve mixes capacitances and fractions", cell)
    order = np.argsort(xs, kind="stable")
    sx = [xs[i] for i in order]
    if any(b <= a for a, b in zip(sx, sx[1:])):
        raise bad("the same x twice", cell)
    is_farads = farads == {True}
    if not is_farads and name == "dc_bias" and any(not 0.0 <= y <= 1.0 for y in ys):
        raise bad("remaining fraction outside 0..100 %", cell)
    return Curve(tuple(sx), tuple(ys[i] for i in order), is_farads)


def _curve_y(text: str, name: str) -> tuple[float | None, bool]:
    try:
        return to_si(text, "dimensionless"), False
    except UnitError:
        pass
    if name == "dc_bias":
        try:
            return to_si(text, "capacitance"), True
        except UnitError:
            pass
    return None, False


# --- laying the data over the placements ------------------------------------------------------


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


# (spec column, what the message calls it, display unit, relative or absolute tolerance)
_CHECKED = (
    ("capacitance_f", "capacitance", "F", 1e-3, 0.0),
    ("voltage_v", "rated voltage", "V", 1e-3, 0.0),
    ("temp_min_c", "minimum temperature", "degC", 0.0, 0.5),
    ("temp_max_c", "maximum temperature", "degC", 0.0, 0.5),
)


def apply_parts(table: pd.DataFrame, parts: PartsData) -> tuple[pd.DataFrame, pd.DataFrame]:
    """The placements with the parts data laid over them, and one warning verdict per value
    that contradicts the BOM text.

    Spec columns the file gives are overridden (a rated voltage of the kind the BOM names: AC
    for an AC-rated part, else DC); the columns of ``PART_COLUMNS`` are added. Verdict columns:
    pidx, refdes, rule_id (``parts.conflict``), status, message, source.
    """
    from bomcheck.rules import format_quantity

    out = table.copy()
    keys = part_keys(out)
    at = parts.values.index.get_indexer(keys.to_numpy())
    matched = at >= 0

    def take(name: str) -> pd.Series:
        col = parts.values[name].to_numpy(dtype=float)
        return pd.Series(np.where(matched, col[np.where(matched, at, 0)], np.nan),
                         index=out.index)

    kind = (out["voltage_kind"].astype(object).where(out["voltage_kind"].notna(), "")
            if "voltage_kind" in out else pd.Series("", index=out.index, dtype=object))
    is_ac = (kind == "ac").to_numpy()
    dc, ac = take("rated_voltage"), take("rated_voltage_ac")
    bom_v = _float(out, "voltage_v")
    part_v = pd.Series(np.where(is_ac, ac, dc), index=out.index)
    only_ac = ~is_ac & dc.isna().to_numpy() & ac.notna().to_numpy() & bom_v.isna().to_numpy()
    part_v[only_ac] = ac[only_ac]
    new = {
        "capacitance_f": take("capacitance"),
        "voltage_v": part_v,
        "temp_min_c": take("temp_min"),
        "temp_max_c": take("temp_max"),
    }
    findings = []
    mpn_text = pd.Series(np.where(matched, parts.values["mpn"].to_numpy(dtype=object)[
        np.where(matched, at, 0)], ""), index=out.index, dtype=object)
    part_row = np.where(matched, parts.values["row"].to_numpy()[np.where(matched, at, 0)], 0)
    for column, label, unit, rel, absolute in _CHECKED:
        bom, part = _float(out, column), new[column]
        with np.errstate(invalid="ignore"):
            differ = (bom.notna() & part.notna()
                      & ((bom - part).abs() > np.fmax(rel * part.abs(), absolute))).to_numpy()
        for i in np.flatnonzero(differ):
            findings.append((
                int(i), PARTS_FINDING, "warn",
                f"{out['refdes'].iat[i]}: parts data for {mpn_text.iat[i]} ({parts.path} row "
                f"{int(part_row[i])}) gives {label} {format_quantity(part.iat[i], unit)}; the BOM "
                f"text says {format_quantity(bom.iat[i], unit)}; the parts data is used",
                "parts data"))
        out[column] = part.fillna(bom) if column in out else part
    if "voltage_kind" in out:
        out["voltage_kind"] = out["voltage_kind"].astype(object).mask(
            pd.Series(only_ac, index=out.index), "ac")
    for name, (_, _, column) in FIELDS.items():
        if column in PART_COLUMNS:
            out[column] = take(name)
    out["part_row"] = pd.array(np.where(matched, part_row, pd.NA), dtype="Int64")
    verdicts = pd.DataFrame(findings, columns=["pidx", "rule_id", "status", "message", "source"])
    verdicts.insert(1, "refdes", out["refdes"].to_numpy(dtype=object)[
        verdicts["pidx"].to_numpy(dtype=np.int64)] if len(verdicts) else [])
    return out, verdicts


def curve_values(table: pd.DataFrame, parts: PartsData | None, name: str, x: pd.Series, *,
                 log_x: bool = False) -> pd.Series:
    """Each placement's part curve ``name`` evaluated at ``x`` (NaN where its part has none).

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
        y = curve.at(xv[mask], log_x=log_x)
        out[mask] = y / nominal[mask] if curve.farads else y
    return out
