"""Read stage: a BOM file (CSV, TSV, semicolon CSV, XLSX) to a table of text cells.

Finds the encoding, the delimiter, the sheet and the header row (after title or banner rows),
keeps every cell as text (so ``0402`` keeps its zeros) and the source row number of every data
row, and drops blank rows (counted). CSV goes through the pandas C parser; XLSX through
python-calamine when it is installed, else openpyxl in read-only mode.
"""

from __future__ import annotations

import csv
import hashlib
import io
import math
import os
import re
import stat
import sys
import warnings
import zipfile
from collections import Counter
from collections.abc import Callable
from dataclasses import dataclass, replace
from datetime import date, datetime, time, timedelta
from typing import TYPE_CHECKING, Any

import numpy as np

from bomcheck.read import limits as limits_mod
from bomcheck.errors import InputError

if TYPE_CHECKING:
    import pandas as pd

# The header row is looked for in this many leading non-blank rows (title and banner rows first).
HEADER_SEARCH_ROWS = 25
SNIFF_LINES = 60
DELIMITERS = (",", ";", "\t")
FORMAT_OF_DELIMITER = {",": "csv", ";": "semicolon", "\t": "tsv"}
XLSX_SUFFIXES = (".xlsx", ".xlsm", ".xltx", ".xltm")
CALAMINE_SUFFIXES = (".xls", ".xlsb", ".ods")  # read through python-calamine only
STDIN = "-"  # the path that means standard input
FAST_EXTRA = 'pip install "bomcheck[fast]"'
_ZIP_MAGIC = b"PK\x03\x04"
_OLE_MAGIC = b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1"  # legacy .xls / .doc


@dataclass(frozen=True)
class ReadWarning:
    """Something the reader skipped or doubts, for the report: ``code`` (``mixed-encoding``,
    ``hidden-rows``, ``hidden-columns``, ``hidden-sheets``), a one-line ``message`` naming the
    file, and the source ``rows`` concerned (lines or sheet rows; may be empty)."""

    code: str
    message: str
    rows: tuple[int, ...] = ()

    def to_dict(self) -> dict[str, Any]:
        return {"code": self.code, "message": self.message, "rows": list(self.rows)}

    def __str__(self) -> str:
        return self.message


@dataclass(frozen=True)
class RawTable:
    """One table of text cells as read from a BOM file.

    ``frame`` holds str cells ("" for empty) under the headers made unique; ``rows`` gives the
    source row (XLSX) or line (CSV) of each frame row, 1-based; ``header_row`` likewise.
    """

    path: str
    format: str  # "csv", "tsv", "semicolon" or "xlsx"
    encoding: str | None
    sheet: str | None
    header_row: int
    headers: list[str]
    frame: pd.DataFrame
    rows: np.ndarray
    blank_rows: int = 0
    warnings: tuple[ReadWarning, ...] = ()
    sha256: str = ""  # set when the bytes came from standard input (no file to hash again)


class HeaderNotFound(InputError):
    """No row among the first ones passed the header test; ``candidates`` holds those rows and
    ``where`` says which sheets were searched (None for a text table)."""

    def __init__(self, problem: str, *, path: str, candidates: list[list[str]],
                 expected: str, hint: str | None = None, where: str | None = None) -> None:
        super().__init__(problem, path=path, expected=expected, hint=hint)
        self.candidates = candidates
        self.where = where

    @property
    def best_guess(self) -> list[str]:
        """The leading row with the most filled cells: what the header row most likely is."""
        best: list[str] = []
        for row in self.candidates:
            if sum(bool(c) for c in row) > sum(bool(c) for c in best):
                best = row
        return [c for c in best]


_FILE_KINDS = ((stat.S_ISFIFO, "a FIFO (named pipe)"), (stat.S_ISCHR, "a character device"),
               (stat.S_ISBLK, "a block device"), (stat.S_ISSOCK, "a socket"))


def read_bytes(path: str, what: str = "file") -> bytes:
    """The bytes of an input file, or of standard input for ``-``, within the size limit.

    Only a regular file is opened (a FIFO or a device would block or never end); ``what``
    names the input in errors ("parts file"). Raises ``InputError`` naming the file.
    """
    cap = limits_mod.current().file_bytes
    too_big = (f"refused: the {what} is larger than the limit of {cap >> 20} MiB",
               limits_mod.hint("file_bytes"))
    if path == STDIN:
        data = _read_capped(sys.stdin.buffer, cap)
        if len(data) > cap:
            raise InputError(too_big[0], path="<stdin>", hint=too_big[1])
        return data
    try:
        st = os.stat(path)
    except FileNotFoundError:
        raise InputError(f"{what} not found", path=path,
                         expected="an existing CSV, TSV, XLSX or TOML file") from None
    except (OSError, ValueError) as exc:
        why = exc.strerror if isinstance(exc, OSError) else str(exc)
        raise InputError(f"cannot read the {what} ({why})", path=path) from None
    if stat.S_ISDIR(st.st_mode):
        raise InputError(f"is a directory, not a {what}", path=path)
    if not stat.S_ISREG(st.st_mode):
        kind = next((k for test, k in _FILE_KINDS if test(st.st_mode)), "not a regular file")
        raise InputError(f"refused: {kind}, not a regular file", path=path,
                         expected=f"the {what} as a file on disk (or '-' for standard input "
                                  "where a command takes it)")
    if st.st_size > cap:
        raise InputError(too_big[0], path=path, hint=too_big[1])
    try:
        with open(path, "rb") as f:
            data = _read_capped(f, cap)
    except OSError as exc:
        raise InputError(f"cannot read the {what} ({exc.strerror})", path=path) from None
    if len(data) > cap:  # it grew while being read
        raise InputError(too_big[0], path=path, hint=too_big[1])
    return data


