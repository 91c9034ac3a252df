"""Normalise stage for the design sheet: reads the operating conditions of each placement (CSV, XLSX
or TOML) into one SI table keyed by designator, with groups (rails) and board-wide defaults.

Tables (CSV, TSV, XLSX)
-----------------------
One header row, then one row per target. The ``refdes`` cell of a row names what it addresses:

- one designator (``C14``), a list or a range (``C1-C9, C20``, expanded by ``bomcheck.refdes``);
- a group (a rail such as ``+5V_LOGIC``): a row with a ``members`` cell defines the group and
  its values (``kind``: rail, the default, bank or series); a designator row may also join a
  group through its ``group`` cell, and a row naming a known group gives that group's values;
- ``*``: board-wide defaults.

Example::

    refdes,     members,    v_dc [V], v_tol_pct, Ripple mVpp, t_amb (°C), life,     notes
    *,          ,           ,         ,          ,            45,         10 years, board
    +5V_LOGIC,  "C1-C9,C20",5,        5,         100,         ,           ,         logic rail
    C14,        ,           ,         ,          ,            85 degC,    ,         hot spot

Headers are matched case- and punctuation-insensitively against ``ALIASES`` (``v_dc [V]``,
``Vdc (V)``, ``working voltage``, ``t_amb (°C)``, ``ambient``, ``Ripple mVpp``, ``t_rise``,
``c_min``, ``required capacitance``, ``life``, ``members``, ``group``/``rail``, ``kind``,
``notes``...). A unit in brackets, or a unit written last (``Ripple mVpp``), is the unit of the
column's bare numbers; without one a bare number takes the unit of ``CONDITIONS`` (V, degC,
delta degC, F, h; ``v_tol_pct`` in %). A ``pp``/``p-p`` mark (header or cell) on a peak column
(``v_ripple_pk``, ``v_transient_pk``, ``v_reverse_pk``) means peak-to-peak: peak = half;
``pk`` and the words ``DC``/``AC`` are accepted where they agree with the column, ``rms`` only in
``v_ac_rms``. Cells with units are read with pint (``13.2 V``, ``500 mV``, ``85 degC``,
``2.2 uF``, ``10 years`` with pint's year of 365.25 days, ``50000 h``, ``±5 %``), each distinct
text once. An empty cell, ``-`` or ``n/a`` gives no value; ``none`` in ``c_min_f`` says the
circuit states no minimum capacitance (stored as 0 F, so the capacitance rule does not apply). An unknown column is left out and
listed in ``Design.warnings``, as are suspicious values (``v_dc_max`` below ``v_dc``; a ``v_tol_pct``
under 1 %, which is what a workbook cell formatted as a percentage gives for 5 %).

TOML
----
::

    [defaults]                      # board-wide values (the ``*`` row of a table)
    t_ambient_c = "45 degC"
    life_h = "10 years"

    [groups."+5V_LOGIC"]            # a group: its members and the values they share
    members = "C1-C9, C20"          # or a list: ["C1-C9", "C20"]
    kind = "rail"                   # optional: rail (default), bank or series
    v_dc = "5 V"
    v_tol_pct = 5                   # bare numbers take the CONDITIONS unit (here %)
    v_ripple_pk = "50 mV"

    [parts.C14]                     # one designator, a list or a range (quote lists:
    t_ambient_c = "85 degC"         #  [parts."C30-C33, C35"])
    notes = "next to the regulator"

    [parts."C40-C43"]
    v_dc = 12
    group = "+12V_IN"               # optional: make these designators members of a group

Keys follow the same aliases as table headers (``"ripple [mVpp]" = 100`` works); an unknown
key is a warning, an unknown table an error. The row numbers in errors and in ``design_row``
are the line of the entry's ``[...]`` header.

Precedence
----------
Field by field: a designator row, else its group's row, else the defaults. A designator named
twice at the same level (two designator rows, or two groups) is an ``InputError`` naming both
rows. The upper bound of the rail travels with its DC value: a ``v_dc`` given at a more specific
level drops a ``v_dc_max`` given at a less specific one (a ``v_tol_pct`` still applies); where
only the tolerance is known, ``v_dc_max = v_dc x (1 + v_tol_pct/100)``. Values of a group that
belong to the group as a whole are not copied to its members: a bank's ``c_min_f`` (the bank
meets the requirement) and a series stack's voltages (each member carries a share); they stay
in ``Group.conditions`` for the stress stage.

Circuit columns
---------------
Read by ``bomcheck.circuit`` (bare numbers in the unit shown):

- ``kind`` (group rows): ``rail`` (default), ``bank`` (members in parallel on one rail: the
  bank's ``c_min_f`` is met by the sum of the members) or ``series`` (members in series across a
  bus: the group's voltages are the whole stack's, each member carries a worst-case share);
- ``r_balance_ohm`` (ohm) and ``r_balance_tol_pct`` (%): the balancing resistor across each
  member of a series stack and its tolerance (a group row gives every member the same);
- ``r_bleeder_ohm`` (ohm): discharge resistance across the placement, or across the whole bank
  or stack when given on its group row;
- ``v_safe_v`` (V, default from the rule set, 60 V) and ``t_discharge_max_s`` (s): the
  discharge requirement, time allowed to fall to the safe voltage;
- ``slew_v_per_s`` (V/s; ``12 V/ms`` works) or ``r_source_ohm`` (ohm): the rail's rate of rise at
  switch-on, or the effective series resistance feeding it (surge current, and the series
  resistance of solid tantalum); on a series stack's row they are the whole stack's;
- ``i_ripple_a`` (A rms) and ``f_ripple_hz`` (Hz): ripple current and its frequency; a bank's
  ripple current is shared among its members in proportion to their capacitance, a series
  stack's flows through every member.

Group-only values (a bank's ``c_min_f``, ``r_bleeder_ohm``, ``i_ripple_a``; a series stack's
voltages, ``r_bleeder_ohm``, ``slew_v_per_s``, ``r_source_ohm``) stay in ``Group.conditions``.
"""

