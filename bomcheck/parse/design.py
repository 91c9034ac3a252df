"""Normalise stage for the design sheet: reads the operating conditions of each placement (CSV, XLSX
or TOML) into one SI table keyed by designator, with groups (rails) and board-wide defaults.

Tables (CSV, TSV, XLSX)
-----------------------
One header row, then one row per target. The ``refdes`` cell of a row names what it addresses:

- one designator (``C14``), a list or a range (``C1-C9, C20``, expanded by ``bomcheck.parse.refdes``);
- a group (a rail such as ``+5V_LOGIC``): a row with a ``members`` cell defines the group and
  its values (``kind``: rail, the default, bank or series); a designator row may also join a
  group through its ``group`` cell, and a row naming a known group gives that group's values;
- ``*``: board-wide defaults.

Example::

    refdes,     members,    v_dc [V], v_tol_pct, Ripple mVpp, t_amb (°C), life,     notes
    *,          ,           ,         ,          ,            45,         10 years, board
    +5V_LOGIC,  "C1-C9,C20",5,        5,         100,         ,           ,         logic rail
    C14,        ,           ,         ,          ,            85 degC,    ,         hot spot

Headers, units in headers, peak marks, the cell grammar, plausible ranges and signs are in
``bomcheck.parse.design_cells``: ``13.2 V``, ``500 mV``, ``85 degC``, ``2.2 uF``, ``10 years``,
``50000 h``, ``±5 %`` (each distinct text read once, never evaluated); an empty cell, ``-`` or
``n/a`` gives no value; ``none`` in ``c_min_f`` says the circuit states no minimum capacitance
(stored as 0 F, so the capacitance rule does not apply). An unknown column holding values is an
error; suspicious values (``v_dc_max`` below ``v_dc``; a ``v_tol_pct`` under 1 %, which is what a
workbook cell formatted as a percentage gives for 5 %) and empty unknown columns are
``Design.warnings`` (``InputWarning``: file, row, column, message).

TOML: see ``bomcheck.parse.design_toml``.

Precedence
----------
Field by field: a designator row, else its group's row, else the defaults. A designator named
twice at the same level (two designator rows, or two groups) is an ``InputError`` naming both
rows. The upper bound of the rail travels with its DC value: a ``v_dc`` given at a more specific
level drops a ``v_dc_max`` given at a less specific one (a ``v_tol_pct`` still applies); where
only the tolerance is known, ``v_dc_max = v_dc x (1 + v_tol_pct/100)``. Values of a group that
belong to the group as a whole are not copied to its members: a bank's or series stack's
``c_min_f`` (the group meets the requirement: a member's own need is "none") and a series
stack's voltages (each member carries a share; its ``v_reverse_pk`` reaches every member
whole, the conservative reading); they stay in ``Group.conditions`` for the stress stage. A
designator row that sets a value its group's row also gives wins and is a warning naming both
rows; ``t_ambient_min_c`` above ``t_ambient_c`` is a warning too.

Circuit columns
---------------
Read by ``bomcheck.stress.circuit`` (bare numbers in the unit shown):

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
voltages but ``v_reverse_pk``, its ``c_min_f``, ``r_bleeder_ohm``, ``slew_v_per_s``,
``r_source_ohm``) stay in ``Group.conditions``.
"""

from __future__ import annotations

import itertools
from collections.abc import Sequence
from dataclasses import replace
from pathlib import Path
from typing import NoReturn

import numpy as np
import pandas as pd

from bomcheck.errors import InputError, UnitError
from bomcheck.parse.design_build import build
from bomcheck.parse.design_cells import (ALIASES, CONDITION_COLUMNS, NO_VALUE, Column, Entries,
                                         InputWarning, Labels, NeedsText, convert,
                                         is_design_header, parse_header, text_cells,
                                         unknown_column)
from bomcheck.parse.design_model import GROUP_KINDS, SOURCES, Design, Group
from bomcheck.parse.design_toml import entries_from_toml
from bomcheck.read.reader import NumericColumns, read_input, read_input_table, toml_text
from bomcheck.vocabulary import CONDITIONS

