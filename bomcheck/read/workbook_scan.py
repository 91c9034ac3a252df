"""Read stage: what an XLSX workbook holds, found in its zip before a spreadsheet library reads it.

A workbook is a zip of XML parts. Before openpyxl or python-calamine touches one, this module
checks the members' uncompressed sizes and compression ratios (a zip bomb is refused), and streams
each worksheet's XML once with byte patterns to learn its last row and column, its declared
dimension, its hidden rows and columns and its percent-formatted cells; the workbook part gives
the sheets and which are hidden. A sheet larger than the limits in force (``bomcheck.read.limits``)
is refused before anything is allocated for it. Only the standard library is used.
"""

from __future__ import annotations

import posixpath
import re
import zipfile
from dataclasses import field

from bomcheck.frozen import frozen
from bomcheck.errors import InputError
from bomcheck.read.limits import Limits, hint

_CHUNK = 4 << 20
_SMALL_PART = 16 << 20  # workbook, relationships and styles parts are read whole up to this
_RATIO_FLOOR = 16 << 20  # the compression-ratio test applies to members larger than this
_P = rb"<(?:[A-Za-z_][\w.-]*:)?"  # an element's "<" and optional namespace prefix

_SHEET = re.compile(_P + rb"sheet\b([^>]*)>")
_ATTR = re.compile(rb'([\w:.-]+)\s*=\s*"([^"]*)"')
_REL = re.compile(_P + rb"Relationship\b([^>]*)>")
_DIMENSION = re.compile(_P + rb'dimension\b[^>]*?\sref="([^"]*)"')
_ROW_HIDDEN = re.compile(_P + rb'row\b[^>]*?\shidden="(?:1|true)"[^>]*>')
_COL_HIDDEN = re.compile(_P + rb'col\b[^>]*?\shidden="(?:1|true)"[^>]*>')
_CELLXFS = re.compile(_P + rb"cellXfs\b.*?</(?:[A-Za-z_][\w.-]*:)?cellXfs>", re.S)
_XF = re.compile(_P + rb'xf\b([^>]*)>')
_NUMFMT = re.compile(_P + rb'numFmt\b([^>]*)>')
_REF = re.compile(r"\$?([A-Za-z]{1,8})\$?(\d{1,12})")

# Built-in number formats that show a percentage (ECMA-376 Part 1, 18.8.30: 9 "0%", 10 "0.00%").
_PERCENT_BUILTIN = frozenset({9, 10})


@frozen
class SheetScan:
    """One worksheet as its XML describes it (rows and columns 1-based)."""

    name: str
    state: str  # "visible", "hidden" or "veryHidden"
    last_row: int = 0
    last_column: int = 0
    hidden_rows: frozenset[int] = frozenset()
    hidden_columns: frozenset[int] = frozenset()
    percent_cells: frozenset[tuple[int, int]] = frozenset()

    @property
    def hidden(self) -> bool:
        return self.state != "visible"


@frozen
class WorkbookScan:
    """The sheets of a workbook in workbook order; ``scanned`` False when a part was missing
    and the spreadsheet library is left to report what it finds."""

    sheets: tuple[SheetScan, ...] = ()
    scanned: bool = True
    notes: tuple[str, ...] = field(default=())

    def sheet(self, name: str) -> SheetScan | None:
        return next((s for s in self.sheets if s.name == name), None)


def column_number(letters: str) -> int:
    """``A`` -> 1, ``Z`` -> 26, ``AA`` -> 27, ``XFD`` -> 16384."""
    n = 0
    for ch in letters.upper():
        n = n * 26 + ord(ch) - 64
    return n


def column_letters(n: int) -> str:
    """1 -> ``A``, 27 -> ``AA``."""
    out = ""
    while n > 0:
        n, r = divmod(n - 1, 26)
        out = chr(65 + r) + out
    return out


def _attrs(blob: bytes) -> dict[str, str]:
    import html  # html.entities is large; only a workbook's scan needs it

    return {k.decode("ascii", "replace").rsplit(":", 1)[-1]: html.unescape(v.decode("utf-8",
            "replace")) for k, v in _ATTR.findall(blob)}


def check_zip(zf: zipfile.ZipFile, path: str, lim: Limits) -> None:
    """Refuse a zip whose members would unpack beyond the limits (a zip bomb)."""
    total = 0
    for info in zf.infolist():
        total += info.file_size
        if (info.file_size > _RATIO_FLOOR
                and info.file_size > lim.zip_ratio * max(info.compress_size, 1)):
            raise InputError(
                f"refused: workbook member {info.filename!r} unpacks {info.file_size:,} bytes "
                f"from {info.compress_size:,} (more than {lim.zip_ratio} times: a zip bomb, not "
                "a spreadsheet)", path=path)
        if total > lim.unzipped_bytes:
            raise InputError(
                f"refused: the workbook unpacks to more than {lim.unzipped_bytes >> 20} MiB",
                path=path, hint="split the workbook or save the BOM sheet as CSV")


