"""Substitute check, after the parse stage: does a proposed alternate still pass in every placement
of the part it would replace?

For each original placement the table row of the alternate is built by replacing the spec columns
with the alternate's parsed spec (the importer's parser, and the parts-data entry when one is
given), keeping the placement's operating conditions; both rows then go through the same stages
as the audit (``bomcheck.pipeline.audit``: ``placement_table`` and ``evaluate_table``). Nothing is
recomputed by hand: the comparison reads the two verdict tables and the two spec rows and says,
per alternate, "drop-in", "review" or "rejected", with sentences purchasing can act on. Pure
apart from ``run_substitute`` and ``run_direct``, which read the input files (the alternates
file is read by ``bomcheck.substitute.alternates``).
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from typing import Any

import numpy as np
import pandas as pd

from bomcheck import __version__
from bomcheck.errors import InputError
from bomcheck.frozen import frozen
from bomcheck.parse import importer
from bomcheck.parse.design import design_from_table, read_design
from bomcheck.parse.linespec import SPEC_COLUMNS
from bomcheck.parse.parts import read_parts
from bomcheck.pipeline.audit import load_ruleset, placement_table
from bomcheck.read.reader import read_input
from bomcheck.report.model import ruleset_summary
from bomcheck.substitute.alternates import alternate_parts, merge_parts
from bomcheck.substitute.differences import differences
from bomcheck.substitute.reasons import Scene, merge_issues, verdict_issues
from bomcheck.substitute.result import (
    Alternate,
    AlternateResult,
    Issue,
    SubstituteOptions,
    SubstituteResult,
)
from bomcheck.substitute.table import (
    Proposed,
    Stages,
    direct_placements,
    evaluate,
    group_mates,
    match_original,
    proposed_spec,
    with_spec,
)
from bomcheck.substitute.verdicts import pair_verdicts, placement_checks


@frozen
class _Run:
    """What every alternate of one run is checked against: the audit's pre-stress table of the
    fitted placements, the stages and the options."""

    base: pd.DataFrame
    stages: Stages
    options: SubstituteOptions


@frozen
class _Target:
    """Where one alternate goes: how its original matched, the rows of ``_Run.base`` it is
    checked on (``subset``: the replaced placements and their bank or stack mates), the ones it
    replaces, and the original's designators that are not fitted."""

    alt: Alternate
    match: str
    subset: np.ndarray
    replaced: np.ndarray
    not_fitted: tuple[str, ...]


def check_alternates(base: pd.DataFrame, placements: pd.DataFrame,
                     requests: Sequence[tuple[Alternate, str, np.ndarray]], stages: Stages,
                     options: SubstituteOptions = SubstituteOptions()
                     ) -> tuple[AlternateResult, ...]:
    """Check each alternate in every fitted placement of its original.

    ``base`` is the audit's pre-stress table (``audit.placement_table``); ``placements`` every
    placement the BOM gave (fitted or not, for the original's not-fitted designators and for
    alternates named only by an MPN the BOM uses elsewhere); each request is (alternate, how the
    original matched, positions of the original in ``placements``).
    """
    run = _Run(base, stages, options)
    position = {r: i for i, r in enumerate(base["refdes"].astype(str).tolist())}
    all_refdes = placements["refdes"].astype(str).to_numpy(dtype=object)
    all_fitted = placements["fitted"].astype(bool).to_numpy()
    originals: dict[tuple[int, ...], tuple | None] = {}
    out = []
    for alt, match, hits in requests:
        refs, fitted_mask = all_refdes[hits], all_fitted[hits]
        replaced = np.array(sorted({position[r] for r in refs[fitted_mask] if r in position}),
                            dtype=np.int64)
        subset = np.union1d(replaced, group_mates(base, replaced, stages.groups))
        key = tuple(subset.tolist())
        if key not in originals:
            originals[key] = evaluate(base.iloc[subset], stages) if len(subset) else None
        target = _Target(alt, match, subset, replaced,
                         tuple(dict.fromkeys(refs[~fitted_mask].tolist())))
        out.append(_check_one(run, target, originals[key], proposed_spec(alt, placements)))
    return tuple(out)


