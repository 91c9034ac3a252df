"""Substitute check, reading stage: the alternates file (CSV, TSV, XLSX through
``bomcheck.read.reader``, or TOML) to ``Alternate`` values, with the parts-data cells it gives."""

from __future__ import annotations

import re
from collections.abc import Mapping, Sequence
from pathlib import Path
from typing import Any

import pandas as pd

from bomcheck.errors import InputError
from bomcheck.frozen import frozen
from bomcheck.parse.columns import match_field, normalise_header
from bomcheck.parse.parts import PartsData, is_parts_header, parts_from_table
from bomcheck.read.reader import load_toml, read_input, read_input_table, toml_text
from bomcheck.substitute.result import Alternate

# BOM cells an alternate may give, parsed with the BOM's own parser and contexts.
SPEC_CELLS: tuple[str, ...] = ("value", "description", "voltage", "tolerance", "dielectric",
                               "package", "temperature")

# Folded header -> field, for the alternates file's own columns (BOM and parts-data columns are
# recognised by their own modules' aliases).
_OWN_HEADERS: dict[str, tuple[str, ...]] = {
    "original": ("original", "originalpart", "originalmpn", "originaltext", "replaces",
                 "replacing", "substitutefor", "alternatefor", "bomline", "originalline"),
    "original_refdes": ("originalrefdes", "originaldesignators", "originaldesignator",
                        "refdes", "designator", "designators", "placements"),
    "mpn": ("alternate", "alternatempn", "proposed", "proposedmpn", "substitute",
            "substitutempn"),
    "description": ("alternatetext", "proposedtext", "alternatedescription",
                    "proposeddescription", "text"),
    "footprint_checked": ("footprintchecked", "footprintok", "footprintverified",
                          "layoutchecked", "footprintapproved"),
    "notes": ("notes", "note", "comment", "comments", "remarks"),
}
_YES = frozenset({"yes", "y", "true", "t", "1", "x", "checked", "ok", "\u2713", "\u2714"})
_NO = frozenset({"", "no", "n", "false", "f", "0", "-"})


def _own_field(header: str) -> str | None:
    key = normalise_header(header)
    for name, spellings in _OWN_HEADERS.items():
        if key in spellings:
            return name
    return None


def _classify(header: str) -> tuple[str, str]:
    """(kind, field) of an alternates-file header: ``own``, ``cell`` (a BOM-style cell),
    ``parts`` (a parts-data field) or ``ignore``."""
    own = _own_field(header)
    if own is not None:
        return ("own", own)
    bom = match_field(header)
    if bom in ("mpn", "manufacturer", "notes"):
        return ("own", bom)
    if bom in SPEC_CELLS:
        return ("cell", bom)
    if bom is None and is_parts_header(["mpn", header]):
        return ("parts", header)
    return ("ignore", header)


def is_alternates_header(cells: list[str]) -> bool:
    """True for the header row of an alternates table: an original column and an alternate
    (MPN or a text cell)."""
    kinds = {_classify(str(c)) for c in cells if str(c).strip()}
    has_original = bool(kinds & {("own", "original"), ("own", "original_refdes")})
    has_alternate = any(k == "cell" or f in ("mpn", "description") for k, f in kinds)
    return has_original and has_alternate


def _flag(text: str, *, path: str, row: int | None, column: str) -> bool:
    folded = str(text).strip().casefold()
    if folded in _YES:
        return True
    if folded in _NO:
        return False
    raise InputError("not a yes/no value", path=path, row=row, column=column, text=str(text),
                     expected="yes or no (true/false, 1/0, x or empty)")


@frozen
class _Record:
    """One row of an alternates table sorted by kind of column: the file's own fields
    (field -> (header, text)), BOM-style cells and parts-data cells; ``path`` and ``row`` for
    messages."""

    own: Mapping[str, tuple[str, str]]
    cells: Mapping[str, str]
    parts_cells: Mapping[str, str]
    path: str
    row: int | None

    def text(self, name: str) -> str:
        """The text of the file's own field ``name`` ("" when no column gives it)."""
        return self.own.get(name, ("", ""))[1]


def _record(rec: Mapping[str, str], path: str, row: int | None) -> _Record:
    """Sort one row's cells by kind of column; two columns that give one field are an error."""
    own: dict[str, tuple[str, str]] = {}
    cells: dict[str, str] = {}
    parts_cells: dict[str, str] = {}
    for header, value in rec.items():
        text = " ".join(str(value).split()) if value is not None else ""
        kind, name = _classify(str(header))
        if kind == "own":
            if name in own and own[name][1] and text:
                raise InputError(f"two columns give {name}: {own[name][0]!r} and "
                                 f"{header!r}", path=path, row=row, column=str(header),
                                 expected="one column per field")
            if text or name not in own:
                own[name] = (str(header), text)
        elif kind == "cell" and text:
            cells[name] = text
        elif kind == "parts" and text:
            parts_cells[str(header)] = text
    return _Record(own, cells, parts_cells, path, row)


