"""Reference designator lists (``C1, C3-C5``, ``C10..C12``, ``C1-3``) expanded to single designators.

Used by the importer for BOM lines and by the design-sheet reader for the rows that address a
list or a range. Pure functions; no I/O.
"""

from __future__ import annotations

import re

from bomcheck.read import limits
from bomcheck.errors import InputError

# Separators between list items: comma, semicolon, slash, whitespace.
_SPLIT = re.compile(r"[,;/\s]+")
# Every pattern here runs in time linear in the cell (a 100 KB garbage cell must not hang):
# no two adjacent quantifiers over the same characters. A designator number has at most
# MAX_DIGITS digits, so no number reaches Python's int-digit limit.
MAX_DIGITS = 9
_SINGLE = re.compile(r"^([A-Za-z_]+)(\d{1,%d})([A-Za-z]?)$" % MAX_DIGITS)
_RANGE = re.compile(
    r"^(?P<p1>[A-Za-z_]+)(?P<n1>\d+)\s*(?:-|\.\.|\u2013|:|to)\s*(?P<p2>[A-Za-z_]*)(?P<n2>\d+)$"
)
# A range mark written with spaces around it ("C10 .. C12", "C1 - C3"), matched only from the
# start of a run of spaces, and "to" between a number and a designator.
_SPACED_MARK = re.compile(r"(?<!\s)\s*(\.\.|\u2013|-|:)\s*|(?<=\d)\s+(to)\s+(?=[A-Za-z_]*\d)")
MAX_RANGE = 10_000


def prefix(refdes: str) -> str:
    """The letter prefix of a designator (``CR12`` -> ``CR``)."""
    m = re.match(r"^[A-Za-z_]+", refdes)
    return m.group(0).upper() if m else ""


def expand(text: str, *, path: str | None = None, row: int | None = None) -> list[str]:
    """Expand a designator list to single designators, in the order written.

    Raises ``InputError`` for a range that runs backwards, mixes prefixes, is absurdly long or
    has a number of more than ``MAX_DIGITS`` digits, and for a cell that expands to more than
    ``limits.current().cell_placements`` designators. Text that is not designator-like at all
    (``"see note"``) is returned as one item so the caller can decide what it is.
    """
    t = text.strip().strip(",;")
    if not t:
        return []
    # Join "C10 .. C12", "C1 - C3", "C1 : C3" and "C1 to C3" written with spaces around the
    # range mark ("to" only between a number and a designator, so words stay apart).
    t = _SPACED_MARK.sub(lambda m: m.group(1) or m.group(2), t)
    cap = limits.current().cell_placements
    out: list[str] = []
    for item in _SPLIT.split(t):
        if not item:
            continue
        m = _RANGE.match(item)
        if not m:
            out.append(item.upper() if _SINGLE.match(item) else item)
            continue
        p1, p2 = m.group("p1").upper(), (m.group("p2") or m.group("p1")).upper()
        if max(len(m.group("n1")), len(m.group("n2"))) > MAX_DIGITS:
            raise InputError(
                f"designator number longer than {MAX_DIGITS} digits", path=path, row=row,
                text=item[:40] + ("..." if len(item) > 40 else ""),
                expected="a designator such as C12 or a range such as C3-C5")
        n1, n2 = int(m.group("n1")), int(m.group("n2"))
        if p1 != p2:
            raise InputError(
                "designator range mixes prefixes", path=path, row=row, text=item,
                expected="a range of one prefix such as C3-C5",
            )
        if n2 < n1:
            raise InputError(
                "designator range runs backwards", path=path, row=row, text=item,
                expected="the lower number first, such as C3-C5",
            )
        if n2 - n1 >= MAX_RANGE:
            raise InputError(
                f"designator range covers more than {MAX_RANGE} parts", path=path, row=row,
                text=item, expected="a shorter range",
            )
        if len(out) + n2 - n1 + 1 > cap:
            raise _too_many(cap, text, path, row)
        width = len(m.group("n1")) if m.group("n1").startswith("0") else 0
        out.extend(f"{p1}{n:0{width}d}" for n in range(n1, n2 + 1))
    if len(out) > cap:
        raise _too_many(cap, text, path, row)
    return out


def _too_many(cap: int, text: str, path: str | None, row: int | None) -> InputError:
    return InputError(f"refused: the designators of one cell expand to more than {cap:,} "
                      "placements", path=path, row=row,
                      text=text[:40] + ("..." if len(text) > 40 else ""),
                      hint="a fixed limit; check the designator cell")


def check_total(count: int, *, path: str | None = None) -> None:
    """Refuse a BOM whose designators expand to more placements than the limit in force."""
    cap = limits.current().placements
    if count > cap:
        raise InputError(f"refused: the designators expand to more than {cap:,} placements",
                         path=path, hint=limits.hint("placements"))


def is_designator(item: str) -> bool:
    """True for a single designator such as ``C12`` or ``C12A``."""
    return bool(_SINGLE.match(item.strip()))


def sort_key(refdes: str) -> tuple[str, int, str]:
    """Natural order of designators: ``C2`` before ``C10``; text that is no designator sorts by
    itself after the designators of the same prefix."""
    m = _SINGLE.match(refdes.strip())
    if not m:
        return (refdes.upper(), 1 << 62, "")
    return (m.group(1).upper(), int(m.group(2)), m.group(3).upper())
