"""Stress stage, circuit level: a short driver over the registry of circuit stresses (series
stacks, banks, part DC bias, ripple heating, discharge, surge, life), from the design's groups
and the parts data.

Runs after ``bomcheck.stress.placement.compute``: the parts data is laid over the spec columns,
the stresses that change inputs run (series stacks give each member its worst-case share of the
stack voltage, banks share their ripple current, ripple heating raises the self-heating), the
placement stresses run again on the placements whose inputs changed, so that every existing rule
(voltage ratio, temperature, capacitance) sees them; then each stress adds its metrics of
``bomcheck.vocabulary``. Per placement everything is column arithmetic; groups (banks, stacks)
are handled one group at a time. The new columns are collected by name and joined once. No I/O.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from dataclasses import field
from typing import Any

import numpy as np
import pandas as pd

from bomcheck.frozen import frozen
from bomcheck.parse import parts_apply as parts_mod
from bomcheck.stress import banks, discharge, life, series, surge, thermal
from bomcheck.stress import placement as stresses
from bomcheck.stress.circuit_run import CircuitOptions, CircuitRun, finite
from bomcheck.stress.columns import by_rows, share_empty
from bomcheck.stress.series import SERIES_BALANCE  # noqa: F401 (the stage's own verdict id)

# Circuit metrics reported in each placement's JSON ``metrics`` where computed, with the parts
# values behind them (the node columns are in the report's ``groups`` for grouped placements).
JSON_FIELDS: tuple[str, ...] = (
    "energy_j", "shock_energy_j", "discharge_s", "discharge_ratio", "t_to_60v_s",
    "v_after_1s_v", "charge_after_5s_uc", "r_discharge_ohm", "surge_a", "surge_ratio",
    "series_r_ohm", "ripple_power_w", "ripple_rise_c", "ripple_allowed_a",
    "ripple_ratio", "life_est_h", "life_ratio", "v_share_cap_v", "v_share_dc_v",
    "bank_c_min_f", "bank_c_worst_f", "bank_c_margin", "dc_bias_keep", "esr_ohm",
    "ripple_rated_a", "ripple_rated_hz", "surge_rated_a", "life_l0_h", "life_t0_c", "leakage_a",
    "rth_c_per_w",
)
SAFETY_METRICS = frozenset({"shock_energy_j", "t_to_60v_s", "v_after_1s_v",
                            "charge_after_5s_uc", "discharge_ratio"})
# The columns the circuit stresses add, in the order the table carries them (after its own).
ADDED_COLUMNS: tuple[str, ...] = (
    "t_operating_c_basis", "voltage_ratio_basis", "voltage_ratio_note", "voltage_ratio_worst",
    "voltage_ratio_best", "c_max_f", "v_stored_v", "energy_j", "node_v", "node_c_f",
    "node_energy_j", "shock_energy_j", "r_discharge_ohm", "v_safe_used_v", "discharge_s",
    "t_to_60v_s", "v_after_1s_v", "charge_after_5s_uc", "discharge_ratio", "surge_a",
    "surge_ratio", "series_r_ohm", "ripple_power_w", "ripple_rise_c", "ripple_allowed_a",
    "ripple_ratio", "life_est_h", "life_ratio", "v_share_cap_v", "v_share_dc_v", "bank_c_min_f",
    "bank_c_worst_f", "bank_c_margin", "bank_c_margin_best", "bank_c_margin_worst",
    "life_ratio_basis", "t_operating_c_best", "temp_margin_c_best", "life_ratio_best",
    "ripple_ratio_basis", "bank_c_margin_basis",
)
# Rail and ripple columns the circuit stresses may rewrite: always numbers in the output.
_RAILS = ("v_dc", "v_dc_max", "v_ripple_pk", "v_transient_pk", "i_ripple_a")
_VERDICT_COLUMNS = ["pidx", "refdes", "rule_id", "status", "message", "source"]

Step = Callable[[CircuitRun], None]


@frozen
class CircuitStress:
    """One circuit stress: what it changes in the placements' inputs before the placement
    stresses run again (``inputs``), and the metric columns it adds after (``metrics``)."""

    name: str
    inputs: Step | None = None
    metrics: Step | None = None


def _part_dc_bias(run: CircuitRun) -> None:
    """DC bias from the part's own curve, at the applied voltage (series shares included). Past
    the curve's last point the part data says nothing: the generic curve and its bounds apply."""
    if run.parts is None or "dc_bias" not in run.parts.curves:
        return  # no part's own curve: the generic curve and its bounds apply
    applied = stresses.voltages(run.inputs())["applied_peak_v"]
    keep = parts_mod.curve_values(run.frame(("mpn", "capacitance_f")), run.parts, "dc_bias",
                                  pd.Series(applied, index=run.index), beyond=False).to_numpy()
    run.put("dc_bias_keep", np.where(np.isnan(keep), run.num("dc_bias_keep"), keep))


