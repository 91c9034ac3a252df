"""Normalise stage for a TOML design sheet: its ``[defaults]``, ``[groups.NAME]`` and
``[parts."C1-C4"]`` tables read into the same entries as a table's rows.

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

Keys follow the same aliases and cell rules as table headers (``"ripple [mVpp]" = 100``
works; ``bomcheck.parse.design_cells``); an unknown key or table is an error, an unknown top-level
key a warning. The row numbers in errors and in ``design_row``
are the line of the entry's ``[...]`` header.
"""

from __future__ import annotations

import re
from collections.abc import Mapping
from typing import Any, NoReturn

import numpy as np

from bomcheck.errors import InputError, UnitError
from bomcheck.parse.design_cells import (CONDITION_COLUMNS, TEXT_FIELDS, Column, Entries,
                                         InputWarning, Labels, convert, parse_header,
                                         unknown_column)
from bomcheck.read.reader import load_toml
from bomcheck.vocabulary import CONDITIONS

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


_Entry = tuple[str, str | None, Mapping[str, Any]]  # (table, name or None, body)
_Cells = dict[tuple[str, str | None, str | None], list[tuple[int, str, str]]]


def entries_from_toml(text: str, *, path: str = "<toml>"
                      ) -> tuple[Entries, Labels, list[InputWarning]]:
    """The entries of a TOML design sheet (format in the module docstring), the labels its
    errors use and the warnings found; ``bomcheck.parse.design`` builds the ``Design``."""
    data = load_toml(text, path)
    lines, text_lines = _toml_lines(text), text.splitlines()
    warnings: list[InputWarning] = []
    entries = _toml_entries(data, lines, text_lines, path, warnings)
    n = len(entries)
    rows = np.array([_toml_line(lines, text_lines, t, nm) for t, nm, _ in entries], dtype=np.int64)
    texts = {k: np.full(n, "", dtype=object) for k in TEXT_FIELDS}
    cells: _Cells = {}
    for i, (table, name, body) in enumerate(entries):
        where = table if name is None else f"{table}.{_toml_quote(name)}"
        texts["refdes"][i] = "*" if name is None else name.strip()
        seen: dict[str, str] = {}
        for k, v in body.items():
            _entry_value(i, table, f"{where}.{k}", str(k), v, seen, texts, cells,
                         row=int(rows[i]), path=path)
    values = _convert_cells(cells, rows, n, path)
    if not n:
        warnings.append(InputWarning(path, None, None,
                                     "no [defaults], [groups] or [parts] entries"))
    labels = Labels(refdes="table name", members="members", group="group", kind="kind")
    is_group = np.array([t == "groups" for t, _, _ in entries], dtype=bool)
    return Entries.make(rows, texts, values, is_group), labels, warnings


def _toml_entries(data: dict, lines: dict[tuple[str, ...], int], text_lines: list[str],
                  path: str, warnings: list[InputWarning]) -> list[_Entry]:
    """The ``[defaults]``, ``[groups.NAME]`` and ``[parts.NAME]`` tables in file order; an
    unknown table is an error, an unknown top-level key a warning."""
    entries: list[_Entry] = []
    for key, value in data.items():
        if key not in _TOML_TABLES:
            if isinstance(value, dict):
                raise InputError("unknown table", path=path, row=lines.get((key,)), column=key,
                                 expected="[defaults], [groups.NAME] or [parts.\"C1-C4\"]")
            warnings.append(InputWarning(path, None, key,
                                         f"top-level key {key!r} is not part of a design; ignored"))
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
    return entries


def _entry_value(i: int, table: str, label: str, key: str, v: Any, seen: dict[str, str],
                 texts: dict[str, np.ndarray], cells: _Cells, *, row: int, path: str) -> None:
    """One key of entry ``i``: a text field into ``texts``, a condition's cell into ``cells``
    (converted per column afterwards); a misplaced or repeated key is an error."""
    col = parse_header(key)
    if col.field is None:
        unknown_column(label, True, path=path, row=row, what="key")
        return
    if col.field in seen:
        raise InputError(f"two keys give {col.field}: {seen[col.field]!r} and {key!r}",
                         path=path, row=row, column=label, expected="one key per field")
    seen[col.field] = key
    if col.field == "refdes":
        raise InputError("the designators are the table's name", path=path, row=row,
                         column=label, expected='[parts."C1-C4"] with no refdes key')
    if col.field == "members" and table != "groups":
        raise InputError("members belong in a group", path=path, row=row,
                         column=label, expected="[groups.NAME] members = \"C1-C9\"")
    if col.field not in CONDITIONS:
        texts[col.field][i] = _toml_text(v, path=path, row=row, label=label)
        return
    if isinstance(v, bool) or not isinstance(v, (int, float, str)):
        raise InputError(f"not a value for {col.field}", path=path, row=row, column=label,
                         text=str(v), expected="a number or a text with a unit, such as "
                                               "\"13.2 V\"")
    cells.setdefault((col.field, col.unit, col.mark), []).append((i, label, str(v)))


def _convert_cells(cells: _Cells, rows: np.ndarray, n: int, path: str) -> dict[str, np.ndarray]:
    """The condition values of the entries, one conversion per (field, unit, mark) column."""
    values = {c: np.full(n, np.nan) for c in CONDITION_COLUMNS}
    for (fld, unit, mark), items in cells.items():
        col = Column(items[0][1], fld, unit, mark)

        def fail(at: int | None, text: str, exc: UnitError, fld: str = fld,
                 items: list[tuple[int, str, str]] = items) -> NoReturn:
            i, label, _ = items[0 if at is None else at]
            raise InputError(f"{exc.problem} ({fld})", path=path, row=int(rows[i]),
                             column=label, text=text, expected=exc.expected) from None

        texts_of = np.array([t for _, _, t in items], dtype=object)
        values[fld][[i for i, _, _ in items]] = convert(texts_of, col, fail)
    return values


def _toml_quote(key: str) -> str:
    return key if re.fullmatch(r"[A-Za-z0-9_-]+", key) else '"' + key.replace('"', '\\"') + '"'


def _toml_text(v: Any, *, path: str, row: int, label: str) -> str:
    if isinstance(v, str):
        return v.strip()
    if isinstance(v, list) and all(isinstance(x, str) for x in v):
        return ", ".join(x.strip() for x in v)
    raise InputError("expected text", path=path, row=row, column=label, text=str(v),
                     expected="a string (members may be a list of strings)")

