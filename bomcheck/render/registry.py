"""Report stage, the one registry of outputs: name -> option, help and writer, read by the CLI and
by ``[tool.bomcheck]``.

Adding an output is one ``Output`` entry: ``bomcheck audit`` (and ``substitute`` when listed)
gets the option ``--NAME``, ``[tool.bomcheck]`` gets the key ``NAME``, and the writer is
imported only when the output is asked for, so ``bomcheck --help`` stays light. A writer takes
the report, the path (``-`` for standard output where allowed) and an ``OutputContext``.
"""

from __future__ import annotations

from collections.abc import Callable
from importlib import import_module
from typing import Any

from bomcheck.errors import InputError
from bomcheck.frozen import frozen


@frozen
class OutputContext:
    """What a writer may need besides the report: JUnit's warning mapping, the comparison with a
    baseline, the JSON text when already built, and the substitute check's result."""

    warn_as: str = "failure"
    diff: Any = None
    json_text: str | None = None
    substitutes: Any = None


@frozen
class Output:
    """One output: ``kind`` "file" (``--NAME OUT``) or "flag" (``--NAME``, printed on standard
    output); ``writer`` is ``module:function``; ``stdout`` whether ``-`` may name standard
    output; ``commands`` the commands offering it."""

    name: str
    kind: str
    metavar: str
    help: str
    writer: str
    stdout: bool = True
    commands: tuple[str, ...] = ("audit",)

    def load(self) -> Callable[..., None]:
        """The writer function (imports its module)."""
        module, func = self.writer.split(":")
        try:
            return getattr(import_module(module), func)
        except ImportError as exc:
            raise InputError(f"--{self.name} is not available in this installation ({exc})") \
                from None


OUTPUTS: dict[str, Output] = {o.name: o for o in (
    Output("json", "file", "OUT", "write the JSON report to OUT ('-' for stdout)",
           "bomcheck.render.writers:write_json", commands=("audit", "substitute")),
    Output("junit", "file", "OUT.xml", "write JUnit XML: one test case per fitted placement",
           "bomcheck.render.writers:write_junit"),
    Output("markdown", "file", "OUT", "write a Markdown summary (for a pull-request comment; "
           "'-' for stdout)", "bomcheck.render.writers:write_markdown",
           commands=("audit", "substitute")),
    Output("csv", "file", "OUT", "write one CSV row per fitted placement",
           "bomcheck.render.writers:write_csv"),
    Output("xlsx", "file", "OUT", "write the reviewer's workbook (.xlsx)",
           "bomcheck.render.writers:write_xlsx", stdout=False, commands=("audit", "substitute")),
    Output("html", "file", "OUT.html", "write a self-contained HTML report (one file, no "
           "network; prints as a signed record)", "bomcheck.render.writers:write_html",
           commands=("audit", "substitute")),
    Output("sarif", "file", "OUT.sarif", "write SARIF 2.1.0: each finding pinned to its BOM "
           "line (code-review annotations)", "bomcheck.render.writers:write_sarif"),
    Output("annotations", "flag", "", "print one CI workflow annotation per finding on "
           "stdout (::error for fail, ::warning for warn and nodata)",
           "bomcheck.render.writers:write_annotations"),
)}


def for_command(command: str) -> list[Output]:
    """The outputs a command offers, in the order they are written."""
    return [o for o in OUTPUTS.values() if command in o.commands]


def file_outputs() -> tuple[str, ...]:
    """Names of the outputs written to a file (their config values are paths)."""
    return tuple(o.name for o in OUTPUTS.values() if o.kind == "file")


def flag_outputs() -> tuple[str, ...]:
    """Names of the outputs switched on by a flag (their config values are true/false)."""
    return tuple(o.name for o in OUTPUTS.values() if o.kind == "flag")
