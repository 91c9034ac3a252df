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
fraction, a percentage or a capacitance), ``tolerance`` (symmetric, ``±20 %``), ``dielectric``
(an EIA code such as ``X7R``), ``override`` (``true`` lets this part's data replace what the BOM
text says, see below) and ``notes``. Every value is read by the strict cell grammar of
``bomcheck.parse.units`` (``bomcheck.parse.parts_cells``) and checked against its plausible range; ratings, ESR, currents, life and
thermal resistance must be above zero, and ``temp_min`` below ``temp_max``.

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
A placement whose MPN (case-insensitive, stripped) is in the file gains the part's ratings
(``esr_ohm``, ``ripple_rated_a``, ``surge_rated_a``, ``life_l0_h``...) and fills the spec
columns the BOM text left empty (capacitance, rated voltage, rated temperatures, tolerance,
dielectric). Where the BOM text says something else, the verdict uses the conservative value
(lower rated voltage, lower rated maximum temperature, higher rated minimum temperature,
smaller capacitance, wider tolerance, the dielectric with the narrower range or larger change)
and the placement gets a ``parts.conflict`` warning naming both values. The parts data replaces
the BOM text only when the user says so: ``override = true`` on the part, or ``override=True``
for the whole file (``read_parts``; the command line's ``--parts-override``); the conflict is
then still listed, as a ``warn`` finding naming both values and saying the parts data was used.
"""

from __future__ import annotations

import re
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd

from bomcheck.errors import InputError
from bomcheck.parse.codes import Dielectric, decode_dielectric
from bomcheck.parse.design_cells import NO_VALUE, InputWarning
from bomcheck.parse.parts_cells import TEXT_READERS, Curve, convert_column, read_curve
from bomcheck.quantity import format_quantity
from bomcheck.read.reader import load_toml, read_input, read_input_table, toml_text

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
# Sign rule of each field (bomcheck.parse.units.SIGNS); temperatures are points on a scale.
_SIGNS = {"temp_min": "any", "temp_max": "any", "life_temp": "any"}
# Fields read as text or flags rather than quantities.
TEXT_FIELDS = ("tolerance", "dielectric", "override")
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
    "tolerance": ("tolerance", "tol", "capacitance tolerance"),
    "dielectric": ("dielectric", "dielectric code", "temperature characteristic", "tc code"),
    "override": ("override", "overrides bom", "use parts data"),
    "notes": ("notes", "note", "comment", "comments"),
}


def _norm(name: str) -> str:
    return re.sub(r"[^0-9a-z]+", "", name.casefold())


_ALIAS_KEY = {_norm(s): canonical for canonical, spellings in ALIASES.items() for s in spellings}
_BRACKET_UNIT = re.compile(r"^(?P<name>.*?)\s*[\[(](?P<unit>[^\[\]()]*)[\])]\s*$")


@dataclass(frozen=True, eq=False)
class PartsData:
    """A parts file read: one row per MPN key (upper case) with SI values, plus the curves.

    ``values`` is indexed by the MPN key with a float column per ``FIELDS`` name, ``tolerance``
    (%), ``dielectric`` (canonical code or ""), ``override`` (bool), ``mpn`` (as written) and
    ``row`` (source row or TOML line); ``curves`` maps a ``CURVES`` name to the parts that give
    one. ``override_all`` lets every part's data replace the BOM text (an explicit user choice).
    """

    path: str
    sha256: str
    values: pd.DataFrame
    curves: Mapping[str, Mapping[str, Curve]] = field(default_factory=dict)
    warnings: tuple[InputWarning, ...] = ()
    override_all: bool = False


# --- reading ----------------------------------------------------------------------------------


def is_parts_header(cells: list[str]) -> bool:
    """True for the header row of a parts table: an MPN column and at least one data column."""
    found = {_field_of(str(c))[0] for c in cells if str(c).strip()}
    return "mpn" in found and bool(found & (set(FIELDS) | set(CURVES) | set(TEXT_FIELDS)))


def _field_of(header: str) -> tuple[str | None, str | None]:
    name, unit = header.strip(), None
    m = _BRACKET_UNIT.match(name)
    if m and m.group("name").strip():
        name, unit = m.group("name").strip(), (m.group("unit").strip() or None)
    return _ALIAS_KEY.get(_norm(name)), unit


def read_parts(path: str, *, sheet: str | int | None = None, override: bool = False) -> PartsData:
    """Read a parts file (CSV/TSV/XLSX through ``bomcheck.read.reader``, or TOML) into ``PartsData``.

    ``override=True`` lets the file's values replace what the BOM text says for every part
    (otherwise only parts with ``override = true`` do; see the module docstring).

    Raises ``InputError`` naming the file, row and column for a cell that cannot be used, an
    MPN given twice, or a file without an MPN column.
    """
    if Path(path).suffix.lower() == ".toml":
        data, sha256 = read_input(str(path), "parts file")
        parts = parts_from_toml(toml_text(data, str(path)), path=str(path))
    else:
        raw = read_input_table(
            str(path), sheet=sheet, header_predicate=is_parts_header, what="parts-file",
            expected="a header row with an mpn column and data columns such as rated_voltage, "
                     "esr or dc_bias")
        parts, sha256 = parts_from_table(raw.frame, raw.rows, path=str(path)), raw.sha256
    return PartsData(path=str(path), sha256=sha256, values=parts.values, curves=parts.curves,
                     warnings=parts.warnings, override_all=override)


def parts_from_table(frame: pd.DataFrame, rows: Sequence[int] | np.ndarray | None = None, *,
                     path: str = "<table>") -> PartsData:
    """Parts data from a table of text cells (headers as columns; ``rows`` the source rows)."""
    n = len(frame)
    src = np.arange(2, n + 2) if rows is None else np.asarray(rows, dtype=np.int64)
    columns: dict[str, tuple[int, str, str | None]] = {}
    warnings: list[InputWarning] = []
    for pos, header in enumerate(frame.columns):
        canonical, unit = _field_of(str(header))
        if canonical is None:
            if str(header).strip():
                warnings.append(InputWarning(path, None, str(header),
                                             f"column {header!r} is not a parts-file field; "
                                             "ignored"))
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
    warnings: list[InputWarning] = []
    for i, name in enumerate(names):
        body = table[name]
        if not isinstance(body, dict):
            raise InputError(f"parts.{name} must be a table", path=path, row=int(rows[i]),
                             expected=f'[parts."{name}"] with keys')
        for key, value in body.items():
            canonical, unit = _field_of(str(key))
            if canonical is None or canonical == "mpn":
                warnings.append(InputWarning(path, int(rows[i]), f"parts.{name}.{key}",
                                             "not a parts-file field; ignored"))
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
    if canonical == "override" and isinstance(value, bool):
        return "true" if value else "false"
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


def _build(e: _Entries, *, path: str, warnings: list[InputWarning]) -> PartsData:
    mpn = e.cells["mpn"]
    keep = mpn != ""
    for k in e.cells:
        if k in FIELDS or k in CURVES or k in ("tolerance", "dielectric"):
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
        values[name] = convert_column(e.cells[name][at], quantity, unit, path=path,
                                rows=e.rows[at], column=e.headers[name],
                                sign=_SIGNS.get(name, "positive"))
    _check_range(values, e, path)
    for name in TEXT_FIELDS:
        cells = e.cells[name][at] if name in e.cells else np.full(len(at), "", dtype=object)
        values[name] = TEXT_READERS[name](cells, path=path, rows=e.rows[at],
                                           column=e.headers.get(name, name))
    curves: dict[str, dict[str, Curve]] = {}
    for name, (x_quantity, _) in CURVES.items():
        if name not in e.cells:
            continue
        found: dict[str, Curve] = {}
        for i in at:
            cell = e.cells[name][i]
            if cell.casefold() in NO_VALUE:
                continue
            found[keys[i]] = read_curve(cell, name, x_quantity, path=path,
                                        row=int(e.rows[i]), column=e.headers[name])
        if found:
            curves[name] = found
    if not len(values):
        warnings.append(InputWarning(path, None, None, "no parts entries"))
    return PartsData(path=path, sha256="", values=values, curves=curves,
                     warnings=tuple(warnings))


def _check_range(values: pd.DataFrame, e: _Entries, path: str) -> None:
    """A rated range must have its minimum below its maximum."""
    bad = (values["temp_min"] >= values["temp_max"]).to_numpy()
    if bad.any():
        i = int(np.flatnonzero(bad)[0])
        raise InputError("temp_min is not below temp_max", path=path,
                         row=int(values["row"].iat[i]), column=e.headers.get("temp_min"),
                         text=f"{values['temp_min'].iat[i]:g} .. {values['temp_max'].iat[i]:g}",
                         expected="a rated range such as -55 .. 105 degC")


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
    keys = part_keys(out)
    at = parts.values.index.get_indexer(keys.to_numpy())
    matched = at >= 0
    pick = np.where(matched, at, 0)

    def take(name: str, empty: Any = np.nan) -> pd.Series:
        if name not in parts.values.columns:
            return pd.Series(empty, index=out.index)
        col = parts.values[name].to_numpy()
        if not len(col):  # a file with a header only
            return pd.Series(empty, index=out.index)
        return pd.Series(np.where(matched, col[pick], empty), index=out.index)

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
    override = (take("override", False).eq(True) | parts.override_all).to_numpy() & matched
    mpn_text = take("mpn", "").astype(object)
    part_row = take("row", 0).fillna(0).astype(np.int64).to_numpy()
    findings: list[tuple[int, str, str, str, str]] = []

    def report(i: int, label: str, part_text: str, bom_text: str, used: str) -> None:
        head = (f"{out['refdes'].iat[i]}: parts data for {mpn_text.iat[i]} ({parts.path} row "
                f"{int(part_row[i])}) gives {label} {part_text}; the BOM text says {bom_text}; ")
        if override[i]:
            # Still a finding: the BOM and the parts data contradict each other, and which part
            # is fitted is for a reviewer to confirm.
            findings.append((i, PARTS_FINDING, "warn", head + "the parts data is used "
                             "(override); confirm which part is fitted", "parts data"))
        else:
            findings.append((i, PARTS_FINDING, "warn", head + f"the verdict uses {used}; mark "
                             "the part override = true to use the parts data", "parts data"))

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
