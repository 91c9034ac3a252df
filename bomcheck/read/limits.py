"""Read stage: the size limits every input is held to, so no file can exhaust memory or time.

A real BOM, design sheet or parts file is far inside every limit; a file outside one is refused
with exit status 2 and a one-line reason naming the file, the limit and the option that raises
it. The limits in force for a run are set once by the command line (``use_limits``) and read by
the readers (``current()``); library callers get the defaults unless they set their own.
"""

from __future__ import annotations

import contextlib
import contextvars
from collections.abc import Iterator
from dataclasses import fields, replace

from bomcheck.frozen import frozen

MIB = 1 << 20
# A number in a cell: more significant digits than any measurement has, or more characters, is
# refused, not rounded (``parse/units.parse_number``; the design sheet's float reader defers to
# that rule, ``read/text_table._float_reader_may_differ``).
NUMBER_DIGITS = 30
NUMBER_CHARS = 40


@frozen
class Limits:
    """Largest input accepted, per file (``placements``: per BOM, ``cell_chars``: per cell)."""

    file_bytes: int = 256 * MIB  # bytes of one input file (or of standard input)
    rows: int = 200_000  # table rows (XLSX: the sheet's last row; CSV: lines)
    columns: int = 1_024  # table columns (XLSX: the sheet's last column)
    cells: int = 5_000_000  # rows x columns of the table as stored (XLSX: its used rectangle)
    cell_chars: int = 1 * MIB  # characters in one cell
    # Designators after expanding lists and ranges, per BOM: an audit with JSON and JUnit
    # output of 100k placements peaks near 1 GiB; 50k keeps every BOM well below.
    placements: int = 50_000
    cell_placements: int = 10_000  # designators one cell may expand to
    unzipped_bytes: int = 1024 * MIB  # uncompressed size of all members of a workbook
    zip_ratio: int = 200  # uncompressed / compressed size of one large workbook member
    # Not a size: whether hidden XLSX rows, columns and sheets are read (--include-hidden).
    include_hidden: bool = False

    def with_options(self, **given: int | bool | None) -> Limits:
        """These limits with the ones given (not None) replaced."""
        known = {f.name for f in fields(self)}
        return replace(self, **{k: v for k, v in given.items() if v is not None and k in known})


# What each limit is called on the command line (the option that raises it).
OPTION = {
    "file_bytes": "--max-file-mb",
    "rows": "--max-rows",
    "columns": "--max-columns",
    "cells": "--max-cells",
    "placements": "--max-placements",
}

_CURRENT: contextvars.ContextVar[Limits] = contextvars.ContextVar("bomcheck_limits",
                                                                  default=Limits())


def current() -> Limits:
    """The limits in force for this run."""
    return _CURRENT.get()


@contextlib.contextmanager
def use_limits(limits: Limits) -> Iterator[Limits]:
    """Hold the readers to ``limits`` inside the ``with`` block."""
    token = _CURRENT.set(limits)
    try:
        yield limits
    finally:
        _CURRENT.reset(token)


def hint(name: str) -> str:
    """How to raise limit ``name`` (or that it is fixed)."""
    opt = OPTION.get(name)
    return f"raise it with {opt} if the file is genuine" if opt else "a fixed limit"
