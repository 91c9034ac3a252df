"""Read stage: a CSV, TSV or semicolon CSV to a ``RawTable``: the delimiter sniffed, the header
row found, the body parsed by the pandas C engine (the csv module where lines and records do not
line up), every cell kept as text, within the limits."""

from __future__ import annotations

import csv
import io
import warnings
from collections import Counter
from collections.abc import Callable, Mapping, Sequence
from dataclasses import replace
from typing import TYPE_CHECKING

import numpy as np

from bomcheck.frozen import frozen
from bomcheck.errors import InputError
from bomcheck.read import limits as limits_mod
from bomcheck.read.table import (HEADER_SEARCH_ROWS, HeaderNotFound, HeaderPredicate, RawTable,
                                 find_header, finish, refuse)
from bomcheck.read.text_decode import LINE_END, decode_text

if TYPE_CHECKING:
    import pandas as pd

SNIFF_LINES = 60
DELIMITERS = (",", ";", "\t")
FORMAT_OF_DELIMITER = {",": "csv", ";": "semicolon", "\t": "tsv"}
# The columns (by position) a caller reads as numbers, from the header cells, each with the
# cells that mean no value there (besides an empty one).
NumericColumns = Callable[[list[str]], Mapping[int, Sequence[str]]]


def read_text_table(path: str, data: bytes, encoding: str | None, predicate: HeaderPredicate,
                    *, from_file: bool, numeric: NumericColumns | None = None) -> RawTable:
    """The table of a text file's bytes (``path`` as shown in messages; ``from_file``: pandas
    may read the file itself); ``encoding`` forces the text encoding. ``numeric`` gives, from
    the header cells, the columns the caller reads as numbers: they come as floats (NaN for an
    empty cell) when every cell of them is a plain number, else the whole table is text."""
    text, used, notes = decode_text(path, data, encoding)
    if not text.strip():  # only a byte-order mark, or spaces in UTF-16
        raise InputError("the file is empty", path=path,
                         expected="a BOM table (CSV, TSV or XLSX) with a header row")
    table = _read_text(path, data, text, used, predicate, from_file=from_file, numeric=numeric)
    return replace(table, warnings=table.warnings + notes) if notes else table


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
    for m in LINE_END.finditer(text):
        lines.append(text[pos:m.start()])
        offsets.append(pos)
        pos = m.end()
        if len(lines) >= n:
            return lines, offsets
    if pos < len(text):
        lines.append(text[pos:])
        offsets.append(pos)
    return lines, offsets


def _parse_line(path: str, line: str, number: int, delim: str) -> list[str]:
    try:
        return next(csv.reader([line], delimiter=delim), [])
    except csv.Error as exc:
        raise _csv_failure(path, number, exc) from None


def _read_text(path: str, data: bytes, text: str, encoding: str,
               predicate: HeaderPredicate, *, from_file: bool = True,
               numeric: NumericColumns | None = None) -> RawTable:
    lim = _csv_setup()
    lines, offsets = _leading_lines(text, SNIFF_LINES)
    delim = _sniff_delimiter(lines)
    # The header is a single physical line in every export seen; csv handles quotes within it.
    parsed = [_parse_line(path, ln, i + 1, delim) for i, ln in enumerate(lines)]
    h = find_header(parsed, predicate)
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
        raise refuse(path, "header columns", len(headers), lim.columns, "columns",
                      row=header_line)
    start = offsets[h + 1] if h + 1 < len(offsets) else len(text)
    source, skip, codec, buf, offset = _body_source(path, data, text, encoding, start,
                                                   header_line, from_file)
    shape = _line_shape(buf, offset)
    if shape.count > lim.rows:
        raise refuse(path, "lines", shape.count, lim.rows, "rows")
    if shape.count * max(len(headers), 1) > lim.cells:
        raise refuse(path, "cells (lines x header columns)", shape.count * len(headers),
                      lim.cells, "cells")
    # Exports written with ", " between cells: skip the spaces in the parser (it costs, so only
    # when the leading lines show it).
    spaced = sum(f"{delim} " in ln for ln in lines[h:]) > (len(lines) - h) // 2
    numbers = dict(numeric(headers)) if numeric is not None else {}
    frame, rows = _parse_body(text, start, (source, skip, codec), shape, delim, len(headers),
                              header_line, spaced=spaced, path=path, numeric=numbers)
    if shape.longest > lim.cell_chars:
        _check_cell_sizes(path, frame, rows, lim)
    width = frame.shape[1]
    headers = headers + [""] * (width - len(headers))
    return finish(path, FORMAT_OF_DELIMITER[delim], encoding, None, header_line, headers,
                   frame, rows)


def _body_source(path: str, data: bytes, text: str, encoding: str, start: int, header_line: int,
                 from_file: bool) -> tuple[str | io.BytesIO, int, str, bytes, int]:
    """What pandas parses the body from: (path or UTF-8 stream, lines to skip, codec), and the
    bytes and offset of the body for counting its lines."""
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
    return source, skip, codec, buf, offset


@frozen
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
        if frame[col].dtype != object:  # numbers
            continue
        lengths = frame[col].str.len().to_numpy(dtype=float, na_value=0)
        over = np.flatnonzero(lengths > lim.cell_chars)
        if len(over):
            raise InputError(f"refused: a cell longer than the limit of {lim.cell_chars:,} "
                             "characters", path=path, row=int(rows[over[0]]),
                             column=f"column {j + 1}",
                             hint="a fixed limit; check the file is a BOM table")


