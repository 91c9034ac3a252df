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
The laying is ``bomcheck.parse.parts_apply``.
"""

from __future__ import annotations

import re
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd

from bomcheck.frozen import frozen
from bomcheck.errors import InputError
from bomcheck.parse.design_cells import NO_VALUE, InputWarning
from bomcheck.parse.parts_cells import TEXT_READERS, Curve, convert_column, read_curve
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


@frozen
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