from __future__ import annotations

import re
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass, field, replace
from pathlib import Path
from types import MappingProxyType
from typing import Any, NoReturn

import numpy as np
import pandas as pd

from bomcheck.errors import InputError, UnitError
from bomcheck.refdes import expand, is_designator
from bomcheck.units import to_si
from bomcheck.vocabulary import CONDITIONS

CONDITION_COLUMNS: tuple[str, ...] = tuple(CONDITIONS)
SOURCES = ("row", "group", "defaults", "none")
GROUP_KINDS = ("rail", "bank", "series")

# Group values that describe the group as a whole, kept off its members (see module docstring).
_GROUP_ONLY: dict[str, tuple[str, ...]] = {
    "rail": (),
    "bank": ("c_min_f", "r_bleeder_ohm", "i_ripple_a"),
    "series": ("v_dc", "v_dc_max", "v_ripple_pk", "v_transient_pk", "v_reverse_pk", "v_ac_rms",
               "r_bleeder_ohm", "slew_v_per_s", "r_source_ohm", "c_min_f"),
}
_PEAK_FIELDS = frozenset({"v_ripple_pk", "v_transient_pk", "v_reverse_pk"})
_TEXT_FIELDS = ("refdes", "members", "group", "kind", "notes")
_NO_VALUE = frozenset({"", "-", "\u2013", "\u2014", "n/a", "na"})
# Written in c_min_f: the circuit states no minimum capacitance (stored as 0 F; the capacitance
# rule then does not apply). Different from an empty cell, which is missing data.
_NONE_REQUIRED = frozenset({"none", "not required", "no requirement"})
_EXPLICIT_NONE_FIELDS = frozenset({"c_min_f"})

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
             "v work", "v nom", "nominal voltage"),
    "v_dc_max": ("v_dc_max", "v max", "max voltage", "maximum voltage", "rail max",
                 "voltage max", "upper voltage", "worst case voltage"),
    "v_tol_pct": ("v_tol_pct", "v_tol", "voltage tolerance", "rail tolerance", "v tolerance",
                  "tol pct", "regulation"),
    "v_ripple_pk": ("v_ripple_pk", "v_ripple", "ripple", "ripple pk", "ripple peak",
                    "ripple voltage", "ac ripple"),
    "v_transient_pk": ("v_transient_pk", "v_transient", "transient", "transient peak",
                       "transient voltage", "surge", "v surge", "surge voltage", "spike"),
    "v_reverse_pk": ("v_reverse_pk", "v_reverse", "reverse", "reverse voltage", "v rev",
                     "reverse peak"),
    "v_ac_rms": ("v_ac_rms", "v_ac", "ac voltage", "voltage ac", "ac rms", "v rms",
                 "ac working voltage"),
    "t_ambient_c": ("t_ambient_c", "t_ambient", "t_amb", "ta", "ambient",
                    "ambient temperature", "local ambient", "board temperature", "t_board",
                    "temperature", "temp"),
    "t_ambient_min_c": ("t_ambient_min_c", "t_ambient_min", "t_amb_min", "ta_min",
                        "minimum ambient", "min ambient", "coldest ambient", "cold start"),
    "t_rise_c": ("t_rise_c", "t_rise", "rise", "temperature rise", "self heating", "delta t"),
    "c_min_f": ("c_min_f", "c_min", "required capacitance", "minimum capacitance",
                "min capacitance", "c required", "c_req", "capacitance needed"),
    "life_h": ("life_h", "life", "required life", "lifetime", "mission life", "service life",
               "design life"),
    # Circuit-level conditions (bomcheck.circuit); see "Circuit columns" in the module docstring.
    "r_balance_ohm": ("r_balance_ohm", "r_balance", "balancing resistor", "balancing resistance",
                      "balance resistor"),
    "r_balance_tol_pct": ("r_balance_tol_pct", "r_balance_tol", "balancing resistor tolerance",
                          "balance resistor tolerance"),
    "r_bleeder_ohm": ("r_bleeder_ohm", "r_bleeder", "bleeder", "bleeder resistor",
                      "bleeder resistance", "discharge resistance", "r_discharge"),
    "v_safe_v": ("v_safe_v", "v_safe", "safe voltage"),
    "t_discharge_max_s": ("t_discharge_max_s", "t_discharge_max", "t_discharge",
                          "discharge time", "discharge time limit", "max discharge time"),
    "slew_v_per_s": ("slew_v_per_s", "slew", "slew rate", "dv/dt", "rise rate"),
    "r_source_ohm": ("r_source_ohm", "r_source", "source resistance", "series resistance",
                     "inrush resistance"),
    "i_ripple_a": ("i_ripple_a", "i_ripple", "ripple current", "ripple current rms"),
    "f_ripple_hz": ("f_ripple_hz", "f_ripple", "ripple frequency"),
}


def _norm(name: str) -> str:
    return re.sub(r"[^0-9a-z%]+", "", name.casefold())


def _alias_index() -> dict[str, str]:
    out: dict[str, str] = {}
    for canonical, spellings in ALIASES.items():
        for s in spellings:
            key = _norm(s)
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
_PLUS_MINUS = re.compile(r"^(?:\u00b1|\+/-|\+-)\s*")
_SINGLE = r"[A-Za-z_]+\d+[A-Za-z]?"


def _qualifier(text: str, pattern: re.Pattern[str] = _QUALIFIER) -> tuple[str, str | None]:
    """Split a trailing mark off a unit or a cell: "pp" (peak-to-peak), "pk", "rms", "dc", "ac"."""
    m = pattern.match(text)
    if not m or not m.group("body").strip():
        return text, None
    q = m.group("q").lower()
    kind = {"rms": "rms", "pk": "pk", "peak": "pk", "dc": "dc", "ac": "ac"}.get(q, "pp")
    return m.group("body").strip(), kind


