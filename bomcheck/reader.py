"""Read stage: a BOM file (CSV, TSV, semicolon CSV, XLSX) to a table of text cells.

Finds the encoding, the delimiter, the sheet and the header row (after title or banner rows),
keeps every cell as text (so ``0402`` keeps its zeros) and the source row number of every data
row, and drops blank rows (counted). CSV goes through the pandas C parser; XLSX through
python-calamine when it is installed, else openpyxl in read-only mode.
"""

from __future__ import annotations

import csv
import io
import math
import os
import warnings
import zipfile
from collections import Counter
from collections.abc import Callable
from dataclasses import dataclass
from datetime import date, datetime, time, timedelta
from typing import TYPE_CHECKING, Any

import numpy as np

from bomcheck.errors import InputError

if TYPE_CHECKING:
    import pandas as pd

# The header row is looked for in this many leading non-blank rows (title and banner rows first).
HEADER_SEARCH_ROWS = 25
SNIFF_LINES = 60
DELIMITERS = (",", ";", "\t")
FORMAT_OF_DELIMITER = {",": "csv", ";": "semicolon", "\t": "tsv"}
XLSX_SUFFIXES = (".xlsx", ".xlsm", ".xltx", ".xltm")
_ZIP_MAGIC = b"PK\x03\x04"
_OLE_MAGIC = b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1"  # legacy .xls / .doc


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


def read_input(path: str, what: str) -> tuple[bytes, str]:
    """The bytes of an input file and their SHA-256; ``what`` names it in errors ("parts file")."""
    try:
        with open(path, "rb") as f:
            data = f.read()
    except FileNotFoundError:
        raise InputError(f"{what} not found", path=str(path),
                         expected="an existing CSV, TSV, XLSX or TOML file") from None
    except OSError as exc:
        raise InputError(f"cannot read the {what} ({exc.strerror})", path=str(path)) from None
    import hashlib

    return data, hashlib.sha256(data).hexdigest()


def toml_text(data: bytes, path: str) -> str:
    """The text of a TOML input file (UTF-8, with or without a byte-order mark)."""
    try:
        return data.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        raise InputError("TOML must be UTF-8", path=str(path),
                         hint=f"undecodable byte at offset {exc.start}") from None


def load_toml(text: str, path: str) -> dict:
    """Parse TOML text; a syntax error is an ``InputError`` naming the file and its line."""
    import re
    import tomllib

    try:
        return tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        m = re.search(r"line (\d+)", str(exc))
        raise InputError(f"not valid TOML ({exc})", path=path,
                         row=int(m.group(1)) if m else None) from None


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
    from bomcheck.columns import has_designator_column

    return has_designator_column


def read_table(path: str, *, sheet: str | int | None = None, encoding: str | None = None,
               header_predicate: Callable[[list[str]], bool] | None = None) -> RawTable:
    """Read a BOM file to a ``RawTable`` of text cells below its header row.

    ``sheet`` picks an XLSX sheet by name or 1-based index (default: the first sheet whose
    leading rows hold a header row). ``encoding`` forces a text encoding (default: a UTF-8 or
    UTF-16 byte-order mark, else UTF-8, else cp1252). ``header_predicate`` says whether a row of
    cells is the header row (default: it has a designator-like column). Raises ``InputError``
    for an empty, binary or unreadable file and ``HeaderNotFound`` when no header row is found.
    """
    path = os.fspath(path)
    predicate = header_predicate or _default_predicate()
    try:
        with open(path, "rb") as fh:
            data = fh.read()
    except FileNotFoundError:
        raise InputError("file not found", path=path) from None
    except IsADirectoryError:
        raise InputError("is a directory, not a BOM file", path=path) from None
    except OSError as exc:
        raise InputError(f"cannot read file: {exc.strerror}", path=path) from None
    if not data or data.isspace():
        raise InputError("the file is empty", path=path,
                         expected="a BOM table (CSV, TSV or XLSX) with a header row")
    suffix = os.path.splitext(path)[1].lower()
    if data.startswith(_ZIP_MAGIC) or suffix in XLSX_SUFFIXES:
        return _read_xlsx(path, data, sheet, predicate)
    if data.startswith(_OLE_MAGIC):
        raise InputError("a legacy Excel (.xls) or other OLE2 file, not a table bomcheck reads",
                         path=path, expected="an .xlsx workbook or a CSV/TSV text file",
                         hint="save it as .xlsx or .csv")
    if sheet is not None:
        raise InputError("a sheet was asked for, but the file is a text table, not a workbook",
                         path=path, text=str(sheet))
    text, used = _decode(path, data, encoding)
    if not text.strip():  # only a byte-order mark, or spaces in UTF-16
        raise InputError("the file is empty", path=path,
                         expected="a BOM table (CSV, TSV or XLSX) with a header row")
    return _read_text(path, data, text, used, predicate)


# ---------------------------------------------------------------------------------------------
# Text tables


