"""Stress stage, circuit level: series stacks. Each member's worst share of the stack voltage,
capacitive (tolerances at their extremes) and DC (balancing resistors and leakage), fed to the
placement stresses as its rail; the stack's node, bleeder, surge and capacitance need. No I/O."""

from __future__ import annotations

import math
from collections.abc import Sequence
from typing import Any

import numpy as np
import pandas as pd

from bomcheck.stress.circuit_run import CircuitRun, finite, members
from bomcheck.stress.columns import labels
from bomcheck.stress.surge import surge_current_a

SERIES_BALANCE = "circuit.series-balance"
_INPUTS = ("v_dc", "v_dc_max", "v_ripple_pk", "v_transient_pk")


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


def _parallel_r(a: float, b: float) -> float:
    if math.isnan(a):
        return b
    if math.isnan(b):
        return a
    return a * b / (a + b)


def divide(run: CircuitRun) -> None:
    """Each stack member's worst share, written to its rail columns before the placement
    stresses run again; the stack's node, bleeder and surge for the later stresses."""
    stacks = run.of_kind("series")
    if not stacks:
        return
    rails = {name: run.num(name).copy() for name in _INPUTS}
    for g in stacks:
        pos, fitted, missing = members(g, run.where())
        if pos:
            _stack(run, g, np.asarray(pos), fitted, missing, rails)
    for name, values in rails.items():
        run.put(name, values)


def _upper(run: CircuitRun, gc: dict, p: np.ndarray) -> float:
    """The stack's upper bound: the rail's tolerance is the group's own, else what reaches the
    members (board defaults); never below |v_dc| (a lower v_dc_max contradicts it)."""
    member_tol = run.num("v_tol_pct")[p]
    member_tol = float(np.max(member_tol[np.isfinite(member_tol)])) if np.isfinite(
        member_tol).any() else 0.0
    return float(np.fmax(abs(gc.get("v_dc_max", np.nan)), abs(gc.get("v_dc", np.nan))
                         * (1.0 + gc.get("v_tol_pct", member_tol) / 100.0)))


def _stack(run: CircuitRun, g: Any, p: np.ndarray, fitted: list[str], missing: list[str],
           rails: dict[str, np.ndarray]) -> None:
    gc = dict(g.conditions)
    upper, ripple = _upper(run, gc, p), gc.get("v_ripple_pk", 0.0)
    c = run.num("capacitance_f")[p]
    k, cap, dc, r = _shares(run, g, p, fitted, upper, ripple)
    if not math.isnan(upper):
        rails["v_dc"][p] = gc.get("v_dc", np.nan) * series_f(c) / c
        # One member of unknown capacitance leaves every capacitive share unknown: no data,
        # never the DC share alone.
        rails["v_dc_max"][p] = np.fmax(cap, dc) if np.isfinite(cap).all() else np.nan
        rails["v_ripple_pk"][p] = ripple * k
        if "v_transient_pk" in gc:  # a transient divides as the capacitances do
            rails["v_transient_pk"][p] = gc["v_transient_pk"] * k
    has_r = bool(np.isfinite(r).all())
    if not has_r:
        run.shared.setdefault("balance_missing", []).extend(
            (int(i), g.name) for i in p[~np.isfinite(r)])
    c_eq_max = series_f(run.c_max()[p])
    run.group_array("node_v_group")[p] = upper + ripple
    run.group_array("node_c_group")[p] = c_eq_max
    r_string = float(np.sum(r)) if has_r else np.nan
    run.group_array("r_dis_group")[p] = _parallel_r(gc.get("r_bleeder_ohm", np.nan), r_string)
    run.group_array("surge_group")[p] = float(surge_current_a(
        c_eq_max, gc.get("slew_v_per_s", np.nan), upper, gc.get("r_source_ohm", np.nan)))
    run.group_array("r_source_group")[p] = gc.get("r_source_ohm", np.nan)
    run.group_array("in_group", False)[p] = True
    run.summaries.append({"name": g.name, "kind": "series", "row": g.row, "members": fitted,
                          "not_audited": missing, "_pos": p, "v_stack_v": finite(upper),
                          "v_node_v": finite(upper + ripple), "c_eq_f": finite(series_f(c)),
                          "r_bleeder_ohm": finite(gc.get("r_bleeder_ohm", np.nan)),
                          "notes": g.notes})