@dataclass(frozen=True)
class _Column:
    header: str
    field: str | None  # canonical name; None for a column bomcheck does not know
    unit: str | None  # unit of the bare numbers, from the header
    mark: str | None  # "pp", "pk", "rms", "dc" or "ac" from the header


def _parse_header(header: str) -> _Column:
    """Canonical field, unit and peak-to-peak mark of a header such as ``Ripple (mVpp)``."""
    name, unit, mark = header.strip(), None, None
    m = _BRACKET_UNIT.match(name)
    if m and m.group("name").strip():
        name, unit = m.group("name").strip(), (m.group("unit").strip() or None)
    found = _ALIAS_KEY.get(_norm(name))
    if found is None:
        body, q = _qualifier(name, _NAME_QUALIFIER)
        if q and _norm(body) in _ALIAS_KEY:
            found, mark = _ALIAS_KEY[_norm(body)], q
    if found is None and unit is None:
        words = re.split(r"[\s_]+", name)
        if len(words) > 1 and _UNIT_WORD.match(words[-1]):
            head = " ".join(words[:-1])
            if _norm(head) in _ALIAS_KEY:
                found, unit = _ALIAS_KEY[_norm(head)], words[-1]
    if unit is not None and found in CONDITIONS:
        unit, q = _qualifier(unit)
        mark = mark or q
    return _Column(header, found, unit, mark)


def is_design_header(cells: list[str]) -> bool:
    """True for a header row of a design sheet: a designator or group column and a value column."""
    fields = {_parse_header(str(c)).field for c in cells if str(c).strip()}
    return bool(fields & {"refdes", "group"}) and bool(fields & (set(CONDITIONS) | {"members"}))


@dataclass(frozen=True)
class Group:
    """A named set of placements sharing conditions: a rail, a bank on a rail or a series stack.

    ``conditions`` holds the group row's own values (SI, as given); ``row`` is the source row
    that defined the group (the first row naming it when only ``group`` cells name it).
    """

    name: str
    members: tuple[str, ...]
    row: int
    kind: str = "rail"
    conditions: Mapping[str, float] = field(default_factory=lambda: MappingProxyType({}))
    notes: str = ""


@dataclass(frozen=True, eq=False)
class Design:
    """The design sheet read: per-designator conditions, groups and board-wide defaults.

    ``conditions`` is indexed by designator with a float column per ``CONDITIONS`` name (SI;
    ``v_tol_pct`` in %), ``notes``, ``group`` (name or None), ``design_row`` (the source row that
    set the placement) and ``condition_source`` ("row" or "group"). Defaults are not folded in:
    ``for_placements`` applies them.
    """

    path: str
    sha256: str
    conditions: pd.DataFrame
    defaults: dict[str, float]
    groups: dict[str, Group]
    warnings: tuple[str, ...] = ()
    defaults_row: int | None = None
    format: str = ""
    sheet: str | None = None

    def for_placements(self, refdes: pd.Series) -> pd.DataFrame:
        """Conditions for each designator of ``refdes`` (same index), precedence applied.

        Columns: ``refdes``, every ``CONDITIONS`` name, ``notes``, ``group``, ``design_row``
        (nullable int) and ``condition_source`` ("row", "group", "defaults" or "none").
        """
        c = self.conditions.reindex(_keys(refdes))
        specific = c[list(CONDITION_COLUMNS)].to_numpy(dtype=float)
        board = np.array([self.defaults.get(k, np.nan) for k in CONDITION_COLUMNS], dtype=float)
        values = _merge_levels(specific, np.broadcast_to(board, specific.shape))
        out = pd.DataFrame(values, columns=list(CONDITION_COLUMNS), index=refdes.index)
        out.insert(0, "refdes", refdes.to_numpy())
        out["notes"] = pd.Series(c["notes"].fillna("").to_numpy(dtype=object),
                                 index=out.index, dtype=object)
        group = c["group"].to_numpy(dtype=object, copy=True)
        group[pd.isna(group)] = None
        out["group"] = pd.Series(group, index=out.index, dtype=object)
        addressed = c["design_row"].notna().to_numpy()
        row = pd.array(c["design_row"].to_numpy(), dtype="Int64")
        has_defaults = bool(self.defaults)
        if has_defaults and self.defaults_row is not None:
            row[~addressed] = self.defaults_row
        out["design_row"] = row
        fallback = "defaults" if has_defaults else "none"
        out["condition_source"] = pd.Series(c["condition_source"].fillna(fallback).to_numpy(
            dtype=object), index=out.index, dtype=object)
        return out

    def unmatched(self, bom_refdes: set[str]) -> list[tuple[str, int]]:
        """Designators the design sheet names (rows and group members) that the BOM lacks, with
        the design row that named them, in design-sheet order."""
        known = pd.Index(_keys(list(bom_refdes)), dtype=object)
        idx = self.conditions.index
        missing = ~idx.isin(known)
        rows = self.conditions["design_row"].to_numpy()[missing]
        return [(str(r), int(n)) for r, n in zip(idx[missing], rows)]


def _keys(refdes: Sequence[Any] | pd.Series) -> np.ndarray:
    """Designators as the design sheet stores them: stripped, upper case (as refdes.expand)."""
    text = np.asarray(refdes, dtype=object).astype(str)
    return np.char.upper(np.char.strip(text)).astype(object)


