"""Stress stage, circuit level: aluminium electrolytic life by the 10 degC rule (``life_est_h``,
``life_ratio`` and its kindest bound where the self-heating is uncertain). No I/O."""

from __future__ import annotations

from typing import Any

import numpy as np

from bomcheck.stress.circuit_run import CircuitRun
from bomcheck.stress.columns import labels

ALUMINIUM = ("aluminium-electrolytic", "aluminium-polymer")


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


def aluminium(run: CircuitRun) -> np.ndarray:
    """True for the aluminium electrolytic and polymer placements."""
    return run.is_text("technology", ALUMINIUM)


def metrics(run: CircuitRun) -> None:
    """Estimated life against the required life; generic where the self-heating is uncertain,
    with the life at no self-heating as its kindest bound. Worked out on the aluminium
    placements only (NaN elsewhere)."""
    alu = aluminium(run)
    rows = np.flatnonzero(alu)

    def of(values: np.ndarray) -> np.ndarray:
        return values[rows]

    rated_t, t0_given = of(run.num("temp_max_used_c")), of(run.num("life_t0_c"))
    t0 = np.where(np.isnan(t0_given), rated_t, t0_given)
    rise, governs = of(run.shared["rise"]), of(run.shared["rise_governs"])
    l0, life_h = of(run.num("life_l0_h")), of(run.num("life_h"))
    life = electrolytic_life_h(l0, t0, of(run.num("t_operating_c")),
                               np.where(governs, rise, np.nan),
                               ripple_factor=run.opts.life_ripple_factor)
    uncertain = of(run.shared["heat_uncertain"])
    best = np.asarray(electrolytic_life_h(l0, t0, of(run.shared["t_best"])), dtype=float)

    def put(name: str, values: np.ndarray) -> None:
        out = np.full(run.n, np.nan)
        out[rows] = values
        run.put(name, out)

    put("life_est_h", life)
    put("life_ratio", life / life_h)
    run.put("life_ratio_basis", labels(run.shared["heat_uncertain"] & alu, ("", "generic")))
    put("life_ratio_best", np.where(uncertain, best / life_h, np.nan))


__all__ = ["ALUMINIUM", "aluminium", "electrolytic_life_h", "metrics"]
