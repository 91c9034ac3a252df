"""Report stage, CI edge: the names of the former combined module of JUnit, Markdown and CSV.

Each output has its own module now (``render.junit``, ``render.markdown``, ``render.csvrows``)
and figures one formatter (``quantity.format_metric``); this module keeps the old names
importable for library callers and adds nothing of its own.
"""

from __future__ import annotations

from bomcheck.quantity import format_metric
from bomcheck.render.csvrows import CSV_COLUMNS, INJECTION_LEAD, csv_rows
from bomcheck.render.csvrows import cell as _cell
from bomcheck.render.junit import WARN_AS, junit_xml
from bomcheck.render.markdown import markdown_summary
from bomcheck.render.textsafe import md_text as _md

__all__ = ["CSV_COLUMNS", "INJECTION_LEAD", "WARN_AS", "_cell", "_md", "csv_rows",
           "format_metric", "junit_xml", "markdown_summary"]
