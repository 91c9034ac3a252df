"""Normalise stage for the design sheet's cells: header names to conditions (``ALIASES``), the
unit and peak mark a header gives, and each distinct cell to an SI value with its sign and
plausibility checked; also the structured warning every side-input reader returns.

Headers are matched case- and punctuation-insensitively against ``ALIASES`` (``v_dc [V]``,
``Operating V``, ``t_amb (°C)``, ``Ambient temp``, ``Temp rise (C)``, ``dT``, ``Irms``...). A unit
in brackets, or a unit written last (``Ripple mVpp``), is the unit of the column's bare numbers;
without one a bare number takes the unit of ``CONDITIONS``. A ``pp``/``p-p`` mark (header or
cell) on a peak column means peak-to-peak: peak = half; ``pk`` and the words ``DC``/``AC`` are
accepted where they agree with the column, ``rms`` only in ``v_ac_rms``.

A header that names no condition is an input error when its column holds values (the message
lists the closest known names) and a warning when it is empty; notes columns (``notes``,
``comment``, ``remarks``) are kept as notes and informational columns (``description``,
``value``, ``mpn``... in ``INFO_HEADERS``) are ignored.

Cells are read by ``bomcheck.parse.units.to_si`` (one number and an optional unit, never an expression)
and checked against the quantity's plausible range and the condition's sign (``CONDITION_SIGNS``):

- ``v_dc`` and ``v_dc_max`` keep their sign (a negative rail). The stress stage uses the
  magnitude; on a polarized part a negative ``v_dc`` is applied as reverse voltage.
- ``t_ambient_c`` is a point on the scale: -100..400 degC after conversion.
- every other condition is a magnitude: negative is an input error, and a resistance, frequency,
  slew, safe voltage, discharge time or life of zero is one too (they are divided by, or a zero
  would read as "no stress"). Percentages (``v_tol_pct``, ``r_balance_tol_pct``) are 0..100 %.
"""

from __future__ import annotations

import difflib
import math
import re
from collections.abc import Callable, Mapping
from dataclasses import dataclass
from typing import Any, NoReturn

import numpy as np
import pandas as pd

from bomcheck.frozen import frozen
from bomcheck.errors import InputError, UnitError
from bomcheck.parse.units import (check_plausible, plain_to_si, plausible_mask, round_15,
                                  to_si, unit_factor)
from bomcheck.vocabulary import CONDITIONS

CONDITION_COLUMNS: tuple[str, ...] = tuple(CONDITIONS)
TEXT_FIELDS = ("refdes", "members", "group", "kind", "notes")
PEAK_FIELDS = frozenset({"v_ripple_pk", "v_transient_pk", "v_reverse_pk"})
NO_VALUE = frozenset({"", "-", "\u2013", "\u2014", "n/a", "na"})
# Written in c_min_f: the circuit states no minimum capacitance (stored as 0 F; the capacitance
# rule then does not apply). Different from an empty cell, which is missing data.
_NONE_REQUIRED = frozenset({"none", "not required", "no requirement"})
_EXPLICIT_NONE_FIELDS = frozenset({"c_min_f"})

# The sign each condition may take (bomcheck.parse.units.SIGNS); any condition not named is a
# magnitude ("nonneg"). Zero is refused where it is divided by or would read as "no stress".
CONDITION_SIGNS: dict[str, str] = {
    "v_dc": "any", "v_dc_max": "any", "t_ambient_c": "any", "t_ambient_min_c": "any",
    "r_balance_ohm": "positive", "r_bleeder_ohm": "positive", "r_source_ohm": "positive",
    "f_ripple_hz": "positive", "slew_v_per_s": "positive", "v_safe_v": "positive",
    "t_discharge_max_s": "positive", "life_h": "positive",
}
PERCENT_FIELDS = frozenset(k for k in CONDITIONS if k.endswith("_pct"))  # 0..100 %


def sign_of(name: str) -> str:
    """The sign rule of a condition (``any``, ``nonneg`` or ``positive``)."""
    return CONDITION_SIGNS.get(name, "nonneg")