def _parse_body(text: str, start: int, source: tuple[str | io.BytesIO, int, str],
                shape: _LineShape, delim: str, width: int, header_line: int, *,
                spaced: bool, path: str = "",
                numeric: Mapping[int, Sequence[str]] | None = None
                ) -> tuple[pd.DataFrame, np.ndarray]:
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
    frame = None
    if numeric and _float_reader_may_differ(text, start):
        numeric = {}  # the text path decides, as it always did
    if numeric:
        at = source[0].tell() if isinstance(source[0], io.BytesIO) else 0
        frame = _read_c(source, delim, width, spaced, numeric)
        if frame is None and isinstance(source[0], io.BytesIO):
            source[0].seek(at)
    if frame is None:  # a cell of a numeric column is not a plain number: all as text
        frame = _read_c(source, delim, width, spaced, {})
    if frame is not None and len(frame) == shape.count and not shape.lone_cr:
        rows = np.arange(header_line + 1, header_line + 1 + len(frame), dtype=np.int64)
        return frame, rows
    return _parse_body_slow(text[start:], delim, width, header_line, spaced=spaced, path=path)


# Cells pandas' float reader takes but the text path does not read as that number: true and
# false in any case (pandas makes a column of only those 1.0 and 0.0; the text path refuses
# them), and numbers past the text path's digit limits (``limits.NUMBER_DIGITS`` significant
# digits or ``limits.NUMBER_CHARS`` characters, which ``parse/units.parse_number`` refuses and
# pandas rounds). Found anywhere in the
# body, even in a note, the sheet is read as text: slower, never different. Checked on the
# bytes as arrays (a pattern search over a 40 MB sheet took seconds).
_LOWER = bytes.maketrans(b"ABCDEFGHIJKLMNOPQRSTUVWXYZ", b"abcdefghijklmnopqrstuvwxyz")


def _member_table(chars: bytes) -> bytes:
    """A ``bytes.translate`` table giving 1 for ``chars`` and 0 for every other byte."""
    return bytes(1 if b in chars else 0 for b in range(256))


_DIGIT_OR_POINT = _member_table(b"0123456789.")
_NUMBER_CHAR = _member_table(b"0123456789.eE+-")


def _longest_run(member: np.ndarray) -> int:
    """The length of the longest run of True in ``member`` (the widest gap between the
    positions that are not members)."""
    outside = np.flatnonzero(~member)
    if not len(outside):
        return len(member)
    gaps = np.diff(outside) - 1
    return int(max(outside[0], len(member) - 1 - outside[-1], gaps.max() if len(gaps) else 0))


def _float_reader_may_differ(text: str, start: int) -> bool:
    """True when the body ``text[start:]`` holds a cell the float reader would read otherwise
    than the text path: ``true``/``false`` in any case, or a run of digits and points longer
    than ``NUMBER_DIGITS`` or of number characters longer than ``NUMBER_CHARS``."""
    body = text[start:].encode("utf-8", "replace")
    lowered = body.translate(_LOWER)
    if b"true" in lowered or b"false" in lowered:
        return True

    def longest(table: bytes) -> int:
        return _longest_run(np.frombuffer(body.translate(table), dtype=bool))

    run = longest(_NUMBER_CHAR)  # digits and points are number characters
    digits, chars = limits_mod.NUMBER_DIGITS, limits_mod.NUMBER_CHARS
    return run > chars or (run > digits and longest(_DIGIT_OR_POINT) > digits)


def _read_c(source: tuple[str | io.BytesIO, int, str], delim: str, width: int, spaced: bool,
            numeric: Mapping[int, Sequence[str]]) -> pd.DataFrame | None:
    """The body by the pandas C engine, every cell as text but the ``numeric`` columns as
    floats (an empty cell, or one of the column's no-value cells, NaN); None when the engine
    cannot read it so (a cell it cannot convert, a record it cannot split)."""
    import pandas as pd

    numbers = {i: ["", *words] for i, words in numeric.items()}
    types = {i: (np.float64 if i in numbers else object) for i in range(width)}
    try:
        with warnings.catch_warnings():
            # A row wider than the header is only a warning to pandas (cells dropped): here it
            # sends the file to the exact path, which keeps them.
            warnings.simplefilter("error", pd.errors.ParserWarning)
            return pd.read_csv(
                source[0], skiprows=source[1], sep=delim, header=None, dtype=types,
                na_filter=bool(numbers), keep_default_na=False, na_values=numbers or None,
                skip_blank_lines=False, skipinitialspace=spaced, engine="c",
                encoding=source[2], names=list(range(width)), quoting=csv.QUOTE_MINIMAL,
                index_col=False,
            )
    except (pd.errors.ParserError, pd.errors.ParserWarning, ValueError, UnicodeDecodeError):
        return None


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
                raise refuse(path, "columns in a line", widest, lim.columns, "columns",
                              row=rows[-1])
        if widest * len(records) > lim.cells:
            raise refuse(path, "cells (rows x widest row)", widest * len(records), lim.cells,
                          "cells", row=rows[-1])
    width = widest
    cols = {i: np.array([r[i] if i < len(r) else "" for r in records], dtype=object)
            for i in range(width)}
    frame = pd.DataFrame({i: pd.Series(v, dtype=object, copy=False) for i, v in cols.items()})
    return frame, np.asarray(rows, dtype=np.int64)

