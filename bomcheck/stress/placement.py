"""Stress stage: pure column arithmetic from placements and operating conditions to metrics (SI).

Input is one table of fitted placements (spec columns from the parse stage and condition
columns from the design sheet); output is the same table with the metric columns of
``bomcheck.vocabulary.METRICS`` added, plus the factors behind the worst-case capacitance so
every one can be reported. The arithmetic runs on the columns' arrays (each converted once, a
text column read by code: ``bomcheck.stress.columns``), 65536 placements at a time so that its
temporaries stay small, and the metric columns are joined to the table once, without a copy.
No I/O, no pint, no per-row Python loops.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import field
from typing import Any

import numpy as np
import pandas as pd

from bomcheck.frozen import frozen
from bomcheck.stress.columns import Columns, by_rows, labels, read_only_nan, share_empty
# The column conversions, read here by the stage's users and tests as before.

# Capacitance change taken for a class II ceramic whose code is not known: X7R/X5R's +/-15 %
# (EIA-198 letter R), the common case, marked generic wherever it is used.
ASSUMED_CLASS2_CHANGE_PCT = 15.0


@frozen
class StressData:
    """Assumed data the stress stage needs beyond the BOM and the design sheet.

    ``dc_bias`` maps a case-size key (``"default"`` at least) to points of applied/rated voltage
    ratio against the fraction of capacitance left, for class II/III ceramics (generic, typical
    curves: common practice). ``aging_k`` is the aging rate in percent per decade-hour by
    dielectric code or by class (``"class2"``, ``"class3"``). ``default_tol_pct`` is taken when
    the BOM gives no tolerance; a capacitance margin that rests on it is marked generic.
    """

    dc_bias: Mapping[str, tuple[tuple[float, ...], tuple[float, ...]]] = field(
        default_factory=lambda: {"default": ((0.0, 1.0), (1.0, 1.0))}
    )
    aging_k: Mapping[str, float] = field(default_factory=dict)
    # Reference time of aging, t0 = 1 h after the last heating above the Curie point
    # (common practice; the form C(t) = C(t0) x (1 - k/100 x log10(t/t0))).
    aging_t0_h: float = 1.0
    default_tol_pct: float = 20.0
    # Worst plausible DC-bias keep of a class II/III ceramic without part data: derived from the
    # published example of a small-case 4.7 uF 6.3 V X5R keeping about 7 % at 5 V (79 % of
    # rated), drawn linear from none lost at 0 V and held beyond (common practice, derived).
    dc_bias_worst: tuple[tuple[float, ...], tuple[float, ...]] = ((0.0, 0.79, 10.0),
                                                                  (1.0, 0.07, 0.07))
    # Longest plausible service life when the design gives none, for the worst aging bound
    # (common practice: about 11 years of continuous service).
    worst_life_h: float = 1.0e5
    # Worst plausible change of a ceramic whose dielectric is not given: EIA-198 letter V
    # (+22/-82 %), the widest class III code.
    worst_class_change_pct: float = 82.0
    # Typical rated maximum temperature by technology (keys "ceramic-class1".. first), used where
    # the BOM text gives none; a temperature margin resting on it is marked generic.
    typical_temp_max_c: Mapping[str, float] = field(default_factory=dict)
    # The lowest rated maximum of the usual grades by the same keys: the worst plausible rating.
    lowest_temp_max_c: Mapping[str, float] = field(default_factory=dict)


def _fill(x: np.ndarray, other: Any) -> np.ndarray:
    """``x`` with NaN replaced by ``other``."""
    return np.where(np.isnan(x), other, x)


def _keep(x: np.ndarray, cond: np.ndarray) -> np.ndarray:
    """``x`` where ``cond``, NaN elsewhere."""
    return np.where(cond, x, np.nan)


def _at_least(x: np.ndarray, low: float) -> np.ndarray:
    """``x`` raised to ``low`` (NaN stays NaN)."""
    return np.where(np.isnan(x) | (x >= low), x, low)


def _at_most(x: np.ndarray, high: float) -> np.ndarray:
    """``x`` lowered to ``high`` (NaN stays NaN)."""
    return np.where(np.isnan(x) | (x <= high), x, high)


# Every column ``compute`` reads: a placement whose values here are unchanged gets the same
# metrics (the circuit stage runs the stresses again only where one of them changed).
INPUTS: tuple[str, ...] = (
    "voltage_v", "voltage_kind", "polarized", "capacitance_f", "tol_minus_pct", "tol_abs_f",
    "dielectric", "dielectric_class", "cap_change_minus_pct", "tc_ppm", "tc_tol_ppm",
    "technology", "package", "temp_min_c", "temp_max_c", "v_dc", "v_dc_max", "v_tol_pct",
    "v_ripple_pk", "v_ac_rms", "v_transient_pk", "v_reverse_pk", "t_ambient_c", "t_rise_c",
    "t_ambient_min_c", "c_min_f", "life_h", "dc_bias_keep",
)
SQRT2 = float(np.sqrt(2.0))
# A ``<metric>_basis`` saying the metric is not known and ``<metric>_best``, its kindest bound,
# is: a failure at that bound is firm, anything else is no data (``bomcheck.evaluate.engine``).
BEST_ONLY = "best-only"


def voltages(cols: Columns) -> dict[str, np.ndarray]:
    """Upper and lower bounds of the DC rail, applied peak and transient peak, all magnitudes.

    The rail's upper bound is the larger of ``|v_dc_max|`` (where given) and ``|v_dc|`` x (1 +
    v_tol_pct/100) (``|v_dc|`` without a tolerance): a ``v_dc_max`` below ``|v_dc|`` contradicts
    the design and never lowers the bound (the design reader warns). The lower bound is ``|v_dc|``
    x (1 - v_tol_pct/100), never below 0. The applied peak is DC upper bound + ripple peak +
    sqrt(2) x AC rms (NASA EEE-INST-002 Section C1 Table 4, note 1: DC plus peak AC); with an AC
    voltage and no DC given, the DC is none. A ripple, AC or transient not given is taken as none
    (0 V / the applied peak).
    """
    v_dc = np.abs(cols.num("v_dc"))
    ac_peak = SQRT2 * cols.num("v_ac_rms")
    v_dc = np.where(~np.isnan(v_dc) | np.isnan(ac_peak), v_dc, 0.0)
    tol = _fill(_at_least(cols.num("v_tol_pct"), 0.0), 0.0) / 100.0
    upper = np.fmax(np.abs(cols.num("v_dc_max")), v_dc * (1.0 + tol))
    lower = _at_least(v_dc * (1.0 - tol), 0.0)
    swing = _fill(cols.num("v_ripple_pk"), 0.0) + _fill(ac_peak, 0.0)
    applied = upper + swing
    return {"v_upper_v": upper, "v_lower_v": lower, "swing_pk_v": swing,
            "applied_peak_v": applied,
            "transient_peak_v": np.fmax(applied, cols.num("v_transient_pk"))}


def applied_voltages(table: pd.DataFrame) -> pd.DataFrame:
    """``voltages`` of a table, as a table."""
    return pd.DataFrame(voltages(Columns.of(table)), index=table.index)


def reverse_voltage(cols: Columns, volts: Mapping[str, np.ndarray]
                    ) -> tuple[np.ndarray, np.ndarray]:
    """(peak reverse voltage, its kindest bound where ``v_reverse_pk`` is not given).

    The largest of ``v_reverse_pk``; the swing below zero, ripple peak + sqrt(2) x AC rms - the
    rail's lower bound (NASA EEE-INST-002 Section C1 Table 4: the peak AC must not reverse-bias a
    polarized part); and on a negative rail (``v_dc`` < 0) the whole applied peak (a polarized
    part fitted on a negative rail is reversed unless the design says otherwise through a
    positive ``v_dc``). Without ``v_reverse_pk`` on a positive rail the reverse voltage is not
    known (NaN) and the swing alone is its kindest bound (a failure there is firm).
    """
    negative = cols.num("v_dc") < 0
    from_rail = _keep(volts["applied_peak_v"], negative)
    below_zero = _at_least(volts["swing_pk_v"] - volts["v_lower_v"], 0.0)
    below_zero = _keep(below_zero, ~np.isnan(volts["v_lower_v"]))
    given = cols.num("v_reverse_pk")
    known = np.fmax(np.fmax(given, from_rail), _keep(below_zero, ~np.isnan(given) | negative))
    return known, _keep(below_zero, np.isnan(known))


def _class1_loss(tc: np.ndarray, tol: np.ndarray, t_op: np.ndarray) -> np.ndarray:
    """Worst fractional loss of a class I dielectric at t_op: dC/C = alpha x (T - 25 degC),
    alpha anywhere in tc +/- tol (ppm/degC)."""
    dt = t_op - 25.0
    tol = _fill(tol, 0.0)
    low = (tc - tol) * dt * 1e-6
    high = (tc + tol) * dt * 1e-6
    return _at_least(-np.fmin(low, high), 0.0)


def _dc_bias_remaining(ratio: np.ndarray, cols: Columns, data: StressData) -> np.ndarray:
    """Fraction of capacitance left at ``ratio`` = applied / rated, from the generic curves (the
    case size's, by the package's text in upper case, else the default one)."""
    curves = sorted({p.upper() if p.upper() in data.dc_bias else "default"
                     for p in cols.coded("package")[1]})
    if len(curves) == 1:  # one curve for every placement: no selection
        out = np.interp(ratio, *data.dc_bias[curves[0]])
    else:
        which = cols.text_map("package", lambda p: curves.index(
            p.upper() if p.upper() in data.dc_bias else "default"), np.intp)
        out = np.full(len(ratio), np.nan)
        for k, key in enumerate(curves):
            mask = which == k
            out[mask] = np.interp(ratio[mask], *data.dc_bias[key])
    return _keep(out, ~np.isnan(ratio))


def _aging_k(cols: Columns, cls: np.ndarray, data: StressData) -> np.ndarray:
    by_code = cols.lookup("dielectric", data.aging_k)
    by_class = np.select([cls == 2.0, cls == 3.0, cls == 1.0],
                         [data.aging_k.get("class2", np.nan), data.aging_k.get("class3", np.nan),
                          data.aging_k.get("class1", 0.0)], np.nan).astype(float)
    return _fill(_fill(by_code, by_class), 0.0)


def _tolerance(cols: Columns, nominal: np.ndarray, data: StressData
               ) -> tuple[np.ndarray, np.ndarray]:
    """(negative tolerance as a fraction, True where the default was assumed)."""
    tol_frac = _fill(cols.num("tol_minus_pct") / 100.0, cols.num("tol_abs_f") / nominal)
    tol_assumed = np.isnan(tol_frac)
    return _fill(tol_frac, data.default_tol_pct / 100.0), tol_assumed


def _temperature_loss(cols: Columns, t_operating_c: np.ndarray
                      ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """(worst fractional loss over temperature, dielectric class used, True where the class or
    its change figure was assumed)."""
    cls = cols.num("dielectric_class")
    change = cols.num("cap_change_minus_pct")
    # A ceramic whose text names no dielectric (or a class II code without its change figure) is
    # taken as class II with the common +/-15 % (X7R/X5R) and marked generic, never as lossless.
    unnamed = cols.is_text("technology", "ceramic") & np.isnan(cls)
    class_assumed = unnamed | (((cls == 2.0) | (cls == 3.0)) & np.isnan(change))
    cls = np.where(unnamed, 2.0, cls)
    change = np.where(class_assumed, ASSUMED_CLASS2_CHANGE_PCT, change)
    temp_loss = np.where((cls == 2.0) | (cls == 3.0), change / 100.0, 0.0)
    temp_loss = np.where(cls == 1.0, _class1_loss(cols.num("tc_ppm"), cols.num("tc_tol_ppm"),
                                                  t_operating_c), temp_loss)
    return _fill(temp_loss, 0.0), cls, class_assumed


def _bias_keep(cols: Columns, applied_peak_v: np.ndarray, class23: np.ndarray,
               data: StressData) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """(fraction kept under DC bias, the part's own keep, True where the generic curve was used,
    True where the voltage is unknown)."""
    part_keep = cols.num("dc_bias_keep")
    generic_keep = _dc_bias_remaining(applied_peak_v / cols.num("voltage_v"), cols, data)
    bias_keep = np.where(class23, _fill(part_keep, generic_keep), 1.0)
    no_part = class23 & np.isnan(part_keep)
    bias_generic = no_part & ~np.isnan(generic_keep) & (generic_keep < 1.0)
    bias_unknown = no_part & np.isnan(generic_keep)
    return _fill(bias_keep, 1.0), part_keep, bias_generic, bias_unknown


def _aging_loss(cols: Columns, cls: np.ndarray, data: StressData
                ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """(aging loss over the required life, the aging constant k, True where k applies but no
    life is given)."""
    life = cols.num("life_h")
    k = _aging_k(cols, cls, data)
    aging_loss = _aging_over(k, _decades(life, data))
    return aging_loss, k, (k > 0) & np.isnan(life)


def _decades(life: np.ndarray, data: StressData) -> np.ndarray:
    """Decades of hours from the aging reference time t0 to ``life`` (0 where it is unknown)."""
    return np.log10(np.fmax(life, data.aging_t0_h) / data.aging_t0_h)


def _aging_over(k: np.ndarray, decades: np.ndarray) -> np.ndarray:
    """The aging loss k/100 x decades, within 0..1."""
    return _at_most(_at_least(_fill(k / 100.0 * decades, 0.0), 0.0), 1.0)


def _worst_aging(cols: Columns, k: np.ndarray, class_assumed: np.ndarray,
                 data: StressData) -> np.ndarray:
    """The aging loss at its worst plausible: over the longest plausible life where none is
    given, and at the fastest rate of the rule set's table where the dielectric was assumed (an
    unnamed class II/III part may be the fastest-aging code, as its change may be the widest)."""
    life = cols.num("life_h")
    decades = np.where(np.isnan(life), np.log10(data.worst_life_h / data.aging_t0_h),
                       _decades(life, data))
    fastest = max(data.aging_k.values(), default=0.0)
    return _aging_over(np.where(class_assumed, np.fmax(k, fastest), k), decades)


def _notes(flags: tuple[np.ndarray, ...], data: StressData) -> np.ndarray:
    """One note per combination of the assumption flags, looked up by a bit code (no per-row
    strings)."""
    texts = (f"tolerance not given, {data.default_tol_pct:g} % assumed",
             "DC-bias loss from the generic typical curve (common practice), give part data",
             "DC-bias loss not counted (voltage unknown)",
             "aging not counted (no required life given)",
             f"dielectric not given: class II (-{ASSUMED_CLASS2_CHANGE_PCT:g} %) assumed")
    code = sum(f.astype(bool).astype(np.int64) << i for i, f in enumerate(flags))
    lookup = np.array([
        "; ".join(t for i, t in enumerate(texts) if c >> i & 1) for c in range(1 << len(texts))
    ], dtype=object)
    return lookup[code]


def capacitance_worst_case(cols: Columns, applied_peak_v: np.ndarray, t_operating_c: np.ndarray,
                           data: StressData) -> dict[str, np.ndarray]:
    """Worst-case minimum capacitance and each factor behind it.

    c_worst = nominal x (1 - negative tolerance) x (1 - temperature-characteristic loss)
    x (1 - DC-bias loss) x (1 - aging loss over the required life). Class II/III codes give
    their maximum change over the rated range (EIA-198), taken in full; class I loses
    alpha x (T - 25 degC) at its worst; DC bias uses a per-part curve column ``dc_bias_keep``
    where the parts data gave one, else the generic curve (marked generic).
    """
    nominal = cols.num("capacitance_f")
    tol_frac, tol_assumed = _tolerance(cols, nominal, data)
    temp_loss, cls, class_assumed = _temperature_loss(cols, t_operating_c)
    class23 = (cls == 2.0) | (cls == 3.0)
    bias_keep, part_keep, bias_generic, bias_unknown = _bias_keep(cols, applied_peak_v, class23,
                                                                  data)
    aging_loss, k, aging_unknown = _aging_loss(cols, cls, data)
    tol_factor = 1.0 - tol_frac
    c_worst = nominal * tol_factor * (1.0 - temp_loss) * bias_keep * (1.0 - aging_loss)
    flags = (tol_assumed, bias_generic, bias_unknown, aging_unknown, class_assumed)
    # Bounds of the unknowns. At their most favourable (no tolerance, no DC-bias or aging loss,
    # a class I dielectric) the margin can only be larger; at their worst plausible (the widest
    # common tolerance, the worst DC-bias keep, aging over the longest plausible life, the widest
    # class III change and the fastest aging where the dielectric was assumed) it can only be
    # smaller.
    uncertain = tol_assumed | bias_generic | bias_unknown | aging_unknown | class_assumed
    best_keep = np.where(bias_generic | bias_unknown, 1.0, bias_keep)
    c_best = (nominal * np.where(tol_assumed, 1.0, tol_factor)
              * np.where(class_assumed, 1.0, 1.0 - temp_loss) * best_keep
              * np.where(aging_unknown, 1.0, 1.0 - aging_loss))
    ratio = applied_peak_v / cols.num("voltage_v")
    worst_keep = np.where(bias_generic, np.interp(_fill(ratio, 0.0), *data.dc_bias_worst),
                          np.where(bias_unknown, np.nan, bias_keep))
    worst_aging = _worst_aging(cols, k, class_assumed, data)
    worst_temp = np.where(class_assumed, data.worst_class_change_pct / 100.0, temp_loss)
    # An assumed tolerance has no worst bound: the BOM should give it (no pass without it).
    c_worst_bound = _keep(nominal * tol_factor * (1.0 - worst_temp) * worst_keep
                          * (1.0 - worst_aging), ~tol_assumed)
    need = cols.num("c_min_f")
    need = _keep(need, need > 0)  # c_min_f = 0 is the design sheet's "none": no margin
    return {
        "c_tol_factor": tol_factor,
        "c_temp_factor": 1.0 - temp_loss,
        "c_bias_factor": bias_keep,
        "c_aging_factor": 1.0 - aging_loss,
        "c_worst_f": c_worst,
        "c_worst_f_best": np.where(uncertain, c_best, c_worst),
        "c_worst_f_worst": np.where(uncertain, c_worst_bound, c_worst),
        "c_margin": c_worst / need,
        "c_margin_best": _keep(c_best / need, uncertain),
        "c_margin_worst": _keep(c_worst_bound / need, uncertain),
        "c_margin_basis": labels(np.where(uncertain, 2, ~np.isnan(part_keep) & class23),
                                 ("", "part", "generic")),
        "c_margin_note": _notes(flags, data),
    }


def _by_technology(cols: Columns, ratings: Mapping[str, float]) -> np.ndarray:
    """A per-technology figure (``ceramic-class1``.. keys first for ceramics); NaN where none."""
    cls = cols.num("dielectric_class")
    by_class = np.select([cls == float(c) for c in (1, 2, 3)],
                         [ratings.get(f"ceramic-class{c}", np.nan) for c in (1, 2, 3)],
                         np.nan).astype(float)
    return _fill(_keep(by_class, cols.is_text("technology", "ceramic")),
                 cols.lookup("technology", ratings))


def rated_temp_max(cols: Columns, data: StressData) -> tuple[np.ndarray, np.ndarray]:
    """(rated maximum temperature, True where it is the typical value of the technology)."""
    stated = cols.num("temp_max_c")
    typical = _by_technology(cols, data.typical_temp_max_c)
    return _fill(stated, typical), np.isnan(stated) & ~np.isnan(typical)


def metric_arrays(cols: Columns, data: StressData) -> dict[str, np.ndarray]:
    """Every metric column of the placement stresses (see ``bomcheck.vocabulary.METRICS``) and
    the factors of the worst-case capacitance, by name, in the table's order."""
    volts = voltages(cols)
    applied, transient = volts["applied_peak_v"], volts["transient_peak_v"]
    rated = cols.num("voltage_v")
    is_ac = cols.is_text("voltage_kind", "ac")
    # An AC rating in rms is a peak of sqrt(2) x rated (common practice): the applied peak, DC
    # included, and a transient are held against it.
    rated_peak = np.where(is_ac, SQRT2 * rated, rated)
    polarized = cols.flag("polarized")
    reverse, reverse_best = reverse_voltage(cols, volts)
    t_ambient = cols.num("t_ambient_c")
    t_operating = t_ambient + _fill(cols.num("t_rise_c"), 0.0)
    # The coldest ambient is the design's t_ambient_min_c; without it the check is made only
    # where the operating ambient itself, an upper bound of the coldest, is below the rated
    # minimum (a firm failure whatever the coldest is). A coldest above the operating ambient
    # contradicts it (the design reader warns): the lower of the two is taken.
    t_min_given = cols.num("t_ambient_min_c")
    temp_min = cols.num("temp_min_c")
    t_cold = np.where(np.isnan(t_min_given), _keep(t_ambient, t_ambient < temp_min),
                      np.fmin(t_min_given, t_ambient))
    temp_max, temp_assumed = rated_temp_max(cols, data)
    metrics = {
        "v_upper_v": volts["v_upper_v"],
        "applied_peak_v": applied,
        "transient_peak_v": transient,
        "voltage_ratio": np.where(is_ac, cols.num("v_ac_rms") / rated, applied / rated),
        "ac_peak_ratio": _keep(applied / rated_peak, is_ac),
        "transient_ratio": _keep(transient / rated_peak,
                                 ~is_ac | ~np.isnan(cols.num("v_transient_pk"))),
        "reverse_peak_v": _keep(reverse, polarized),
        "reverse_ratio": _keep(reverse / rated, polarized),
        "reverse_ratio_best": _keep(reverse_best / rated, polarized),
        "reverse_ratio_basis": labels(polarized & ~np.isnan(reverse_best), ("", BEST_ONLY)),
        "rated_voltage_v": rated.copy(),  # the output's own column, not the input's memory
        "rated_peak_v": rated_peak,
        "t_operating_c": t_operating,
        "temp_max_used_c": temp_max,
        "temp_margin_c": temp_max - t_operating,
        "temp_margin_c_basis": labels(temp_assumed, ("", "generic")),
        "temp_margin_c_worst": _keep(_by_technology(cols, data.lowest_temp_max_c) - t_operating,
                                     temp_assumed),
        "t_cold_c": t_cold,
        "temp_min_margin_c": t_cold - temp_min,
    }
    return {**metrics, **capacitance_worst_case(cols, applied, t_operating, data)}


def compute(table: pd.DataFrame, data: StressData) -> pd.DataFrame:
    """The table with every metric column added (see ``bomcheck.vocabulary.METRICS``)."""
    arrays = by_rows(lambda cols: metric_arrays(cols, data), Columns.of(table))
    share_empty(arrays, read_only_nan(len(table)))
    # The arrays are the new columns as they are (no copy into one block).
    metrics = pd.DataFrame(arrays, index=table.index, copy=False)
    return pd.concat([table.drop(columns=[c for c in metrics if c in table]), metrics], axis=1)