# Canonical field -> header spellings; compared after _norm (case and punctuation dropped).
ALIASES: dict[str, tuple[str, ...]] = {
    "refdes": ("refdes", "ref des", "designator", "designators", "ref", "refs", "reference",
               "references", "reference designator", "placement", "placements"),
    "members": ("members", "member", "member designators"),
    "group": ("group", "rail", "net", "group name", "rail name", "net name"),
    "kind": ("kind", "group kind", "group type"),
    "notes": ("notes", "note", "comment", "comments", "remark", "remarks"),
    "v_dc": ("v_dc", "v", "voltage", "dc voltage", "voltage dc", "working voltage",
             "operating voltage", "applied voltage", "rail voltage", "bias voltage", "v bias",
             "v work", "v nom", "nominal voltage", "vdc", "operating v", "op voltage", "v op",
             "v operating", "v working", "supply voltage", "v supply", "bus voltage", "v bus",
             "dc link voltage", "dc bus voltage", "v rail", "rail v", "dc"),
    "v_dc_max": ("v_dc_max", "v max", "max voltage", "maximum voltage", "rail max",
                 "voltage max", "upper voltage", "worst case voltage"),
    "v_tol_pct": ("v_tol_pct", "v_tol", "voltage tolerance", "rail tolerance", "v tolerance",
                  "tol pct", "regulation"),
    "v_ripple_pk": ("v_ripple_pk", "v_ripple", "ripple", "ripple pk", "ripple peak",
                    "ripple voltage", "ac ripple", "vripple", "ripple v", "voltage ripple",
                    "ripple amplitude"),
    "v_transient_pk": ("v_transient_pk", "v_transient", "transient", "transient peak",
                       "transient voltage", "surge", "v surge", "surge voltage", "spike",
                       "transient v", "v spike", "overvoltage", "load dump"),
    "v_reverse_pk": ("v_reverse_pk", "v_reverse", "reverse", "reverse voltage", "v rev",
                     "reverse peak", "vrev", "v reverse peak", "reverse bias"),
    "v_ac_rms": ("v_ac_rms", "v_ac", "ac voltage", "voltage ac", "ac rms", "v rms",
                 "ac working voltage", "vac", "ac", "vrms", "ac voltage rms", "mains voltage",
                 "line voltage"),
    "t_ambient_c": ("t_ambient_c", "t_ambient", "t_amb", "ta", "ambient",
                    "ambient temperature", "local ambient", "board temperature", "t_board",
                    "temperature", "temp", "ambient temp", "amb temp", "amb", "tamb",
                    "t_a", "ambient t", "temp ambient", "temperature ambient", "local temp",
                    "local temperature", "ambient air temperature"),
    "t_ambient_min_c": ("t_ambient_min_c", "t_ambient_min", "t_amb_min", "ta_min",
                        "minimum ambient", "min ambient", "coldest ambient", "cold start",
                        "min ambient temp", "minimum ambient temperature", "tamb min"),
    "t_rise_c": ("t_rise_c", "t_rise", "rise", "temperature rise", "self heating", "delta t",
                 "temp rise", "dt", "delta temperature", "delta temp", "heating", "self-heating",
                 "temperature increase", "temp increase", "rise above ambient", "t rise",
                 "thermal rise"),
    "c_min_f": ("c_min_f", "c_min", "required capacitance", "minimum capacitance",
                "min capacitance", "c required", "c_req", "capacitance needed", "cmin",
                "min c", "minimum c", "required c", "c needed", "needed capacitance"),
    "life_h": ("life_h", "life", "required life", "lifetime", "mission life", "service life",
               "design life", "required lifetime", "life required", "operating life",
               "lifetime required"),
    # Circuit-level conditions (bomcheck.stress.circuit); see "Circuit columns" in the module docstring.
    "r_balance_ohm": ("r_balance_ohm", "r_balance", "balancing resistor", "balancing resistance",
                      "balance resistor"),
    "r_balance_tol_pct": ("r_balance_tol_pct", "r_balance_tol", "balancing resistor tolerance",
                          "balance resistor tolerance"),
    "r_bleeder_ohm": ("r_bleeder_ohm", "r_bleeder", "bleeder", "bleeder resistor",
                      "bleeder resistance", "discharge resistance", "r_discharge"),
    "v_safe_v": ("v_safe_v", "v_safe", "safe voltage"),
    "t_discharge_max_s": ("t_discharge_max_s", "t_discharge_max", "t_discharge",
                          "discharge time", "discharge time limit", "max discharge time"),
    "slew_v_per_s": ("slew_v_per_s", "slew", "slew rate", "dv/dt", "rise rate", "ramp rate"),
    "r_source_ohm": ("r_source_ohm", "r_source", "source resistance", "series resistance",
                     "inrush resistance"),
    "i_ripple_a": ("i_ripple_a", "i_ripple", "ripple current", "ripple current rms", "irms",
                   "i rms", "iripple", "ripple i", "rms current", "current rms", "ac current",
                   "i ac"),
    "f_ripple_hz": ("f_ripple_hz", "f_ripple", "ripple frequency", "ripple freq", "frip",
                    "switching frequency", "f_sw", "fsw", "frequency"),
}


