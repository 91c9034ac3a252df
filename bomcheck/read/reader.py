"""Read stage: the one entry to input tables: a CSV, TSV, semicolon CSV or workbook file (or
standard input) to a ``RawTable`` of text cells below its header row, with the SHA-256 of the
bytes read (the file is read and hashed once).

Finds the encoding, the delimiter, the sheet and the header row (after title or banner rows),
keeps every cell as text (so ``0402`` keeps its zeros) and the source row number of every data
row, and drops blank rows (counted). CSV goes through the pandas C parser
(``bomcheck.read.text_table``); workbooks through python-calamine when it is installed, else
openpyxl in read-only mode (``bomcheck.read.workbook``). The caller says what its header row
looks like (a header predicate): the reader knows no BOM, design-sheet or waiver columns. The
bytes and TOML loaders are re-exported here so every input has one front door.
"""

from __future__ import annotations

import os
from concurrent.futures import ThreadPoolExecutor
from dataclasses import replace

from bomcheck.errors import InputError
from bomcheck.read.files import STDIN, read_bytes, read_input, sha256_hex
from bomcheck.read.table import (HEADER_SEARCH_ROWS, HeaderNotFound, HeaderPredicate, RawTable,
                                 ReadWarning, unique_headers)
from bomcheck.read.text_decode import MIXED_ENCODING
from bomcheck.read.text_table import NumericColumns, read_text_table
from bomcheck.read.toml_input import TOML_MAX_DEPTH, load_toml, read_toml, toml_text
from bomcheck.read.workbook import (CALAMINE_SUFFIXES, OLE_MAGIC, XLSX_SUFFIXES, ZIP_MAGIC,
                                    is_ods, read_calamine_only, read_xlsx)

__all__ = ["HEADER_SEARCH_ROWS", "MIXED_ENCODING", "STDIN", "TOML_MAX_DEPTH", "HeaderNotFound",
           "HeaderPredicate", "NumericColumns", "RawTable", "ReadWarning", "load_toml",
           "read_bytes", "read_input", "read_input_table", "read_table", "read_toml",
           "sha256_hex", "toml_text", "unique_headers"]


def read_input_table(path: str, *, sheet: str | int | None, header_predicate: HeaderPredicate,
                     what: str, expected: str, numeric: NumericColumns | None = None) -> RawTable:
    """``read_table`` for a side input (design sheet, parts file, alternates): a missing header
    row is one error naming the file, what it is and the header it needs."""
    try:
        return read_table(str(path), sheet=sheet, header_predicate=header_predicate,
                          numeric=numeric)
    except HeaderNotFound:
        raise InputError(f"no {what} header row in the first rows", path=str(path),
                         expected=expected) from None


def read_table(path: str, *, header_predicate: HeaderPredicate, sheet: str | int | None = None,
               encoding: str | None = None, numeric: NumericColumns | None = None) -> RawTable:
    """Read a table file to a ``RawTable`` of text cells below its header row.

    ``path`` ``-`` reads standard input. ``header_predicate`` says whether a row of stripped
    cells is the header row (the importer's: it has a designator-like column). ``sheet`` picks
    a workbook sheet by name or 1-based index, hidden or not (default: the first visible sheet
    whose leading rows hold a header row). ``encoding`` forces a text encoding (default: a
    UTF-8 or UTF-16 byte-order mark, else UTF-8 with any non-UTF-8 lines read as cp1252 and
    named in ``RawTable.warnings``). ``numeric`` names the columns a text table may give as
    floats (``bomcheck.read.text_table``). The limits of ``bomcheck.read.limits.current()`` apply.
    Raises ``InputError`` for an empty, binary, unreadable or refused file and
    ``HeaderNotFound`` when no header row is found.
    """
    path = os.fspath(path)
    data = read_bytes(path, "file")
    shown = "<stdin>" if path == STDIN else path
    if not data or data.isspace():
        raise InputError("the file is empty", path=shown,
                         expected="a BOM table (CSV, TSV or XLSX) with a header row")
    # hashlib releases the GIL: the bytes are hashed beside the parsing.
    with ThreadPoolExecutor(max_workers=1) as pool:
        digest = pool.submit(sha256_hex, data)
        table = _read_any(path, shown, data, sheet, encoding, header_predicate, numeric)
        return replace(table, sha256=digest.result())


def _read_any(path: str, shown: str, data: bytes, sheet: str | int | None,
              encoding: str | None, predicate: HeaderPredicate,
              numeric: NumericColumns | None = None) -> RawTable:
    """The table of the bytes, by what they are: workbook (by magic or suffix) or text."""
    suffix = os.path.splitext(path)[1].lower()
    if data.startswith(OLE_MAGIC) or suffix in CALAMINE_SUFFIXES or is_ods(data):
        return read_calamine_only(shown, data, sheet, predicate, suffix)
    if data.startswith(ZIP_MAGIC) or suffix in XLSX_SUFFIXES:
        return read_xlsx(shown, data, sheet, predicate)
    if sheet is not None:
        raise InputError("a sheet was asked for, but the file is a text table, not a "
                         "workbook", path=shown, text=str(sheet))
    return read_text_table(shown, data, encoding, predicate, from_file=path != STDIN,
                           numeric=numeric)