def _merge_levels(specific: np.ndarray, general: np.ndarray) -> np.ndarray:
    """Field-by-field precedence of two levels (columns in CONDITION_COLUMNS order), with the
    rail's upper bound travelling with its DC value and derived from the tolerance."""
    i_dc = CONDITION_COLUMNS.index("v_dc")
    i_max = CONDITION_COLUMNS.index("v_dc_max")
    i_tol = CONDITION_COLUMNS.index("v_tol_pct")
    out = np.where(np.isnan(specific), general, specific)
    own_dc = ~np.isnan(specific[:, i_dc]) & np.isnan(specific[:, i_max])
    out[own_dc, i_max] = np.nan
    derive = np.isnan(out[:, i_max])
    out[derive, i_max] = out[derive, i_dc] * (1.0 + out[derive, i_tol] / 100.0)
    return out


# --- values -----------------------------------------------------------------------------------

_Fail = Callable[[int | None, str, UnitError], NoReturn]


def _text_cells(column: pd.Series | np.ndarray) -> np.ndarray:
    """Stripped text of a column as an object array ("" for empty), each distinct cell once."""
    codes, uniques = pd.factorize(np.asarray(column, dtype=object), use_na_sentinel=True)
    stripped = np.array([str(u).strip() for u in uniques] + [""], dtype=object)
    return stripped[codes]  # code -1 (missing) takes the trailing ""


def _convert(cells: np.ndarray, col: _Column, fail: _Fail) -> np.ndarray:
    """Float values (SI; v_tol_pct in %) of one column of text cells; NaN for no value.

    Every distinct string is converted once (``pd.factorize``) and mapped back: plain numbers
    by the header unit's scale, the others through pint. ``fail(position, text, error)`` raises
    the located error (position None: the header).
    """
    name = col.field
    assert name is not None
    quantity, default_unit = CONDITIONS[name]
    unit = col.unit or default_unit
    pct = 100.0 if name.endswith("_pct") else 1.0
    _check_mark(col.mark, name, lambda problem: fail(None, col.header, UnitError(problem)))
    try:
        offset = to_si("0", quantity, unit)
        scale = to_si("1", quantity, unit) - offset
    except UnitError as exc:
        fail(None, col.unit or "", exc)
    scale *= (0.5 if col.mark == "pp" else 1.0) * pct
    offset *= pct
    exact = scale == 1.0 and offset == 0.0

    codes, uniques = pd.factorize(np.asarray(cells, dtype=object), use_na_sentinel=True)
    values = np.full(len(uniques) + 1, np.nan)  # the last slot serves code -1 (missing)
    for k, u in enumerate(uniques):
        text = str(u).strip()
        if text.casefold() in _NO_VALUE:
            continue
        if name in _EXPLICIT_NONE_FIELDS and text.casefold() in _NONE_REQUIRED:
            values[k] = 0.0
            continue
        try:
            number = float(text)
        except ValueError:
            number = np.nan
        try:
            if not np.isfinite(number):
                values[k] = _round(_convert_one(text, name, quantity, unit, col.mark) * pct)
            elif exact:
                values[k] = number
            else:
                values[k] = _round(number * scale + offset)
        except UnitError as exc:
            fail(int(np.argmax(codes == k)), text, exc)
    return values[codes]


def _check_mark(mark: str | None, name: str, fail: Callable[[str], NoReturn]) -> None:
    if mark == "pp" and name not in _PEAK_FIELDS:
        fail(f"peak-to-peak given for {name}, which is not a peak value")
    if mark == "rms" and name != "v_ac_rms":
        fail(f"rms given for {name}; an rms voltage goes in v_ac_rms")
    if mark in ("pk", "dc", "ac") and CONDITIONS[name][0] != "voltage":
        fail(f"{mark} mark given for {name}, which is not a voltage")
    if mark == "ac" and name in ("v_dc", "v_dc_max"):
        fail(f"AC given for {name}; an AC voltage goes in v_ac_rms")
    if mark == "dc" and name in ("v_ac_rms", "v_ripple_pk"):
        fail(f"DC given for {name}, which is an AC quantity")


def _convert_one(text: str, name: str, quantity: str, unit: str, header_mark: str | None) -> float:
    """One distinct cell through pint, with its own pp/pk/rms mark (voltage columns only)."""
    mark = None
    if name.endswith("_pct"):
        text = _PLUS_MINUS.sub("", text)
    if quantity == "voltage":
        text, mark = _qualifier(text)

        def bad(problem: str) -> NoReturn:
            raise UnitError(problem, text=text, expected="a voltage such as '13.2 V'")

        _check_mark(mark, name, bad)
    value = to_si(text, quantity, unit)
    return value * 0.5 if (mark or header_mark) == "pp" else value


def _round(value: float) -> float:
    """Drop the last-digit noise of a unit conversion (100 uF -> 1e-4, not 9.99...e-05)."""
    return float(f"{value:.15g}")


# --- entries: the rows of any front end in one shape ------------------------------------------


@dataclass(frozen=True)
class _Labels:
    """How the front end names its fields in errors (the header, or the TOML key)."""

    refdes: str = "refdes"
    members: str = "members"
    group: str = "group"
    kind: str = "kind"


@dataclass(frozen=True, eq=False)
class _Entries:
    """One item per source row (table) or entry (TOML): its row, text fields, values (one column
    per CONDITION_COLUMNS) and whether the front end already knows it is a group."""

    rows: np.ndarray
    text: dict[str, np.ndarray]
    values: np.ndarray
    is_group: np.ndarray

    @classmethod
    def make(cls, rows: np.ndarray, texts: Mapping[str, np.ndarray],
             values: Mapping[str, np.ndarray], is_group: np.ndarray | None = None) -> _Entries:
        n = len(rows)
        text = {k: (np.asarray(texts[k], dtype=object) if k in texts
                    else np.full(n, "", dtype=object)) for k in _TEXT_FIELDS}
        vals = np.column_stack([values.get(k, np.full(n, np.nan)) for k in CONDITION_COLUMNS]) \
            if n else np.empty((0, len(CONDITION_COLUMNS)))
        flags = np.zeros(n, dtype=bool) if is_group is None else np.asarray(is_group, dtype=bool)
        return cls(np.asarray(rows, dtype=np.int64), text, vals.astype(float), flags)


