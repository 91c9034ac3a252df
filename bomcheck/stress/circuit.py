"""Stress stage, circuit level: series stacks, banks, stored energy and discharge, surge current,
ripple heating and electrolytic life, from the design's groups and the parts data.

Runs after ``bomcheck.stress.placement.compute``: the parts data is laid over the spec columns, series
stacks give each member its worst-case share of the stack voltage, ripple heating raises the
self-heating, and the stress stage is run again on those inputs so that every existing rule
(voltage ratio, temperature, capacitance) sees them; then the circuit metrics of
``bomcheck.vocabulary`` are added. Per placement everything is column arithmetic; groups
(banks, stacks) are handled one group at a time. No I/O.

The formulas are the textbook ones; the worked examples of the reference sheet (section 4) are
tested against the functions at the top of this module.
"""

from __future__ import annotations

import math
import re
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np
import pandas as pd

from bomcheck.errors import InputError
from bomcheck.stress.placement import num_column, text_column

# --------------------------------------------------------------------------------------------
# Formulas (arrays in, arrays out; SI units).


def energy_j(c_f: Any, v: Any) -> Any:
    """Stored energy E = 1/2 C V^2 (J)."""
    return 0.5 * np.asarray(c_f, dtype=float) * np.asarray(v, dtype=float) ** 2


def charge_c(c_f: Any, v: Any) -> Any:
    """Stored charge Q = C V (C)."""
    return np.asarray(c_f, dtype=float) * np.asarray(v, dtype=float)


def parallel_f(c_f: Sequence[float] | np.ndarray) -> float:
    """Capacitance of capacitors in parallel: the sum."""
    return float(np.sum(np.asarray(c_f, dtype=float)))


def series_f(c_f: Sequence[float] | np.ndarray) -> float:
    """Capacitance of capacitors in series: 1 / sum(1 / Ci)."""
    return float(1.0 / np.sum(1.0 / np.asarray(c_f, dtype=float)))


def series_share(v: float, c_f: Sequence[float] | np.ndarray) -> np.ndarray:
    """Capacitive division of ``v`` over capacitors in series: Vi = V x C_eq / Ci (equal charge)."""
    c = np.asarray(c_f, dtype=float)
    return v * series_f(c) / c


def series_share_worst_cap(v: float, c_f: Sequence[float] | np.ndarray,
                           tol_minus_pct: Sequence[float] | np.ndarray,
                           tol_plus_pct: Sequence[float] | np.ndarray) -> np.ndarray:
    """Each member's worst capacitive share of ``v``: that member at its minimum capacitance, every
    other at its maximum (the smallest capacitor takes the largest voltage)."""
    c = np.asarray(c_f, dtype=float)
    c_min = c * (1.0 - np.asarray(tol_minus_pct, dtype=float) / 100.0)
    c_max = c * (1.0 + np.asarray(tol_plus_pct, dtype=float) / 100.0)
    others = np.sum(1.0 / c_max) - 1.0 / c_max
    c_eq = 1.0 / (1.0 / c_min + others)
    return v * c_eq / c_min


def series_share_worst_dc(v: float, r_ohm: Sequence[float] | np.ndarray,
                          r_tol_pct: Sequence[float] | np.ndarray | float,
                          leakage_a: Sequence[float] | np.ndarray | float = 0.0) -> np.ndarray:
    """Each member's worst DC steady-state share of ``v``: capacitors block DC, so the balancing
    resistors and the leakage currents divide the voltage.

    Member i's resistor at its maximum and the others' at their minimum; member i leaking
    nothing and the others their full leakage current (each member modelled as its resistor in
    parallel with a constant leakage current): Vi = Ri (V + sum_j Rj Ij) / (Ri + sum_j Rj).
    """
    r = np.asarray(r_ohm, dtype=float)
    tol = np.broadcast_to(np.asarray(r_tol_pct, dtype=float), r.shape) / 100.0
    leak = np.broadcast_to(np.asarray(leakage_a, dtype=float), r.shape)
    r_max, r_min = r * (1.0 + tol), r * (1.0 - tol)
    others_r = np.sum(r_min) - r_min
    others_drop = np.sum(r_min * leak) - r_min * leak
    return r_max * (v + others_drop) / (r_max + others_r)


def discharge_time_s(r_ohm: Any, c_f: Any, v0: Any, v_safe: Any) -> Any:
    """Time to fall from ``v0`` to ``v_safe`` through ``r_ohm``: t = R C ln(V0 / V_safe); 0 where
    ``v0`` is already at or below ``v_safe``; NaN where the resistance is unknown."""
    r, c, v0, vs = (np.asarray(a, dtype=float) for a in (r_ohm, c_f, v0, v_safe))
    with np.errstate(divide="ignore", invalid="ignore"):
        t = r * c * np.log(v0 / vs)
    return np.where((v0 <= vs) & ~np.isnan(r), 0.0, t)


def discharge_r_max(t_s: float, c_f: float, v0: float, v_limit: float) -> float:
    """Largest discharge resistance that brings ``v0`` to ``v_limit`` within ``t_s``:
    R = t / (C ln(V0 / V_limit))."""
    return t_s / (c_f * math.log(v0 / v_limit))


