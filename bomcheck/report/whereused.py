"""Report stage, across products: every placement of one part (by MPN) in a JSON audit report,
single or combined, with its voltage ratio, temperature margin and status."""

from __future__ import annotations

from dataclasses import fields
from typing import Any

from bomcheck.frozen import frozen
from bomcheck.parse import refdes as refdes_mod
from bomcheck.errors import InputError


@frozen
class Use:
    """One placement of the part: where it is, what it carries and how it fared."""

    product: str | None
    refdes: str
    row: int | None
    mpn: str
    manufacturer: str | None
    text: str
    status: str
    voltage_ratio: float | None
    temp_margin_c: float | None
    problems: tuple[str, ...]  # rule ids of the verdicts that are not a pass

    def to_dict(self) -> dict[str, Any]:
        """A JSON-ready dict."""
        d = {f.name: getattr(self, f.name) for f in fields(self)}
        d["problems"] = list(self.problems)
        return d


def normalise_mpn(mpn: str) -> str:
    """Part numbers compare without case and spaces (``abc 123`` is ``ABC123``)."""
    return "".join(str(mpn).split()).upper()


def _boards(report: dict):
    """(product, single report) for a combined report's boards, or (None, report)."""
    if not isinstance(report, dict):
        raise InputError("the report is not a bomcheck JSON report",
                         expected="the output of bomcheck audit --json")
    if isinstance(report.get("boards"), list):
        for board in report["boards"]:
            yield board.get("product"), board.get("report") or {}
    else:
        yield None, report


def where_used(report: dict, mpn: str) -> tuple[Use, ...]:
    """Every placement whose MPN is ``mpn``, board by board in the report's order, designators
    in natural order."""
    want = normalise_mpn(mpn)
    out: list[Use] = []
    for product, single in _boards(report):
        if single.get("schema_version", 1) < 2:
            raise InputError("the report was written before schema version 2 and holds no part "
                             "numbers", expected="a report of this bomcheck's audit --json")
        found = [p for p in single.get("placements") or []
                 if normalise_mpn(p.get("mpn") or "") == want]
        found.sort(key=lambda p: refdes_mod.sort_key(str(p.get("refdes"))))
        for p in found:
            metrics = p.get("metrics") or {}
            out.append(Use(
                product=product, refdes=str(p.get("refdes")), row=p.get("row"),
                mpn=p.get("mpn") or "", manufacturer=p.get("manufacturer"),
                text=p.get("text") or "", status=p.get("status") or "nodata",
                voltage_ratio=metrics.get("voltage_ratio"),
                temp_margin_c=metrics.get("temp_margin_c"),
                problems=tuple(v["rule"] for v in p.get("verdicts") or []
                               if v.get("status") != "pass")))
    return tuple(out)