def _error_rows(path: str, what: str, rows: Sequence[int] | np.ndarray, *, column: str,
                text: str, expected: str) -> NoReturn:
    r = sorted(int(x) for x in rows)
    where = f"twice in row {r[0]}" if r[0] == r[-1] else f"by rows {r[0]} and {r[-1]}"
    raise InputError(f"{what} is addressed {where}", path=path, row=r[-1], column=column,
                     text=text, expected=expected)


def _expand(cell: str, *, path: str, row: int, column: str) -> list[str]:
    try:
        return expand(cell, path=path, row=row)
    except InputError as exc:
        exc.column = exc.column or column
        raise


_SINGLE_RE = re.compile(_SINGLE)


def _build(e: _Entries, *, path: str, labels: _Labels, warnings: list[str]) -> Design:
    """Classify the entries (defaults, group and designator rows), check that no designator is
    addressed twice at one level, and build the per-designator table."""
    target, members, group, kind = (e.text[k] for k in ("refdes", "members", "group", "kind"))
    rows = e.rows
    has_values = ~np.isnan(e.values).all(axis=1)

    is_default = target == "*"
    defaults, defaults_row = _defaults(e, is_default, path=path, labels=labels)

    # Group names: rows with members, front-end groups, and the group cells of other rows.
    defines = (members != "") & ~is_default
    group_name = np.where(target != "", target, group)
    names = set(group_name[defines | e.is_group]) | set(group[group != ""])
    names.discard("")
    is_group_row = defines | e.is_group | ((target == "") & (group != ""))
    is_group_row |= pd.Index(target).isin(list(names)) & ~is_default

    # Designator rows: one designator (regex per distinct cell) or a list/range (expanded).
    rest = ~is_default & ~is_group_row & (target != "")
    single = rest & np.fromiter((bool(_SINGLE_RE.fullmatch(t)) for t in target), bool,
                                len(target))
    pos_single = np.flatnonzero(single)
    d_ref: list[np.ndarray] = [np.array([t.upper() for t in target[pos_single]], dtype=object)]
    d_pos = [pos_single]
    for i in np.flatnonzero(rest & ~single):
        items = _expand(target[i], path=path, row=int(rows[i]), column=labels.refdes)
        bad = [x for x in items if not is_designator(x)]
        if bad:
            raise InputError(f"{bad[0]!r} is not a designator, a list or range of designators, "
                             "or a group name", path=path, row=int(rows[i]),
                             column=labels.refdes, text=target[i],
                             expected="C5, C1-C9, C20, * or the name of a group defined by "
                                      "a row with members")
        d_ref.append(np.array([x.upper() for x in items], dtype=object))
        d_pos.append(np.full(len(items), i))
    d = pd.DataFrame({"refdes": pd.Series(np.concatenate(d_ref), dtype=object),
                      "pos": np.concatenate(d_pos).astype(np.int64)})
    d = d.sort_values("pos", kind="stable", ignore_index=True)  # source order
    dup = d["refdes"].duplicated(keep=False).to_numpy()
    if dup.any():
        first = d["refdes"].to_numpy()[dup][0]
        at = rows[d["pos"].to_numpy()[d["refdes"].to_numpy() == first][:2]]
        _error_rows(path, first, at, column=labels.refdes, text=first,
                    expected="each designator in one designator row (a group may also name "
                             "it: the designator row wins)")

    nowhere = ~is_default & ~is_group_row & (target == "") & has_values
    if nowhere.any():
        i = int(np.flatnonzero(nowhere)[0])
        raise InputError("row gives values but names no designator or group", path=path,
                         row=int(rows[i]), column=labels.refdes, text="",
                         expected="a designator, a list or range, a group name or *")
    not_group = ~is_group_row & (kind != "")
    if not_group.any():
        i = int(np.flatnonzero(not_group)[0])
        raise InputError("kind is only for group rows", path=path, row=int(rows[i]),
                         column=labels.kind, text=kind[i],
                         expected="an empty cell, or a group row")

    groups, membership = _groups(e, is_group_row, group_name, d, path=path, labels=labels,
                                 warnings=warnings)
    conditions = _conditions(e, d, groups, membership)
    _warn_upper_bound(conditions, warnings, path)
    _warn_small_tolerance(e, warnings, path)
    return Design(path=path, sha256="", conditions=conditions, defaults=defaults,
                  groups=groups, warnings=tuple(warnings), defaults_row=defaults_row)


def _defaults(e: _Entries, is_default: np.ndarray, *, path: str,
              labels: _Labels) -> tuple[dict[str, float], int | None]:
    at = np.flatnonzero(is_default)
    if not len(at):
        return {}, None
    if len(at) > 1:
        _error_rows(path, "'*' (board-wide defaults)", e.rows[at[:2]], column=labels.refdes,
                    text="*", expected="one row of defaults")
    i = int(at[0])
    for col in ("members", "group", "kind"):
        if e.text[col][i]:
            raise InputError("the defaults row cannot have this field", path=path,
                             row=int(e.rows[i]), column=getattr(labels, col),
                             text=e.text[col][i], expected="an empty cell")
    values = {k: float(v) for k, v in zip(CONDITION_COLUMNS, e.values[i]) if not np.isnan(v)}
    return values, int(e.rows[i])