def _decode(path: str, data: bytes, forced: str | None) -> tuple[str, str]:
    """Decode the whole file; returns (text, encoding name)."""
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
        return text, forced
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
            raise InputError(f"has a {enc} byte-order mark but is not valid {enc} "
                             f"(byte {exc.start})", path=path,
                             hint="force an encoding with --encoding") from None
        _check_not_binary(path, text)
        return text, enc
    _check_not_binary_bytes(path, data)
    try:
        text, enc = data.decode("utf-8"), "utf-8"
    except UnicodeDecodeError:
        # Windows exports: cp1252, where byte 0xB5 is the micro sign (as in latin-1). The five
        # bytes cp1252 leaves undefined fall back to latin-1 control characters.
        try:
            text, enc = data.decode("cp1252"), "cp1252"
        except UnicodeDecodeError:
            text, enc = data.decode("latin-1"), "latin-1"
    _check_not_binary(path, text)
    return text, enc


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


def _sniff_delimiter(lines: list[str]) -> str:
    """The delimiter that splits the most leading lines into the same number (>1) of fields."""
    best, best_score = ",", (-1, -1, -1)
    for pref, delim in enumerate(reversed(DELIMITERS)):
        counts = [len(r) for r in csv.reader(lines, delimiter=delim) if len(r) > 1]
        if not counts:
            continue
        width, agree = Counter(counts).most_common(1)[0]
        score = (agree, width, pref)
        if score > best_score:
            best, best_score = delim, score
    return best


def _leading_lines(text: str, n: int) -> tuple[list[str], list[int]]:
    """The first ``n`` lines and the character offset of each."""
    lines, offsets, pos = [], [], 0
    while len(lines) < n and pos < len(text):
        end = text.find("\n", pos)
        end = len(text) if end < 0 else end + 1
        lines.append(text[pos:end].rstrip("\r\n"))
        offsets.append(pos)
        pos = end
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


def _read_text(path: str, data: bytes, text: str, encoding: str,
               predicate: Callable[[list[str]], bool]) -> RawTable:
    lines, offsets = _leading_lines(text, SNIFF_LINES)
    delim = _sniff_delimiter(lines)
    # The header is a single physical line in every export seen; csv handles quotes within it.
    parsed = [next(csv.reader([ln], delimiter=delim), []) for ln in lines]
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
        else:
            # pandas reads the file itself (in parallel threads for a large file), skipping the
            # lines down to the header: no re-encoding, no copy.
            source, skip = path, header_line
    else:
        buf, offset, skip, codec = text[start:].encode("utf-8"), 0, 0, "utf-8"
        source = io.BytesIO(buf)
    shape = _line_shape(buf, offset)
    # Exports written with ", " between cells: skip the spaces in the parser (it costs, so only
    # when the leading lines show it).
    spaced = sum(f"{delim} " in ln for ln in lines[h:]) > (len(lines) - h) // 2
    frame, rows = _parse_body(text, start, (source, skip, codec), shape, delim, len(headers),
                              header_line, spaced=spaced)
    width = frame.shape[1]
    headers = headers + [""] * (width - len(headers))
    return _finish(path, FORMAT_OF_DELIMITER[delim], encoding, None, header_line, headers,
                   frame, rows)


@dataclass(frozen=True)
class _LineShape:
    """What the body's bytes say about its lines, found with array operations."""

    count: int  # physical lines
    lone_cr: bool  # a CR that does not end a CRLF (old Mac line ends)


def _line_shape(buf: bytes, offset: int) -> _LineShape:
    a = np.frombuffer(buf, dtype=np.uint8, offset=offset)
    if not len(a):
        return _LineShape(0, False)
    nl = a == 10
    count = int(np.count_nonzero(nl)) + (0 if a[-1] == 10 else 1)
    lone_cr = False
    if buf.find(b"\r", offset) >= 0:
        cr = a == 13
        lone_cr = int(np.count_nonzero(cr)) != int(np.count_nonzero(cr[:-1] & nl[1:]))
    return _LineShape(count, lone_cr)


def _parse_body(text: str, start: int, source: tuple[str | io.BytesIO, int, str],
                shape: _LineShape, delim: str, width: int, header_line: int, *,
                spaced: bool) -> tuple[pd.DataFrame, np.ndarray]:
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
    return _parse_body_slow(text[start:], delim, width, header_line, spaced=spaced)


def _parse_body_slow(body: str, delim: str, width: int, header_line: int, *,
                     spaced: bool) -> tuple[pd.DataFrame, np.ndarray]:
    import pandas as pd

    reader = csv.reader(io.StringIO(body, newline=""), delimiter=delim, skipinitialspace=spaced)
    records: list[list[str]] = []
    rows: list[int] = []
    last = 0
    for rec in reader:
        rows.append(header_line + 1 + last)
        last = reader.line_num
        records.append(rec)
    width = max([width, *(len(r) for r in records)])
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