# In order: a stress reads what the ones before it changed or added.
STRESSES: tuple[CircuitStress, ...] = (
    CircuitStress("series stacks", series.divide, series.metrics),
    CircuitStress("banks", banks.share_ripple, banks.metrics),
    CircuitStress("part DC bias", _part_dc_bias),
    CircuitStress("ripple heating", thermal.heat, thermal.metrics),
    CircuitStress("discharge", metrics=discharge.metrics),
    CircuitStress("surge", metrics=surge.metrics),
    CircuitStress("life", metrics=life.metrics),
)


@frozen
class CircuitResult:
    """The placements with the circuit metrics, the group summaries for the report, and the
    stage's own verdicts (parts conflicts, series stacks without balancing data)."""

    table: pd.DataFrame
    groups: tuple[dict, ...] = ()
    verdicts: pd.DataFrame = field(default_factory=pd.DataFrame)


def apply(table: pd.DataFrame, data: Any, ruleset: Any = None, *,
          groups: Mapping[str, Any] | None = None, parts: Any = None) -> CircuitResult:
    """Circuit-level stresses on the stress stage's table (see the module docstring).

    ``data`` is the ``stresses.StressData`` the audit uses; ``groups`` the design's groups
    (``design.Group``: kind rail, bank or series); ``parts`` a ``parts.PartsData`` or None.
    Returns the table with the stress metrics recomputed on the circuit's inputs and the circuit
    metrics added.
    """
    run = _start(table, data, ruleset, dict(groups or {}), parts)
    for stress in STRESSES:
        if stress.inputs is not None:
            stress.inputs(run)
    _restress(run)
    for stress in STRESSES:
        if stress.metrics is not None:
            stress.metrics(run)
    return _finish(run)


def _start(table: pd.DataFrame, data: Any, ruleset: Any, groups: dict[str, Any],
           parts: Any) -> CircuitRun:
    """The run's columns: the table with the parts data laid over it (and its conflicts)."""
    discharge.check_bleeders(table, groups)
    columns, verdicts = None, []
    if parts is not None and len(parts.values):  # a parts file of a header only gives nothing
        columns, conflicts = parts_mod.lay_parts(table, parts)
        verdicts.append(conflicts)
    run = CircuitRun(table, data, CircuitOptions.from_ruleset(ruleset), groups, parts,
                     columns=dict(table.items()) if columns is None else columns,
                     verdicts=verdicts)
    for name in (*parts_mod.PART_COLUMNS, "dc_bias_keep"):
        if name not in run.columns:
            run.put(name, run.num(name))  # the run's one read-only column of NaN
    for name in _RAILS:
        run.put(name, run.num(name))
    return run


def _restress(run: CircuitRun) -> None:
    """The placement stresses again, on the placements whose inputs the circuit stresses changed
    (with the self-heating rise), their metric columns written back; the others keep theirs."""
    t_rise = run.shared["t_rise"]
    need = _inputs_changed(run, t_rise)
    if not need.any():
        return
    metrics = by_rows(lambda cols: stresses.metric_arrays(cols, run.data),
                      run.inputs(need, t_rise_c=t_rise[need]))
    for c, values in metrics.items():
        kind = values.dtype.kind
        if not (kind == "f" or c.endswith(("_basis", "_note"))):
            continue
        dtype = float if kind == "f" else object
        base = (pd.Series(run.columns[c]).to_numpy(dtype=dtype, copy=True) if c in run.columns
                else np.full(run.n, np.nan if kind == "f" else "", dtype=dtype))
        base[need] = values.astype(dtype)
        run.put(c, base)


def _inputs_changed(run: CircuitRun, t_rise: np.ndarray) -> np.ndarray:
    """True for the placements where an input of the placement stresses differs from the table
    they were computed on (NaN equals NaN; a column the table lacks counts as empty)."""
    changed = ~((run.num("t_rise_c") == t_rise) | (np.isnan(run.num("t_rise_c"))
                                                   & np.isnan(t_rise)))
    for c in stresses.INPUTS:
        if c == "t_rise_c" or c not in run.columns:
            continue
        after = run.columns[c]
        if c not in run.table.columns:
            changed |= ~pd.isna(_array(after))
            continue
        before = run.table[c]
        if _same_values(after, before):
            continue
        x, y = _array(after), before.to_numpy()
        if x.dtype.kind == "f" and y.dtype.kind == "f":
            same = (x == y) | (np.isnan(x) & np.isnan(y))
        else:
            after = pd.Series(after, index=run.index)
            same = (after.eq(before) | (after.isna() & before.isna())).to_numpy(dtype=bool)
        changed |= ~same
    return changed


