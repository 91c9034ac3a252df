"""Stress stage: pure column arithmetic from placements and operating conditions to metrics (SI).

Input is one table of fitted placements (spec columns from the parse stage and condition
columns from the design sheet); output is the same table with the metric columns of
``bomcheck.vocabulary.METRICS`` added, plus the factors behind the worst-case capacitance so
every one can be reported. No I/O, no pint, no per-row Python loops.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field

import numpy as np
import pandas as pd



# Capacitance change taken for a class II ceramic whose code is not known: X7R/X5R's +/-15 %
# (EIA-198 letter R), the common case, marked generic wherever it is used.
ASSUMED_CLASS2_CHANGE_PCT = 15.0


@dataclass(frozen=True)
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


def num_column(table: pd.DataFrame, name: str) -> pd.Series:
    """A float column, all-NaN when the table lacks it."""
    if name in table.columns:
        return pd.to_numeric(table[name], errors="coerce").astype(float)
    return pd.Series(np.nan, index=table.index, dtype=float)


def text_column(table: pd.DataFrame, name: str) -> pd.Series:
    """A text column, "" for missing values and when the table lacks it."""
    if name in table.columns:
        return table[name].astype(object).where(table[name].notna(), "").astype(str)
    return pd.Series("", index=table.index, dtype=object)


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


def applied_voltages(table: pd.DataFrame) -> pd.DataFrame:
    """Upper and lower bounds of the DC rail, applied peak and transient peak, all magnitudes.

    The rail's upper bound is the larger of ``|v_dc_max|`` (where given) and ``|v_dc|`` x (1 +
    v_tol_pct/100) (``|v_dc|`` without a tolerance): a ``v_dc_max`` below ``|v_dc|`` contradicts
    the design and never lowers the bound (the design reader warns). The lower bound is ``|v_dc|``
    x (1 - v_tol_pct/100), never below 0. The applied peak is DC upper bound + ripple peak +
    sqrt(2) x AC rms (NASA EEE-INST-002 Section C1 Table 4, note 1: DC plus peak AC); with an AC
    voltage and no DC given, the DC is none. A ripple, AC or transient not given is taken as none
    (0 V / the applied peak).
    """
    v_dc = num_column(table, "v_dc").abs()
    ac_peak = SQRT2 * num_column(table, "v_ac_rms")
    v_dc = v_dc.where(v_dc.notna() | ac_peak.isna(), 0.0)
    tol = num_column(table, "v_tol_pct").clip(lower=0.0).fillna(0.0) / 100.0
    from_tol = v_dc * (1.0 + tol)
    upper = pd.Series(np.fmax(num_column(table, "v_dc_max").abs(), from_tol), index=table.index)
    lower = (v_dc * (1.0 - tol)).clip(lower=0.0)
    swing = num_column(table, "v_ripple_pk").fillna(0.0) + ac_peak.fillna(0.0)
    applied = upper + swing
    transient = np.fmax(applied, num_column(table, "v_transient_pk"))
    return pd.DataFrame(
        {"v_upper_v": upper, "v_lower_v": lower, "swing_pk_v": swing, "applied_peak_v": applied,
         "transient_peak_v": transient},
        index=table.index,
    )


def reverse_voltage(table: pd.DataFrame, volts: pd.DataFrame) -> tuple[pd.Series, pd.Series]:
    """(peak reverse voltage, its kindest bound where ``v_reverse_pk`` is not given).

    The largest of ``v_reverse_pk``; the swing below zero, ripple peak + sqrt(2) x AC rms - the
    rail's lower bound (NASA EEE-INST-002 Section C1 Table 4: the peak AC must not reverse-bias a
    polarized part); and on a negative rail (``v_dc`` < 0) the whole applied peak (a polarized
    part fitted on a negative rail is reversed unless the design says otherwise through a
    positive ``v_dc``). Without ``v_reverse_pk`` on a positive rail the reverse voltage is not
    known (NaN) and the swing alone is its kindest bound (a failure there is firm).
    """
    negative = num_column(table, "v_dc") < 0
    from_rail = volts["applied_peak_v"].where(negative)
    below_zero = (volts["swing_pk_v"] - volts["v_lower_v"]).clip(lower=0.0)
    below_zero = below_zero.where(volts["v_lower_v"].notna())
    given = num_column(table, "v_reverse_pk")
    known = np.fmax(np.fmax(given, from_rail), below_zero.where(given.notna() | negative))
    best = below_zero.where(known.isna())
    return pd.Series(known, index=table.index), best


def _class1_loss(tc: pd.Series, tol: pd.Series, t_op: pd.Series) -> pd.Series:
    """Worst fractional loss of a class I dielectric at t_op: dC/C = alpha x (T - 25 degC),
    alpha anywhere in tc +/- tol (ppm/degC)."""
    dt = t_op - 25.0
    tol = tol.fillna(0.0)
    low = (tc - tol) * dt * 1e-6
    high = (tc + tol) * dt * 1e-6
    return (-np.fmin(low, high)).clip(lower=0.0)


def _dc_bias_remaining(ratio: pd.Series, package: pd.Series, data: StressData) -> pd.Series:
    """Fraction of capacitance left at ``ratio`` = applied / rated, from the generic curves."""
    out = pd.Series(np.nan, index=ratio.index, dtype=float)
    package = package.str.upper()
    keys = package.where(package.isin(list(data.dc_bias)), "default")
    for key in pd.unique(keys):
        xs, ys = data.dc_bias.get(key, data.dc_bias["default"])
        mask = keys == key
        out[mask] = np.interp(ratio[mask].to_numpy(), xs, ys)
    return out.where(ratio.notna())


def _aging_k(table: pd.DataFrame, data: StressData) -> pd.Series:
    dielectric = text_column(table, "dielectric")
    cls = num_column(table, "dielectric_class")
    by_code = dielectric.map(dict(data.aging_k)).astype(float)
    by_class = cls.map({2.0: data.aging_k.get("class2", np.nan),
                        3.0: data.aging_k.get("class3", np.nan),
                        1.0: data.aging_k.get("class1", 0.0)}).astype(float)
    return by_code.fillna(by_class).fillna(0.0)


def _tolerance(table: pd.DataFrame, nominal: pd.Series, data: StressData
               ) -> tuple[pd.Series, pd.Series]:
    """(negative tolerance as a fraction, True where the default was assumed)."""
    tol_frac = (num_column(table, "tol_minus_pct") / 100.0).fillna(
        num_column(table, "tol_abs_f") / nominal)
    tol_assumed = tol_frac.isna()
    return tol_frac.fillna(data.default_tol_pct / 100.0), tol_assumed


def _temperature_loss(table: pd.DataFrame, t_operating_c: pd.Series
                      ) -> tuple[pd.Series, pd.Series, pd.Series]:
    """(worst fractional loss over temperature, dielectric class used, True where the class or
    its change figure was assumed)."""
    cls = num_column(table, "dielectric_class")
    change = num_column(table, "cap_change_minus_pct")
    # A ceramic whose text names no dielectric (or a class II code without its change figure) is
    # taken as class II with the common +/-15 % (X7R/X5R) and marked generic, never as lossless.
    ceramic = text_column(table, "technology") == "ceramic"
    class_assumed = (ceramic & cls.isna()) | (cls.isin([2.0, 3.0]) & change.isna())
    cls = cls.where(~(ceramic & cls.isna()), 2.0)
    change = change.where(~class_assumed, ASSUMED_CLASS2_CHANGE_PCT)
    temp_loss = pd.Series(0.0, index=table.index)
    temp_loss = temp_loss.mask(cls.isin([2.0, 3.0]), change / 100.0)
    temp_loss = temp_loss.mask(
        cls == 1.0, _class1_loss(num_column(table, "tc_ppm"), num_column(table, "tc_tol_ppm"),
                                 t_operating_c)
    )
    return temp_loss.fillna(0.0), cls, class_assumed


def _bias_keep(table: pd.DataFrame, applied_peak_v: pd.Series, class23: pd.Series,
               data: StressData) -> tuple[pd.Series, pd.Series, pd.Series, pd.Series]:
    """(fraction kept under DC bias, the part's own keep, True where the generic curve was used,
    True where the voltage is unknown)."""
    rated = num_column(table, "voltage_v")
    part_keep = num_column(table, "dc_bias_keep")
    generic_keep = _dc_bias_remaining(applied_peak_v / rated, text_column(table, "package"), data)
    bias_keep = pd.Series(1.0, index=table.index)
    bias_keep = bias_keep.mask(class23, part_keep.fillna(generic_keep))
    bias_generic = class23 & part_keep.isna() & generic_keep.notna() & (generic_keep < 1.0)
    bias_unknown = class23 & part_keep.isna() & generic_keep.isna()
    return bias_keep.fillna(1.0), part_keep, bias_generic, bias_unknown


def _aging_loss(table: pd.DataFrame, cls: pd.Series, data: StressData
                ) -> tuple[pd.Series, pd.Series, pd.Series]:
    """(aging loss over the required life, the aging constant k, True where k applies but no
    life is given)."""
    life = num_column(table, "life_h")
    k = _aging_k(table.assign(dielectric_class=cls), data)
    decades = np.log10(np.fmax(life, data.aging_t0_h) / data.aging_t0_h)
    aging_loss = (k / 100.0 * decades).fillna(0.0).clip(lower=0.0, upper=1.0)
    return aging_loss, k, (k > 0) & life.isna()


def _notes(flags: tuple[pd.Series, ...], data: StressData, index: pd.Index) -> pd.Series:
    """One note per combination of the assumption flags, looked up by a bit code (no per-row
    strings)."""
    texts = (f"tolerance not given, {data.default_tol_pct:g} % assumed",
             "DC-bias loss from the generic typical curve (common practice), give part data",
             "DC-bias loss not counted (voltage unknown)",
             "aging not counted (no required life given)",
             f"dielectric not given: class II (-{ASSUMED_CLASS2_CHANGE_PCT:g} %) assumed")
    code = sum(f.to_numpy(dtype=bool).astype(np.int64) << i for i, f in enumerate(flags))
    lookup = np.array([
        "; ".join(t for i, t in enumerate(texts) if c >> i & 1) for c in range(1 << len(texts))
    ], dtype=object)
    return pd.Series(lookup[code], index=index, dtype=object)


def capacitance_worst_case(
    table: pd.DataFrame, applied_peak_v: pd.Series, t_operating_c: pd.Series, data: StressData
) -> pd.DataFrame:
    """Worst-case minimum capacitance and each factor behind it.

    c_worst = nominal x (1 - negative tolerance) x (1 - temperature-characteristic loss)
    x (1 - DC-bias loss) x (1 - aging loss over the required life). Class II/III codes give
    their maximum change over the rated range (EIA-198), taken in full; class I loses
    alpha x (T - 25 degC) at its worst; DC bias uses a per-part curve column ``dc_bias_keep``
    where the parts data gave one, else the generic curve (marked generic).
    """
    nominal = num_column(table, "capacitance_f")
    tol_frac, tol_assumed = _tolerance(table, nominal, data)
    temp_loss, cls, class_assumed = _temperature_loss(table, t_operating_c)
    class23 = cls.isin([2.0, 3.0])
    bias_keep, part_keep, bias_generic, bias_unknown = _bias_keep(table, applied_peak_v, class23,
                                                                  data)
    aging_loss, k, aging_unknown = _aging_loss(table, cls, data)
    tol_factor = 1.0 - tol_frac
    c_worst = nominal * tol_factor * (1.0 - temp_loss) * bias_keep * (1.0 - aging_loss)
    flags = (tol_assumed, bias_generic, bias_unknown, aging_unknown, class_assumed)
    # Bounds of the unknowns. At their most favourable (no tolerance, no DC-bias or aging loss,
    # a class I dielectric) the margin can only be larger; at their worst plausible (the widest
    # common tolerance, the worst DC-bias keep, aging over the longest plausible life, the widest
    # class III change) it can only be smaller.
    uncertain = tol_assumed | bias_generic | bias_unknown | aging_unknown | class_assumed
    best_keep = np.where(bias_generic | bias_unknown, 1.0, bias_keep)
    c_best = (nominal * np.where(tol_assumed, 1.0, tol_factor)
              * np.where(class_assumed, 1.0, 1.0 - temp_loss) * best_keep
              * np.where(aging_unknown, 1.0, 1.0 - aging_loss))
    ratio = applied_peak_v / num_column(table, "voltage_v")
    worst_keep = np.where(bias_generic, np.interp(ratio.fillna(0.0), *data.dc_bias_worst),
                          np.where(bias_unknown, np.nan, bias_keep))
    worst_decades = np.log10(data.worst_life_h / data.aging_t0_h)
    worst_aging = np.where(aging_unknown, (k / 100.0 * worst_decades).clip(0.0, 1.0), aging_loss)
    worst_temp = np.where(class_assumed, data.worst_class_change_pct / 100.0, temp_loss)
    # An assumed tolerance has no worst bound: the BOM should give it (no pass without it).
    c_worst_bound = (nominal * tol_factor * (1.0 - worst_temp) * worst_keep * (1.0 - worst_aging)
                     ).where(~tol_assumed)
    need = num_column(table, "c_min_f")
    need = need.where(need > 0)  # c_min_f = 0 is the design sheet's "none": no margin
    return pd.DataFrame(
        {
            "c_tol_factor": tol_factor,
            "c_temp_factor": 1.0 - temp_loss,
            "c_bias_factor": bias_keep,
            "c_aging_factor": 1.0 - aging_loss,
            "c_worst_f": c_worst,
            "c_worst_f_best": c_best.where(uncertain, c_worst),
            "c_worst_f_worst": c_worst_bound.where(uncertain, c_worst),
            "c_margin": c_worst / need,
            "c_margin_best": (c_best / need).where(uncertain),
            "c_margin_worst": (c_worst_bound / need).where(uncertain),
            "c_margin_basis": np.where(uncertain, "generic",
                                       np.where(part_keep.notna() & class23, "part", "")),
            "c_margin_note": _notes(flags, data, table.index),
        },
        index=table.index,
    )


def _by_technology(table: pd.DataFrame, ratings: Mapping[str, float]) -> pd.Series:
    """A per-technology figure (``ceramic-class1``.. keys first for ceramics); NaN where none."""
    tech = text_column(table, "technology")
    cls = num_column(table, "dielectric_class")
    by_class = cls.map({float(c): ratings.get(f"ceramic-class{c}", np.nan) for c in (1, 2, 3)})
    out = by_class.astype(float).where(tech == "ceramic")
    return out.fillna(tech.map(dict(ratings)).astype(float))


def rated_temp_max(table: pd.DataFrame, data: StressData) -> tuple[pd.Series, pd.Series]:
    """(rated maximum temperature, True where it is the typical value of the technology)."""
    stated = num_column(table, "temp_max_c")
    typical = _by_technology(table, data.typical_temp_max_c)
    assumed = stated.isna() & typical.notna()
    return stated.fillna(typical), assumed


def compute(table: pd.DataFrame, data: StressData) -> pd.DataFrame:
    """The table with every metric column added (see ``bomcheck.vocabulary.METRICS``)."""
    volts = applied_voltages(table)
    rated = num_column(table, "voltage_v")
    is_ac = text_column(table, "voltage_kind") == "ac"
    dc_ratio = volts["applied_peak_v"] / rated
    ac_ratio = num_column(table, "v_ac_rms") / rated
    # An AC rating in rms is a peak of sqrt(2) x rated (common practice): the applied peak, DC
    # included, and a transient are held against it.
    rated_peak = (SQRT2 * rated).where(is_ac, rated)
    polarized = (table["polarized"].astype(object).fillna(False).astype(bool) if "polarized" in table
                 else pd.Series(False, index=table.index))
    reverse, reverse_best = reverse_voltage(table, volts)
    t_operating = num_column(table, "t_ambient_c") + num_column(table, "t_rise_c").fillna(0.0)
    # The coldest ambient is the design's t_ambient_min_c; without it the check is made only
    # where the operating ambient itself, an upper bound of the coldest, is below the rated
    # minimum (a firm failure whatever the coldest is). A coldest above the operating ambient
    # contradicts it (the design reader warns): the lower of the two is taken.
    t_ambient = num_column(table, "t_ambient_c")
    t_min_given = num_column(table, "t_ambient_min_c")
    temp_min = num_column(table, "temp_min_c")
    t_cold = pd.Series(np.fmin(t_min_given, t_ambient), index=table.index).where(
        t_min_given.notna(), t_ambient.where(t_ambient < temp_min))
    temp_max, temp_assumed = rated_temp_max(table, data)
    metrics = pd.DataFrame(
        {
            "v_upper_v": volts["v_upper_v"],
            "applied_peak_v": volts["applied_peak_v"],
            "transient_peak_v": volts["transient_peak_v"],
            "voltage_ratio": dc_ratio.where(~is_ac, ac_ratio),
            "ac_peak_ratio": (volts["applied_peak_v"] / rated_peak).where(is_ac),
            "transient_ratio": (volts["transient_peak_v"] / rated_peak).where(
                ~is_ac | num_column(table, "v_transient_pk").notna()),
            "reverse_peak_v": reverse.where(polarized),
            "reverse_ratio": (reverse / rated).where(polarized),
            "reverse_ratio_best": (reverse_best / rated).where(polarized),
            "reverse_ratio_basis": np.where(polarized & reverse_best.notna(), BEST_ONLY, ""),
            "rated_voltage_v": rated,
            "rated_peak_v": rated_peak,
            "t_operating_c": t_operating,
            "temp_max_used_c": temp_max,
            "temp_margin_c": temp_max - t_operating,
            "temp_margin_c_basis": np.where(temp_assumed, "generic", ""),
            "temp_margin_c_worst": (_by_technology(table, data.lowest_temp_max_c)
                                    - t_operating).where(temp_assumed),
            "t_cold_c": t_cold,
            "temp_min_margin_c": t_cold - temp_min,
        },
        index=table.index,
    )
    caps = capacitance_worst_case(table, volts["applied_peak_v"], t_operating, data)
    return pd.concat([table.drop(columns=[c for c in (*metrics, *caps) if c in table]),
                      metrics, caps], axis=1)