# Informational columns a design sheet may carry over from a BOM: ignored, never an error.
INFO_HEADERS: tuple[str, ...] = (
    "description", "desc", "value", "mpn", "manufacturer", "mfr", "part number", "part",
    "package", "footprint", "qty", "quantity", "item", "no", "line", "type", "owner", "author",
    "status", "source", "reference document",
)


@frozen
class InputWarning:
    """One doubt about a side input (design sheet, parts data): file, row, column and message.

    Frozen and sortable; ``to_dict`` gives its JSON form. ``row`` and ``column`` are None where
    the warning is about the whole file.
    """

    path: str
    row: int | None
    column: str | None
    message: str

    def _key(self) -> tuple[str, int, str, str]:
        return (self.path, self.row or 0, self.column or "", self.message)

    def __lt__(self, other: InputWarning) -> bool:
        return self._key() < other._key()

    def to_dict(self) -> dict[str, Any]:
        """Plain dict for the JSON report."""
        return {"path": self.path, "row": self.row, "column": self.column,
                "message": self.message}

    def __str__(self) -> str:
        where = [self.path]
        if self.row is not None:
            where.append(f"row {self.row}")
        if self.column:
            where.append(f"column {self.column!r}")
        return f"{', '.join(where)}: {self.message}"


def norm(name: str) -> str:
    return re.sub(r"[^0-9a-z%]+", "", name.casefold())


def _alias_index() -> dict[str, str]:
    out: dict[str, str] = {}
    for canonical, spellings in ALIASES.items():
        for s in spellings:
            key = norm(s)
            if out.setdefault(key, canonical) != canonical:  # pragma: no cover - a table typo
                raise AssertionError(f"alias {s!r} given for {out[key]} and {canonical}")
    return out


_ALIAS_KEY = _alias_index()

_BRACKET_UNIT = re.compile(r"^(?P<name>.*?)\s*[\[(](?P<unit>[^\[\]()]*)[\])]\s*$")
# A unit written as the header's last word ("Ripple mVpp"); case matters (mV, not MV).
_UNIT_WORD = re.compile(
    r"^(?:[pnum\u00b5\u03bckM]?V|[pnum\u00b5\u03bc]?F|\u00b0C|\u00b0F|degC|degF|K|h|hours?|"
    r"years?|%)(?:pp|p-p|pk|rms|dc|ac|DC|AC)?$"
)
_MARKS = r"p-?p|pk-?pk|peak[\s_-]*to[\s_-]*peak|pk|peak|rms"
_QUALIFIER = re.compile(rf"^(?P<body>.*?)[\s_-]*(?P<q>{_MARKS}|dc|ac)$", re.IGNORECASE)
# In a header name only the peak marks are split off: "Voltage AC" is not v_dc.
_NAME_QUALIFIER = re.compile(rf"^(?P<body>.*?)[\s_-]*(?P<q>{_MARKS})$", re.IGNORECASE)
PLUS_MINUS = re.compile(r"^(?:\u00b1|\+/-|\+-)\s*")
SINGLE = r"[A-Za-z_]+\d+[A-Za-z]?"