def _array(values) -> np.ndarray:
    """A column (Series or array) as an array, without a copy."""
    return values.to_numpy() if isinstance(values, pd.Series) else np.asarray(values)


def _same_values(a, b: pd.Series) -> bool:
    """True when two columns are the same memory (a column the stresses left alone): no need to
    compare them value by value."""
    x = a.array if isinstance(a, pd.Series) else a
    y = b.array
    if x is y:
        return True
    x, y = np.asarray(x), np.asarray(y)
    return (x.dtype == y.dtype and x.shape == y.shape and x.strides == y.strides
            and x.__array_interface__["data"][0] == y.__array_interface__["data"][0])


def _finish(run: CircuitRun) -> CircuitResult:
    """The table (the added columns joined once, in ``ADDED_COLUMNS`` order), the group
    summaries and the verdicts."""
    refdes = pd.Series(run.columns["refdes"], index=run.index).to_numpy(dtype=object)
    for s in run.summaries:
        first = int(s["_pos"][0])
        s.update(energy_j=finite(run.num("node_energy_j")[first]),
                 r_discharge_ohm=finite(run.num("r_discharge_ohm")[first]),
                 discharge_s=finite(run.num("discharge_s")[first]),
                 surge_a=finite(run.group_array("surge_group")[first])
                 if s["kind"] == "series" else None)
        if s["kind"] == "series":
            s["shares"] = series.shares(run, s)
        del s["_pos"]
    extra = [v for v in (*run.verdicts, series.balance_verdicts(run, refdes)) if len(v)]
    verdicts = (pd.concat(extra, ignore_index=True) if extra else
                pd.DataFrame(columns=_VERDICT_COLUMNS))
    share_empty(run.columns, run.nan())  # the columns nothing was computed for keep no memory
    added = set(ADDED_COLUMNS)
    columns = {c: v for c, v in run.columns.items() if c not in added}
    columns.update((c, run.columns[c]) for c in ADDED_COLUMNS if c in run.columns)
    groups = sorted(run.summaries, key=lambda s: (s["row"], s["name"]))
    # One join, no copy of the columns (a placement table is large; nothing writes into it).
    table = pd.DataFrame(columns, index=run.index, copy=False)
    return CircuitResult(table, tuple(groups), verdicts)


def safety_cautions(verdicts: pd.DataFrame, ruleset: Any) -> tuple[str, ...]:
    """One caution per stored-energy or discharge rule that flagged placements, citing its clause
    and saying that local codes and licensed practice govern."""
    if ruleset is None or not len(verdicts):
        return ()
    out = []
    safety = sorted((r for r in ruleset.rules if r.metric in SAFETY_METRICS), key=lambda r: r.id)
    # Narrow once to the flagged safety verdicts, not once per rule over every verdict; then
    # only those few rows' ids, designators and messages are read (no sub-tables).
    rows = np.flatnonzero((verdicts["rule_id"].isin([r.id for r in safety])
                           & verdicts["status"].isin(["warn", "fail"])).to_numpy())
    if not len(rows):
        return ()
    ids = verdicts["rule_id"].to_numpy(dtype=object)[rows]
    designators = verdicts["refdes"].to_numpy(dtype=object)[rows]
    messages = verdicts["message"].to_numpy(dtype=object)[rows]
    for rule in safety:
        hit = ids == rule.id
        if not hit.any():
            continue
        refdes = list(dict.fromkeys(designators[hit].tolist()))
        first = str(messages[hit][0])
        # "C4: 400 V ... in 9.53 s > 5 s limit (technology; source)": the measured part only.
        measured = first.split(": ", 1)[-1].split(" limit (", 1)[0] + " limit"
        out.append(f"{rule.source}: {', '.join(refdes)}: {measured}. A caution from the cited "
                   "clause, not a compliance verdict: local electrical codes, the product's own "
                   "safety standard and licensed practice govern.")
    return tuple(out)


__all__ = ["ADDED_COLUMNS", "JSON_FIELDS", "SAFETY_METRICS", "STRESSES", "CircuitOptions",
           "CircuitResult", "CircuitStress", "apply", "safety_cautions"]