def _groups(e: _Entries, is_group_row: np.ndarray, group_name: np.ndarray, d: pd.DataFrame, *,
            path: str, labels: _Labels,
            warnings: list[str]) -> tuple[dict[str, Group], pd.DataFrame]:
    """The groups with their members; membership has one row per (designator, group) with the
    position of the entry that put the designator there."""
    rows, target, group = e.rows, e.text["refdes"], e.text["group"]
    own: dict[str, int] = {}
    for i in np.flatnonzero(is_group_row):
        name = str(group_name[i])
        if target[i] and group[i] and group[i] != target[i]:
            raise InputError("a group row names two groups", path=path, row=int(rows[i]),
                             column=labels.group, text=group[i],
                             expected=f"empty or {target[i]!r}")
        if name in own:
            _error_rows(path, f"group {name!r}", rows[[own[name], i]], column=labels.refdes,
                        text=name, expected="one row per group (list every member in its "
                                            "members cell)")
        own[name] = int(i)

    ref: list[str] = []
    grp: list[str] = []
    src: list[int] = []
    for name, i in own.items():
        cell = e.text["members"][i]
        if not cell:
            continue
        items = _expand(cell, path=path, row=int(rows[i]), column=labels.members)
        bad = [x for x in items if not is_designator(x)]
        if bad:
            raise InputError(f"{bad[0]!r} is not a designator", path=path, row=int(rows[i]),
                             column=labels.members, text=cell,
                             expected="designators, lists or ranges such as C1-C9, C20")
        upper = [x.upper() for x in items]
        if len(set(upper)) != len(upper):
            twice = pd.Series(upper)[pd.Series(upper).duplicated()].iloc[0]
            _error_rows(path, twice, [rows[i], rows[i]], column=labels.members, text=cell,
                        expected="each member once")
        ref += upper
        grp += [name] * len(upper)
        src += [int(i)] * len(upper)
    d_pos = d["pos"].to_numpy()
    tagged = group[d_pos] != ""
    m = pd.DataFrame({
        "refdes": pd.Series(ref + list(d["refdes"].to_numpy()[tagged]), dtype=object),
        "group": pd.Series(grp + list(group[d_pos[tagged]]), dtype=object),
        "pos": np.array(src + list(d_pos[tagged]), dtype=np.int64),
    }).drop_duplicates(["refdes", "group"])
    dup = m["refdes"].duplicated(keep=False).to_numpy()
    if dup.any():
        first = m["refdes"].to_numpy()[dup][0]
        both = m[m["refdes"].to_numpy() == first].iloc[:2]
        _error_rows(path, f"{first} (groups {' and '.join(map(repr, both['group']))})",
                    rows[both["pos"].to_numpy()], column=labels.members, text=first,
                    expected="each designator in one group")

    groups: dict[str, Group] = {}
    first_pos = m.groupby("group", sort=False)["pos"].min()
    for name, members in m.groupby("group", sort=False)["refdes"]:
        groups[str(name)] = _make_group(e, str(name), tuple(members), own.get(str(name)),
                                        int(rows[first_pos[name]]), path=path, labels=labels)
    for name, i in own.items():
        if name not in groups:
            groups[name] = _make_group(e, name, (), i, int(rows[i]), path=path, labels=labels)
            warnings.append(f"{path}: group {name!r} (row {int(rows[i])}) has no members")
    return groups, m


def _make_group(e: _Entries, name: str, members: tuple[str, ...], i: int | None,
                first_row: int, *, path: str, labels: _Labels) -> Group:
    if i is None:  # named only by the group cells of designator rows
        return Group(name, members, first_row)
    kind = e.text["kind"][i].lower() or "rail"
    if kind not in GROUP_KINDS:
        raise InputError("unknown group kind", path=path, row=int(e.rows[i]),
                         column=labels.kind, text=e.text["kind"][i],
                         expected="one of " + ", ".join(GROUP_KINDS))
    own = {k: float(v) for k, v in zip(CONDITION_COLUMNS, e.values[i]) if not np.isnan(v)}
    return Group(name, members, int(e.rows[i]), kind, MappingProxyType(own), e.text["notes"][i])


def _conditions(e: _Entries, d: pd.DataFrame, groups: dict[str, Group],
                membership: pd.DataFrame) -> pd.DataFrame:
    """Per-designator table: designator rows over group rows, field by field."""
    index = pd.Index(pd.concat([d["refdes"], membership["refdes"]]).drop_duplicates(),
                     dtype=object, name="refdes")
    n, k = len(index), len(CONDITION_COLUMNS)
    d_pos = d["pos"].to_numpy()
    at_d = index.get_indexer(d["refdes"])
    specific = np.full((n, k), np.nan)
    specific[at_d] = e.values[d_pos]

    g_values = np.full((len(groups), k), np.nan)
    g_rows = np.zeros(len(groups), dtype=np.int64)
    g_notes = np.full(len(groups), "", dtype=object)
    for j, g in enumerate(groups.values()):
        g_rows[j], g_notes[j] = g.row, g.notes
        for c, col in enumerate(CONDITION_COLUMNS):
            if col in g.conditions and col not in _GROUP_ONLY[g.kind]:
                g_values[j, c] = g.conditions[col]
    g_at = pd.Index(list(groups), dtype=object).get_indexer(membership["group"])
    at_m = index.get_indexer(membership["refdes"])
    general = np.full((n, k), np.nan)
    general[at_m] = g_values[g_at]

    notes = np.full(n, "", dtype=object)
    notes[at_m] = g_notes[g_at]
    d_notes = e.text["notes"][d_pos]
    keep = d_notes != ""
    notes[at_d[keep]] = d_notes[keep]
    group_col = np.full(n, None, dtype=object)
    group_col[at_m] = membership["group"].to_numpy()
    design_row = np.zeros(n, dtype=np.int64)
    design_row[at_m] = g_rows[g_at]
    design_row[at_d] = e.rows[d_pos]
    source = np.full(n, "group", dtype=object)
    source[at_d] = "row"

    out = pd.DataFrame(_merge_levels(specific, general), index=index,
                       columns=list(CONDITION_COLUMNS))
    out["notes"] = pd.Series(notes, index=index, dtype=object)
    out["group"] = pd.Series(group_col, index=index, dtype=object)  # None, not NaN
    out["design_row"] = design_row
    out["condition_source"] = pd.Series(source, index=index, dtype=object)
    return out.iloc[np.argsort(design_row, kind="stable")]