def voltage_after(t_s: Any, r_ohm: Any, c_f: Any, v0: Any) -> Any:
    """Voltage ``t_s`` after disconnection: V(t) = V0 exp(-t / RC)."""
    r, c = np.asarray(r_ohm, dtype=float), np.asarray(c_f, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.asarray(v0, dtype=float) * np.exp(-np.asarray(t_s, dtype=float) / (r * c))


def surge_current_a(c_f: Any, slew_v_per_s: Any = np.nan, v: Any = np.nan,
                    r_source_ohm: Any = np.nan) -> Any:
    """Peak surge current at switch-on: i = C dV/dt where the slew rate is known, else the step
    V / R_source."""
    c, slew = np.asarray(c_f, dtype=float), np.asarray(slew_v_per_s, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        step = np.asarray(v, dtype=float) / np.asarray(r_source_ohm, dtype=float)
    return np.where(np.isnan(slew), step, c * slew)


def tantalum_min_series_r(v: Any, ohm_per_v: float = 0.1, floor_ohm: float = 1.0) -> Any:
    """Series circuit resistance solid tantalum asks for: the larger of ``ohm_per_v`` x V and
    ``floor_ohm`` (NASA EEE-INST-002 Section C1 Table 4 note 4)."""
    return np.fmax(ohm_per_v * np.asarray(v, dtype=float), floor_ohm)


def ripple_heating(i_rms_a: Any, esr_ohm: Any, rth_c_per_w: Any) -> tuple[Any, Any]:
    """(dissipation P = I^2 x ESR in W, temperature rise P x Rth in degC)."""
    p = np.asarray(i_rms_a, dtype=float) ** 2 * np.asarray(esr_ohm, dtype=float)
    return p, p * np.asarray(rth_c_per_w, dtype=float)


def can_thermal_resistance(d_mm: Any, l_mm: Any, beta_w_per_cm2_k: float) -> Any:
    """Thermal resistance of a cylindrical can, 1 / (beta x area), from dT = P / (beta x A);
    the area is the side and the top (the end on the board is left out)."""
    d, length = np.asarray(d_mm, dtype=float) / 10.0, np.asarray(l_mm, dtype=float) / 10.0
    area_cm2 = math.pi * d * length + math.pi * d ** 2 / 4.0
    return 1.0 / (beta_w_per_cm2_k * area_cm2)


def electrolytic_life_h(l0_h: Any, t0_c: Any, t_op_c: Any, ripple_rise_c: Any = 0.0, *,
                        ripple_factor: bool = False) -> Any:
    """Aluminium electrolytic life by the 10 degC rule, L = L0 x 2^((T0 - T)/10).

    With ``ripple_factor`` the ripple rise dT is taken out of ``t_op_c`` and counted by the
    trade's factor 2^(-dT/5) instead.
    """
    l0, t0, t_op = (np.asarray(a, dtype=float) for a in (l0_h, t0_c, t_op_c))
    if not ripple_factor:
        return l0 * 2.0 ** ((t0 - t_op) / 10.0)
    rise = np.nan_to_num(np.asarray(ripple_rise_c, dtype=float), nan=0.0)
    return l0 * 2.0 ** ((t0 - (t_op - rise)) / 10.0) * 2.0 ** (-rise / 5.0)


# --------------------------------------------------------------------------------------------
# Options from the rule set's [circuit] table.

ALUMINIUM = ("aluminium-electrolytic", "aluminium-polymer")
SHOCK_VOLTAGE_V = 100.0  # DOE electrical safety practice: shock hazard at 100 V and 10 J
SQRT2 = math.sqrt(2.0)
_CAN = re.compile(r"^\s*(\d+(?:\.\d+)?)\s*[xX\u00d7*]\s*(\d+(?:\.\d+)?)\s*(?:mm)?\s*$")


@dataclass(frozen=True)
class CircuitOptions:
    """Typical data and options of the circuit stresses (the rule set's ``[circuit]`` table)."""

    # IEC 60204-1 figure, where neither the design sheet nor the rule set gives a safe voltage.
    safe_voltage_v: float = 60.0
    life_ripple_factor: bool = False
    can_beta_w_per_cm2_k: float | None = None
    thermal_resistance_c_per_w: Mapping[str, float] = field(default_factory=dict)
    label: str = ""

    @classmethod
    def from_ruleset(cls, ruleset: Any) -> CircuitOptions:
        """Options of a loaded ``RuleSet`` (defaults where it has no ``[circuit]`` table)."""
        raw = getattr(ruleset, "circuit", None) or {}
        return cls(
            safe_voltage_v=float(raw.get("safe_voltage_v", 60.0)),
            life_ripple_factor=bool(raw.get("life_ripple_factor", False)),
            can_beta_w_per_cm2_k=raw.get("can_beta_w_per_cm2_k"),
            thermal_resistance_c_per_w={str(k).upper(): float(v) for k, v in
                                        raw.get("thermal_resistance_c_per_w", {}).items()},
            label=str(raw.get("label", "")),
        )

    def generic_rth(self, package: pd.Series) -> pd.Series:
        """Typical thermal resistance by case size: the table, else the can formula for a
        ``DxL`` package (mm); NaN where neither knows the case."""
        pk = package.astype(object).where(package.notna(), "").astype(str).str.strip()
        codes, uniques = pd.factorize(pk.to_numpy(dtype=object))
        values = np.full(len(uniques) + 1, np.nan)
        for k, u in enumerate(uniques):
            key = str(u).upper()
            if key in self.thermal_resistance_c_per_w:
                values[k] = self.thermal_resistance_c_per_w[key]
                continue
            m = _CAN.match(key)
            if m and self.can_beta_w_per_cm2_k:
                values[k] = float(can_thermal_resistance(float(m.group(1)), float(m.group(2)),
                                                         float(self.can_beta_w_per_cm2_k)))
        return pd.Series(values[codes], index=package.index)


# --------------------------------------------------------------------------------------------
# The stage.

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
SERIES_BALANCE = "circuit.series-balance"
_NEW_COLUMNS = (
    "c_max_f", "v_stored_v", "energy_j", "node_v", "node_c_f", "node_energy_j", "shock_energy_j",
    "r_discharge_ohm", "v_safe_used_v", "discharge_s", "discharge_ratio", "t_to_60v_s",
    "v_after_1s_v", "charge_after_5s_uc", "surge_a", "surge_ratio", "series_r_ohm",
    "ripple_power_w", "ripple_rise_c", "ripple_allowed_a", "ripple_ratio",
    "life_est_h", "life_ratio", "v_share_cap_v", "v_share_dc_v", "bank_c_min_f",
    "bank_c_worst_f", "bank_c_margin", "bank_c_margin_best", "bank_c_margin_worst",
    "t_operating_c_best", "temp_margin_c_best", "life_ratio_best",
)


@dataclass(frozen=True)
class CircuitResult:
    """The placements with the circuit metrics, the group summaries for the report, and the
    stage's own verdicts (parts conflicts, series stacks without balancing data)."""

    table: pd.DataFrame
    groups: tuple[dict, ...] = ()
    verdicts: pd.DataFrame = field(default_factory=pd.DataFrame)


_col = num_column
_text = text_column


def _tolerances(table: pd.DataFrame, default_pct: float) -> tuple[pd.Series, pd.Series, pd.Series]:
    """(minus %, plus %, True where the default was assumed) of each placement's capacitance."""
    c = _col(table, "capacitance_f")
    by_abs = _col(table, "tol_abs_f") / c * 100.0
    minus = _col(table, "tol_minus_pct").fillna(by_abs)
    plus = _col(table, "tol_plus_pct").fillna(by_abs)
    assumed = minus.isna() | plus.isna()
    return minus.fillna(default_pct), plus.fillna(default_pct), assumed


def _parallel_r(a: float, b: float) -> float:
    if math.isnan(a):
        return b
    if math.isnan(b):
        return a
    return a * b / (a + b)


def _check_bleeders(table: pd.DataFrame, groups: Mapping[str, Any]) -> None:
    """A bleeder of 0 ohm (or less) is an input error, not a short: it would hold the capacitor
    at 0 V, which contradicts the voltage the design gives, and an empty cell, not 0, says there
    is no bleeder. Treating it as a short would report a 0 s discharge: a wrong pass."""
    bad: list[str] = []
    if "r_bleeder_ohm" in table.columns:
        r = pd.to_numeric(table["r_bleeder_ohm"], errors="coerce").to_numpy(dtype=float)
        for i in np.flatnonzero(r <= 0)[:5]:
            row = table["design_row"].iloc[i] if "design_row" in table.columns else None
            bad.append(f"{table['refdes'].iloc[i]}" + (f" (design row {int(row)})"
                                                      if row is not None and row == row else ""))
    for g in groups.values():
        v = dict(g.conditions).get("r_bleeder_ohm")
        if v is not None and v == v and v <= 0:
            bad.append(f"group {g.name}" + (f" (design row {g.row})" if g.row else ""))
    if bad:
        raise InputError(f"r_bleeder_ohm of 0 ohm or less for {', '.join(bad)}: a bleeder "
                         "that shorts the capacitor", column="r_bleeder_ohm",
                         expected="the bleeder's resistance above 0 ohm, or an empty cell when "
                                  "there is no bleeder")


def _finite(x: Any) -> float | None:
    """A JSON number: finite, the last-digit noise of the arithmetic dropped; else None."""
    x = float(x)
    return float(f"{x:.15g}") if math.isfinite(x) else None


def _members(group: Any, where: Mapping[str, int]) -> tuple[list[int], list[str], list[str]]:
    """(table positions, designators) of a group's fitted members, and the members not audited."""
    pos, fitted, missing = [], [], []
    for m in group.members:
        if m in where:
            pos.append(where[m])
            fitted.append(m)
        else:
            missing.append(m)
    return pos, fitted, missing


def apply(table: pd.DataFrame, data: Any, ruleset: Any = None, *,
          groups: Mapping[str, Any] | None = None, parts: Any = None) -> CircuitResult:
    """Circuit-level stresses on the stress stage's table (see the module docstring).

    ``data`` is the ``stresses.StressData`` the audit uses; ``groups`` the design's groups
    (``design.Group``: kind rail, bank or series); ``parts`` a ``parts.PartsData`` or None.
    Returns the table with the stress metrics recomputed on the circuit's inputs and the circuit
    metrics added.
    """
    from bomcheck.parse import parts_apply as parts_mod
    from bomcheck.stress import placement as stresses

    opts = CircuitOptions.from_ruleset(ruleset)
    groups = dict(groups or {})
    _check_bleeders(table, groups)
    t = table.copy(deep=False)  # every column changed below is replaced, never written in place
    extra: list[pd.DataFrame] = []
    changed = np.zeros(len(t), dtype=bool)  # placements whose stress inputs the stage changes
    if parts is not None and len(parts.values):  # a parts file of a header only gives nothing
        t, conflicts = parts_mod.apply_parts(t, parts)
        extra.append(conflicts)
        changed |= t["part_row"].notna().to_numpy()
    for name in (*parts_mod.PART_COLUMNS, "dc_bias_keep"):
        if name not in t.columns:
            t[name] = np.nan
    for name in ("v_dc", "v_dc_max", "v_ripple_pk", "v_transient_pk", "i_ripple_a"):
        t[name] = _col(t, name)
    design_rise = _col(t, "t_rise_c")

    minus, plus, tol_assumed = _tolerances(t, data.default_tol_pct)
    c_nom = _col(t, "capacitance_f")
    c_max = c_nom * (1.0 + plus / 100.0)
    stacks = [g for g in groups.values() if g.kind == "series"]
    banks = [g for g in groups.values() if g.kind == "bank"]
    where = ({r: i for i, r in enumerate(t["refdes"].astype(str).str.strip().str.upper())}
             if stacks or banks else {})
    n = len(t)
    share_cap = np.full(n, np.nan)
    share_dc = np.full(n, np.nan)
    share_generic = np.zeros(n, dtype=bool)
    share_best = np.full(n, np.nan)  # a member's share with the unknowns at their kindest
    share_worst = np.full(n, np.nan)  # and at their worst plausible, where there is one
    share_note = np.full(n, "", dtype=object)  # the unknowns behind a generic share
    node_v_group = np.full(n, np.nan)
    node_c_group = np.full(n, np.nan)
    r_dis_group = np.full(n, np.nan)
    surge_group = np.full(n, np.nan)
    r_source_group = np.full(n, np.nan)
    in_group = np.zeros(n, dtype=bool)
    summaries: list[dict] = []
    balance_missing: list[tuple[int, str]] = []

    # Series stacks: each member's worst share, before the stress stage sees the voltages.
    for g in stacks:
        pos, fitted, missing = _members(g, where)
        if not pos:
            continue
        gc = dict(g.conditions)
        p = np.asarray(pos)
        v_dc = gc.get("v_dc", np.nan)
        # The rail's tolerance: the group's own, else what reaches the members (board defaults).
        member_tol = _col(t, "v_tol_pct").to_numpy()[p]
        member_tol = float(np.max(member_tol[np.isfinite(member_tol)])) if np.isfinite(
            member_tol).any() else 0.0
        # The stack's upper bound is never below |v_dc| (a lower v_dc_max contradicts it).
        upper = float(np.fmax(abs(gc.get("v_dc_max", np.nan)),
                              abs(v_dc) * (1.0 + gc.get("v_tol_pct", member_tol) / 100.0)))
        ripple = gc.get("v_ripple_pk", 0.0)
        c = c_nom.to_numpy()[p]
        cmax = c_max.to_numpy()[p]
        k = series_share_worst_cap(1.0, c, minus.to_numpy()[p], plus.to_numpy()[p])
        cap = upper * k
        r = _col(t, "r_balance_ohm").to_numpy()[p]
        r_tol = _col(t, "r_balance_tol_pct").to_numpy()[p]
        leak = _col(t, "leakage_a").to_numpy()[p]
        has_r = bool(np.isfinite(r).all())
        dc = (series_share_worst_dc(upper, r, np.nan_to_num(r_tol, nan=data.default_tol_pct),
                                    np.nan_to_num(leak, nan=0.0))
              if has_r else np.full(len(p), np.nan))
        share_cap[p], share_dc[p] = cap, dc
        # Kindest bounds of the unknowns: an assumed capacitor tolerance at none (the nominal
        # split), an unknown resistor tolerance at none, an unknown leakage at none.
        cap_best = np.where(tol_assumed.to_numpy()[p], upper * series_share(1.0, c), cap)
        dc_best = (series_share_worst_dc(upper, r, np.nan_to_num(r_tol, nan=0.0),
                                         np.nan_to_num(leak, nan=0.0))
                   if has_r else np.full(len(p), np.nan))
        share_best[p] = np.fmax(cap_best, dc_best) + ripple * series_share(1.0, c)
        changed[p] = True
        # A share is generic only where the governing one rests on an assumption: an assumed
        # capacitor tolerance for the capacitive share; an assumed resistor tolerance or an
        # unknown leakage (taken as none) for the DC share.
        dc_governs = has_r & ~(cap > dc)
        share_generic[p] = ((tol_assumed.to_numpy()[p] & ~dc_governs)
                            | (dc_governs & (np.isnan(r_tol) | np.isnan(leak))))
        # An aluminium electrolytic's unknown leakage at its worst plausible value, the limit
        # of IEC 60384-4 as common practice (0.01 C V in uA with C in uF and V in volts, or
        # 3 uA, whichever is greater), gives the worst share; a leakage unknown for another
        # technology has no published worst.
        alu_e = _text(t, "technology").to_numpy()[p] == "aluminium-electrolytic"
        leak_limit = np.fmax(0.01 * c * _col(t, "voltage_v").to_numpy()[p], 3e-6)
        leak_worst = np.where(np.isnan(leak) & alu_e, leak_limit, leak)
        if has_r and (np.isnan(leak) & alu_e).any():
            dc_worst = series_share_worst_dc(upper, r, np.nan_to_num(
                r_tol, nan=data.default_tol_pct), np.nan_to_num(leak_worst, nan=0.0))
            share_generic[p] |= dc_worst > np.fmax(cap, dc) * (1.0 + 1e-9)
            bounded = (~tol_assumed.to_numpy()[p] & ~np.isnan(r_tol)
                       & ~np.isnan(leak_worst).any())
            share_worst[p] = np.where(bounded, np.fmax(cap, dc_worst) + ripple * k, np.nan)
            unknown = np.isnan(leak) & alu_e
            share_note[p] = (
                f"series stack {g.name}: leakage not given for "
                f"{', '.join(np.asarray(fitted, dtype=object)[unknown])}, bounded by 0 A and the "
                "IEC 60384-4 limit 0.01 C V or 3 uA (common practice; "
                f"{', '.join(f'{x * 1e6:.4g} uA' for x in leak_limit[unknown])}): give the "
                "leakage in the parts data")
        if not math.isnan(upper):
            t.loc[t.index[p], "v_dc"] = v_dc * series_f(c) / c
            # One member of unknown capacitance leaves every capacitive share unknown: no data,
            # never the DC share alone.
            worst = np.fmax(cap, dc) if np.isfinite(cap).all() else np.full(len(p), np.nan)
            t.loc[t.index[p], "v_dc_max"] = worst
            t.loc[t.index[p], "v_ripple_pk"] = ripple * k
            if "v_transient_pk" in gc:  # a transient divides as the capacitances do
                t.loc[t.index[p], "v_transient_pk"] = gc["v_transient_pk"] * k
        if not has_r:
            balance_missing.extend((int(i), g.name) for i in p[~np.isfinite(r)])
        c_eq_max = series_f(cmax)
        node_v_group[p] = upper + ripple
        node_c_group[p] = c_eq_max
        r_string = float(np.sum(r)) if has_r else np.nan
        r_dis_group[p] = _parallel_r(gc.get("r_bleeder_ohm", np.nan), r_string)
        surge_group[p] = float(surge_current_a(c_eq_max, gc.get("slew_v_per_s", np.nan), upper,
                                               gc.get("r_source_ohm", np.nan)))
        r_source_group[p] = gc.get("r_source_ohm", np.nan)
        in_group[p] = True
        summaries.append({"name": g.name, "kind": "series", "row": g.row, "members": fitted,
                          "not_audited": missing, "_pos": p, "v_stack_v": _finite(upper),
                          "v_node_v": _finite(upper + ripple),
                          "c_eq_f": _finite(series_f(c)), "r_bleeder_ohm":
                          _finite(gc.get("r_bleeder_ohm", np.nan)), "notes": g.notes})

    # Banks: the bank's ripple current is shared in proportion to capacitance.
    for g in banks:
        pos, fitted, missing = _members(g, where)
        if not pos:
            continue
        gc = dict(g.conditions)
        p = np.asarray(pos)
        if "i_ripple_a" in gc:
            c = c_nom.to_numpy()[p]
            own = t["i_ripple_a"].to_numpy()[p]
            t.loc[t.index[p], "i_ripple_a"] = np.where(np.isnan(own),
                                                       gc["i_ripple_a"] * c / np.sum(c), own)
        in_group[p] = True
        summaries.append({"name": g.name, "kind": "bank", "row": g.row, "members": fitted,
                          "not_audited": missing, "_pos": p,
                          "c_eq_f": _finite(parallel_f(c_nom.to_numpy()[p])),
                          "c_min_f": _finite(gc.get("c_min_f", np.nan)),
                          "r_bleeder_ohm": _finite(gc.get("r_bleeder_ohm", np.nan)),
                          "i_ripple_a": _finite(gc.get("i_ripple_a", np.nan)),
                          "notes": g.notes})

    # DC bias from the part's own curve, at the applied voltage (series shares included). Past
    # the curve's last point the part data says nothing: the generic curve and its bounds apply.
    volts = stresses.applied_voltages(t)
    keep = parts_mod.curve_values(t, parts, "dc_bias", volts["applied_peak_v"], beyond=False)
    t["dc_bias_keep"] = keep.where(keep.notna(), _col(t, "dc_bias_keep"))
    changed |= keep.notna().to_numpy()

    # Ripple heating feeds the self-heating; the larger of the stated and computed rise is used.
    i_rip = _col(t, "i_ripple_a")
    esr = _col(t, "esr_ohm")
    rth = _col(t, "rth_c_per_w")
    rth_part = rth.notna()
    need = (i_rip.notna() & esr.notna() & ~rth_part).to_numpy()
    if need.any():
        rth[need] = opts.generic_rth(t.loc[need, "package"] if "package" in t
                                     else pd.Series("", index=t.index[need]))
    power, rise = ripple_heating(i_rip, esr, rth)
    power, rise = pd.Series(power, index=t.index), pd.Series(rise, index=t.index)
    rise_governs = rise.notna() & ~(design_rise >= rise)
    rise_generic = rise_governs & ~rth_part
    changed |= rise_governs.to_numpy()
    out = _restress(t, changed, np.fmax(design_rise, rise), data)
    generic_t = rise_generic.to_numpy()
    out["t_operating_c_basis"] = np.where(generic_t, "generic", "")
    if generic_t.any():
        out["temp_margin_c_basis"] = np.where(generic_t, "generic",
                                              _text(out, "temp_margin_c_basis"))
    out["voltage_ratio_basis"] = np.where(share_generic, "generic", "")
    out["voltage_ratio_note"] = np.where(share_generic, share_note, "")
    out["voltage_ratio_worst"] = np.where(share_generic, share_worst / _col(out, "voltage_v"),
                                          np.nan)
    out["voltage_ratio_best"] = np.where(share_generic, share_best / _col(out, "voltage_v"),
                                         np.nan)

    tmult = parts_mod.curve_values(t, parts, "ripple_temp_mult", _col(out, "t_ambient_c"))
    fmult = parts_mod.curve_values(t, parts, "ripple_freq_mult", _col(t, "f_ripple_hz"),
                                   log_x=True)
    rated_ripple = _col(t, "ripple_rated_a")
    allowed = rated_ripple * fmult.fillna(1.0) * tmult.fillna(1.0)
    # A multiplier the parts data does not give is taken as 1: mark the ratio generic (at most a
    # warning) where that assumption is made for a frequency or temperature the rating is not at.
    f_off = fmult.isna() & ~(_col(t, "f_ripple_hz") == _col(t, "ripple_rated_hz"))
    ripple_assumed = rated_ripple.notna() & (f_off | tmult.isna())

    # Energy, the node each placement is on, and its discharge.
    v_stored = pd.Series(np.fmax(_col(out, "applied_peak_v"), SQRT2 * _col(out, "v_ac_rms")),
                         index=out.index)
    m: dict[str, Any] = {"c_max_f": c_max, "v_stored_v": v_stored,
                         "energy_j": energy_j(c_max, v_stored)}
    node_v = v_stored.to_numpy().copy()
    node_c = c_max.to_numpy().copy()
    r_dis = _col(t, "r_bleeder_ohm").to_numpy().copy()
    grouped = ~np.isnan(node_v_group)
    node_v[grouped], node_c[grouped] = node_v_group[grouped], node_c_group[grouped]
    r_dis[in_group] = r_dis_group[in_group]
    c_worst = _col(out, "c_worst_f").to_numpy()
    c_fav = _col(out, "c_worst_f_best").to_numpy()  # members' capacitance at the bounds
    c_low = _col(out, "c_worst_f_worst").to_numpy()
    bank_min = np.full(n, np.nan)
    bank_worst = np.full(n, np.nan)
    bank_fav = np.full(n, np.nan)
    bank_low = np.full(n, np.nan)
    for s in summaries:
        p = s["_pos"]
        if s["kind"] == "bank":
            gc = dict(groups[s["name"]].conditions)
            node_v[p] = np.max(v_stored.to_numpy()[p])
            node_c[p] = np.sum(c_max.to_numpy()[p])
            # Every bleeder on the bank's node discharges all of it: the group's and the members'.
            g_ohm = np.r_[_col(t, "r_bleeder_ohm").to_numpy()[p], gc.get("r_bleeder_ohm", np.nan)]
            g_ohm = g_ohm[np.isfinite(g_ohm)]
            r_dis[p] = 1.0 / np.sum(1.0 / g_ohm) if len(g_ohm) else np.nan
            if "c_min_f" in gc and gc["c_min_f"] > 0:
                bank_min[p] = gc["c_min_f"]
                bank_worst[p] = np.sum(c_worst[p])  # NaN when a member's is unknown
                bank_fav[p], bank_low[p] = np.sum(c_fav[p]), np.sum(c_low[p])
            s.update(v_node_v=_finite(node_v[p][0]), c_worst_f=_finite(np.sum(c_worst[p])),
                     c_margin=_finite(np.sum(c_worst[p]) / gc["c_min_f"])
                     if gc.get("c_min_f") else None)
        else:
            gc = dict(groups[s["name"]].conditions)
            stack_worst = series_f(c_worst[p])
            # A stack's need is met by the stack, whose capacitance is the series combination.
            if "c_min_f" in gc and gc["c_min_f"] > 0:
                bank_min[p] = gc["c_min_f"]
                bank_worst[p] = stack_worst
                bank_fav[p], bank_low[p] = series_f(c_fav[p]), series_f(c_low[p])
            s.update(c_worst_f=_finite(stack_worst), c_min_f=_finite(gc.get("c_min_f", np.nan)),
                     c_margin=_finite(stack_worst / gc["c_min_f"]) if gc.get("c_min_f") else None)
    node_energy = energy_j(node_c, node_v)
    v_safe = _col(t, "v_safe_v").fillna(opts.safe_voltage_v).to_numpy()
    m.update({
        "node_v": node_v, "node_c_f": node_c, "node_energy_j": node_energy,
        "shock_energy_j": np.where(node_v >= SHOCK_VOLTAGE_V, node_energy, np.nan),
        "r_discharge_ohm": r_dis, "v_safe_used_v": v_safe,
        "discharge_s": discharge_time_s(r_dis, node_c, node_v, v_safe),
        "t_to_60v_s": discharge_time_s(r_dis, node_c, node_v, 60.0),
        "v_after_1s_v": voltage_after(1.0, r_dis, node_c, node_v),
        "charge_after_5s_uc": charge_c(node_c, voltage_after(5.0, r_dis, node_c, node_v)) * 1e6,
    })
    m["discharge_ratio"] = m["discharge_s"] / _col(t, "t_discharge_max_s").to_numpy()

    # Surge at switch-on; a series stack's current flows through every member.
    surge = surge_current_a(c_max, _col(t, "slew_v_per_s"), _col(out, "v_upper_v"),
                            _col(t, "r_source_ohm"))
    surge = np.where(np.isnan(node_v_group), surge, surge_group)
    series_r = np.where(np.isnan(node_v_group), _col(t, "r_source_ohm"), r_source_group)
    m.update({"surge_a": surge, "surge_ratio": surge / _col(t, "surge_rated_a").to_numpy(),
              "series_r_ohm": series_r})

    # Ripple and life.
    alu = (out["technology"].isin(ALUMINIUM).to_numpy() if "technology" in out
           else np.zeros(n, dtype=bool))
    t0 = _col(t, "life_t0_c").fillna(_col(out, "temp_max_used_c"))
    life = electrolytic_life_h(_col(t, "life_l0_h"), t0, _col(out, "t_operating_c"),
                               rise.where(rise_governs), ripple_factor=opts.life_ripple_factor)
    life = np.where(alu, life, np.nan)
    m.update({"ripple_power_w": power, "ripple_rise_c": rise, "ripple_allowed_a": allowed,
              "ripple_ratio": i_rip / allowed, "life_est_h": life,
              "life_ratio": life / _col(out, "life_h").to_numpy(),
              "v_share_cap_v": share_cap, "v_share_dc_v": share_dc,
              "bank_c_min_f": bank_min, "bank_c_worst_f": bank_worst,
              "bank_c_margin": bank_worst / bank_min, "bank_c_margin_best": bank_fav / bank_min,
              "bank_c_margin_worst": bank_low / bank_min})
    metrics = pd.DataFrame({k: np.asarray(v, dtype=float) for k, v in m.items()}, index=out.index)
    out = pd.concat([out.drop(columns=[c for c in _NEW_COLUMNS if c in out]), metrics], axis=1)
    # Ripple current given but no ESR (or no rise computable): the self-heating is not counted,
    # so the temperature and life verdicts are not firm.
    heat_unknown = (i_rip.notna() & (i_rip > 0) & rise.isna()).to_numpy()
    out["life_ratio_basis"] = np.where((generic_t | heat_unknown) & alu, "generic", "")
    if heat_unknown.any():
        for col in ("t_operating_c_basis", "temp_margin_c_basis"):
            out[col] = np.where(heat_unknown, "generic", _text(out, col))
    _self_heating_bounds(out, t, design_rise, generic_t | heat_unknown, alu, opts)
    out["ripple_ratio_basis"] = np.where(ripple_assumed.to_numpy(), "generic", "")
    # A bank or stack margin resting on a member's generic data is itself generic.
    member_generic = (_text(out, "c_margin_basis") == "generic").to_numpy()
    bank_generic = np.zeros(n, dtype=bool)
    for s in summaries:
        p = s["_pos"]
        bank_generic[p] = member_generic[p].any()
    out["bank_c_margin_basis"] = np.where(bank_generic & np.isfinite(bank_min), "generic", "")

    for s in summaries:
        p = s.pop("_pos")
        first = int(p[0])
        s.update(energy_j=_finite(out["node_energy_j"].iat[first]),
                 r_discharge_ohm=_finite(out["r_discharge_ohm"].iat[first]),
                 discharge_s=_finite(out["discharge_s"].iat[first]),
                 surge_a=_finite(surge_group[first]) if s["kind"] == "series" else None)
        if s["kind"] == "series":
            s["shares"] = [{"refdes": out["refdes"].iat[int(i)],
                            "v_share_cap_v": _finite(share_cap[i]),
                            "v_share_dc_v": _finite(share_dc[i]),
                            "applied_peak_v": _finite(out["applied_peak_v"].iat[int(i)])}
                           for i in p]
    extra.append(_balance_verdicts(out, balance_missing))
    extra = [e for e in extra if len(e)]
    verdicts = (pd.concat(extra, ignore_index=True) if extra else
                pd.DataFrame(columns=["pidx", "refdes", "rule_id", "status", "message",
                                      "source"]))
    summaries.sort(key=lambda s: (s["row"], s["name"]))
    return CircuitResult(out, tuple(summaries), verdicts)


def _self_heating_bounds(out: pd.DataFrame, t: pd.DataFrame, design_rise: pd.Series,
                        uncertain: np.ndarray, alu: np.ndarray, opts: Any) -> None:
    """Bounds of the verdicts that rest on an uncertain ripple self-heating (a case-size thermal
    resistance, or a ripple current with no ESR): the heating is never below zero, so the
    operating temperature without it is the favourable bound; there is no worst bound."""
    t_best = _col(out, "t_ambient_c") + design_rise.fillna(0.0)
    typical_rating = _col(out, "temp_max_c").isna()  # the rating itself is the typical one
    out["t_operating_c_best"] = np.where(uncertain, t_best, np.nan)
    out["temp_margin_c_best"] = np.where(uncertain & ~typical_rating.to_numpy(),
                                         _col(out, "temp_max_used_c") - t_best, np.nan)
    t0 = _col(t, "life_t0_c").fillna(_col(out, "temp_max_used_c"))
    life = electrolytic_life_h(_col(t, "life_l0_h"), t0, t_best)
    out["life_ratio_best"] = np.where(uncertain & alu, np.asarray(life, dtype=float)
                                      / _col(out, "life_h").to_numpy(), np.nan)


def _restress(t: pd.DataFrame, changed: np.ndarray, rise: pd.Series, data: Any) -> pd.DataFrame:
    """The stress stage again on the placements whose inputs the circuit stage changed (with the
    self-heating ``rise``), its metric columns written back; the others keep theirs."""
    from bomcheck.stress import placement as stresses

    if not changed.any():
        return t.copy(deep=False)
    sub = stresses.compute(t.loc[changed].assign(t_rise_c=rise[changed]), data)
    out = t.copy(deep=False)
    for c in sub.columns:
        if c == "t_rise_c":  # the condition stays as given; the rise used is in t_operating_c
            continue
        kind = sub[c].dtype.kind
        if kind == "f" or c.endswith("_basis") or c.endswith("_note"):
            base = (out[c].to_numpy(dtype=float if kind == "f" else object, copy=True)
                    if c in out else np.full(len(out), np.nan if kind == "f" else "",
                                             dtype=float if kind == "f" else object))
            base[changed] = sub[c].to_numpy(dtype=base.dtype)
            out[c] = base
    return out


def _balance_verdicts(table: pd.DataFrame, missing: list[tuple[int, str]]) -> pd.DataFrame:
    rows = [(i, table["refdes"].iat[i], SERIES_BALANCE, "nodata",
             f"{table['refdes'].iat[i]}: series stack {name}: no balancing resistance "
             "(r_balance_ohm in the design sheet); the DC steady-state share is set by the "
             "leakage currents and is not bounded", "design sheet")
            for i, name in missing]
    return pd.DataFrame(rows, columns=["pidx", "refdes", "rule_id", "status", "message",
                                       "source"])


def safety_cautions(verdicts: pd.DataFrame, ruleset: Any) -> tuple[str, ...]:
    """One caution per stored-energy or discharge rule that flagged placements, citing its clause
    and saying that local codes and licensed practice govern."""
    if ruleset is None or not len(verdicts):
        return ()
    out = []
    safety = sorted((r for r in ruleset.rules if r.metric in SAFETY_METRICS), key=lambda r: r.id)
    # Narrow once to the flagged safety verdicts, not once per rule over every verdict.
    flagged = verdicts[verdicts["rule_id"].isin([r.id for r in safety])]
    flagged = flagged[flagged["status"].isin(["warn", "fail"])]
    for rule in safety:
        hit = flagged[flagged["rule_id"] == rule.id]
        if not len(hit):
            continue
        refdes = list(dict.fromkeys(hit["refdes"].tolist()))
        first = str(hit["message"].iloc[0])
        # "C4: 400 V ... in 9.53 s > 5 s limit (technology; source)": the measured part only.
        measured = first.split(": ", 1)[-1].split(" limit (", 1)[0] + " limit"
        out.append(f"{rule.source}: {', '.join(refdes)}: {measured}. A caution from the cited "
                   "clause, not a compliance verdict: local electrical codes, the product's own "
                   "safety standard and licensed practice govern.")
    return tuple(out)
