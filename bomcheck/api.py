"""The library's public calls: audit and substitute from files or from tables in memory, import,
parse, rule sets, comparison of reports, where-used, batch, and writing any registered output.

The command line calls these functions and no other part of the stages (it prints with the
terminal renderer, ``bomcheck.render.terminal``). Everything here returns values; nothing prints.
This module loads the stages (pandas among them): ``import bomcheck`` imports it on first use only.
When a stage module moves, only the imports below change.
"""

from __future__ import annotations

import json
import sys
from collections.abc import Callable, Iterable, Mapping, Sequence
from dataclasses import replace
from pathlib import Path
from typing import TYPE_CHECKING, Any

import pandas as pd

from bomcheck import __version__
from bomcheck.errors import InputError
from bomcheck.evaluate import rules as _rules
from bomcheck.evaluate.rule_model import RuleSet
from bomcheck.evaluate.rules import DEFAULT_RULESET
from bomcheck.parse import design as _design
from bomcheck.parse import importer as _importer
from bomcheck.parse import parts as _parts
from bomcheck.parse.importer import ImportOptions, ImportResult
from bomcheck.parse.refdes import expand
from bomcheck.parse.values import parse_value
from bomcheck.pipeline import batch as _batch
from bomcheck.pipeline.audit import AuditOptions, audit_with_files, run_audit
from bomcheck.pipeline.batch import BoardResult
from bomcheck.read.limits import MIB, Limits, use_limits
from bomcheck.read.reader import read_bytes
from bomcheck.render.outfiles import output_lock, write_text
from bomcheck.render.registry import OUTPUTS, OutputContext
from bomcheck.render import batch_out as _batch_out
from bomcheck.render.csvrows import uses_csv
from bomcheck.render.markdown import diff_markdown as _diff_markdown
from bomcheck.report.jsontext import json_dumps
from bomcheck.report import diff as _diff
from bomcheck.report.diff import Diff
from bomcheck.report.model import SPEC_FIELDS, Report, _records
from bomcheck.report.whereused import Use, where_used
from bomcheck.spec import CapSpec
from bomcheck.status import at_least, worst
# The substitute check loads on its first use (through its package's names), not on every run.
from bomcheck import substitute as _substitute

if TYPE_CHECKING:  # pragma: no cover
    from bomcheck.substitute import (Alternate, SubstituteOptions, SubstituteResult,
                                     read_alternates)

# The substitute check's names this module offers, from ``bomcheck.substitute`` on first use.
_SUBSTITUTE_NAMES = ("Alternate", "SubstituteOptions", "SubstituteResult", "read_alternates")

__all__ = [
    "DEFAULT_RULESET", "Alternate", "AuditOptions", "BoardResult", "CapSpec", "Diff",
    "ImportOptions", "ImportResult", "Limits", "MIB", "Report", "RuleSet", "SubstituteOptions",
    "SubstituteResult", "Use", "at_least", "audit_files", "audit_frames", "audit_manifest",
    "batch_outputs", "batch_status", "check_substitutes", "diff", "diff_markdown",
    "diff_summary", "import_file", "import_frame", "import_record", "json_text", "parse_value",
    "read_alternates", "read_report", "rules", "ruleset_names", "substitute_direct",
    "substitute_files", "substitute_frames", "use_limits", "uses_csv", "where_used", "write",
    "write_outputs", "write_text",
]

# Columns of ``bomcheck import --json``: a placement's place in the BOM, then its spec.
IMPORT_COLUMNS = ("refdes", "row", "fitted", "not_fitted_reason", "text", "value_text",
                  "description", "mpn", "manufacturer", "qty")


def __getattr__(name: str) -> Any:
    if name in _SUBSTITUTE_NAMES:
        value = getattr(_substitute, name)
        globals()[name] = value
        return value
    raise AttributeError(f"module 'bomcheck.api' has no attribute {name!r}")


def _path(value: str | Path | None) -> str | None:
    return None if value is None else str(value)


# --------------------------------------------------------------------------------------------
# Reading a BOM (value text: ``parse_value``, from the parse stage as it is).

def import_file(bom: str | Path, options: ImportOptions = ImportOptions()) -> ImportResult:
    """A BOM file (CSV, TSV, XLSX, XLS, ODS; ``-`` for standard input) read into placements, rows
    not taken, findings and the totals line."""
    return _importer.read_bom(str(bom), options)


def import_frame(bom: pd.DataFrame, options: ImportOptions = ImportOptions(), *,
                 name: str = "<bom>") -> ImportResult:
    """A BOM already in memory (columns are the headers, cells text) read as ``import_file``
    reads a file; ``name`` stands for the file name in messages and reports."""
    return _importer.import_frame(bom, options, path=name)


def import_record(result: ImportResult) -> dict[str, Any]:
    """The JSON form of an import (``bomcheck import --json``): source, placements with their
    spec, rows not taken, findings and totals."""
    placements = [{**base, **spec} for base, spec in zip(
        _records(result.placements, IMPORT_COLUMNS), _records(result.placements, SPEC_FIELDS))]
    return {"source": result.source.to_dict(), "placements": placements,
            "skipped": _records(result.skipped, ("row", "kind", "reason", "text")),
            "findings": [f.to_dict() for f in result.findings], "totals": result.totals}