def _warn_upper_bound(conditions: pd.DataFrame, warnings: list[str], path: str) -> None:
    low = (conditions["v_dc_max"].abs() < conditions["v_dc"].abs()).to_numpy()
    if low.any():
        first = np.argmax(low)
        warnings.append(f"{path}: v_dc_max is below v_dc for {int(low.sum())} designator(s), "
                        f"first {conditions.index[first]} (row "
                        f"{int(conditions['design_row'].iloc[first])})")


def _warn_small_tolerance(e: _Entries, warnings: list[str], path: str) -> None:
    # A workbook cell formatted as a percentage stores 5 % as 0.05, which reads as 0.05 %.
    tol = e.values[:, CONDITION_COLUMNS.index("v_tol_pct")]
    small = (tol > 0) & (tol < 1)
    if small.any():
        i = int(np.argmax(small))
        warnings.append(f"{path}: v_tol_pct of {tol[i]:g} % in row {int(e.rows[i])} is unusually "
                        "small; a cell formatted as a percentage stores 5 % as 0.05: write 5 or "
                        "'5 %'")


# --- tables (CSV, XLSX) -----------------------------------------------------------------------


def design_from_table(frame: pd.DataFrame, rows: Sequence[int] | np.ndarray | None = None, *,
                      path: str = "<table>", header_row: int | None = None) -> Design:
    """Read a design sheet already split into cells: ``frame`` columns are the headers, cells
    text ("" for empty); ``rows`` are the source row numbers of the frame's rows (default: 2, 3...
    under a header in row 1).

    Raises ``InputError`` naming the file, row and column for a bad cell or a conflicting row.
    """
    n = len(frame)
    if rows is None:
        src, header_row = np.arange(2, n + 2), 1 if header_row is None else header_row
    else:
        src = np.asarray(rows, dtype=np.int64)
    columns = [_parse_header(str(h)) for h in frame.columns]
    warnings: list[str] = []
    taken: dict[str, str] = {}
    cells: dict[int, np.ndarray] = {}
    for pos, col in enumerate(columns):
        cells[pos] = _text_cells(frame.iloc[:, pos])
        if col.field is None:
            if col.header.strip() or (cells[pos] != "").any():
                warnings.append(f"{path}: column {col.header!r} is not a design-sheet column; "
                                "ignored")
            continue
        if col.field in taken:
            raise InputError(f"two columns give {col.field}: {taken[col.field]!r} and "
                             f"{col.header!r}", path=path, row=header_row, column=col.header,
                             expected="one column per field")
        taken[col.field] = col.header
    if "refdes" not in taken and "group" not in taken:
        raise InputError("no designator column", path=path, row=header_row,
                         expected="a column named refdes (or "
                                  + ", ".join(ALIASES["refdes"][1:5]) + ") or group")

    texts: dict[str, np.ndarray] = {}
    values: dict[str, np.ndarray] = {}
    for pos, col in enumerate(columns):
        if col.field is None:
            continue
        if col.field not in CONDITIONS:
            texts[col.field] = cells[pos]
            continue

        def fail(at: int | None, text: str, exc: UnitError, col: _Column = col) -> NoReturn:
            raise InputError(f"{exc.problem} ({col.field})", path=path,
                             row=header_row if at is None else int(src[at]),
                             column=col.header, text=text, expected=exc.expected) from None

        values[col.field] = _convert(cells[pos], col, fail)
    labels = _Labels(**{k: taken.get(k, k) for k in ("refdes", "members", "group", "kind")})
    return _build(_Entries.make(src, texts, values), path=path, labels=labels,
                  warnings=warnings)


# --- TOML -------------------------------------------------------------------------------------

_TOML_TABLES = ("defaults", "groups", "parts")
_TABLE_HEADER = re.compile(r"^\s*\[(?!\[)(?P<key>[^\]]+)\]\s*(?:#.*)?$")
_KEY_PART = re.compile(r"\s*(?:\"((?:[^\"\\]|\\.)*)\"|'([^']*)'|([A-Za-z0-9_-]+))\s*(?:\.|$)")


def _toml_key(text: str) -> tuple[str, ...]:
    parts, pos = [], 0
    while pos < len(text):
        m = _KEY_PART.match(text, pos)
        if not m or m.end() == pos:
            return ()
        parts.append(next(g for g in m.groups() if g is not None))
        pos = m.end()
    return tuple(parts)


def _toml_lines(text: str) -> dict[tuple[str, ...], int]:
    """Line of each ``[table]`` header (tomllib gives no positions)."""
    out: dict[tuple[str, ...], int] = {}
    for n, line in enumerate(text.splitlines(), start=1):
        m = _TABLE_HEADER.match(line)
        if m:
            out.setdefault(_toml_key(m.group("key")), n)
    return out


def _toml_line(lines: dict[tuple[str, ...], int], text_lines: list[str], table: str,
               name: str | None) -> int:
    if name is None:
        return lines.get((table,), 1)
    if (table, name) in lines:
        return lines[(table, name)]
    quoted = re.compile(r"^\s*(?:" + re.escape(f'"{name}"') + "|" + re.escape(f"'{name}'") + "|"
                        + re.escape(name) + r")\s*=")
    for n, line in enumerate(text_lines, start=1):
        if quoted.match(line):
            return n
    return lines.get((table,), 1)