def _check_one(run: _Run, t: _Target, original: tuple[pd.DataFrame, pd.DataFrame] | None,
               proposed: Proposed) -> AlternateResult:
    """The check of one alternate: its table evaluated beside the original's, the differences,
    the reasons and the verdict."""
    alt, base = t.alt, run.base
    original_text = str(base["text"].iat[int(t.replaced[0])]) if len(t.replaced) else ""
    if original is None:
        issue = Issue("review", "placements", "placements", t.not_fitted,
                      "the original has no fitted placement to check the alternate in")
        return AlternateResult(alt, t.match, (), t.not_fitted, original_text, proposed.text,
                               proposed.source, {}, _spec_view(proposed.spec), "review",
                               (issue,), (), ())
    o_table, o_verdicts = original
    local = np.searchsorted(t.subset, t.replaced)
    values = {**proposed.spec, "text": proposed.text, "value_text": proposed.value_text,
              "description": proposed.description, "mpn": alt.mpn,
              "manufacturer": alt.manufacturer}
    alt_input = with_spec(base.iloc[t.subset].reset_index(drop=True), local, values)
    parts = merge_parts(run.stages.parts, alternate_parts(alt))
    a_table, a_verdicts = evaluate(alt_input, run.stages, parts=parts)

    is_replaced = np.zeros(len(t.subset), dtype=bool)
    is_replaced[local] = True
    diffs = differences(o_table, a_table, local, alt, run.options)
    pairs = pair_verdicts(o_verdicts, a_verdicts, run.stages.ruleset)
    issues = verdict_issues(Scene.of(a_table, is_replaced, diffs, run.options), pairs)
    issues += [Issue(d.severity, "difference", d.field, d.refdes, d.text) for d in diffs]
    reasons = merge_issues(issues)
    severities = {i.severity for i in reasons}
    verdict = ("rejected" if "reject" in severities else
               "review" if "review" in severities else "drop-in")
    refdes = tuple(base["refdes"].astype(str).to_numpy(dtype=object)[t.replaced].tolist())
    return AlternateResult(alt, t.match, refdes, t.not_fitted, original_text, proposed.text,
                           proposed.source, _spec_view(o_table.iloc[int(local[0])].to_dict()),
                           _spec_view(a_table.iloc[int(local[0])].to_dict()), verdict, reasons,
                           tuple(diffs), placement_checks(o_table, a_table, pairs, is_replaced))


def _spec_view(rec: Mapping[str, Any]) -> dict:
    """The spec fields of a table row (after the parts data), JSON-ready."""
    out = {}
    for k in SPEC_COLUMNS:
        v = rec.get(k)
        if isinstance(v, tuple):
            v = list(v)
        elif isinstance(v, np.generic):
            v = v.item()
        if isinstance(v, float) and math.isnan(v):
            v = None
        out[k] = v if v is not pd.NA else None
    return out


# --------------------------------------------------------------------------------------------
# Running it on files.

def _inputs_and_stages(design_path: str | None, options: SubstituteOptions
                       ) -> tuple[Any, Stages, list[dict]]:
    """(design, stages, input records) for a run: the rule sets in force, the design sheet and
    the parts file that ``options`` name, read."""
    ruleset = load_ruleset(options.rules, options.environment)
    inputs: list[dict] = []
    design = None
    if design_path is not None:
        design = read_design(design_path, sheet=options.design_sheet)
        inputs.append({"role": "design", "path": str(design_path), "sha256": design.sha256})
    part_data = (read_parts(options.parts, override=options.parts_override)
                 if options.parts else None)
    if part_data is not None:
        inputs.append({"role": "parts", "path": str(options.parts), "sha256": part_data.sha256})
    stages = Stages.for_ruleset(ruleset, parts=part_data,
                                groups=design.groups if design is not None else None)
    return design, stages, inputs


def _result(ruleset: Any, inputs: Sequence[dict], results: Sequence[AlternateResult],
            options: SubstituteOptions) -> SubstituteResult:
    """The result value of a run, with the rule sets and inputs behind it."""
    return SubstituteResult(
        tool_version=__version__, rulesets=ruleset_summary(ruleset), inputs=tuple(inputs),
        options={"margin_drop_pp": options.margin_drop_pp,
                 "temp_margin_drop_c": options.temp_margin_drop_c},
        results=tuple(results))