def json_text(value: Any) -> str:
    """Strict JSON text of a value (NaN and infinities as null), indented for reading."""
    return json_dumps(value, indent=2)


# --------------------------------------------------------------------------------------------
# Audit.

def audit_files(bom: str | Path, design: str | Path | None = None, *,
                options: AuditOptions = AuditOptions(), **option_values: Any) -> Report:
    """Audit a BOM file under a design sheet file (CSV, XLSX or TOML; None: no conditions, so
    every placement is "nodata"). Options come from ``options`` and/or keyword arguments of
    ``AuditOptions`` (``rules``, ``parts``, ``environment``, ``waivers``...)."""
    if option_values:
        options = replace(options, **option_values)
    return run_audit(str(bom), _path(design), options)


def audit_frames(bom: pd.DataFrame, design: pd.DataFrame | None = None, *,
                 options: AuditOptions = AuditOptions(), name: str = "<bom>",
                 **option_values: Any) -> Report:
    """Audit a BOM already in memory: ``bom`` is a DataFrame whose columns are the BOM's headers
    (``Designator``, ``Value``, ``Description``...) and whose cells are text; ``design`` likewise
    with the design sheet's headers (``refdes``, ``v_dc [V]``...). Rows are numbered as a file's
    would be (header in row 1). Parts data and waivers, when given in ``options``, are read from
    their files."""
    if option_values:
        options = replace(options, **option_values)
    imported, conditions = _frames(bom, design, options.import_options, name)
    return audit_with_files(imported, conditions, options)


def _frames(bom: pd.DataFrame, design: pd.DataFrame | None, import_options: Any,
            name: str) -> tuple[ImportResult, Any]:
    """A BOM and a design sheet in memory, read as their files would be."""
    imported = _importer.import_frame(bom, import_options or ImportOptions(), path=name)
    conditions = (_design.design_from_table(design, path=f"{name} design")
                  if design is not None else None)
    return imported, conditions


def audit_manifest(manifest: str | Path, options: AuditOptions = AuditOptions(),
                   outputs: Sequence[tuple[str, str]] = ()) -> tuple[BoardResult, ...]:
    """Audit every board of a TOML manifest on the worker processes and write the combined
    outputs (``(name, path)`` pairs, names among ``batch_outputs()``); one result per board, in
    manifest order. ``options`` holds what the boards share (rules, import options, day)."""
    unknown = [name for name, _ in outputs if name not in _batch_out.COMBINERS]
    if unknown:
        raise InputError(f"--{unknown[0]} is not available with --manifest", path=str(manifest),
                         expected="outputs " + ", ".join(f"--{k}" for k in _batch_out.COMBINERS))
    boards = _batch.read_manifest(str(manifest))
    with _batch.temporary_folder() as folder:
        results = _batch.run_batch(boards, options, tuple(k for k, _ in outputs), folder,
                                   _batch_out.board_piece)
        for kind, path in outputs:
            write_text(path, _batch_out.COMBINERS[kind](results, __version__))
    return results


def batch_outputs() -> tuple[str, ...]:
    """The outputs a batch audit writes (combined over its boards)."""
    return tuple(_batch_out.COMBINERS)


def batch_status(results: Iterable[BoardResult]) -> str:
    """The worst status of a batch's boards."""
    return worst(r.status for r in results)


# --------------------------------------------------------------------------------------------
# Substitute check.

def substitute_files(bom: str | Path, design: str | Path | None,
                     alternates: str | Path | Sequence[Alternate], *,
                     options: SubstituteOptions | None = None,
                     alternates_path: str | Path | None = None,
                     **option_values: Any) -> SubstituteResult:
    """Check approved alternates (an alternates file, or ``Alternate`` values, read from
    ``alternates_path`` when given) in every placement of the parts they replace, under the
    design sheet's conditions. Options as ``SubstituteOptions`` (default: its defaults) or its
    keyword arguments."""
    options = _substitute_options(options, option_values)
    if isinstance(alternates, (str, Path)):
        alternates_path, alternates = alternates, _substitute.read_alternates(str(alternates))
    return _substitute.run_substitute(str(bom), _path(design), list(alternates), options,
                               alternates_path=_path(alternates_path))


check_substitutes = substitute_files  # the name the README gave it first


def substitute_frames(bom: pd.DataFrame, design: pd.DataFrame | None,
                      alternates: Sequence[Alternate], *,
                      options: SubstituteOptions | None = None, name: str = "<bom>",
                      **option_values: Any) -> SubstituteResult:
    """``substitute_files`` for a BOM and a design sheet already in memory (as ``audit_frames``
    takes them); parts data, when ``options`` names a file, is read from it."""
    options = _substitute_options(options, option_values)
    imported, conditions = _frames(bom, design, options.import_options, name)
    part_data = (_parts.read_parts(options.parts, override=options.parts_override)
                 if options.parts else None)
    return _substitute.substitute_inputs(imported, conditions, part_data, alternates, options)


