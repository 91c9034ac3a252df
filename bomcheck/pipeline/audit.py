"""The whole pipeline in one library call: read -> parse -> stresses -> evaluate -> report value.

The CLI and library users call ``run_audit``; renderers take the returned ``Report`` and never
recompute anything.
"""

from __future__ import annotations

import dataclasses
from dataclasses import field
from datetime import date

import numpy as np
import pandas as pd

from bomcheck import __version__
from bomcheck.evaluate import engine, rules, sources
from bomcheck.evaluate.columns import object_codes, wide_table_edits
from bomcheck.evaluate.waivers import apply_waivers, load_waivers
from bomcheck.frozen import frozen
from bomcheck.parse import design as design_mod
from bomcheck.parse import importer
from bomcheck.parse import parts as parts_mod
from bomcheck.parse.design_cells import InputWarning
from bomcheck.report.model import CAUTIONS, Report, ruleset_summary
from bomcheck.status import RANK, STATUS_ORDER
from bomcheck.stress import circuit
from bomcheck.stress import placement as stresses
from bomcheck.vocabulary import REQUIRED_FAMILIES

# Verdict ids the audit itself gives (not from a rule file): data problems, never a silent pass.
NO_DESIGN_ROW = "design.missing"
NO_FAMILY_RULE = "rules.no-{family}-rule"
BOM_FINDING = "bom.{code}"


@frozen
class AuditOptions:
    """What to audit with: rule sets (names or paths), import options and the design sheet's sheet."""

    rules: tuple[str, ...] = ()
    import_options: object | None = None  # bomcheck.parse.importer.ImportOptions
    design_sheet: str | int | None = None
    extra_inputs: tuple[tuple[str, str], ...] = field(default_factory=tuple)
    waivers: str | None = None  # waiver file (TOML or CSV), see bomcheck.evaluate.waivers
    today: date | None = None  # the day waiver expiry is judged on (default: the clock's)
    parts: str | None = None  # parts file keyed by MPN (CSV, XLSX or TOML), see bomcheck.parse.parts
    environment: str = "severe"  # rules.ENVIRONMENTS: which column of environment limits fails
    parts_override: bool = False  # parts data replace the BOM text (else the conservative wins)


def stress_data(ruleset):
    """The rule set's assumed data (generic DC-bias curves, aging rates) for the stress stage."""
    kwargs: dict = {}
    bias = ruleset.dc_bias
    if bias is not None:
        curves = {"default": (tuple(bias.xs), tuple(bias.ys))}
        curves.update({name.upper(): (tuple(xs), tuple(ys)) for name, xs, ys in bias.packages})
        kwargs["dc_bias"] = curves
    aging = ruleset.aging
    if aging is not None:
        rates = {code.upper(): k for code, k in aging.k_by_dielectric}
        rates.update({f"class{cls}": k for cls, k in aging.k_by_class})
        kwargs["aging_k"] = rates
        kwargs["aging_t0_h"] = aging.t0_h
    if ruleset.typical is not None:
        kwargs["typical_temp_max_c"] = dict(ruleset.typical.temp_max_c)
        kwargs["lowest_temp_max_c"] = dict(ruleset.typical.lowest_temp_max_c)
    return stresses.StressData(**kwargs)


def _families_missing(table: pd.DataFrame, rule_verdicts: pd.DataFrame,
                      ruleset) -> dict[str, np.ndarray]:
    """Per required check family, the placements no derating rule of that family applies to
    (backstop rules do not count)."""
    family_of = {r.id: r.family for r in ruleset.enabled_rules if not r.backstop}
    codes, ids = _codes(rule_verdicts, "rule_id")
    families = [family_of.get(rule_id) for rule_id in ids]
    pidx = rule_verdicts["pidx"].to_numpy(dtype=np.int64) if len(rule_verdicts) else codes
    out = {}
    for family in REQUIRED_FAMILIES:
        # per distinct rule id whether it is of the family (the last entry: no rule id)
        of_family = np.array([f == family for f in families] + [False], dtype=bool)
        covered = np.zeros(len(table), dtype=bool)
        covered[pidx[of_family[codes]]] = True
        if not covered.all():
            out[family] = np.flatnonzero(~covered)
    return out