def _read_small(zf: zipfile.ZipFile, name: str) -> bytes | None:
    try:
        info = zf.getinfo(name)
    except KeyError:
        return None
    if info.file_size > _SMALL_PART:
        return None
    with zf.open(info) as f:
        return f.read(_SMALL_PART + 1)[:_SMALL_PART]


def _percent_styles(zf: zipfile.ZipFile) -> frozenset[int]:
    """Indexes of the cell formats (``s`` attribute of a cell) that show a percentage."""
    styles = _read_small(zf, "xl/styles.xml")
    if not styles:
        return frozenset()
    custom = {}
    for blob in _NUMFMT.findall(styles):
        a = _attrs(blob)
        if a.get("numFmtId", "").isdigit():
            code = re.sub(r'"[^"]*"|\\.', "", a.get("formatCode", ""))
            custom[int(a["numFmtId"])] = "%" in code
    m = _CELLXFS.search(styles)
    if not m:
        return frozenset()
    out = set()
    for i, blob in enumerate(_XF.findall(m.group(0))):
        fid = _attrs(blob).get("numFmtId", "0")
        fid_n = int(fid) if fid.isdigit() else 0
        if fid_n in _PERCENT_BUILTIN or custom.get(fid_n, False):
            out.add(i)
    return frozenset(out)


def _sheet_parts(zf: zipfile.ZipFile) -> list[tuple[str, str, str | None]] | None:
    """(name, state, zip member) of each sheet, in workbook order; None without the parts."""
    wb = _read_small(zf, "xl/workbook.xml")
    rels = _read_small(zf, "xl/_rels/workbook.xml.rels")
    if wb is None or rels is None:
        return None
    targets = {}
    for blob in _REL.findall(rels):
        a = _attrs(blob)
        t = a.get("Target", "")
        t = t.lstrip("/") if t.startswith("/") else posixpath.normpath(posixpath.join("xl", t))
        targets[a.get("Id", "")] = t
    out = []
    for blob in _SHEET.findall(wb):
        a = _attrs(blob)
        if "name" not in a:
            continue
        out.append((a["name"], a.get("state", "visible") or "visible", targets.get(a.get("id", ""))))
    return out


def _refuse(path: str, sheet: str, what: str, found: int, limit: int, name: str) -> InputError:
    return InputError(f"sheet {sheet!r}: refused: {what} {found:,} is over the limit of "
                      f"{limit:,}", path=path, hint=hint(name))


def _check_size(path: str, sheet: str, rows: int, cols: int, lim: Limits, what: str) -> None:
    if rows > lim.rows:
        raise _refuse(path, sheet, f"{what} row", rows, lim.rows, "rows")
    if cols > lim.columns:
        raise _refuse(path, sheet, f"{what} column", cols, lim.columns, "columns")
    if rows * cols > lim.cells:
        raise _refuse(path, sheet, f"{what} area (rows x columns)", rows * cols, lim.cells,
                      "cells")


# The r attribute of a row (digits) or a cell (letters and digits), after one space as every
# writer puts it (a literal start keeps the search fast); after other white space only when the
# part has such an attribute.
_R_SPACE = re.compile(rb' r="([A-Za-z]{0,8})(\d{1,12})"')
_R_ANY = re.compile(rb'\sr="([A-Za-z]{0,8})(\d{1,12})"')
_ODD_SPACE = (b'\tr="', b'\nr="', b'\rr="')
_ROW_NUMBER = re.compile(rb'\sr="(\d{1,12})"')
_CELL_REF = re.compile(rb'\sr="([A-Za-z]{1,8})(\d{1,12})"')
_TAG_C = re.compile(_P + rb"c\s")


