"""Stress stage, circuit level: ripple self-heating (I^2 x ESR through a thermal resistance) that
raises the operating temperature, and the ripple current against its frequency- and
temperature-corrected rating (``ripple_ratio``). No I/O."""

from __future__ import annotations

import math
import re
from typing import Any

import numpy as np
import pandas as pd

from bomcheck.parse import parts_apply as parts_mod
from bomcheck.stress.circuit_run import CircuitOptions, CircuitRun
from bomcheck.stress.columns import labels

_CAN = re.compile(r"^\s*(\d+(?:\.\d+)?)\s*[xX\u00d7*]\s*(\d+(?:\.\d+)?)\s*(?:mm)?\s*$")


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


def generic_rth(opts: CircuitOptions, package: pd.Series) -> pd.Series:
    """Typical thermal resistance by case size: the options' table, else the can formula for a
    ``DxL`` package (mm); NaN where neither knows the case. One look-up per distinct case."""
    pk = package.astype(object).where(package.notna(), "").astype(str).str.strip()
    codes, uniques = pd.factorize(pk.to_numpy(dtype=object))
    values = np.full(len(uniques) + 1, np.nan)
    for k, u in enumerate(uniques):
        key = str(u).upper()
        if key in opts.thermal_resistance_c_per_w:
            values[k] = opts.thermal_resistance_c_per_w[key]
            continue
        m = _CAN.match(key)
        if m and opts.can_beta_w_per_cm2_k:
            values[k] = float(can_thermal_resistance(float(m.group(1)), float(m.group(2)),
                                                     float(opts.can_beta_w_per_cm2_k)))
    return pd.Series(values[codes], index=package.index)


def heat(run: CircuitRun) -> None:
    """The ripple self-heating; the larger of the design's stated rise and this one governs the
    operating temperature the placement stresses are run again with."""
    i_rip, esr = run.num("i_ripple_a"), run.num("esr_ohm")
    rth = run.num("rth_c_per_w").copy()
    rth_part = ~np.isnan(rth)
    need = ~np.isnan(i_rip) & ~np.isnan(esr) & ~rth_part
    if need.any():
        package = pd.Series(run.text("package", need), index=run.index[need])
        rth[need] = generic_rth(run.opts, package).to_numpy()
    power, rise = ripple_heating(i_rip, esr, rth)
    design_rise = run.num("t_rise_c")
    governs = ~np.isnan(rise) & ~(design_rise >= rise)
    run.shared.update(power=power, rise=rise, rise_governs=governs, design_rise=design_rise,
                      rise_generic=governs & ~rth_part, t_rise=np.fmax(design_rise, rise))


def metrics(run: CircuitRun) -> None:
    """The bases of the operating temperature and margin where the self-heating is uncertain,
    their kindest bounds, and the ripple current against its corrected rating."""
    i_rip, rise = run.num("i_ripple_a"), run.shared["rise"]
    # Ripple current given but no ESR (or no rise computable): the self-heating is not counted,
    # so the temperature and life verdicts are not firm.
    heat_unknown = ~np.isnan(i_rip) & (i_rip > 0) & np.isnan(rise)
    uncertain = run.shared["rise_generic"] | heat_unknown
    run.put("t_operating_c_basis", labels(uncertain, ("", "generic")))
    if uncertain.any():
        run.put("temp_margin_c_basis",
                np.where(uncertain, "generic", run.text("temp_margin_c_basis")))
    _ripple(run, i_rip)
    # The heating is never below zero: the operating temperature without it is the favourable
    # bound; there is no worst bound.
    t_best = run.num("t_ambient_c") + np.where(np.isnan(run.shared["design_rise"]), 0.0,
                                               run.shared["design_rise"])
    typical_rating = np.isnan(run.num("temp_max_c"))  # the rating itself is the typical one
    run.shared.update(heat_uncertain=uncertain, t_best=t_best)
    run.put("t_operating_c_best", np.where(uncertain, t_best, np.nan))
    run.put("temp_margin_c_best", np.where(uncertain & ~typical_rating,
                                           run.num("temp_max_used_c") - t_best, np.nan))


def _ripple(run: CircuitRun, i_rip: np.ndarray) -> None:
    """Ripple power, rise and current against the rating corrected by the part's frequency and
    temperature multipliers."""
    keys = run.frame(("mpn", "capacitance_f"))
    tmult = parts_mod.curve_values(keys, run.parts, "ripple_temp_mult",
                                   pd.Series(run.num("t_ambient_c"), index=run.index)).to_numpy()
    fmult = parts_mod.curve_values(keys, run.parts, "ripple_freq_mult",
                                   pd.Series(run.num("f_ripple_hz"), index=run.index),
                                   log_x=True).to_numpy()
    rated = run.num("ripple_rated_a")
    allowed = rated * np.where(np.isnan(fmult), 1.0, fmult) * np.where(np.isnan(tmult), 1.0,
                                                                      tmult)
    # A multiplier the parts data does not give is taken as 1: mark the ratio generic (at most a
    # warning) where that assumption is made for a frequency or temperature the rating is not at.
    f_off = np.isnan(fmult) & ~(run.num("f_ripple_hz") == run.num("ripple_rated_hz"))
    assumed = ~np.isnan(rated) & (f_off | np.isnan(tmult))
    run.put("ripple_power_w", np.asarray(run.shared["power"], dtype=float))
    run.put("ripple_rise_c", np.asarray(run.shared["rise"], dtype=float))
    run.put("ripple_allowed_a", np.asarray(allowed, dtype=float))
    run.put("ripple_ratio", np.asarray(i_rip / allowed, dtype=float))
    run.put("ripple_ratio_basis", labels(assumed, ("", "generic")))


__all__ = ["can_thermal_resistance", "generic_rth", "heat", "metrics", "ripple_heating"]