def _codes(verdicts: pd.DataFrame, column: str) -> tuple[np.ndarray, list]:
    """(code per verdict, distinct values) of a verdict column: each distinct text looked up
    once, not once per verdict; code -1 for a missing value."""
    if not len(verdicts):
        return np.zeros(0, dtype=np.intp), []
    return object_codes(verdicts[column])


def _read_warnings(imported) -> tuple:
    """The BOM reader's warnings (hidden rows, columns or sheets skipped; lines in another
    encoding) as input warnings of the report, each naming the BOM file and its first row."""
    return tuple(InputWarning(str(imported.source.path), w.rows[0] if w.rows else None, None,
                              f"{w.code}: {w.message}")
                 for w in getattr(imported, "read_warnings", ()))


def _audit_verdicts(table: pd.DataFrame, rule_verdicts: pd.DataFrame,
                    import_findings, ruleset, stage_verdicts: pd.DataFrame) -> pd.DataFrame:
    """Add the audit's own verdicts: placements with no design row, no derating rule of a
    required family, and the importer's findings on a placement (quantity mismatch, column
    conflict) as warnings; and the circuit stage's ``stage_verdicts``. One sort by placement
    and rule id (stable: the rules' verdicts, the audit's, the stage's)."""
    refdes = table["refdes"].to_numpy(dtype=object)
    parts: list[tuple[np.ndarray, str, str, list[str], str]] = []

    def add(idx: np.ndarray, rule_id: str, status: str, messages, source: str) -> None:
        if len(idx):
            parts.append((idx, rule_id, status, messages, source))

    no_row = np.flatnonzero(table["condition_source"].isin(["none", "defaults"]).to_numpy())
    add(no_row, NO_DESIGN_ROW, "nodata",
        [f"{r}: not in the design sheet; no operating conditions beyond board-wide defaults"
         for r in refdes[no_row]], "design sheet")
    for family, idx in _families_missing(table, rule_verdicts, ruleset).items():
        tech = table["technology"].to_numpy(dtype=object)[idx]
        add(idx, NO_FAMILY_RULE.format(family=family), "nodata",
            [f"{r}: no {family} derating rule in force for {t or 'a part of unknown technology'}"
             "; a backstop (within the rating) is not a derating check: give the technology or "
             "add a rule" for r, t in zip(refdes[idx], tech)], "rule sets in force")
    if import_findings:  # each finding's placements looked up, not searched for
        of_refdes, of_row = _positions_of(refdes), _positions_of(table["row"].to_numpy())
    for f in import_findings:
        idx = of_refdes(f.refdes) if f.refdes else of_row(f.row)
        if not len(idx) and f.refdes:
            idx = of_row(f.row)
        add(idx, BOM_FINDING.format(code=f.code), f.severity,
            [f"{r}: {f.message}" for r in refdes[idx]], "BOM data")
    frames = [rule_verdicts, *([_with_basis(stage_verdicts)] if len(stage_verdicts) else [])]
    if len(frames) == 1 and not parts:
        return rule_verdicts
    if parts:  # one frame of the audit's own verdicts (not one per kind)
        frames.insert(1, _with_basis(_own_frame(parts, refdes)))
    out = pd.concat(frames, ignore_index=True)
    return out.take(_verdict_order(out)).reset_index(drop=True)