def _qualifier(text: str, pattern: re.Pattern[str] = _QUALIFIER) -> tuple[str, str | None]:
    """Split a trailing mark off a unit or a cell: "pp" (peak-to-peak), "pk", "rms", "dc", "ac"."""
    m = pattern.match(text)
    if not m or not m.group("body").strip():
        return text, None
    q = m.group("q").lower()
    kind = {"rms": "rms", "pk": "pk", "peak": "pk", "dc": "dc", "ac": "ac"}.get(q, "pp")
    return m.group("body").strip(), kind


@frozen
class Column:
    header: str
    field: str | None  # canonical name; None for a column bomcheck does not know
    unit: str | None  # unit of the bare numbers, from the header
    mark: str | None  # "pp", "pk", "rms", "dc" or "ac" from the header


def parse_header(header: str) -> Column:
    """Canonical field, unit and peak-to-peak mark of a header such as ``Ripple (mVpp)``."""
    name, unit, mark = header.strip(), None, None
    m = _BRACKET_UNIT.match(name)
    if m and m.group("name").strip():
        name, unit = m.group("name").strip(), (m.group("unit").strip() or None)
    found = _ALIAS_KEY.get(norm(name))
    if found is None:
        body, q = _qualifier(name, _NAME_QUALIFIER)
        if q and norm(body) in _ALIAS_KEY:
            found, mark = _ALIAS_KEY[norm(body)], q
    if found is None and unit is None:
        words = re.split(r"[\s_]+", name)
        if len(words) > 1 and _UNIT_WORD.match(words[-1]):
            head = " ".join(words[:-1])
            if norm(head) in _ALIAS_KEY:
                found, unit = _ALIAS_KEY[norm(head)], words[-1]
    if unit is not None and found in CONDITIONS:
        unit, q = _qualifier(unit)
        mark = mark or q
    return Column(header, found, unit, mark)


_INFO_KEYS = frozenset(norm(h) for h in INFO_HEADERS)
_SPELLING = {norm(s): s for spellings in ALIASES.values() for s in spellings}


def _name_part(header: str) -> str:
    """A header without its bracketed unit: ``Temp rise (C)`` -> ``Temp rise``."""
    name = header.strip()
    m = _BRACKET_UNIT.match(name)
    return m.group("name").strip() if m and m.group("name").strip() else name


def closest_names(header: str, n: int = 3) -> list[str]:
    """The known design-sheet names closest to ``header`` (difflib), as ``canonical ('alias')``."""
    found: list[str] = []
    for key in difflib.get_close_matches(norm(_name_part(header)), list(_ALIAS_KEY), n=12,
                                         cutoff=0.5):
        canonical = _ALIAS_KEY[key]
        shown = canonical if _SPELLING[key] == canonical else f"{canonical} ({_SPELLING[key]!r})"
        if not any(f.split(" ")[0] == canonical for f in found):
            found.append(shown)
    return found[:n]


def unknown_column(header: str, has_values: bool, *, path: str, row: int | None,
                   what: str = "column") -> InputWarning | None:
    """A header that names no design-sheet field: None for an informational column
    (``INFO_HEADERS``), a warning when its column is empty; an ``InputError`` listing the closest
    known names when it holds values (its data would otherwise be lost)."""
    name = _name_part(header).rsplit(".", 1)[-1]  # a TOML key's last part
    if norm(name) in _INFO_KEYS:
        return None
    near = closest_names(name)
    hint = ("closest known names: " + ", ".join(near)) if near else None
    if "rated" in norm(name) or "rating" in norm(name):  # a part's rating, not a condition
        hint = "a part's ratings belong in the BOM text or the parts file (--parts)"
    if has_values:
        raise InputError(f"unknown design-sheet {what} holding values", path=path, row=row,
                         column=header, expected="a condition name such as v_dc, t_ambient_c "
                         "or t_rise_c, notes, or an informational column (description, value, "
                         "mpn...)", hint=hint)
    if not header.strip():
        return None
    return InputWarning(path, row, header, f"{what} {header!r} is not a design-sheet {what} "
                        "and is empty; ignored" + (f" ({hint})" if hint else ""))


def is_design_header(cells: list[str]) -> bool:
    """True for a header row of a design sheet: a designator or group column and a value column."""
    fields = {parse_header(str(c)).field for c in cells if str(c).strip()}
    return bool(fields & {"refdes", "group"}) and bool(fields & (set(CONDITIONS) | {"members"}))