__all__ = ["ALIASES", "CONDITION_COLUMNS", "GROUP_KINDS", "SOURCES", "Design", "Group",
           "InputWarning", "design_from_table", "design_from_toml", "is_design_header",
           "read_design"]


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
    columns = [parse_header(str(h)) for h in frame.columns]
    warnings: list[InputWarning] = []
    taken = _claim_columns(frame, columns, path=path, header_row=header_row, warnings=warnings)
    texts: dict[str, np.ndarray] = {}
    values: dict[str, np.ndarray] = {}
    for pos, col in enumerate(columns):
        if col.field is None:
            continue
        if col.field not in CONDITIONS:
            texts[col.field] = text_cells(frame.iloc[:, pos])
            continue

        def fail(at: int | None, text: str, exc: UnitError, col: Column = col) -> NoReturn:
            raise InputError(f"{exc.problem} ({col.field})", path=path,
                             row=header_row if at is None else int(src[at]),
                             column=col.header, text=text, expected=exc.expected) from None

        cells = frame.iloc[:, pos]
        values[col.field] = convert(cells.to_numpy() if cells.dtype.kind == "f"
                                    else cells.to_numpy(dtype=object), col, fail)
    labels = Labels(**{k: taken.get(k, k) for k in ("refdes", "members", "group", "kind")})
    return build(Entries.make(src, texts, values), path=path, labels=labels,
                 warnings=warnings)


def _claim_columns(frame: pd.DataFrame, columns: list[Column], *, path: str,
                   header_row: int | None, warnings: list[InputWarning]) -> dict[str, str]:
    """The field each column gives (field -> header); an unknown column holding values is an
    error, an empty one a warning; a second notes column is left out (``columns`` updated)."""
    taken: dict[str, str] = {}
    for pos, col in enumerate(columns):
        if col.field is None:
            filled = bool((text_cells(frame.iloc[:, pos]) != "").any())
            found = unknown_column(col.header, filled, path=path, row=header_row)
            if found is not None:
                warnings.append(found)
            continue
        if col.field == "notes" and "notes" in taken:  # a second notes column: kept out
            columns[pos] = Column(col.header, None, None, None)
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
    return taken


def design_from_toml(text: str, *, path: str = "<toml>") -> Design:
    """Read a TOML design sheet (format in ``bomcheck.parse.design_toml``)."""
    entries, labels, warnings = entries_from_toml(text, path=path)
    return build(entries, path=path, labels=labels, warnings=warnings)


# --- files ------------------------------------------------------------------------------------


def read_design(path: str, *, sheet: str | int | None = None) -> Design:
    """Read a design sheet (CSV/TSV/XLSX through ``bomcheck.read.reader``, or TOML) into a Design.

    ``sheet`` picks the XLSX sheet (name or 1-based index). Raises ``InputError`` for a file that
    cannot be read or a cell that cannot be used.
    """
    if Path(path).suffix.lower() == ".toml":
        data, sha256 = read_input(str(path), "design sheet")
        text = toml_text(data, str(path))
        design = design_from_toml(text, path=str(path))
        extra = () if sheet is None else (
            InputWarning(str(path), None, None, "a TOML design has no sheets; --sheet ignored"),)
        return replace(design, sha256=sha256, format="toml",
                       warnings=design.warnings + extra)
    # The condition columns are read as numbers; a sheet whose cells need their text (units,
    # marks, words, an implausible value to name) is read again as text.
    try:
        return _read_table_design(str(path), sheet, _condition_columns)
    except NeedsText:
        return _read_table_design(str(path), sheet, None)


def _read_table_design(path: str, sheet: str | int | None,
                       numeric: NumericColumns | None) -> Design:
    raw = read_input_table(
        path, sheet=sheet, header_predicate=is_design_header, what="design-sheet",
        expected="a header row with a designator (refdes) or group column and a value column "
                 "such as v_dc, t_ambient_c or members", numeric=numeric)
    design = design_from_table(raw.frame, raw.rows, path=path, header_row=raw.header_row)
    return replace(design, sha256=raw.sha256, format=raw.format, sheet=raw.sheet)


def _condition_columns(headers: list[str]) -> dict[int, list[str]]:
    """The columns of a design sheet's header that give conditions (read as numbers), each with
    the cells that give no value there (``NO_VALUE`` in any case)."""
    return {i: _NO_VALUE_CELLS for i, h in enumerate(headers)
            if parse_header(str(h)).field in CONDITIONS}


# Every spelling whose casefold is in NO_VALUE ("n/a", "N/A", "-"...): read as no value.
_NO_VALUE_CELLS = sorted({"".join(c) for word in NO_VALUE if word
                          for c in itertools.product(*({ch, ch.upper()} for ch in word))})

