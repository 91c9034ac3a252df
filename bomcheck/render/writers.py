"""Report stage, file edge: the writer of each output in ``bomcheck.render.registry.OUTPUTS``.

Each writer takes the audit ``Report`` (None when run from ``substitute``), a path (``-`` for
standard output) and an ``OutputContext``; it renders with the matching module and writes
through ``bomcheck.render.outfiles`` (atomic, fsynced). Renderer modules are imported on use.
"""

from __future__ import annotations

import sys

from bomcheck.render.outfiles import write_text
from bomcheck.render.registry import OutputContext


def write_json(report, path: str, ctx: OutputContext) -> None:
    """The JSON report (schema ``report.schema.json``), or the substitute check's JSON."""
    if report is None:
        write_text(path, ctx.substitutes.to_json())
    else:
        write_text(path, ctx.json_text if ctx.json_text is not None else report.iter_json())


def write_junit(report, path: str, ctx: OutputContext) -> None:
    """JUnit XML, one test case per fitted placement."""
    from bomcheck.render.junit import junit_xml

    write_text(path, junit_xml(report, warn_as=ctx.warn_as))


def write_markdown(report, path: str, ctx: OutputContext) -> None:
    """The Markdown summary of an audit or of a substitute check."""
    if report is None:
        from bomcheck.render.substitute_md import substitute_markdown

        write_text(path, substitute_markdown(ctx.substitutes))
    else:
        from bomcheck.render.markdown import markdown_summary

        write_text(path, markdown_summary(report, diff=ctx.diff))


def write_csv(report, path: str, ctx: OutputContext) -> None:
    """One CSV row per fitted placement."""
    from bomcheck.render.csvrows import csv_rows

    write_text(path, csv_rows(report))


def write_xlsx(report, path: str, ctx: OutputContext) -> None:
    """The reviewer's workbook, or the Substitutes workbook."""
    if report is None:
        from bomcheck.render.xlsx_substitutes import write_substitute_workbook

        write_substitute_workbook(ctx.substitutes, path)
    else:
        from bomcheck.render.xlsx import write_workbook

        write_workbook(report, path)


def write_html(report, path: str, ctx: OutputContext) -> None:
    """The self-contained HTML report."""
    from bomcheck.render.html import audit_html, substitute_html

    if report is None:
        write_text(path, substitute_html(ctx.substitutes))
    else:
        write_text(path, audit_html(report))


def write_sarif(report, path: str, ctx: OutputContext) -> None:
    """SARIF 2.1.0, one result per verdict that is not a pass."""
    from bomcheck.render.sarif import sarif_json

    write_text(path, sarif_json(report))


def write_annotations(report, path: str, ctx: OutputContext) -> None:
    """CI workflow annotations on standard output (``path`` is ignored)."""
    from bomcheck.render.sarif import annotations

    out = sys.stdout
    for line in annotations(report):
        out.write(line.encode("utf-8", "replace").decode("utf-8") + "\n")
    out.flush()