def _scan_sheet(zf: zipfile.ZipFile, member: str, name: str, state: str, percent: frozenset[int],
                path: str, lim: Limits) -> SheetScan:
    """Stream one worksheet part: its size (refused beyond ``lim``), hidden rows and columns
    and percent-formatted cells. Patterns start with a literal, so each chunk costs a few
    passes of the regular-expression engine's fast search."""
    last_row = last_col = rows_seen = cells_seen = 0
    hidden_rows: set[int] = set()
    hidden_cols: set[int] = set()
    pct_cells: set[tuple[int, int]] = set()
    dimension_checked = False
    pct_re = (re.compile(rb'\ss="(?:' + b"|".join(str(i).encode() for i in sorted(percent))
                         + rb')"') if percent else None)
    carry = b""
    with zf.open(member) as f:
        while True:
            chunk = f.read(_CHUNK)
            buf = carry + chunk
            if chunk:
                cut = buf.rfind(b">") + 1
                buf, carry = buf[:cut], buf[cut:]
                if len(carry) > _CHUNK:  # no tag end in 4 MiB: not a worksheet
                    raise InputError(f"sheet {name!r}: damaged worksheet XML (no tag end in "
                                     "4 MiB)", path=path)
            if not dimension_checked:
                dimension_checked = _check_dimension(buf, path, name, lim)
            refs = (_R_ANY if any(w in buf for w in _ODD_SPACE) else _R_SPACE).findall(buf)
            if refs:
                last_col = max(last_col, max(column_number(c.decode()) for c in
                                             {c for c, _ in refs}))
                last_row = max(last_row, max(map(int, {r for _, r in refs})))
            rows_seen += buf.count(b"<row") + buf.count(b":row ")  # rows without a number too
            cells_seen += buf.count(b"<c ") + buf.count(b"<c>") + buf.count(b":c ")
            last_row = max(last_row, rows_seen)
            if b'hidden="' in buf:
                _add_hidden(buf, hidden_rows, hidden_cols, lim)
            if pct_re is not None:
                _add_percent_cells(buf, pct_re, pct_cells)
            _check_size(path, name, last_row, last_col, lim, "last")
            if cells_seen > lim.cells:
                raise _refuse(path, name, "cell count", cells_seen, lim.cells, "cells")
            if not chunk:
                break
    return SheetScan(name, state, last_row, last_col, frozenset(hidden_rows),
                     frozenset(hidden_cols), frozenset(pct_cells))


def _check_dimension(buf: bytes, path: str, name: str, lim: Limits) -> bool:
    """Refuse a sheet whose declared dimension is beyond ``lim``; whether the dimension has
    been seen or can no longer come (the cell data has started)."""
    data_at = buf.find(b"sheetData")  # the dimension comes before the data
    m = _DIMENSION.search(buf, 0, len(buf) if data_at < 0 else data_at)
    if not m:
        return data_at >= 0
    ends = [_REF.fullmatch(r) for r in m.group(1).decode("ascii", "replace").split(":")]
    if all(ends):
        r = max(int(e.group(2)) for e in ends)  # type: ignore[union-attr]
        c = max(column_number(e.group(1)) for e in ends)  # type: ignore[union-attr]
        _check_size(path, name, r, c, lim, "declared last")
    return True


def _add_hidden(buf: bytes, hidden_rows: set[int], hidden_cols: set[int], lim: Limits) -> None:
    """The hidden rows and columns a chunk of worksheet XML declares."""
    for blob in _ROW_HIDDEN.findall(buf):
        m = _ROW_NUMBER.search(blob)
        if m:
            hidden_rows.add(int(m.group(1)))
    for blob in _COL_HIDDEN.findall(buf):
        a = _attrs(blob)
        lo = int(a.get("min", "0")) if a.get("min", "").isdigit() else 0
        hi = int(a.get("max", "0")) if a.get("max", "").isdigit() else 0
        hidden_cols.update(range(max(lo, 1), min(hi, lim.columns + 1, 16384) + 1))


def _add_percent_cells(buf: bytes, pct_re: re.Pattern[bytes],
                       pct_cells: set[tuple[int, int]]) -> None:
    """The (row, column) of each cell in a chunk whose style shows a percentage."""
    for m in pct_re.finditer(buf):
        start = buf.rfind(b"<", 0, m.start())
        tag = buf[start:buf.find(b">", m.end()) + 1]
        ref = _CELL_REF.search(tag)
        if _TAG_C.match(tag) and ref:
            pct_cells.add((int(ref.group(2)), column_number(ref.group(1).decode())))


def scan_workbook(zf: zipfile.ZipFile, path: str, lim: Limits) -> WorkbookScan:
    """Check the zip and every worksheet against ``lim``; raises ``InputError`` on a refusal.

    A worksheet part that no sheet entry leads to (an odd relationship path, a damaged workbook
    part) is still held to the limits: the library may find it where this scan did not."""
    check_zip(zf, path, lim)
    parts = _sheet_parts(zf)
    names = set(zf.namelist())
    percent = _percent_styles(zf)
    sheets = []
    seen: set[str] = set()
    for name, state, member in parts or ():
        if member is None or member not in names:
            sheets.append(SheetScan(name, state))
            continue
        seen.add(member)
        sheets.append(_scan_sheet(zf, member, name, state, percent, path, lim))
    for member in sorted(names - seen):
        if member.startswith("xl/worksheets/") and member.endswith(".xml"):
            _scan_sheet(zf, member, member, "visible", frozenset(), path, lim)
    return WorkbookScan(tuple(sheets), scanned=parts is not None)
