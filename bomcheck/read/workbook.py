"""Read stage: a workbook (XLSX through python-calamine or openpyxl; .xls, .xlsb and .ods through
python-calamine) to a ``RawTable``: the sheet picked or searched for its header row, hidden rows,
columns and sheets left out and named in warnings, cells as the text a user sees."""

from __future__ import annotations

import io
import math
import warnings
import zipfile
from dataclasses import replace
from datetime import date, datetime, time, timedelta
from typing import Any

import numpy as np

from bomcheck.frozen import frozen
from bomcheck.errors import InputError
from bomcheck.read import limits as limits_mod
from bomcheck.read.table import (HEADER_SEARCH_ROWS, HeaderNotFound, HeaderPredicate, RawTable,
                                 ReadWarning, find_header, finish, refuse)
from bomcheck.read.workbook_scan import check_zip, column_letters, scan_workbook

XLSX_SUFFIXES = (".xlsx", ".xlsm", ".xltx", ".xltm")
CALAMINE_SUFFIXES = (".xls", ".xlsb", ".ods")  # read through python-calamine only
FAST_EXTRA = 'pip install "bomcheck[fast]"'
ZIP_MAGIC = b"PK\x03\x04"
OLE_MAGIC = b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1"  # legacy .xls / .doc


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


@frozen
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


def is_ods(data: bytes) -> bool:
    """An OpenDocument spreadsheet: a zip whose first member is its stored ``mimetype``."""
    return (data.startswith(ZIP_MAGIC) and data[30:38] == b"mimetype"
            and b"opendocument.spreadsheet" in data[38:120])


def _open_zip(path: str, data: bytes, kind: str) -> zipfile.ZipFile:
    try:
        return zipfile.ZipFile(io.BytesIO(data))
    except (zipfile.BadZipFile, zipfile.LargeZipFile, ValueError, OSError, EOFError):
        raise InputError(f"not an {kind} workbook (a damaged zip archive)", path=path,
                         expected=f"an .{kind} workbook saved by a spreadsheet program") from None


def read_calamine_only(path: str, data: bytes, sheet: str | int | None,
                        predicate: HeaderPredicate, suffix: str) -> RawTable:
    """An .xls, .xlsb or .ods workbook, through python-calamine (the ``fast`` extra)."""
    kind = "ods" if is_ods(data) or suffix == ".ods" else suffix.lstrip(".") or "xls"
    lim = limits_mod.current()
    if data.startswith(ZIP_MAGIC):
        with _open_zip(path, data, kind) as zf:
            try:
                check_zip(zf, path, lim)
            except (zipfile.BadZipFile, OSError, ValueError) as exc:
                raise InputError(f"not a readable {kind} workbook ({_short(exc)})",
                                 path=path) from None
    return _read_workbook(path, data, sheet, predicate, kind=kind, scan=None)


def read_xlsx(path: str, data: bytes, sheet: str | int | None,
               predicate: HeaderPredicate) -> RawTable:
    if not data.startswith(ZIP_MAGIC):
        raise InputError("not an XLSX workbook (an .xlsx file is a zip archive; this is not)",
                         path=path, expected="an .xlsx workbook saved by a spreadsheet program",
                         hint="if it is a text table, give it a .csv name")
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
                   predicate: HeaderPredicate, *, kind: str, scan: Any) -> RawTable:
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
            h = find_header(head.cells, predicate)
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
        raise refuse(path, f"sheet {name!r}: rows", len(all_rows), lim.rows, "rows")
    if width > lim.columns:
        raise refuse(path, f"sheet {name!r}: columns", width, lim.columns, "columns")
    if width * len(all_rows) > lim.cells:
        raise refuse(path, f"sheet {name!r}: cells", width * len(all_rows), lim.cells, "cells")
    headers += [""] * (width - len(headers))
    cols = {i: np.array([r[i] if i < len(r) else "" for r in body], dtype=object)
            for i in range(width)}
    frame = pd.DataFrame({i: pd.Series(v, dtype=object, copy=False) for i, v in cols.items()})
    rows = np.asarray(sheet.rows[h + 1:], dtype=np.int64)
    return finish(path, kind, None, name, sheet.rows[h], headers, frame, rows)