def run_substitute(bom_path: str, design_path: str | None, alternates: Sequence[Alternate],
                   options: SubstituteOptions = SubstituteOptions(), *,
                   alternates_path: str | None = None) -> SubstituteResult:
    """Check every alternate against the BOM's placements of its original under the design
    sheet's conditions (the library call behind ``bomcheck substitute BOM``)."""
    design, stages, extra_inputs = _inputs_and_stages(design_path, options)
    imported = importer.read_bom(bom_path, options.import_options or importer.ImportOptions())
    inputs = [{"role": "bom", "path": str(bom_path), "sha256": imported.source.sha256},
              *extra_inputs]
    if alternates_path:
        inputs.append({"role": "alternates", "path": str(alternates_path),
                       "sha256": read_input(str(alternates_path), "alternates file")[1]})
    results = _check_placements(imported.placements, design, stages, alternates, options)
    return _result(stages.ruleset, inputs, results, options)


def _check_placements(placements: pd.DataFrame, design: Any, stages: Stages,
                      alternates: Sequence[Alternate], options: SubstituteOptions
                      ) -> tuple[AlternateResult, ...]:
    """Each alternate checked in the placements of its original (found among ``placements``)
    under the design sheet's conditions."""
    requests = [(alt, *match_original(alt, placements)) for alt in alternates]
    base = placement_table(placements, design)
    return check_alternates(base, placements, requests, stages, options)


def substitute_inputs(imported: Any, design: Any = None, part_data: Any = None,
                      alternates: Sequence[Alternate] = (),
                      options: SubstituteOptions = SubstituteOptions()) -> SubstituteResult:
    """The substitute check on inputs already read (as ``audit.audit_inputs`` takes them): an
    ``importer.ImportResult``, a ``design.Design`` (or None: no operating conditions) and a
    ``parts.PartsData`` (or None). Pure: reads no file (the rule sets are loaded by name or path
    from ``options``); the inputs are named by the paths the values carry."""
    ruleset = load_ruleset(options.rules, options.environment)
    stages = Stages.for_ruleset(ruleset, parts=part_data,
                                groups=design.groups if design is not None else None)
    inputs = [{"role": "bom", "path": str(imported.source.path),
               "sha256": imported.source.sha256}]
    if design is not None:
        inputs.append({"role": "design", "path": str(design.path), "sha256": design.sha256})
    if part_data is not None:
        inputs.append({"role": "parts", "path": str(part_data.path), "sha256": part_data.sha256})
    results = _check_placements(imported.placements, design, stages, alternates, options)
    return _result(ruleset, inputs, results, options)


def _with_inline_conditions(base: pd.DataFrame, refdes: list[str],
                            conditions: Mapping[str, str], from_design: bool) -> None:
    """Set the conditions given inline (design-sheet column -> text) on every row of ``base``,
    over the design sheet's (``from_design``) or as the only ones."""
    frame = pd.DataFrame({"refdes": refdes, **{k: [str(v)] * len(refdes)
                                               for k, v in conditions.items()}})
    try:
        inline = design_from_table(frame, path="command line").for_placements(
            pd.Series(refdes)).reset_index(drop=True)
    except InputError as exc:  # name the condition, not a row of a table nobody wrote
        raise InputError(f"inline condition {exc.column}: {exc.problem}", text=exc.text,
                         expected=exc.expected) from None
    for col in [c for c in conditions if c in inline]:
        base[col] = inline[col].to_numpy()
    if not from_design:
        for col in ("notes", "group", "design_row", "condition_source"):
            base[col] = inline[col].to_numpy()
    else:
        base["condition_source"] = "row"


def run_direct(original_text: str, alternates: Sequence[Alternate], design_path: str | None,
               refdes: Sequence[str], conditions: Mapping[str, str] | None = None,
               options: SubstituteOptions = SubstituteOptions()) -> SubstituteResult:
    """Check alternates for an original given as text, at the designators ``refdes`` under the
    design sheet's conditions and/or ``conditions`` given inline (design-sheet column -> text,
    e.g. ``{"v_dc": "12 V", "t_ambient_c": "85"}``; inline values win)."""
    design, stages, inputs = _inputs_and_stages(design_path, options)
    refdes = [r.strip().upper() for r in refdes if r.strip()] or ["C1"]
    placements = direct_placements(original_text, refdes)
    base = placement_table(placements, design)
    if conditions:
        _with_inline_conditions(base, refdes, conditions, design is not None)
    inputs.append({"role": "original", "path": "command line", "sha256": None})
    hits = np.arange(len(refdes))
    requests = [(alt, "direct", hits) for alt in alternates]
    results = check_alternates(base, placements, requests, stages, options)
    return _result(stages.ruleset, inputs, results, options)