# --- values -----------------------------------------------------------------------------------

Fail = Callable[[int | None, str, UnitError], NoReturn]


def text_cells(column: pd.Series | np.ndarray) -> np.ndarray:
    """Stripped text of a column as an object array ("" for empty). A column of text is
    stripped cell by cell in C (``str.strip`` returns a clean cell itself: cheaper than finding
    the distinct cells); any other column is factorized and each distinct cell read once."""
    cells = np.asarray(column, dtype=object)
    if pd.api.types.infer_dtype(cells, skipna=False) == "string":
        return np.fromiter(map(str.strip, cells), dtype=object, count=len(cells))
    codes, uniques = pd.factorize(cells, use_na_sentinel=True)
    stripped = np.array([str(u).strip() for u in uniques] + [""], dtype=object)
    return stripped[codes]  # code -1 (missing) takes the trailing ""


def convert(cells: np.ndarray, col: Column, fail: Fail) -> np.ndarray:
    """Float values (SI; percentages in %) of one column of text cells; NaN for no value.

    Every distinct string is converted once (``pd.factorize``) and mapped back: the bare
    numbers together as arrays (``bomcheck.parse.units.plain_to_si``), the rest one by one by
    ``bomcheck.parse.units.to_si``; signs and ranges are checked (``CONDITION_SIGNS``).
    ``fail(position, text, error)`` raises the located error (position None: the header).
    """
    name = col.field
    assert name is not None
    quantity, default_unit = CONDITIONS[name]
    unit = col.unit or default_unit
    _check_mark(col.mark, name, lambda problem: fail(None, col.header, UnitError(problem)))
    try:
        unit_factor(unit, quantity)
    except UnitError as exc:
        fail(None, col.unit or "", exc)
    sign = sign_of(name)
    if cells.dtype.kind == "f":
        return _convert_numbers(cells, name, quantity, unit, col.mark, sign)
    codes, uniques = pd.factorize(np.asarray(cells, dtype=object), use_na_sentinel=True)
    texts = [str(u).strip() for u in uniques]
    values = np.full(len(uniques) + 1, np.nan)  # the last slot serves code -1 (missing)
    percent = name in PERCENT_FIELDS
    at, si = plain_to_si(texts, quantity, unit, sign, high=1.0 if percent else None)
    if percent:
        si = round_15(si * 100.0)
    elif col.mark == "pp":
        si = si * 0.5
    values[at] = si
    done = np.zeros(len(uniques), dtype=bool)
    done[at] = True
    for k in np.flatnonzero(~done).tolist():
        text = texts[k]
        if text.casefold() in NO_VALUE:
            continue
        if name in _EXPLICIT_NONE_FIELDS and text.casefold() in _NONE_REQUIRED:
            values[k] = 0.0
            continue
        try:
            values[k] = _convert_one(text, name, quantity, unit, col.mark, sign)
        except UnitError as exc:
            fail(int(np.argmax(codes == k)), text, exc)
    return values[codes]


class NeedsText(Exception):
    """A column read as numbers holds a value whose error needs the cell's text (not finite,
    implausible, of the wrong sign): the sheet is read again as text."""


def _convert_numbers(cells: np.ndarray, name: str, quantity: str, unit: str, mark: str | None,
                     sign: str) -> np.ndarray:
    """``convert`` for a column read as numbers (NaN: an empty cell): the arithmetic of a bare
    number's text (``to_si``: scale, offset, 15 significant digits; a percentage and a
    peak-to-peak header as in ``convert``), on each distinct value once."""
    codes, uniques = pd.factorize(cells, use_na_sentinel=True)
    scale, offset = unit_factor(unit, quantity)
    si = round_15(np.asarray(uniques, dtype=float) * scale + offset)
    percent = name in PERCENT_FIELDS
    if not plausible_mask(si, quantity, sign, high=1.0 if percent else None).all():
        raise NeedsText(name)
    if percent:
        si = round_15(si * 100.0)
    elif mark == "pp":
        si = si * 0.5
    return np.append(si, np.nan)[codes]  # code -1 (empty) takes the trailing NaN