def _with_basis(verdicts: pd.DataFrame) -> pd.DataFrame:
    """Verdicts of the audit or a stage with their basis where they give none: no verdict is
    missing data, a finding on given data is firm (set on these few rows, not on the whole
    verdict table)."""
    basis = (verdicts["basis"].to_numpy(dtype=object) if "basis" in verdicts
             else np.full(len(verdicts), np.nan, dtype=object))
    unset = pd.isna(basis)
    if not unset.any():
        return verdicts
    basis = basis.copy()
    basis[unset] = np.where(verdicts["status"].to_numpy(dtype=object)[unset] == "nodata",
                            "missing", "firm")
    return verdicts.assign(basis=pd.Series(basis, index=verdicts.index, dtype=object))


def _verdict_order(verdicts: pd.DataFrame) -> np.ndarray:
    """The rows of a verdict table by placement, then rule id, stable (as ``sort_values(["pidx",
    "rule_id"], kind="stable")``), sorted on one integer key: each distinct rule id ranked once."""
    codes, ids = object_codes(verdicts["rule_id"])
    rank = np.empty(len(ids) + 1, dtype=np.int64)
    rank[np.argsort(np.array(ids, dtype=object), kind="stable")] = np.arange(len(ids))
    rank[-1] = len(ids)  # a missing rule id last
    key = verdicts["pidx"].to_numpy(dtype=np.int64) * (len(ids) + 1) + rank[codes]
    return np.argsort(key, kind="stable")


def _positions_of(values: np.ndarray):
    """A look-up of the positions (ascending) where ``values`` holds a value: one grouping of
    the column, then a dictionary look-up per value asked for."""
    codes, uniques = pd.factorize(values)
    order = np.argsort(codes, kind="stable")
    bounds = np.searchsorted(codes[order], np.arange(len(uniques) + 1))
    group = {u: j for j, u in enumerate(uniques.tolist())}
    none = order[:0]

    def positions(value) -> np.ndarray:
        j = group.get(value)
        return none if j is None else order[bounds[j]:bounds[j + 1]]
    return positions


def _own_frame(parts: list[tuple[np.ndarray, str, str, list[str], str]],
               refdes: np.ndarray) -> pd.DataFrame:
    """The audit's own verdicts ((placements, rule id, status, messages, source) per kind) as
    one frame."""
    sizes = [len(idx) for idx, *_ in parts]

    def repeated(at: int) -> np.ndarray:
        return np.repeat(np.array([p[at] for p in parts], dtype=object), sizes)

    idx = np.concatenate([p[0] for p in parts])
    return pd.DataFrame({
        "pidx": idx, "refdes": refdes[idx], "rule_id": repeated(1), "status": repeated(2),
        "message": np.array([m for p in parts for m in p[3]], dtype=object),
        "source": repeated(4)}, copy=False)


def placement_status(verdicts: pd.DataFrame, n: int) -> np.ndarray:
    """Each placement's status: the worst of its verdicts (STATUS_ORDER); nodata when it has none."""
    worst = np.full(n, RANK["nodata"], dtype=np.int64)
    if len(verdicts):
        codes, statuses = _codes(verdicts, "status")
        if (codes < 0).any():
            raise ValueError("a verdict has no status")
        r = np.array([RANK[s] for s in statuses], dtype=np.int8)[codes]
        p = verdicts["pidx"].to_numpy(dtype=np.int64)
        best = np.full(n, -1, dtype=np.int8)
        np.maximum.at(best, p, r)
        worst = np.where(best >= 0, best, worst)
    return np.asarray(STATUS_ORDER, dtype=object)[worst]


@frozen
class Evaluated:
    """A placement table after the stress, circuit and evaluate stages."""

    table: pd.DataFrame  # metrics and ``status`` added
    verdicts: pd.DataFrame
    groups: tuple[dict, ...] = ()
    messages: engine.Messages | None = None  # renders the messages a lazy evaluation left out