def design_from_toml(text: str, *, path: str = "<toml>") -> Design:
    """Read a TOML design sheet (format in the module docstring)."""
    from bomcheck.reader import load_toml

    data = load_toml(text, path)
    lines, text_lines = _toml_lines(text), text.splitlines()
    warnings: list[str] = []
    entries: list[tuple[str, str | None, Mapping[str, Any]]] = []
    for key, value in data.items():
        if key not in _TOML_TABLES:
            if isinstance(value, dict):
                raise InputError("unknown table", path=path, row=lines.get((key,)), column=key,
                                 expected="[defaults], [groups.NAME] or [parts.\"C1-C4\"]")
            warnings.append(f"{path}: top-level key {key!r} is not part of a design; ignored")
            continue
        if not isinstance(value, dict):
            raise InputError(f"{key} must be a table", path=path, column=key,
                             expected=f"[{key}]" if key == "defaults" else f"[{key}.NAME]")
        if key == "defaults":
            entries.append(("defaults", None, value))
            continue
        for name, body in value.items():
            if not isinstance(body, dict):
                raise InputError(f"{key}.{name} must be a table", path=path,
                                 row=_toml_line(lines, text_lines, key, name),
                                 column=f"{key}.{name}", expected=f'[{key}."{name}"] with keys')
            entries.append((key, str(name), body))

    n = len(entries)
    rows = np.array([_toml_line(lines, text_lines, t, nm) for t, nm, _ in entries], dtype=np.int64)
    texts = {k: np.full(n, "", dtype=object) for k in _TEXT_FIELDS}
    cells: dict[tuple[str, str | None, str | None], list[tuple[int, str, str]]] = {}
    for i, (table, name, body) in enumerate(entries):
        where = table if name is None else f"{table}.{_toml_quote(name)}"
        texts["refdes"][i] = "*" if name is None else name.strip()
        seen: dict[str, str] = {}
        for k, v in body.items():
            col = _parse_header(str(k))
            label = f"{where}.{k}"
            if col.field is None:
                warnings.append(f"{path}: key {label!r} is not a design-sheet field; ignored")
                continue
            if col.field in seen:
                raise InputError(f"two keys give {col.field}: {seen[col.field]!r} and {k!r}",
                                 path=path, row=int(rows[i]), column=label,
                                 expected="one key per field")
            seen[col.field] = str(k)
            if col.field == "refdes":
                raise InputError("the designators are the table's name", path=path,
                                 row=int(rows[i]), column=label,
                                 expected='[parts."C1-C4"] with no refdes key')
            if col.field == "members" and table != "groups":
                raise InputError("members belong in a group", path=path, row=int(rows[i]),
                                 column=label, expected="[groups.NAME] members = \"C1-C9\"")
            if col.field in CONDITIONS:
                if isinstance(v, bool) or not isinstance(v, (int, float, str)):
                    raise InputError(f"not a value for {col.field}", path=path,
                                     row=int(rows[i]), column=label, text=str(v),
                                     expected="a number or a text with a unit, such as "
                                              "\"13.2 V\"")
                cells.setdefault((col.field, col.unit, col.mark), []).append((i, label, str(v)))
            else:
                texts[col.field][i] = _toml_text(v, path=path, row=int(rows[i]), label=label)

    values = {c: np.full(n, np.nan) for c in CONDITION_COLUMNS}
    for (fld, unit, mark), items in cells.items():
        col = _Column(items[0][1], fld, unit, mark)

        def fail(at: int | None, text: str, exc: UnitError, fld: str = fld,
                 items: list[tuple[int, str, str]] = items) -> NoReturn:
            i, label, _ = items[0 if at is None else at]
            raise InputError(f"{exc.problem} ({fld})", path=path, row=int(rows[i]),
                             column=label, text=text, expected=exc.expected) from None

        texts_of = np.array([t for _, _, t in items], dtype=object)
        values[fld][[i for i, _, _ in items]] = _convert(texts_of, col, fail)
    if not n:
        warnings.append(f"{path}: no [defaults], [groups] or [parts] entries")
    labels = _Labels(refdes="table name", members="members", group="group", kind="kind")
    is_group = np.array([t == "groups" for t, _, _ in entries], dtype=bool)
    return _build(_Entries.make(rows, texts, values, is_group), path=path, labels=labels,
                  warnings=warnings)


def _toml_quote(key: str) -> str:
    return key if re.fullmatch(r"[A-Za-z0-9_-]+", key) else '"' + key.replace('"', '\\"') + '"'


def _toml_text(v: Any, *, path: str, row: int, label: str) -> str:
    if isinstance(v, str):
        return v.strip()
    if isinstance(v, list) and all(isinstance(x, str) for x in v):
        return ", ".join(x.strip() for x in v)
    raise InputError("expected text", path=path, row=row, column=label, text=str(v),
                     expected="a string (members may be a list of strings)")


# --- files ------------------------------------------------------------------------------------


def read_design(path: str, *, sheet: str | int | None = None) -> Design:
    """Read a design sheet (CSV/TSV/XLSX through ``bomcheck.reader``, or TOML) into a Design.

    ``sheet`` picks the XLSX sheet (name or 1-based index). Raises ``InputError`` for a file that
    cannot be read or a cell that cannot be used.
    """
    from bomcheck.reader import read_input, toml_text

    data, sha256 = read_input(str(path), "design sheet")
    if Path(path).suffix.lower() == ".toml":
        text = toml_text(data, str(path))
        design = design_from_toml(text, path=str(path))
        extra = () if sheet is None else (f"{path}: a TOML design has no sheets; --sheet "
                                          "ignored",)
        return replace(design, sha256=sha256, format="toml",
                       warnings=design.warnings + extra)
    from bomcheck.reader import read_input_table

    raw = read_input_table(
        str(path), sheet=sheet, header_predicate=is_design_header, what="design-sheet",
        expected="a header row with a designator (refdes) or group column and a value column "
                 "such as v_dc, t_ambient_c or members")
    design = design_from_table(raw.frame, raw.rows, path=str(path), header_row=raw.header_row)
    return replace(design, sha256=sha256, format=raw.format, sheet=raw.sheet)