def substitute_direct(original: str, alternates: Sequence[Alternate], *,
                      design: str | Path | None = None, refdes: Iterable[str] = (),
                      conditions: Mapping[str, str] | None = None,
                      options: SubstituteOptions | None = None) -> SubstituteResult:
    """Check alternates for an original given only as text, at the designators ``refdes``
    (lists such as ``C1-C4`` expanded; default ``C1``) under the design sheet's conditions and/or
    ``conditions`` (design-sheet column -> text, e.g. ``{"v_dc": "12 V"}``; these win)."""
    names = [r for item in refdes for r in expand(item)]
    return _substitute.run_direct(original, list(alternates), _path(design), names, conditions,
                                  _substitute_options(options, {}))


def _substitute_options(options: SubstituteOptions | None,
                        option_values: dict[str, Any]) -> SubstituteOptions:
    """The options of a substitute check: ``options`` (None: the defaults) with the keyword
    arguments given."""
    options = _substitute.SubstituteOptions() if options is None else options
    return replace(options, **option_values) if option_values else options


# --------------------------------------------------------------------------------------------
# Rule sets, reports read back, comparison and where-used.

def ruleset_names() -> list[str]:
    """The names of the shipped rule sets (``DEFAULT_RULESET`` among them)."""
    return _rules.shipped_names()


def rules(names: str | Sequence[str] = (DEFAULT_RULESET,)) -> RuleSet:
    """Rule sets by shipped name or TOML path, merged in order (later ones override rules of the
    same id), validated."""
    return _rules.load_rules(names)


def read_report(path: str | Path, role: str = "audit") -> dict[str, Any]:
    """A JSON report written by ``bomcheck audit --json`` (single or batch), parsed; ``role``
    names it in messages ("baseline", "old"...)."""
    try:  # a regular file within the size limit, like every input
        text = read_bytes(str(path), f"{role} report").decode("utf-8")
    except UnicodeDecodeError:
        raise InputError(f"cannot read the {role} report: not UTF-8 text",
                         path=str(path)) from None
    try:
        data = json.loads(text)
    except json.JSONDecodeError as exc:
        raise InputError(f"the {role} report is not JSON ({exc.msg})", path=str(path),
                         row=exc.lineno, expected="the output of bomcheck audit --json") from None
    if not isinstance(data, dict) or not (isinstance(data.get("placements"), list)
                                          or isinstance(data.get("boards"), list)):
        raise InputError(f"the {role} report is not a bomcheck JSON report", path=str(path),
                         expected="the output of bomcheck audit --json")
    return data


def diff(old: dict[str, Any] | Report, new: dict[str, Any] | Report, *,
         old_label: str | None = None, new_label: str | None = None) -> Diff:
    """Two reports compared (parsed JSON reports, or ``Report`` values): verdicts new, resolved
    and changed, placements added and removed."""
    old_data, new_data = (_diff.report_digest(r) if isinstance(r, Report) else r
                          for r in (old, new))
    return _diff.compare(old_data, new_data, old_label=old_label, new_label=new_label)


def diff_summary(comparison: Diff) -> str:
    """One line of counts of a comparison ("2 new problems; verdicts: 3 new, ...")."""
    return _diff.summary_line(comparison)


def diff_markdown(comparison: Diff) -> str:
    """A comparison as Markdown (for a pull-request comment)."""
    return _diff_markdown(comparison)


# --------------------------------------------------------------------------------------------
# Outputs.

def write(value: Report | SubstituteResult, output: str, path: str | Path, *,
          warn_as: str = "failure", diff: Diff | None = None) -> None:
    """Write one registered output (``json``, ``html``, ``xlsx``, ``markdown``, ``junit``,
    ``csv``, ``sarif``, ``annotations``; see ``bomcheck.render.registry.OUTPUTS``) of an audit
    report or a substitute check to ``path`` (``-``: standard output where the output allows)."""
    write_outputs(value, [(output, str(path))], warn_as=warn_as, diff=diff)


def write_outputs(value: Report | SubstituteResult, outputs: Sequence[tuple[str, str]], *,
                  warn_as: str = "failure", diff: Diff | None = None,
                  on_output: Callable[[str, str], None] | None = None) -> None:
    """Write several outputs (``(name, path)`` pairs) under one output lock, each atomically;
    ``on_output(name, path)`` is called before each (a progress bar)."""
    unknown = [name for name, _ in outputs if name not in OUTPUTS]
    if unknown:
        raise ValueError(f"unknown output {unknown[0]!r}; expected one of: " + ", ".join(OUTPUTS))
    if _is_substitute_result(value):
        report, context = None, OutputContext(substitutes=value)
    else:
        report, context = value, OutputContext(warn_as=warn_as, diff=diff)
    with output_lock(path for _, path in outputs):
        for name, path in outputs:
            if on_output is not None:
                on_output(name, path)
            OUTPUTS[name].load()(report, path, context)


def _is_substitute_result(value: Any) -> bool:
    """True for a substitute check's result (its module is loaded once a check has run)."""
    result = sys.modules.get("bomcheck.substitute.result")
    return result is not None and isinstance(value, result.SubstituteResult)