def evaluate_table(table: pd.DataFrame, ruleset, *, parts=None, groups=None,
                   import_findings=(), lazy: bool = False) -> Evaluated:
    """The middle of the pipeline on a table of fitted placements (spec and condition columns):
    stresses, circuit-level stresses with parts data, rule verdicts, the audit's own verdicts and
    each placement's status. ``run_audit`` and the substitute check both call it. ``lazy``:
    the rules' passing verdicts carry no message (``Evaluated.messages`` renders them)."""
    data = stress_data(ruleset)
    table = stresses.compute(table.reset_index(drop=True), data)
    with wide_table_edits():  # the circuit stage adds a handful of columns one at a time
        run = circuit.apply(table, data, ruleset, parts=parts, groups=groups)
    table = run.table
    rule_verdicts, messages = engine.evaluate_lazily(table, ruleset, passes=not lazy)
    verdicts = _audit_verdicts(table, rule_verdicts, import_findings, ruleset, run.verdicts)
    # The audit's own verdicts: no verdict is missing data; a finding on given data is firm.
    basis = verdicts["basis"].to_numpy(dtype=object)
    unset = pd.isna(basis)
    if unset.any():  # only those few rows are compared and written
        basis = basis.copy()
        basis[unset] = np.where(verdicts["status"].to_numpy(dtype=object)[unset] == "nodata",
                                "missing", "firm")
        verdicts["basis"] = pd.Series(basis, index=verdicts.index, dtype=object)
    # A stress is reported only where a rule gave the placement a verdict on it (or on what it
    # feeds); new columns only below, the stages never write in place.
    table = engine.without_unverdicted(table, verdicts, ruleset)
    status = pd.Series(placement_status(verdicts, len(table)), index=table.index, name="status")
    table = table.drop(columns=["status"]) if "status" in table else table.copy(deep=False)
    with wide_table_edits():
        table["status"] = status
    return Evaluated(table, verdicts, run.groups, messages if lazy else None)


def load_ruleset(names: tuple[str, ...] = (), environment: str = "severe") -> rules.RuleSet:
    """The rule sets in force: ``names`` (names or paths; the default set when empty) judged
    for ``environment`` (``rules.ENVIRONMENTS``). The audit and the substitute check both call it."""
    return rules.load_rules(names or (rules.DEFAULT_RULESET,)).for_environment(environment)


def placement_table(placements: pd.DataFrame, design) -> pd.DataFrame:
    """The fitted placements joined to their design-sheet conditions (``design`` None: no
    conditions, ``condition_source`` "none"), the table the stress stage takes. The audit and the
    substitute check both build it here."""
    fitted = placements[placements["fitted"].astype(bool)].reset_index(drop=True)
    if design is not None:
        conditions = design.for_placements(fitted["refdes"]).reset_index(drop=True)
    else:
        conditions = pd.DataFrame({"condition_source": ["none"] * len(fitted)})
    return pd.concat([fitted, conditions.drop(columns=[c for c in conditions if c in fitted])],
                     axis=1)


def run_audit(bom_path: str, design_path: str | None, options: AuditOptions = AuditOptions()) -> Report:
    """Audit every fitted capacitor placement of ``bom_path`` under the design sheet's conditions."""
    imported = importer.read_bom(bom_path, options.import_options or importer.ImportOptions())
    design = (design_mod.read_design(design_path, sheet=options.design_sheet)
              if design_path is not None else None)
    return audit_with_files(imported, design, options)


def audit_with_files(imported, design, options: AuditOptions = AuditOptions()) -> Report:
    """``audit_inputs`` with the parts data and waivers that ``options`` names read from their
    files (the BOM and design sheet already read, from files or from tables in memory)."""
    part_data = (parts_mod.read_parts(options.parts, override=options.parts_override)
                 if options.parts else None)
    report = audit_inputs(imported, design, part_data, options)
    if options.waivers:
        report = apply_waivers(report, load_waivers(options.waivers), options.today or date.today())
    return report


