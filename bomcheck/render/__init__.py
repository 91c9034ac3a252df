"""Renderers: terminal, Markdown, JUnit, CSV, SARIF, HTML, workbook, and the output registry."""
