"""The library's public calls: audit and substitute from files or from tables in memory, and
writing any registered output of a report. The command line calls these same functions.

Everything here returns values (``Report``, ``SubstituteResult``); nothing prints.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import replace
from pathlib import Path

import pandas as pd

from bomcheck.pipeline.audit import AuditOptions, audit_with_files, run_audit
from bomcheck.report.model import Report


def audit_files(bom: str | Path, design: str | Path | None = None, *,
          options: AuditOptions = AuditOptions(), **option_values) -> Report:
    """Audit a BOM file under a design sheet file (CSV, XLSX or TOML; None: no conditions, so
    every placement is "nodata"). Options come from ``options`` and/or keyword arguments of
    ``AuditOptions`` (``rules``, ``parts``, ``environment``, ``waivers``...)."""
    if option_values:
        options = replace(options, **option_values)
    return run_audit(str(bom), None if design is None else str(design), options)


def audit_frames(bom: pd.DataFrame, design: pd.DataFrame | None = None, *,
                 options: AuditOptions = AuditOptions(), name: str = "<bom>",
                 **option_values) -> Report:
    """Audit a BOM already in memory: ``bom`` is a DataFrame whose columns are the BOM's headers
    (``Designator``, ``Value``, ``Description``...) and whose cells are text; ``design`` likewise
    with the design sheet's headers (``refdes``, ``v_dc [V]``...). Rows are numbered as a file's
    would be (header in row 1). Parts data and waivers, when given in ``options``, are read from
    their files."""
    from bomcheck.parse import design as design_mod
    from bomcheck.parse import importer

    if option_values:
        options = replace(options, **option_values)
    imported = importer.import_frame(bom, options.import_options or importer.ImportOptions(),
                                     path=name)
    conditions = (design_mod.design_from_table(design, path=f"{name} design")
                  if design is not None else None)
    return audit_with_files(imported, conditions, options)


def check_substitutes(bom: str | Path, design: str | Path | None, alternates: str | Path | Sequence,
               **option_values):
    """Check approved alternates (an alternates file, or ``substitute.Alternate`` values) in
    every placement of the parts they replace; returns a ``substitute.SubstituteResult``."""
    from bomcheck import substitute as sub

    items = (sub.read_alternates(str(alternates)) if isinstance(alternates, (str, Path))
             else list(alternates))
    return sub.run_substitute(str(bom), None if design is None else str(design), items,
                              sub.SubstituteOptions(**option_values),
                              alternates_path=str(alternates) if isinstance(
                                  alternates, (str, Path)) else None)


def write(report: Report, output: str, path: str | Path, *, warn_as: str = "failure") -> None:
    """Write one registered output (``json``, ``html``, ``xlsx``, ``markdown``, ``junit``,
    ``csv``, ``sarif``; see ``bomcheck.render.registry.OUTPUTS``) of a report to ``path``."""
    from bomcheck.render.registry import OUTPUTS, OutputContext

    if output not in OUTPUTS:
        raise ValueError(f"unknown output {output!r}; expected one of: " + ", ".join(OUTPUTS))
    OUTPUTS[output].load()(report, str(path), OutputContext(warn_as=warn_as))