def audit_inputs(imported, design=None, part_data=None,
                 options: AuditOptions = AuditOptions()) -> Report:
    """The audit of inputs already read: an ``importer.ImportResult``, a ``design.Design`` (or
    None: no operating conditions, every placement "nodata") and a ``parts.PartsData`` (or None).
    Pure: reads no file (the rule sets are loaded by name or path from ``options``)."""
    ruleset = load_ruleset(options.rules, options.environment)
    placements = imported.placements
    not_fitted = placements[~placements["fitted"]].reset_index(drop=True)
    table, inputs, design_unmatched = _joined(imported, design)
    if part_data is not None:
        inputs.append({"role": "parts", "path": str(part_data.path), "sha256": part_data.sha256})
    approved = imported.sources
    with_sources = bool(len(approved) and (approved["source"] > 0).any() and len(table))

    def evaluate(placements: pd.DataFrame, lazy: bool = False) -> Evaluated:
        return evaluate_table(placements, ruleset, parts=part_data,
                              groups=design.groups if design is not None else None,
                              import_findings=imported.findings, lazy=lazy)

    # Passing verdicts' messages are rendered only when an output prints them; approved sources
    # rewrite every message of their verdicts, so they are built at once there.
    done = evaluate(table, lazy=not with_sources)
    source_status = None
    if with_sources:
        done_table, verdicts, source_status = sources.audit_sources(
            table, done, approved, evaluate,
            lambda text: importer.spec_from_cells({"description": text})[0])
        done = Evaluated(done_table, verdicts, done.groups)
    return _report(imported, done, ruleset, not_fitted, inputs, design_unmatched,
                   source_status, design, part_data)


def _joined(imported, design) -> tuple[pd.DataFrame, list[dict], list[dict]]:
    """(the fitted placements with their design conditions, the inputs' entries, the design
    rows the BOM lacks)."""
    placements = imported.placements
    inputs = [{"role": "bom", "path": str(imported.source.path),
               "sha256": imported.source.sha256}]
    design_unmatched: list[dict] = []
    if design is not None:
        inputs.append({"role": "design", "path": str(design.path), "sha256": design.sha256})
        for refdes, row in design.unmatched(placements["refdes"]):
            design_unmatched.append({
                "refdes": refdes, "row": row, "status": "nodata",
                "reason": f"{refdes} (design sheet row {row}) is not in the BOM",
            })
    return placement_table(placements, design), inputs, design_unmatched


def _report(imported, done: Evaluated, ruleset, not_fitted: pd.DataFrame, inputs: list[dict],
            design_unmatched: list[dict], source_status, design, part_data) -> Report:
    """The report value of an evaluated audit."""
    table, verdicts = done.table, done.verdicts
    counts = table["status"].value_counts()
    totals = dict(imported.totals)
    totals.update({"audited": int(len(table)), "design_unmatched": len(design_unmatched)})
    totals.update({s: int(counts.get(s, 0)) for s in STATUS_ORDER})
    report = Report(
        tool_version=__version__,
        rulesets=ruleset_summary(ruleset),
        inputs=tuple(inputs),
        table=table,
        verdicts=verdicts,
        not_fitted=not_fitted,
        skipped=imported.skipped,
        import_findings=tuple(imported.findings),
        design_unmatched=tuple(design_unmatched),
        totals=totals,
        rules=ruleset,
        groups=done.groups,
        environment=ruleset.environment,
        source_status=source_status,
        input_warnings=tuple(sorted(
            (*_read_warnings(imported), *(design.warnings if design is not None else ()),
             *(part_data.warnings if part_data is not None else ())))),
        messages=done.messages,
    )
    # The safety cautions quote a flagged verdict's message: those few are rendered.
    safety = verdicts["rule_id"].isin(
        [r.id for r in ruleset.rules if r.metric in circuit.SAFETY_METRICS]).to_numpy()
    flagged = report.with_messages(verdicts[safety], passes=False)
    return dataclasses.replace(
        report, cautions=CAUTIONS + circuit.safety_cautions(flagged, ruleset))