def _read_capped(stream, cap: int) -> bytes:
    """At most ``cap`` + 1 bytes of ``stream``, read in chunks (``read(cap + 1)`` would
    allocate the whole cap at once, which a raised limit makes gigabytes)."""
    chunks, size = [], 0
    while size <= cap:
        chunk = stream.read(min(1 << 24, cap + 1 - size))
        if not chunk:
            break
        chunks.append(chunk)
        size += len(chunk)
    return b"".join(chunks)


def read_input(path: str, what: str) -> tuple[bytes, str]:
    """The bytes of an input file and their SHA-256; ``what`` names it in errors ("parts file")."""
    data = read_bytes(str(path), what)
    return data, hashlib.sha256(data).hexdigest()


def toml_text(data: bytes, path: str) -> str:
    """The text of a TOML input file (UTF-8, with or without a byte-order mark)."""
    try:
        return data.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        raise InputError("TOML must be UTF-8", path=str(path),
                         hint=f"undecodable byte at offset {exc.start}") from None


# Tables and arrays nest at most this deep in any TOML input (rule sets nest 4 levels).
TOML_MAX_DEPTH = 32


def _toml_depth(doc: Any) -> int:
    """How deep tables and arrays nest in a parsed TOML document (iterative: no recursion)."""
    deepest, stack = 0, [(doc, 1)]
    while stack:
        obj, depth = stack.pop()
        deepest = max(deepest, depth)
        if depth > TOML_MAX_DEPTH:
            break
        if isinstance(obj, dict):
            stack.extend((v, depth + 1) for v in obj.values() if isinstance(v, (dict, list)))
        elif isinstance(obj, list):
            stack.extend((v, depth + 1) for v in obj if isinstance(v, (dict, list)))
    return deepest


def load_toml(text: str, path: str) -> dict:
    """Parse TOML text; a syntax error or nesting deeper than ``TOML_MAX_DEPTH`` is an
    ``InputError`` naming the file (and the line of a syntax error)."""
    import tomllib

    too_deep = InputError(f"refused: tables or arrays nested more than {TOML_MAX_DEPTH} "
                          "levels deep", path=path, expected="a flat TOML file")
    try:
        doc = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        m = re.search(r"line (\d+)", str(exc))
        raise InputError(f"not valid TOML ({exc})", path=path,
                         row=int(m.group(1)) if m else None) from None
    except RecursionError:
        raise too_deep from None
    if _toml_depth(doc) > TOML_MAX_DEPTH:
        raise too_deep
    return doc


def read_input_table(path: str, *, sheet: str | int | None, header_predicate, what: str,
                     expected: str) -> RawTable:
    """``read_table`` for a side input (design sheet, parts file, alternates): a missing header
    row is one error naming the file, what it is and the header it needs."""
    try:
        return read_table(str(path), sheet=sheet, header_predicate=header_predicate)
    except HeaderNotFound:
        raise InputError(f"no {what} header row in the first rows", path=str(path),
                         expected=expected) from None


def _default_predicate() -> Callable[[list[str]], bool]:
    from bomcheck.parse.columns import has_designator_column

    return has_designator_column


def read_table(path: str, *, sheet: str | int | None = None, encoding: str | None = None,
               header_predicate: Callable[[list[str]], bool] | None = None) -> RawTable:
    """Read a BOM file to a ``RawTable`` of text cells below its header row.

    ``path`` ``-`` reads standard input. ``sheet`` picks a workbook sheet by name or 1-based
    index, hidden or not (default: the first visible sheet whose leading rows hold a header
    row). ``encoding`` forces a text encoding (default: a UTF-8 or UTF-16 byte-order mark, else
    UTF-8 with any non-UTF-8 lines read as cp1252 and named in ``RawTable.warnings``).
    ``header_predicate`` says whether a row of cells is the header row (default: it has a
    designator-like column). The limits of ``bomcheck.read.limits.current()`` apply. Raises
    ``InputError`` for an empty, binary, unreadable or refused file and ``HeaderNotFound`` when
    no header row is found.
    """
    path = os.fspath(path)
    predicate = header_predicate or _default_predicate()
    data = read_bytes(path, "file")
    stdin = path == STDIN
    shown = "<stdin>" if stdin else path
    if not data or data.isspace():
        raise InputError("the file is empty", path=shown,
                         expected="a BOM table (CSV, TSV or XLSX) with a header row")
    suffix = os.path.splitext(path)[1].lower()
    if data.startswith(_OLE_MAGIC) or suffix in CALAMINE_SUFFIXES or _is_ods(data):
        table = _read_calamine_only(shown, data, sheet, predicate, suffix)
    elif data.startswith(_ZIP_MAGIC) or suffix in XLSX_SUFFIXES:
        table = _read_xlsx(shown, data, sheet, predicate)
    else:
        if sheet is not None:
            raise InputError("a sheet was asked for, but the file is a text table, not a "
                             "workbook", path=shown, text=str(sheet))
        text, used, notes = _decode(shown, data, encoding)
        if not text.strip():  # only a byte-order mark, or spaces in UTF-16
            raise InputError("the file is empty", path=shown,
                             expected="a BOM table (CSV, TSV or XLSX) with a header row")
        table = _read_text(shown, data, text, used, predicate, from_file=not stdin)
        if notes:
            table = replace(table, warnings=table.warnings + notes)
    if stdin:
        table = replace(table, sha256=hashlib.sha256(data).hexdigest())
    return table