def _shares(run: CircuitRun, g: Any, p: np.ndarray, fitted: list[str], upper: float,
            ripple: float) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """(capacitive share per volt, capacitive share, DC share, balancing resistances) of a
    stack's members; their kindest and worst plausible shares and whether they are generic."""
    minus, plus, assumed = (a[p] for a in run.tolerances())
    c = run.num("capacitance_f")[p]
    default = run.data.default_tol_pct
    k = series_share_worst_cap(1.0, c, minus, plus)
    cap = upper * k
    r, r_tol, leak = (run.num(n)[p] for n in ("r_balance_ohm", "r_balance_tol_pct", "leakage_a"))
    has_r = bool(np.isfinite(r).all())
    dc = (series_share_worst_dc(upper, r, np.nan_to_num(r_tol, nan=default),
                                np.nan_to_num(leak, nan=0.0)) if has_r else np.full(len(p), np.nan))
    run.group_array("share_cap")[p], run.group_array("share_dc")[p] = cap, dc
    # Kindest bounds of the unknowns: an assumed capacitor tolerance at none (the nominal
    # split), an unknown resistor tolerance at none, an unknown leakage at none.
    cap_best = np.where(assumed, upper * series_share(1.0, c), cap)
    dc_best = (series_share_worst_dc(upper, r, np.nan_to_num(r_tol, nan=0.0),
                                     np.nan_to_num(leak, nan=0.0))
               if has_r else np.full(len(p), np.nan))
    run.group_array("share_best")[p] = np.fmax(cap_best, dc_best) + ripple * series_share(1.0, c)
    # A share is generic only where the governing one rests on an assumption: an assumed
    # capacitor tolerance for the capacitive share; an assumed resistor tolerance or an
    # unknown leakage (taken as none) for the DC share.
    dc_governs = has_r & ~(cap > dc)
    generic = run.group_array("share_generic", False)
    generic[p] = (assumed & ~dc_governs) | (dc_governs & (np.isnan(r_tol) | np.isnan(leak)))
    # An aluminium electrolytic's unknown leakage at its worst plausible value, the limit
    # of IEC 60384-4 as common practice (0.01 C V in uA with C in uF and V in volts, or
    # 3 uA, whichever is greater), gives the worst share; a leakage unknown for another
    # technology has no published worst.
    unknown = np.isnan(leak) & (run.text("technology", p) == "aluminium-electrolytic")
    if has_r and unknown.any():
        leak_limit = np.fmax(0.01 * c * run.num("voltage_v")[p], 3e-6)
        leak_worst = np.where(unknown, leak_limit, leak)
        dc_worst = series_share_worst_dc(upper, r, np.nan_to_num(r_tol, nan=default),
                                         np.nan_to_num(leak_worst, nan=0.0))
        generic[p] |= dc_worst > np.fmax(cap, dc) * (1.0 + 1e-9)
        bounded = ~assumed & ~np.isnan(r_tol) & ~np.isnan(leak_worst).any()
        run.group_array("share_worst")[p] = np.where(bounded, np.fmax(cap, dc_worst) + ripple * k,
                                                     np.nan)
        run.group_array("share_note", "")[p] = (
            f"series stack {g.name}: leakage not given for "
            f"{', '.join(np.asarray(fitted, dtype=object)[unknown])}, bounded by 0 A and the "
            "IEC 60384-4 limit 0.01 C V or 3 uA (common practice; "
            f"{', '.join(f'{x * 1e6:.4g} uA' for x in leak_limit[unknown])}): give the "
            "leakage in the parts data")
    return k, cap, dc, r


def metrics(run: CircuitRun) -> None:
    """The voltage ratio's basis and bounds where a share rests on an assumption, each member's
    shares, and each stack's capacitance against its need (met by the stack as a whole)."""
    generic = run.group_array("share_generic", False)
    rated = run.num("voltage_v")
    run.put("voltage_ratio_basis", labels(generic, ("", "generic")))
    run.put("voltage_ratio_note", np.where(generic, run.group_array("share_note", ""), ""))
    run.put("voltage_ratio_worst", np.where(generic, run.group_array("share_worst") / rated,
                                            np.nan))
    run.put("voltage_ratio_best", np.where(generic, run.group_array("share_best") / rated, np.nan))
    run.put("v_share_cap_v", run.group_array("share_cap").copy())
    run.put("v_share_dc_v", run.group_array("share_dc").copy())
    c_worst, c_fav, c_low = (run.num(n) for n in ("c_worst_f", "c_worst_f_best", "c_worst_f_worst"))
    need, worst, fav, low = (run.group_array(n) for n in ("bank_min", "bank_worst", "bank_fav",
                                                          "bank_low"))
    for s in run.summaries:
        if s["kind"] != "series":
            continue
        p, gc = s["_pos"], dict(run.groups[s["name"]].conditions)
        stack_worst = series_f(c_worst[p])
        if "c_min_f" in gc and gc["c_min_f"] > 0:
            need[p], worst[p] = gc["c_min_f"], stack_worst
            fav[p], low[p] = series_f(c_fav[p]), series_f(c_low[p])
        s.update(c_worst_f=finite(stack_worst), c_min_f=finite(gc.get("c_min_f", np.nan)),
                 c_margin=finite(stack_worst / gc["c_min_f"]) if gc.get("c_min_f") else None)


def balance_verdicts(run: CircuitRun, refdes: np.ndarray) -> pd.DataFrame:
    """One ``nodata`` verdict per stack member without a balancing resistance."""
    rows = [(i, refdes[i], SERIES_BALANCE, "nodata",
             f"{refdes[i]}: series stack {name}: no balancing resistance "
             "(r_balance_ohm in the design sheet); the DC steady-state share is set by the "
             "leakage currents and is not bounded", "design sheet")
            for i, name in run.shared.get("balance_missing", [])]
    return pd.DataFrame(rows, columns=["pidx", "refdes", "rule_id", "status", "message",
                                       "source"])


def shares(run: CircuitRun, s: dict) -> list[dict]:
    """A stack summary's members with their shares, for the report."""
    refdes, peak = run.columns["refdes"], run.num("applied_peak_v")
    cap, dc = run.group_array("share_cap"), run.group_array("share_dc")
    return [{"refdes": _at(refdes, int(i)), "v_share_cap_v": finite(cap[i]),
             "v_share_dc_v": finite(dc[i]), "applied_peak_v": finite(peak[int(i)])}
            for i in s["_pos"]]


def _at(values: Any, i: int) -> Any:
    return values.iat[i] if isinstance(values, pd.Series) else values[i]


__all__ = ["SERIES_BALANCE", "balance_verdicts", "divide", "metrics", "series_f", "series_share",
           "series_share_worst_cap", "series_share_worst_dc", "shares"]
