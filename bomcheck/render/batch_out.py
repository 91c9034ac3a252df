"""Renderers of a batch audit: each board's piece of the combined outputs (written by the worker
that audited it) and the combined JSON report, Markdown summary and CSV stitched from the pieces
in manifest order, streamed so memory holds one piece at a time."""

from __future__ import annotations

from collections.abc import Iterator

from bomcheck.render.csvrows import batch_csv_header, board_csv
from bomcheck.render.markdown import batch_markdown_head, board_markdown
from bomcheck.report.jsonform import SCHEMA_VERSION
from bomcheck.report.jsontext import json_dumps
from bomcheck.report.model import worst_status


def board_piece(kind: str, report, product: str) -> Iterator[str]:
    """One board's part of the combined output ``kind`` (``json``, ``markdown`` or ``csv``)."""
    if kind == "json":
        for text in report.iter_json():
            yield text.rstrip("\n")
    elif kind == "markdown":
        yield board_markdown(report, product)
    else:
        yield board_csv(report, product)


def combined_json(results, tool_version: str) -> Iterator[str]:
    """The combined JSON report (schema ``batch.schema.json``): the batch's status and a
    ``boards`` list, each with product, status, totals and its whole report (schema
    ``report.schema.json``) under ``report``."""
    yield json_dumps({"schema_version": SCHEMA_VERSION, "kind": "batch",
                 "tool": {"name": "bomcheck", "version": tool_version},
                 "status": worst_status(r.status for r in results)})[:-1] + ',"boards":['
    for i, r in enumerate(results):
        head = json_dumps({"product": r.product, "status": r.status, "totals": r.totals})
        yield ("," if i else "") + head[:-1] + ',"report":'
        yield from _file_text(r.pieces["json"])
        yield "}"
    yield "]}\n"


def combined_markdown(results, tool_version: str) -> Iterator[str]:
    """A Markdown summary: one table row per board, then each board's own summary."""
    yield from batch_markdown_head(results, worst_status(r.status for r in results))
    for r in results:
        yield "\n"
        yield from _file_text(r.pieces["markdown"])


def combined_csv(results, tool_version: str) -> Iterator[str]:
    """One CSV: the product column, then the audit's CSV columns, one row per placement."""
    yield batch_csv_header()
    for r in results:
        yield from _file_text(r.pieces["csv"])


def _file_text(path: str, size: int = 1 << 20) -> Iterator[str]:
    with open(path, encoding="utf-8", newline="") as f:
        while chunk := f.read(size):
            yield chunk


COMBINERS = {"json": combined_json, "markdown": combined_markdown, "csv": combined_csv}