# ---------------------------------------------------------------------------------------------
# Text tables


def _decode(path: str, data: bytes, forced: str | None) -> tuple[str, str, tuple[ReadWarning, ...]]:
    """Decode the whole file; returns (text, encoding name, warnings)."""
    if forced:
        try:
            text = data.decode(forced)
        except LookupError:
            raise InputError("unknown text encoding", path=path, text=forced,
                             expected="a Python codec name such as utf-8, utf-16, cp1252") from None
        except UnicodeDecodeError as exc:
            raise InputError(f"cannot be decoded as {forced} (byte {exc.start})", path=path,
                             hint="try another --encoding or leave it out to detect") from None
        if text.startswith("\ufeff"):
            text = text[1:]
        _check_not_binary(path, text)
        return text, forced, ()
    if data.startswith((b"\xff\xfe\x00\x00", b"\x00\x00\xfe\xff")):
        enc = "utf-32"
    elif data.startswith((b"\xff\xfe", b"\xfe\xff")):
        enc = "utf-16"
    elif data.startswith(b"\xef\xbb\xbf"):
        enc = "utf-8-sig"
    else:
        enc = ""
    if enc:
        try:
            text = data.decode(enc)
        except UnicodeDecodeError as exc:
            if enc != "utf-8-sig":
                raise InputError(f"has a {enc} byte-order mark but is not valid {enc} "
                                 f"(byte {exc.start})", path=path,
                                 hint="force an encoding with --encoding") from None
            text, enc, notes = _decode_mixed(path, data[3:])
            _check_not_binary(path, text)
            return text, enc, notes
        _check_not_binary(path, text)
        return text, enc, ()
    _check_not_binary_bytes(path, data)
    notes: tuple[ReadWarning, ...] = ()
    try:
        text, enc = data.decode("utf-8"), "utf-8"
    except UnicodeDecodeError:
        text, enc, notes = _decode_mixed(path, data)
    _check_not_binary(path, text)
    return text, enc, notes


_LINE_END = re.compile(r"\r\n|\r|\n")
_UNDECODED = re.compile("[\udc80-\udcff]")  # bytes kept by surrogateescape
_DECODED_NON_ASCII = re.compile("[^\x00-\x7f\udc80-\udcff]")
MIXED_ENCODING = "utf-8 + cp1252 lines"


def _cp1252(raw: bytes) -> tuple[str, str]:
    """(text, encoding) of Windows-export bytes: cp1252, where byte 0xB5 is the micro sign (as
    in latin-1); the five bytes cp1252 leaves undefined fall back to latin-1 control characters."""
    try:
        return raw.decode("cp1252"), "cp1252"
    except UnicodeDecodeError:
        return raw.decode("latin-1"), "latin-1"


def _decode_mixed(path: str, data: bytes) -> tuple[str, str, tuple[ReadWarning, ...]]:
    """Text that is not all UTF-8: a cp1252 file when no line holds UTF-8 beyond ASCII; else
    UTF-8 line by line, the lines that are not UTF-8 read as cp1252 and named in a warning (one
    stray byte must not turn every ``µ`` of the file into ``Âµ``)."""
    loose = data.decode("utf-8", errors="surrogateescape")
    if not _DECODED_NON_ASCII.search(loose):
        text, enc = _cp1252(data)
        return text, enc, ()
    parts = _LINE_END.split(loose)  # lines only; the line ends come back from the original
    ends = _LINE_END.findall(loose) + [""]
    out, odd = [], []
    for i, (line, end) in enumerate(zip(parts, ends)):
        if _UNDECODED.search(line):
            line = _cp1252(line.encode("utf-8", "surrogateescape"))[0]
            odd.append(i + 1)
        out.append(line + end)
    shown = ", ".join(map(str, odd[:10])) + (f" and {len(odd) - 10} more" if len(odd) > 10 else "")
    note = ReadWarning(
        "mixed-encoding",
        f"{path}: mixed text encoding: line{'s' if len(odd) > 1 else ''} {shown} "
        f"{'are' if len(odd) > 1 else 'is'} not UTF-8 and {'were' if len(odd) > 1 else 'was'} "
        "read as cp1252 (Windows); the rest of the file is UTF-8; check those lines' cells",
        tuple(odd))
    return "".join(out), MIXED_ENCODING, (note,)


def _check_not_binary_bytes(path: str, data: bytes) -> None:
    head = data[:8192]
    if b"\x00" not in head:
        return
    even, odd = head[0::2], head[1::2]
    if odd.count(0) > 0.3 * len(odd) or even.count(0) > 0.3 * len(even):
        if head.count(0) < 0.7 * len(head):
            raise InputError("looks like UTF-16 text without a byte-order mark", path=path,
                             hint="force it with --encoding utf-16-le (or utf-16-be)")
    raise InputError("a binary file, not a text table", path=path,
                     expected="a CSV/TSV text file or an .xlsx workbook")