def _alternate(r: _Record) -> Alternate:
    """The alternate one sorted row gives; raises ``InputError`` naming what is missing."""
    original, forced = r.text("original"), None
    if not original and r.text("original_refdes"):
        original, forced = r.text("original_refdes"), "refdes"
    if not original:
        raise InputError("no original named", path=r.path, row=r.row,
                         column=r.own.get("original", ("original", ""))[0],
                         expected="the MPN, BOM line text or designators of the part the "
                                  "alternate replaces")
    cells = dict(r.cells)
    if r.text("description") and "description" not in cells:
        cells["description"] = r.text("description")
    if not r.text("mpn") and not cells:
        raise InputError("no alternate given", path=r.path, row=r.row,
                         expected="the alternate's MPN and/or description")
    fp_header, fp_text = r.own.get("footprint_checked", ("footprint_checked", ""))
    return Alternate(
        original=original, original_kind=forced, mpn=r.text("mpn"),
        manufacturer=r.text("manufacturer"),
        cells={k: cells[k] for k in SPEC_CELLS if k in cells}, parts_cells=dict(r.parts_cells),
        footprint_checked=_flag(fp_text, path=r.path, row=r.row, column=fp_header),
        notes=r.text("notes"), row=r.row, path=r.path,
    )


def alternates_from_records(records: Sequence[tuple[int | None, Mapping[str, str]]], *,
                            path: str = "<table>") -> tuple[Alternate, ...]:
    """Alternates from rows of header -> text cells, each with its source row."""
    out = []
    for row, rec in records:
        alt = _alternate(_record(rec, path, row))
        alternate_parts(alt)  # a bad parts-data cell is an input error now, not mid-run
        out.append(alt)
    return tuple(out)


def read_alternates(path: str, *, sheet: str | int | None = None) -> tuple[Alternate, ...]:
    """Read an alternates file: CSV/TSV/XLSX (one row per alternate, header row with an
    ``original`` column) or TOML (``[[alternate]]`` tables with the same keys).

    Raises ``InputError`` naming the file, row and column of anything that cannot be used.
    """
    if Path(path).suffix.lower() == ".toml":
        data, _ = read_input(str(path), "alternates file")
        return alternates_from_toml(toml_text(data, str(path)), path=str(path))
    raw = read_input_table(
        str(path), sheet=sheet, header_predicate=is_alternates_header, what="alternates",
        expected="a header row with an 'original' column and the alternate's 'mpn' and/or "
                 "'description'")
    headers = list(raw.frame.columns)
    records = [(int(r), dict(zip(headers, cells))) for r, cells in
               zip(raw.rows.tolist(), raw.frame.itertuples(index=False, name=None))]
    alternates = alternates_from_records(records, path=str(path))
    if not alternates:
        raise InputError("the alternates file lists no alternates", path=str(path))
    return alternates


def alternates_from_toml(text: str, *, path: str = "<toml>") -> tuple[Alternate, ...]:
    """Alternates from TOML text: ``[[alternate]]`` tables (keys as the table columns)."""
    doc = load_toml(text, path)
    tables = doc.get("alternate")
    if not isinstance(tables, list) or not tables:
        raise InputError("no [[alternate]] tables", path=path,
                         expected='[[alternate]] tables with original = "..." and the '
                                  "alternate's mpn and/or description")
    lines = [n for n, line in enumerate(text.splitlines(), start=1)
             if re.match(r"^\s*\[\[\s*alternate\s*\]\]", line)]
    records = []
    for i, table in enumerate(tables):
        row = lines[i] if i < len(lines) else None
        if not isinstance(table, dict):
            raise InputError("an [[alternate]] entry is not a table", path=path, row=row)
        rec: dict[str, str] = {}
        for key, value in table.items():
            if isinstance(value, bool):
                rec[key] = "yes" if value else "no"
            elif isinstance(value, (int, float, str)):
                rec[key] = str(value)
            elif isinstance(value, list) and all(isinstance(p, list) and len(p) == 2
                                                 for p in value):
                rec[key] = "; ".join(f"{x}: {y}" for x, y in value)  # a parts-data curve
            elif isinstance(value, list) and all(isinstance(v, str) for v in value):
                rec[key] = ", ".join(value)  # a designator list
            else:
                raise InputError("not a value", path=path, row=row, column=f"alternate.{key}",
                                 text=str(value), expected="a text, a number or true/false")
        records.append((row, rec))
    return alternates_from_records(records, path=path)


def alternate_parts(alt: Alternate) -> Any:
    """The alternate's own parts-data entry (``bomcheck.parse.parts.PartsData``), or None."""
    if not alt.parts_cells:
        return None
    frame = pd.DataFrame({"mpn": [alt.mpn], **{k: [v] for k, v in alt.parts_cells.items()}})
    return parts_from_table(frame, [alt.row or 0], path=alt.path or "command line")


def merge_parts(base: Any, extra: Any) -> Any:
    """Parts data with ``extra``'s entries laid over ``base``'s, field by field."""
    if extra is None:
        return base
    if base is None:
        return extra
    values = extra.values.combine_first(base.values)
    curves = {}
    for name in sorted(set(base.curves) | set(extra.curves)):
        curves[name] = {**base.curves.get(name, {}), **extra.curves.get(name, {})}
    return PartsData(path=f"{base.path}, {extra.path}", sha256=base.sha256, values=values,
                     curves=curves, warnings=base.warnings + extra.warnings)