class _Workbook:
    """Sheet names and rows of a workbook through calamine (fast) or openpyxl (fallback)."""

    def __init__(self, path: str) -> None:
        self.path = path
        try:
            import python_calamine
        except ImportError:
            python_calamine = None
        self._calamine = None
        self._openpyxl = None
        try:
            if python_calamine is not None:
                self._calamine = python_calamine.CalamineWorkbook.from_path(path)
                self.sheet_names = list(self._calamine.sheet_names)
            else:
                import openpyxl

                self._openpyxl = openpyxl.load_workbook(path, read_only=True, data_only=True)
                self.sheet_names = list(self._openpyxl.sheetnames)
        except Exception as exc:  # each library raises its own zip/XML errors
            raise InputError(
                "not an XLSX workbook (cannot open it as one: " + _short(exc) + ")", path=path,
                expected="an .xlsx workbook saved by a spreadsheet program",
                hint="if it is a text table, give it a .csv name",
            ) from None

    def rows(self, name: str) -> list[list[str]]:
        """All rows of a sheet from row 1, as text cells (merged ranges: top-left cell only)."""
        if self._calamine is not None:
            values = self._calamine.get_sheet_by_name(name).to_python(skip_empty_area=False)
        else:
            ws = self._openpyxl[name]
            values = ws.iter_rows(values_only=True)
        return [[_cell_text(v) for v in row] for row in values]

    def head(self, name: str, n: int) -> list[list[str]]:
        """The first ``n`` rows of a sheet, for finding the header row."""
        if self._calamine is not None:
            sheet = self._calamine.get_sheet_by_name(name)
            values = sheet.to_python(skip_empty_area=False, nrows=n)
        else:
            values = self._openpyxl[name].iter_rows(values_only=True, max_row=n)
        return [[_cell_text(v) for v in row] for row in values]

    def close(self) -> None:
        if self._openpyxl is not None:
            self._openpyxl.close()
        if self._calamine is not None:
            self._calamine.close()


def _short(exc: Exception) -> str:
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


def _read_xlsx(path: str, data: bytes, sheet: str | int | None,
               predicate: Callable[[list[str]], bool]) -> RawTable:
    if not data.startswith(_ZIP_MAGIC):
        raise InputError("not an XLSX workbook (an .xlsx file is a zip archive; this is not)",
                         path=path, expected="an .xlsx workbook saved by a spreadsheet program",
                         hint="if it is a text table, give it a .csv name")
    try:
        with zipfile.ZipFile(io.BytesIO(data)) as zf:
            if "xl/workbook.xml" not in zf.namelist():
                raise InputError("not an XLSX workbook (a zip archive without xl/workbook.xml)",
                                 path=path, expected="an .xlsx workbook")
    except zipfile.BadZipFile:
        raise InputError("not an XLSX workbook (a damaged zip archive)", path=path,
                         expected="an .xlsx workbook saved by a spreadsheet program") from None
    wb = _Workbook(path)
    try:
        if not wb.sheet_names:
            raise InputError("the workbook has no sheets", path=path)
        if sheet is not None:
            chosen = _pick_sheet(path, wb.sheet_names, sheet)
            candidates = [chosen]
        else:
            candidates = wb.sheet_names
        searched: list[list[str]] = []
        for name in candidates:
            head = wb.head(name, HEADER_SEARCH_ROWS * 4)
            h = _find_header(head, predicate)
            if h is not None:
                return _xlsx_table(path, name, wb.rows(name), h)
            searched.extend([r for r in head if any(r)][:HEADER_SEARCH_ROWS])
        where = (f"sheet {candidates[0]!r}" if sheet is not None
                 else "every sheet (" + ", ".join(map(repr, wb.sheet_names)) + ")")
        raise HeaderNotFound(
            f"no header row with a designator column in the first {HEADER_SEARCH_ROWS} rows "
            f"of {where}",
            path=path, candidates=searched, where=where,
            expected="a header row naming a designator column such as Designator, RefDes or "
                     "Reference",
            hint="pick the sheet with --sheet or name the column with --columns refdes=HEADER",
        )
    finally:
        wb.close()


def _xlsx_table(path: str, name: str, all_rows: list[list[str]], h: int) -> RawTable:
    import pandas as pd

    headers = list(all_rows[h])
    body = all_rows[h + 1:]
    width = max([len(headers), *(len(r) for r in body)]) if body else len(headers)
    headers += [""] * (width - len(headers))
    cols = {i: np.array([r[i] if i < len(r) else "" for r in body], dtype=object)
            for i in range(width)}
    frame = pd.DataFrame({i: pd.Series(v, dtype=object, copy=False) for i, v in cols.items()})
    rows = np.arange(h + 2, h + 2 + len(body), dtype=np.int64)
    return _finish(path, "xlsx", None, name, h + 1, headers, frame, rows)


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