def _check_not_binary(path: str, text: str) -> None:
    head = text[:8192]
    controls = sum(1 for ch in head if ch < " " and ch not in "\t\r\n\f\v")
    if "\x00" in head or controls > max(8, len(head) // 100):
        raise InputError("a binary file, not a text table", path=path,
                         expected="a CSV/TSV text file or an .xlsx workbook")


def _refuse(path: str, what: str, found: int, limit: int, name: str, *, row: int | None = None,
            column: str | None = None) -> InputError:
    """The one-line refusal of an input beyond a limit of ``bomcheck.read.limits``."""
    return InputError(f"refused: {what} {found:,} is over the limit of {limit:,}", path=path,
                      row=row, column=column, hint=limits_mod.hint(name))


def _csv_setup() -> limits_mod.Limits:
    """The limits in force, with the csv module's cell size limit set from them (the module's
    own default, 128 KiB, is below a cell a real export can hold)."""
    lim = limits_mod.current()
    csv.field_size_limit(lim.cell_chars + 1)
    return lim


def _csv_failure(path: str, line: int, exc: csv.Error) -> InputError:
    """A csv module error as a one-line input error naming the line."""
    if "field larger than field limit" in str(exc):
        lim = limits_mod.current()
        return InputError(f"refused: a cell longer than the limit of {lim.cell_chars:,} "
                          "characters", path=path, row=line,
                          hint="a fixed limit; check the file is a BOM table")
    return InputError(f"not a readable CSV line ({exc})", path=path, row=line)


def _sniff_delimiter(lines: list[str]) -> str:
    """The delimiter that splits the most leading lines into the same number (>1) of fields."""
    best, best_score = ",", (-1, -1, -1)
    for pref, delim in enumerate(reversed(DELIMITERS)):
        try:
            counts = [len(r) for r in csv.reader(lines, delimiter=delim) if len(r) > 1]
        except csv.Error:  # reported with its line when the header is parsed
            continue
        if not counts:
            continue
        width, agree = Counter(counts).most_common(1)[0]
        score = (agree, width, pref)
        if score > best_score:
            best, best_score = delim, score
    return best


def _leading_lines(text: str, n: int) -> tuple[list[str], list[int]]:
    """The first ``n`` lines (ended by LF, CRLF or a lone CR) and the character offset of each."""
    lines, offsets, pos = [], [], 0
    for m in _LINE_END.finditer(text):
        lines.append(text[pos:m.start()])
        offsets.append(pos)
        pos = m.end()
        if len(lines) >= n:
            return lines, offsets
    if pos < len(text):
        lines.append(text[pos:])
        offsets.append(pos)
    return lines, offsets


def _find_header(rows: list[list[str]], predicate: Callable[[list[str]], bool]) -> int | None:
    seen = 0
    for i, cells in enumerate(rows):
        cells = [c.strip() for c in cells]
        if not any(cells):
            continue
        if predicate(cells):
            return i
        seen += 1
        if seen >= HEADER_SEARCH_ROWS:
            break
    return None


def _parse_line(path: str, line: str, number: int, delim: str) -> list[str]:
    try:
        return next(csv.reader([line], delimiter=delim), [])
    except csv.Error as exc:
        raise _csv_failure(path, number, exc) from None


def _read_text(path: str, data: bytes, text: str, encoding: str,
               predicate: Callable[[list[str]], bool], *, from_file: bool = True) -> RawTable:
    lim = _csv_setup()
    lines, offsets = _leading_lines(text, SNIFF_LINES)
    delim = _sniff_delimiter(lines)
    # The header is a single physical line in every export seen; csv handles quotes within it.
    parsed = [_parse_line(path, ln, i + 1, delim) for i, ln in enumerate(lines)]
    h = _find_header(parsed, predicate)
    if h is None:
        raise HeaderNotFound(
            f"no header row with a designator column in the first {HEADER_SEARCH_ROWS} rows",
            path=path, candidates=[[c.strip() for c in r] for r in parsed[:HEADER_SEARCH_ROWS]],
            expected="a header row naming a designator column such as Designator, RefDes or "
                     "Reference",
            hint="name it with --columns refdes=HEADER",
        )
    headers = [c.strip() for c in parsed[h]]
    header_line = h + 1
    if len(headers) > lim.columns:
        raise _refuse(path, "header columns", len(headers), lim.columns, "columns",
                      row=header_line)
    start = offsets[h + 1] if h + 1 < len(offsets) else len(text)
    source: str | io.BytesIO
    if encoding in ("utf-8", "utf-8-sig"):
        bom = data.startswith(b"\xef\xbb\xbf")
        buf, offset = data, (3 if bom else 0) + len(text[:start].encode("utf-8"))
        codec = "utf-8-sig" if bom else "utf-8"
        preamble = data[:offset]
        if b'"' in preamble or b"\r" in preamble.replace(b"\r\n", b""):
            # pandas would count these lines differently: hand it the bytes from the first
            # data line instead.
            source, skip = io.BytesIO(data), 0
            source.seek(offset)
            codec = "utf-8"
        elif from_file:
            # pandas reads the file itself (in parallel threads for a large file), skipping the
            # lines down to the header: no re-encoding, no copy.
            source, skip = path, header_line
        else:  # standard input: the bytes are all there is
            source, skip = io.BytesIO(data), header_line
    else:
        buf, offset, skip, codec = text[start:].encode("utf-8"), 0, 0, "utf-8"
        source = io.BytesIO(buf)
    shape = _line_shape(buf, offset)
    if shape.count > lim.rows:
        raise _refuse(path, "lines", shape.count, lim.rows, "rows")
    if shape.count * max(len(headers), 1) > lim.cells:
        raise _refuse(path, "cells (lines x header columns)", shape.count * len(headers),
                      lim.cells, "cells")
    # Exports written with ", " between cells: skip the spaces in the parser (it costs, so only
    # when the leading lines show it).
    spaced = sum(f"{delim} " in ln for ln in lines[h:]) > (len(lines) - h) // 2
    frame, rows = _parse_body(text, start, (source, skip, codec), shape, delim, len(headers),
                              header_line, spaced=spaced, path=path)
    if shape.longest > lim.cell_chars:
        _check_cell_sizes(path, frame, rows, lim)
    width = frame.shape[1]
    headers = headers + [""] * (width - len(headers))
    return _finish(path, FORMAT_OF_DELIMITER[delim], encoding, None, header_line, headers,
                   frame, rows)


@dataclass(frozen=True)
class _LineShape:
    """What the body's bytes say about its lines, found with array operations."""

    count: int  # physical lines
    lone_cr: bool  # a CR that does not end a CRLF (old Mac line ends)
    longest: int = 0  # bytes between two LFs at most: no cell is longer


def _line_shape(buf: bytes, offset: int) -> _LineShape:
    a = np.frombuffer(buf, dtype=np.uint8, offset=offset)
    if not len(a):
        return _LineShape(0, False)
    nl = a == 10
    ends = np.flatnonzero(nl)
    count = len(ends) + (0 if a[-1] == 10 else 1)
    longest = int(np.diff(ends, prepend=-1, append=len(a)).max())
    lone_cr = False
    if buf.find(b"\r", offset) >= 0:
        cr = a == 13
        lone_cr = int(np.count_nonzero(cr)) != int(np.count_nonzero(cr[:-1] & nl[1:]))
        if lone_cr:
            count += int(np.count_nonzero(cr)) - int(np.count_nonzero(cr[:-1] & nl[1:]))
    return _LineShape(count, lone_cr, longest)


def _check_cell_sizes(path: str, frame: pd.DataFrame, rows: np.ndarray,
                      lim: limits_mod.Limits) -> None:
    """Refuse a cell longer than the limit (only run when a line is longer than it)."""
    for j, col in enumerate(frame.columns):
        lengths = frame[col].str.len().to_numpy(dtype=float, na_value=0)
        over = np.flatnonzero(lengths > lim.cell_chars)
        if len(over):
            raise InputError(f"refused: a cell longer than the limit of {lim.cell_chars:,} "
                             "characters", path=path, row=int(rows[over[0]]),
                             column=f"column {j + 1}",
                             hint="a fixed limit; check the file is a BOM table")


def _parse_body(text: str, start: int, source: tuple[str | io.BytesIO, int, str],
                shape: _LineShape, delim: str, width: int, header_line: int, *,
                spaced: bool, path: str = "") -> tuple[pd.DataFrame, np.ndarray]:
    """Parse the lines from ``text[start:]`` with the pandas C engine, every cell as text;
    ``source`` is (path or UTF-8 stream, lines to skip, codec).

    The fast path maps frame row i to line header_line + 1 + i; when the records do not line up
    with physical lines (quoted line breaks, lone CR line ends) or a row is wider than the header,
    the csv module parses the body instead and counts lines itself.
    """
    import pandas as pd

    if start >= len(text) or text[start:start + 65536].isspace() and text[start:].isspace():
        empty = {i: pd.Series([], dtype=object) for i in range(width)}
        return pd.DataFrame(empty), np.zeros(0, dtype=np.int64)
    try:
        with warnings.catch_warnings():
            # A row wider than the header is only a warning to pandas (cells dropped): here it
            # sends the file to the exact path, which keeps them.
            warnings.simplefilter("error", pd.errors.ParserWarning)
            frame = pd.read_csv(
                source[0], skiprows=source[1], sep=delim, header=None, dtype=object,
                na_filter=False, skip_blank_lines=False, skipinitialspace=spaced, engine="c",
                encoding=source[2], names=list(range(width)), quoting=csv.QUOTE_MINIMAL,
                index_col=False,
            )
    except (pd.errors.ParserError, pd.errors.ParserWarning, ValueError, UnicodeDecodeError):
        frame = None
    if frame is not None and len(frame) == shape.count and not shape.lone_cr:
        rows = np.arange(header_line + 1, header_line + 1 + len(frame), dtype=np.int64)
        return frame, rows
    return _parse_body_slow(text[start:], delim, width, header_line, spaced=spaced, path=path)


def _parse_body_slow(body: str, delim: str, width: int, header_line: int, *,
                     spaced: bool, path: str = "") -> tuple[pd.DataFrame, np.ndarray]:
    import pandas as pd

    lim = _csv_setup()
    reader = csv.reader(io.StringIO(body, newline=""), delimiter=delim, skipinitialspace=spaced)
    records: list[list[str]] = []
    rows: list[int] = []
    last = 0
    widest = width
    while True:
        try:
            rec = next(reader)
        except StopIteration:
            break
        except csv.Error as exc:
            raise _csv_failure(path, header_line + reader.line_num, exc) from None
        rows.append(header_line + 1 + last)
        last = reader.line_num
        records.append(rec)
        if len(rec) > widest:
            widest = len(rec)
            if widest > lim.columns:
                raise _refuse(path, "columns in a line", widest, lim.columns, "columns",
                              row=rows[-1])
        if widest * len(records) > lim.cells:
            raise _refuse(path, "cells (rows x widest row)", widest * len(records), lim.cells,
                          "cells", row=rows[-1])
    width = widest
    cols = {i: np.array([r[i] if i < len(r) else "" for r in records], dtype=object)
            for i in range(width)}
    frame = pd.DataFrame({i: pd.Series(v, dtype=object, copy=False) for i, v in cols.items()})
    return frame, np.asarray(rows, dtype=np.int64)


# ---------------------------------------------------------------------------------------------
# Workbooks


def _cell_text(v: Any) -> str:
    """A workbook cell as the text a user sees (whole numbers without ``.0``)."""
    if v is None:
        return ""
    if isinstance(v, str):
        return v.strip()
    if isinstance(v, bool):
        return "TRUE" if v else "FALSE"
    if isinstance(v, float):
        if math.isnan(v) or math.isinf(v):
            return ""
        return str(int(v)) if v.is_integer() and abs(v) < 1e15 else repr(v)
    if isinstance(v, int):
        return str(v)
    if isinstance(v, datetime):
        return v.isoformat(sep=" ") if v.time() != time() else v.date().isoformat()
    if isinstance(v, (date, time)):
        return v.isoformat()
    if isinstance(v, timedelta):
        return str(v)
    return str(v).strip()


def _percent_text(v: Any) -> str | None:
    """A number shown with a percent format as the user sees it: 0.05 -> ``5%``."""
    if isinstance(v, bool) or not isinstance(v, (int, float)):
        return None
    if isinstance(v, float) and not math.isfinite(v):
        return None
    return f"{v * 100:.10g}%"


_KIND_LABEL = {"xlsx": "XLSX", "xls": "legacy Excel (.xls)", "xlsb": "Excel binary (.xlsb)",
               "ods": "OpenDocument (.ods)"}


class _Workbook:
    """Sheet names, visibility and cell values of a workbook through python-calamine (fast,
    and the only reader of .xls and .ods) or openpyxl (the default install's .xlsx reader)."""

    def __init__(self, path: str, data: bytes, *, kind: str = "xlsx") -> None:
        self.path = path
        try:
            import python_calamine
        except ImportError:
            python_calamine = None
        label = _KIND_LABEL.get(kind, kind)
        if python_calamine is None and kind != "xlsx":
            raise InputError(f"a {label} workbook: reading it needs python-calamine, which is "
                             "not installed", path=path,
                             hint=f'install it with {FAST_EXTRA}, or save the sheet as .xlsx '
                                  "or .csv")
        self._calamine = None
        self._openpyxl = None
        try:
            if python_calamine is not None:
                self._calamine = python_calamine.CalamineWorkbook.from_filelike(io.BytesIO(data))
                self.sheet_names = list(self._calamine.sheet_names)
                visible = python_calamine.SheetVisibleEnum.Visible
                self.hidden = {m.name for m in self._calamine.sheets_metadata
                               if m.visible != visible}
            else:
                import openpyxl

                with warnings.catch_warnings():
                    warnings.simplefilter("ignore")  # openpyxl's notes on styles and extensions
                    self._openpyxl = openpyxl.load_workbook(io.BytesIO(data), read_only=True,
                                                            data_only=True)
                self.sheet_names = list(self._openpyxl.sheetnames)
                self.hidden = {n for n in self.sheet_names
                               if getattr(self._openpyxl[n], "sheet_state", "visible") != "visible"}
        except InputError:
            raise
        except Exception as exc:  # each library raises its own zip/XML errors
            raise InputError(
                f"not a readable {label} workbook (cannot open it: " + _short(exc) + ")",
                path=path, expected="a workbook saved by a spreadsheet program",
                hint="if it is a text table, give it a .csv name",
            ) from None

    def values(self, name: str, nrows: int | None = None) -> list[list[Any]]:
        """The cell values of a sheet from row 1 (merged ranges: top-left cell only)."""
        if self._calamine is not None:
            sheet = self._calamine.get_sheet_by_name(name)
            if nrows is None:
                return sheet.to_python(skip_empty_area=False)
            return sheet.to_python(skip_empty_area=False, nrows=nrows)
        ws = self._openpyxl[name]
        return [list(r) for r in ws.iter_rows(values_only=True, max_row=nrows)]

    def close(self) -> None:
        try:
            if self._openpyxl is not None:
                self._openpyxl.close()
            if self._calamine is not None:
                self._calamine.close()
        except Exception:  # noqa: BLE001 - closing a damaged workbook must not hide the error
            pass


def _short(exc: BaseException) -> str:
    msg = str(exc).strip().splitlines()[0] if str(exc).strip() else type(exc).__name__
    return msg[:120]


def _pick_sheet(path: str, names: list[str], sheet: str | int | None) -> str:
    if isinstance(sheet, int) or (isinstance(sheet, str) and sheet not in names
                                  and sheet.strip().isdigit()):
        idx = int(sheet)
        if not 1 <= idx <= len(names):
            raise InputError(f"no sheet number {idx} (the workbook has {len(names)})", path=path,
                             expected="a 1-based index or one of " + ", ".join(map(repr, names)))
        return names[idx - 1]
    if sheet in names:
        return sheet
    folded = {n.strip().casefold(): n for n in names}
    if str(sheet).strip().casefold() in folded:
        return folded[str(sheet).strip().casefold()]
    raise InputError("no such sheet", path=path, text=str(sheet),
                     expected="one of " + ", ".join(map(repr, names)) + " or a 1-based index")


@dataclass(frozen=True)
class _SheetRows:
    """A sheet's rows as text with their source row numbers, hidden ones left out (counted)."""

    cells: list[list[str]]
    rows: list[int]
    hidden_rows: tuple[int, ...] = ()  # hidden rows left out that held data
    hidden_columns: tuple[tuple[int, str], ...] = ()  # (column number, header) left out


def _sheet_rows(wb: _Workbook, name: str, scan: Any, nrows: int | None,
                include_hidden: bool) -> _SheetRows:
    values = wb.values(name, nrows)
    if scan is not None and scan.percent_cells:
        for r, c in scan.percent_cells:
            if r <= len(values) and c <= len(values[r - 1]):
                shown = _percent_text(values[r - 1][c - 1])
                if shown is not None:
                    values[r - 1][c - 1] = shown
    cells = [[_cell_text(v) for v in row] for row in values]
    numbers = list(range(1, len(cells) + 1))
    if include_hidden or scan is None or not (scan.hidden_rows or scan.hidden_columns):
        return _SheetRows(cells, numbers)
    dropped = [i for i in range(len(cells)) if i + 1 in scan.hidden_rows]
    with_data = tuple(i + 1 for i in dropped if any(cells[i]))
    keep = [i for i in range(len(cells)) if i + 1 not in scan.hidden_rows]
    cells, numbers = [cells[i] for i in keep], [numbers[i] for i in keep]
    gone: list[tuple[int, str]] = []
    if scan.hidden_columns:
        width = max((len(r) for r in cells), default=0)
        drop = sorted(c for c in scan.hidden_columns if c <= width)
        filled = [c for c in drop if any(c <= len(r) and r[c - 1] for r in cells)]
        gone = [(c, next((r[c - 1] for r in cells if c <= len(r) and r[c - 1]), ""))
                for c in filled]
        if drop:
            keep_c = [j for j in range(width) if j + 1 not in scan.hidden_columns]
            cells = [[r[j] if j < len(r) else "" for j in keep_c] for r in cells]
    return _SheetRows(cells, numbers, with_data, tuple(gone))


def _is_ods(data: bytes) -> bool:
    """An OpenDocument spreadsheet: a zip whose first member is its stored ``mimetype``."""
    return (data.startswith(_ZIP_MAGIC) and data[30:38] == b"mimetype"
            and b"opendocument.spreadsheet" in data[38:120])


def _open_zip(path: str, data: bytes, kind: str) -> zipfile.ZipFile:
    try:
        return zipfile.ZipFile(io.BytesIO(data))
    except (zipfile.BadZipFile, zipfile.LargeZipFile, ValueError, OSError, EOFError):
        raise InputError(f"not an {kind} workbook (a damaged zip archive)", path=path,
                         expected=f"an .{kind} workbook saved by a spreadsheet program") from None


def _read_calamine_only(path: str, data: bytes, sheet: str | int | None,
                        predicate: Callable[[list[str]], bool], suffix: str) -> RawTable:
    """An .xls, .xlsb or .ods workbook, through python-calamine (the ``fast`` extra)."""
    kind = "ods" if _is_ods(data) or suffix == ".ods" else suffix.lstrip(".") or "xls"
    lim = limits_mod.current()
    if data.startswith(_ZIP_MAGIC):
        from bomcheck.read.workbook_scan import check_zip

        with _open_zip(path, data, kind) as zf:
            try:
                check_zip(zf, path, lim)
            except (zipfile.BadZipFile, OSError, ValueError) as exc:
                raise InputError(f"not a readable {kind} workbook ({_short(exc)})",
                                 path=path) from None
    return _read_workbook(path, data, sheet, predicate, kind=kind, scan=None)


def _read_xlsx(path: str, data: bytes, sheet: str | int | None,
               predicate: Callable[[list[str]], bool]) -> RawTable:
    if not data.startswith(_ZIP_MAGIC):
        raise InputError("not an XLSX workbook (an .xlsx file is a zip archive; this is not)",
                         path=path, expected="an .xlsx workbook saved by a spreadsheet program",
                         hint="if it is a text table, give it a .csv name")
    from bomcheck.read.workbook_scan import scan_workbook

    with _open_zip(path, data, "XLSX") as zf:
        try:
            if "xl/workbook.xml" not in zf.namelist():
                raise InputError("not an XLSX workbook (a zip archive without xl/workbook.xml)",
                                 path=path, expected="an .xlsx workbook")
            scan = scan_workbook(zf, path, limits_mod.current())
        except InputError:
            raise
        except Exception as exc:  # zlib, zip and decoding errors of a damaged member
            raise InputError(f"not a readable XLSX workbook (a damaged part: {_short(exc)})",
                             path=path, expected="an .xlsx workbook saved by a spreadsheet "
                             "program") from None
    return _read_workbook(path, data, sheet, predicate, kind="xlsx", scan=scan)


def _read_workbook(path: str, data: bytes, sheet: str | int | None,
                   predicate: Callable[[list[str]], bool], *, kind: str, scan: Any) -> RawTable:
    lim = limits_mod.current()
    wb = _Workbook(path, data, kind=kind)
    current = None
    try:
        if not wb.sheet_names:
            raise InputError("the workbook has no sheets", path=path)
        hidden = set(wb.hidden)
        if scan is not None and scan.scanned:
            hidden |= {s.name for s in scan.sheets if s.hidden}
        notes: list[ReadWarning] = []
        if sheet is not None:
            candidates = [_pick_sheet(path, wb.sheet_names, sheet)]
        else:
            candidates = [n for n in wb.sheet_names if lim.include_hidden or n not in hidden]
            skipped = [n for n in wb.sheet_names if n not in candidates]
            if skipped:
                notes.append(ReadWarning(
                    "hidden-sheets", f"{path}: {len(skipped)} hidden worksheet"
                    f"{'s' if len(skipped) > 1 else ''} not read ("
                    + ", ".join(map(repr, skipped)) + "); --include-hidden reads them, --sheet "
                    "NAME picks one"))
        searched: list[list[str]] = []
        for name in candidates:
            current = name
            s_scan = scan.sheet(name) if scan is not None else None
            head = _sheet_rows(wb, name, s_scan, HEADER_SEARCH_ROWS * 4, lim.include_hidden)
            h = _find_header(head.cells, predicate)
            if h is not None:
                full = _sheet_rows(wb, name, s_scan, None, lim.include_hidden)
                notes.extend(_hidden_notes(path, name, full))
                table = _xlsx_table(path, name, full, h, kind, lim)
                return replace(table, warnings=table.warnings + tuple(notes))
            searched.extend([r for r in head.cells if any(r)][:HEADER_SEARCH_ROWS])
        current = None
        where = (f"sheet {candidates[0]!r}" if sheet is not None
                 else "every visible sheet (" + ", ".join(map(repr, candidates)) + ")")
        hint = "pick the sheet with --sheet or name the column with --columns refdes=HEADER"
        if sheet is None and hidden:
            hint += "; hidden sheets were not searched (--include-hidden)"
        raise HeaderNotFound(
            f"no header row with a designator column in the first {HEADER_SEARCH_ROWS} rows "
            f"of {where}",
            path=path, candidates=searched, where=where,
            expected="a header row naming a designator column such as Designator, RefDes or "
                     "Reference", hint=hint)
    except InputError:
        raise
    except Exception as exc:  # noqa: BLE001 - a damaged sheet, whatever the library raises
        place = f"sheet {current!r} " if current is not None else ""
        raise InputError(f"cannot read {place}of the workbook ({type(exc).__name__}: "
                         f"{_short(exc)})", path=path,
                         expected="a workbook saved by a spreadsheet program") from None
    finally:
        wb.close()


def _hidden_notes(path: str, name: str, rows: _SheetRows) -> list[ReadWarning]:
    out = []
    if rows.hidden_rows:
        n = len(rows.hidden_rows)
        shown = ", ".join(map(str, rows.hidden_rows[:10])) + (" ..." if n > 10 else "")
        out.append(ReadWarning("hidden-rows", f"{path}: sheet {name!r}: {n} hidden row"
                               f"{'s' if n > 1 else ''} with data not read ({shown}); "
                               "--include-hidden reads them", rows.hidden_rows))
    if rows.hidden_columns:
        from bomcheck.read.workbook_scan import column_letters

        n = len(rows.hidden_columns)
        shown = ", ".join(f"{column_letters(c)}" + (f" {h!r}" if h else "")
                          for c, h in rows.hidden_columns[:10])
        out.append(ReadWarning("hidden-columns", f"{path}: sheet {name!r}: {n} hidden column"
                               f"{'s' if n > 1 else ''} with data not read ({shown}); "
                               "--include-hidden reads them"))
    return out


def _xlsx_table(path: str, name: str, sheet: _SheetRows, h: int, kind: str,
                lim: limits_mod.Limits) -> RawTable:
    import pandas as pd

    all_rows = sheet.cells
    headers = list(all_rows[h])
    body = all_rows[h + 1:]
    width = max([len(headers), *(len(r) for r in body)]) if body else len(headers)
    # Checked before reading for an .xlsx (bomcheck.read.workbook_scan); again here for the others.
    if len(all_rows) > lim.rows:
        raise _refuse(path, f"sheet {name!r}: rows", len(all_rows), lim.rows, "rows")
    if width > lim.columns:
        raise _refuse(path, f"sheet {name!r}: columns", width, lim.columns, "columns")
    if width * len(all_rows) > lim.cells:
        raise _refuse(path, f"sheet {name!r}: cells", width * len(all_rows), lim.cells, "cells")
    headers += [""] * (width - len(headers))
    cols = {i: np.array([r[i] if i < len(r) else "" for r in body], dtype=object)
            for i in range(width)}
    frame = pd.DataFrame({i: pd.Series(v, dtype=object, copy=False) for i, v in cols.items()})
    rows = np.asarray(sheet.rows[h + 1:], dtype=np.int64)
    return _finish(path, kind, None, name, sheet.rows[h], headers, frame, rows)


# ---------------------------------------------------------------------------------------------
# Both


def unique_headers(headers: list[str]) -> list[str]:
    """Headers made unique: an empty one becomes ``column N``, a repeat gets `` (2)``, ``(3)``."""
    out: list[str] = []
    seen: set[str] = set()
    for i, h in enumerate(headers):
        base = h.strip() or f"column {i + 1}"
        name, k = base, 1
        while name in seen:
            k += 1
            name = f"{base} ({k})"
        seen.add(name)
        out.append(name)
    return out


def _finish(path: str, fmt: str, encoding: str | None, sheet: str | None, header_row: int,
            headers: list[str], frame: pd.DataFrame, rows: np.ndarray) -> RawTable:
    """Name the columns, drop blank rows (counted) and trailing empty unnamed columns."""
    import pandas as pd

    names = unique_headers(headers)
    arrays = [frame[c].to_numpy(dtype=object) for c in frame.columns]
    # Blank rows (cells empty or only spaces): one comparison per row on the second column,
    # then the few rows still in question cell by cell; the first column last, since a line of
    # only spaces puts them there.
    order = arrays[1:] + arrays[:1]
    if not order:
        blank = np.zeros(0, dtype=np.int64)
    else:
        blank = np.flatnonzero(order[0] == "")
        if len(order) == 1:
            blank = np.flatnonzero([not c.strip() for c in order[0]])
    for arr in order[1:]:
        if not len(blank):
            break
        blank = blank[[not c.strip() for c in arr[blank]]]
    keep_cols = [i for i, (h, arr) in enumerate(zip(headers, arrays))
                 if h.strip() or (len(arr) and (arr != "").any())]
    if len(blank):
        keep = np.ones(len(rows), dtype=bool)
        keep[blank] = False
        arrays = [a[keep] for a in arrays]
        rows = rows[keep]
    data = {names[i]: pd.Series(arrays[i], dtype=object, copy=False) for i in keep_cols}
    out = pd.DataFrame(data, copy=False)
    return RawTable(path=path, format=fmt, encoding=encoding, sheet=sheet, header_row=header_row,
                    headers=[headers[i] for i in keep_cols], frame=out, rows=rows,
                    blank_rows=int(len(blank)))
