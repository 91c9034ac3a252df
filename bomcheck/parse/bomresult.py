"""Normalise stage: the values the BOM import returns (options, source, findings, the result
with its placement, skipped-row and approved-source tables)."""

from __future__ import annotations

import functools
from collections.abc import Callable, Mapping
from dataclasses import asdict, field

import numpy as np
import pandas as pd

from bomcheck.frozen import frozen
from bomcheck.parse.merge import SPEC_COLUMNS

PLACEMENT_COLUMNS: tuple[str, ...] = (
    "refdes", "row", "line", "fitted", "not_fitted_reason", "text", "value_text",
    "description", "mpn", "manufacturer", "qty", *SPEC_COLUMNS,
)
SKIPPED_COLUMNS: tuple[str, ...] = ("row", "kind", "reason", "text")
# What a BOM line is: capacitor placements, another part, or unreadable.
LINE_CAP, LINE_NONCAP, LINE_UNREAD = 0, 1, 2

@frozen
class ImportOptions:
    """How to read a BOM: sheet, forced encoding, columns named by hand, a TOML column map."""

    sheet: str | int | None = None
    encoding: str | None = None
    columns: Mapping[str, str] = field(default_factory=dict)
    column_map: str | None = None


@frozen
class BomSource:
    """Where the placements came from: file, hash, format and the columns used."""

    path: str
    sha256: str
    format: str
    encoding: str | None
    sheet: str | None
    header_row: int
    columns: dict[str, str]

    def to_dict(self) -> dict:
        """Plain dict for JSON."""
        return asdict(self)


@functools.total_ordering
@frozen
class ImportFinding:
    """Something about a BOM line a reviewer must look at (quantity mismatch, column conflict).

    ``refdes`` is None for a finding on a whole line. ``severity`` is the verdict status the
    audit gives the placements it names: ``"warn"`` when the data read is usable but a reviewer
    should look (quantity against designators, a column conflict resolved conservatively), and
    ``"nodata"`` when the placement's data cannot be trusted as read, so no verdict on it may
    pass (``fitted_conflict``: the fitted column says yes while a cell says not fitted;
    ``value_unread``: a number in the value text was not read, or read only by guessing, such as
    ``1,500uF``, ``-10uF`` or a bare ``85``; ``capacitance_unread``: a fitted capacitor's value
    cell has text but no capacitance was read from the line). ``NODATA_CODES`` lists the codes
    of the second kind; ``capacitance_missing`` (a fitted capacitor with an empty value cell and
    no capacitance in its other text) is a warning, since the checks that need the capacitance
    give nodata themselves.
    """

    row: int
    refdes: str | None
    code: str
    message: str
    severity: str = "warn"

    def sort_key(self) -> tuple[int, str, str, str]:
        """The order of findings: ``sorted(findings, key=ImportFinding.sort_key)`` gives the
        order ``sorted(findings)`` gives, making each finding's key once."""
        return (self.row, self.refdes or "", self.code, self.message)

    def __lt__(self, other: object) -> bool:
        if not isinstance(other, ImportFinding):
            return NotImplemented
        return self.sort_key() < other.sort_key()

    def to_dict(self) -> dict:
        """Plain dict for JSON."""
        return asdict(self)


# Finding codes whose placements have no trustworthy data (severity "nodata", see ImportFinding;
# ``capacitance_implausible``: a capacitance above what its technology is ever made with,
# ``spec.PLAUSIBLE_CAPACITANCE_F``).
NODATA_CODES: frozenset[str] = frozenset({"fitted_conflict", "value_unread",
                                          "capacitance_unread", "capacitance_implausible"})


def finding(row: int, refdes: str | None, code: str, message: str) -> ImportFinding:
    """An ImportFinding with the severity its code carries."""
    return ImportFinding(row, refdes, code, message,
                         "nodata" if code in NODATA_CODES else "warn")


SOURCE_COLUMNS: tuple[str, ...] = ("line", "source", "row", "manufacturer", "mpn", "text")

def _empty_sources() -> pd.DataFrame:
    return pd.DataFrame({c: pd.Series(dtype=np.int64 if c in ("line", "source", "row")
                                      else object) for c in SOURCE_COLUMNS})


@frozen
class ImportResult:
    """Placements (one row per designator), rows not taken, findings and the totals line.

    ``sources`` lists the approved sources of each BOM line, to join with ``placements`` on
    ``line``: source 0 is the line's own manufacturer and MPN (for every capacitor line and
    every line with approved sources), sources 1, 2... the approved-source rows under it, each
    with its source ``row`` and its own ``text`` (description and notes; "" when it has none, and
    always "" for source 0, whose text is the line's).
    """

    source: BomSource
    placements: pd.DataFrame
    skipped: pd.DataFrame
    findings: tuple[ImportFinding, ...]
    totals: dict[str, int]
    # What the reader skipped or doubted (hidden rows, columns and sheets; mixed encodings).
    read_warnings: tuple = ()
    # Builds ``sources`` on first use (most callers never ask for it).
    source_table: Callable[[], pd.DataFrame] | None = field(default=None, repr=False,
                                                            compare=False)

    @functools.cached_property
    def sources(self) -> pd.DataFrame:
        """The approved-source table (``SOURCE_COLUMNS``), see the class docstring."""
        return self.source_table() if self.source_table is not None else _empty_sources()