def _check_mark(mark: str | None, name: str, fail: Callable[[str], NoReturn]) -> None:
    if mark == "pp" and name not in PEAK_FIELDS:
        fail(f"peak-to-peak given for {name}, which is not a peak value")
    if mark == "rms" and name != "v_ac_rms":
        fail(f"rms given for {name}; an rms voltage goes in v_ac_rms")
    if mark in ("pk", "dc", "ac") and CONDITIONS[name][0] != "voltage":
        fail(f"{mark} mark given for {name}, which is not a voltage")
    if mark == "ac" and name in ("v_dc", "v_dc_max"):
        fail(f"AC given for {name}; an AC voltage goes in v_ac_rms")
    if mark == "dc" and name in ("v_ac_rms", "v_ripple_pk"):
        fail(f"DC given for {name}, which is an AC quantity")


def _convert_one(text: str, name: str, quantity: str, unit: str, header_mark: str | None,
                 sign: str) -> float:
    """One distinct cell, with its own pp/pk/rms mark (voltage columns only)."""
    mark = None
    if name in PERCENT_FIELDS:
        text = PLUS_MINUS.sub("", text)
    if quantity == "voltage":
        text, mark = _qualifier(text)

        def bad(problem: str) -> NoReturn:
            raise UnitError(problem, text=text, expected="a voltage such as '13.2 V'")

        _check_mark(mark, name, bad)
    value = to_si(text, quantity, unit, sign)
    if name in PERCENT_FIELDS:
        check_plausible(value, quantity, sign, text=text, high=1.0)
        return float(f"{value * 100.0:.15g}")
    return value * 0.5 if (mark or header_mark) == "pp" else value


# --- entries: the rows of any front end in one shape ------------------------------------------


@frozen
class Labels:
    """How the front end names its fields in errors (the header, or the TOML key)."""

    refdes: str = "refdes"
    members: str = "members"
    group: str = "group"
    kind: str = "kind"


@dataclass(frozen=True, eq=False)
class Entries:
    """One item per source row (table) or entry (TOML): its row, text fields, the values of the
    condition columns it gives (``given``: one column per name of ``columns``, in
    ``CONDITION_COLUMNS`` order; a condition no entry gives has no column) and whether the front
    end already knows it is a group."""

    rows: np.ndarray
    text: dict[str, np.ndarray]
    given: np.ndarray
    columns: tuple[str, ...]
    is_group: np.ndarray

    @classmethod
    def make(cls, rows: np.ndarray, texts: Mapping[str, np.ndarray],
             values: Mapping[str, np.ndarray], is_group: np.ndarray | None = None) -> Entries:
        n = len(rows)
        empty = np.broadcast_to(np.array("", dtype=object), (n,))  # one read-only ""
        text = {k: np.asarray(texts[k], dtype=object) if k in texts else empty
                for k in TEXT_FIELDS}
        columns = tuple(k for k in CONDITION_COLUMNS if k in values)
        given = np.empty((n, len(columns)), order="F")  # a contiguous array per column
        for j, k in enumerate(columns):
            given[:, j] = values[k]
        flags = np.zeros(n, dtype=bool) if is_group is None else np.asarray(is_group, dtype=bool)
        return cls(np.asarray(rows, dtype=np.int64), text, given, columns, flags)

    @property
    def values(self) -> np.ndarray:
        """Every entry's values with a column per ``CONDITION_COLUMNS`` name (NaN where none)."""
        out = np.full((len(self.rows), len(CONDITION_COLUMNS)), np.nan)
        for j, k in enumerate(self.columns):
            out[:, CONDITION_COLUMNS.index(k)] = self.given[:, j]
        return out

    def column(self, name: str) -> np.ndarray | None:
        """The values of one condition column, None when no entry gives it."""
        return self.given[:, self.columns.index(name)] if name in self.columns else None

    def own(self, i: int) -> dict[str, float]:
        """The conditions entry ``i`` gives (name -> value)."""
        return {k: float(v) for k, v in zip(self.columns, self.given[i].tolist())
                if not math.isnan(v)}

    def has_values(self) -> np.ndarray:
        """Which entries give any condition."""
        return ~np.isnan(self.given).all(axis=1)
