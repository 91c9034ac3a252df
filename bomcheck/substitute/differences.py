"""Substitute check, the differences that matter: the alternate's spec against the original's
(after the parts data), each topic a small function, and the worst-case capacitance lost."""

from __future__ import annotations

import math
import re
from collections.abc import Callable, Iterator, Mapping
from typing import Any

import numpy as np
import pandas as pd

from bomcheck.rowcodes import row_codes
from bomcheck.substitute.result import (
    SEVERITIES,
    Alternate,
    Difference,
    SubstituteOptions,
)
from bomcheck.substitute.words import fq, norm_package, num

# (field, severity, original, proposed, text, short): one difference before its designators.
Found = tuple[str, str, str, str, str, str]

_SAFETY = re.compile(r"^([XY])(\d)$")


def _d(fld: str, severity: str, ov: str, av: str, text: str, short: str = "") -> Found:
    return (fld, severity, ov, av, text, short or text)


def _safety_difference(o: str, a: str) -> tuple[str, str, str] | None:
    """(severity, text, short) for a changed safety class, or None when it is no change."""
    if o == a:
        return None
    if not a:
        return ("reject", f"no safety class (the original is an {o} safety capacitor, IEC "
                "60384-14)", f"loses {o}")
    mo, ma = _SAFETY.match(o), _SAFETY.match(a)
    if mo and ma and mo.group(1) == ma.group(1) and int(ma.group(2)) <= int(mo.group(2)):
        return ("note", f"safety class {a} replacing {o} (same series, equal or higher "
                "subclass)", f"{a} replacing {o}")
    if mo and ma and mo.group(1) == "X" and ma.group(1) == "Y":
        return ("review", f"safety class {a} replacing {o} (a line-to-earth class across the "
                "line is common practice; confirm it with the product's safety approval)",
                f"{a} replacing {o}")
    return ("reject", f"safety class {a} replacing {o}, not an equal or higher class",
            f"{a} replacing {o}")


def _case(package: Any) -> str:
    """``case 0603``; ``case D`` stays as the parser wrote it."""
    text = str(package or "")
    return text if text.casefold().startswith("case") else f"case {text}"


def _tol_text(minus: float, plus: float, absolute: float) -> str:
    if not math.isnan(minus) and not math.isnan(plus):
        return (f"+/-{minus:g} %" if minus == plus else f"+{plus:g}/-{minus:g} %")
    if not math.isnan(absolute):
        return f"+/-{fq(absolute, 'F')}"
    return "?"


def _flag_value(value: Any) -> bool | None:
    """A yes/no spec field as True, False or None (numpy booleans included)."""
    if isinstance(value, (bool, np.bool_)):
        return bool(value)
    return None


def _polarity_and_technology(o: Mapping[str, Any], a: Mapping[str, Any],
                             footprint_checked: bool) -> Iterator[Found]:
    tech_o, tech_a = o.get("technology") or "", a.get("technology") or ""
    pol_o, pol_a = _flag_value(o.get("polarized")), _flag_value(a.get("polarized"))
    if pol_a is True and pol_o is not True:
        yield _d("polarity", "reject" if pol_o is False else "review", tech_o or "?", tech_a,
                 f"polarized ({tech_a or 'polarized part'}) replacing a "
                 f"{'non-polarized' if pol_o is False else 'part of unknown polarity'} "
                 f"({tech_o or 'technology not known'}) part", f"polarized {tech_a}")
    if tech_o and tech_a and tech_o != tech_a:
        yield _d("technology", "review", tech_o, tech_a,
                 f"{tech_a} replacing {tech_o}, a different technology (ESR, ripple rating, "
                 "leakage and loop stability differ)", f"{tech_a} replacing {tech_o}")
    elif tech_o and not tech_a:
        yield _d("technology", "review", tech_o, "?",
                 "technology not known for the alternate (give its description)",
                 "technology not known")
    film_o, film_a = o.get("film_material") or "", a.get("film_material") or ""
    if tech_o == tech_a == "film" and film_o and film_a and film_o != film_a:
        yield _d("film_material", "review", film_o, film_a,
                 f"{film_a} film replacing {film_o} (dielectric loss and pulse rating differ)",
                 f"{film_a} replacing {film_o}")


def _voltage_rating(o: Mapping[str, Any], a: Mapping[str, Any],
                    footprint_checked: bool) -> Iterator[Found]:
    v_o, v_a = num(o.get("voltage_v")), num(a.get("voltage_v"))
    ac_o, ac_a = o.get("voltage_kind") == "ac", a.get("voltage_kind") == "ac"
    if ac_o and not ac_a:
        yield _d("ac_rating", "reject", f"{fq(v_o, 'V')} AC", fq(v_a, "V"),
                 f"no AC rating (the original is rated {fq(v_o, 'V')} AC)", "no AC rating")
    if not math.isnan(v_o) and math.isnan(v_a):
        yield _d("rated_voltage", "review", fq(v_o, "V"), "?",
                 "rated voltage not known for the alternate (give it in the alternates file)",
                 "rated voltage not known")
    elif not math.isnan(v_o) and not (math.isclose(v_o, v_a, rel_tol=1e-6) and ac_o == ac_a):
        shown_o = fq(v_o, "V") + (" AC" if ac_o else "")
        shown_a = fq(v_a, "V") + (" AC" if ac_a else "")
        yield _d("rated_voltage", "note", shown_o, shown_a,
                 f"rated {shown_a} instead of {shown_o}")


def _safety(o: Mapping[str, Any], a: Mapping[str, Any],
            footprint_checked: bool) -> Iterator[Found]:
    safety = _safety_difference(o.get("safety_class") or "", a.get("safety_class") or "")
    if safety and o.get("safety_class"):
        yield _d("safety_class", safety[0], o.get("safety_class") or "",
                 a.get("safety_class") or "", safety[1], safety[2])
    if _flag_value(o.get("emi_filter")) is True and _flag_value(a.get("emi_filter")) is not True:
        yield _d("emi_filter", "reject", "feedthrough/EMI filter", "not a filter part",
                 "not a feedthrough/EMI filter part (the original is one)", "not an EMI filter")


def _temperature_range(o: Mapping[str, Any], a: Mapping[str, Any],
                       footprint_checked: bool) -> Iterator[Found]:
    tmax_o, tmax_a = num(o.get("temp_max_c")), num(a.get("temp_max_c"))
    if not math.isnan(tmax_o) and not math.isnan(tmax_a) and tmax_o != tmax_a:
        yield _d("temp_max", "note", fq(tmax_o, "degC"), fq(tmax_a, "degC"),
                 f"rated to {fq(tmax_a, 'degC')} instead of {fq(tmax_o, 'degC')}")
    elif not math.isnan(tmax_o) and math.isnan(tmax_a):
        yield _d("temp_max", "note", fq(tmax_o, "degC"), "?",
                 "rated maximum temperature not given for the alternate (the rule set's "
                 "typical value is used)", "maximum temperature not given")
    tmin_o, tmin_a = num(o.get("temp_min_c")), num(a.get("temp_min_c"))
    if not math.isnan(tmin_o) and not math.isnan(tmin_a) and tmin_a > tmin_o:
        yield _d("temp_min", "review", fq(tmin_o, "degC"), fq(tmin_a, "degC"),
                 f"rated only down to {fq(tmin_a, 'degC')} instead of {fq(tmin_o, 'degC')} "
                 "(the design sheet gives no minimum temperature to check it against)",
                 f"rated down to {fq(tmin_a, 'degC')}")


def _dielectric(o: Mapping[str, Any], a: Mapping[str, Any],
                footprint_checked: bool) -> Iterator[Found]:
    code_o, code_a = o.get("dielectric") or "", a.get("dielectric") or ""
    cls_o, cls_a = num(o.get("dielectric_class")), num(a.get("dielectric_class"))
    if cls_o == 1 and cls_a in (2, 3):
        yield _d("dielectric", "review", f"{code_o} (class I)", f"{code_a} (class {int(cls_a)})",
                 f"class {'II' if cls_a == 2 else 'III'} dielectric {code_a} replacing class I "
                 f"{code_o} (capacitance changes with temperature, DC bias and age; EIA-198)",
                 f"{code_a} replacing {code_o}")
    elif cls_o == 2 and cls_a == 3:
        yield _d("dielectric", "review", f"{code_o} (class II)", f"{code_a} (class III)",
                 f"class III dielectric {code_a} replacing class II {code_o} (a much larger "
                 "capacitance change over temperature; EIA-198)", f"{code_a} replacing {code_o}")
    elif code_o and code_a and code_o != code_a:
        yield _d("dielectric", "note", code_o, code_a, f"{code_a} replacing {code_o}")
    elif code_o and not code_a and (a.get("technology") or "") in ("", "ceramic"):
        yield _d("dielectric", "review", code_o, "?",
                 "dielectric not given for the alternate", "dielectric not given")


def _tolerance_and_capacitance(o: Mapping[str, Any], a: Mapping[str, Any],
                               footprint_checked: bool) -> Iterator[Found]:
    tol_o = (num(o.get("tol_minus_pct")), num(o.get("tol_plus_pct")), num(o.get("tol_abs_f")))
    tol_a = (num(a.get("tol_minus_pct")), num(a.get("tol_plus_pct")), num(a.get("tol_abs_f")))
    t_o, t_a = _tol_text(*tol_o), _tol_text(*tol_a)
    if t_o != "?" and t_o != t_a:
        yield _d("tolerance", "note", t_o, t_a,
                 f"tolerance {t_a} instead of {t_o}" if t_a != "?" else
                 f"tolerance not given for the alternate (the original is {t_o})",
                 f"tolerance {t_a}")
    c_o, c_a = num(o.get("capacitance_f")), num(a.get("capacitance_f"))
    if not math.isnan(c_o) and math.isnan(c_a):
        yield _d("capacitance", "review", fq(c_o, "F"), "?",
                 "capacitance not known for the alternate", "capacitance not known")
    elif not math.isnan(c_o) and not math.isclose(c_o, c_a, rel_tol=1e-6):
        yield _d("capacitance", "review", fq(c_o, "F"), fq(c_a, "F"),
                 f"{fq(c_a, 'F')} instead of {fq(c_o, 'F')}, a different nominal value",
                 f"{fq(c_a, 'F')} instead of {fq(c_o, 'F')}")


def _package(o: Mapping[str, Any], a: Mapping[str, Any],
             footprint_checked: bool) -> Iterator[Found]:
    p_o, p_a = norm_package(o.get("package")), norm_package(a.get("package"))
    show_o, show_a = _case(o.get("package")), _case(a.get("package"))
    if p_o and p_a and p_o != p_a:
        if footprint_checked:
            yield _d("package", "note", show_o, show_a,
                     f"{show_a} instead of {show_o} (footprint checked)")
        else:
            yield _d("package", "reject", show_o, show_a,
                     f"{show_a} instead of {show_o}, a different footprint (mark it "
                     "footprint_checked once the layout is confirmed)", show_a)
    elif p_o and not p_a:
        yield _d("package", "note" if footprint_checked else "review", show_o, "?",
                 "case size not given for the alternate"
                 + (" (footprint checked)" if footprint_checked else ""), "case size not given")


# The topics compared, in the order their differences are listed.
SPEC_TOPICS: tuple[Callable[[Mapping[str, Any], Mapping[str, Any], bool], Iterator[Found]], ...] = (
    _polarity_and_technology, _voltage_rating, _safety, _temperature_range, _dielectric,
    _tolerance_and_capacitance, _package,
)


def spec_differences(o: Mapping[str, Any], a: Mapping[str, Any], footprint_checked: bool
                     ) -> list[Found]:
    """(field, severity, original, proposed, text, short) for one original spec and the
    alternate's."""
    return [d for topic in SPEC_TOPICS for d in topic(o, a, footprint_checked)]


def _c_worst_losses(o: pd.DataFrame, a: pd.DataFrame, options: SubstituteOptions
                    ) -> Iterator[tuple[int, Found]]:
    """(position, difference) where the alternate's worst-case capacitance after tolerance,
    temperature, DC bias and aging is below the original's."""
    cw_o = pd.to_numeric(o["c_worst_f"], errors="coerce").to_numpy(dtype=float)
    cw_a = pd.to_numeric(a["c_worst_f"], errors="coerce").to_numpy(dtype=float)
    b_o = pd.to_numeric(o["c_bias_factor"], errors="coerce").to_numpy(dtype=float)
    b_a = pd.to_numeric(a["c_bias_factor"], errors="coerce").to_numpy(dtype=float)
    with np.errstate(invalid="ignore", divide="ignore"):
        loss = 1.0 - cw_a / cw_o
    for i in np.flatnonzero(np.isfinite(loss) & (loss > 1e-6)):
        severity = "review" if loss[i] * 100.0 > options.margin_drop_pp else "note"
        bias = ""
        if np.isfinite(b_o[i]) and np.isfinite(b_a[i]) and abs(b_o[i] - b_a[i]) > 1e-6:
            bias = (f"; DC bias keeps {fq(b_a[i], '', True)} instead of "
                    f"{fq(b_o[i], '', True)}")
        text = (f"worst-case capacitance {fq(cw_a[i], 'F')} instead of {fq(cw_o[i], 'F')} "
                f"(after tolerance, temperature, DC bias and aging{bias})")
        yield int(i), ("c_worst", severity, fq(cw_o[i], "F"), fq(cw_a[i], "F"), text,
                       f"worst case {fq(cw_a[i], 'F')}")


def differences(o_table: pd.DataFrame, a_table: pd.DataFrame, local: np.ndarray,
                alt: Alternate, options: SubstituteOptions) -> list[Difference]:
    """The differences that matter on the replaced placements, each with its designators."""
    o = o_table.iloc[local]
    a = a_table.iloc[local]
    refdes = o["refdes"].astype(str).to_numpy(dtype=object)
    # Spec differences: once per distinct original spec (a BOM line), mapped to its placements.
    codes = row_codes([o["text"], o["mpn"], a["voltage_v"], a["temp_max_c"],
                        a["capacitance_f"], a["package"]])
    found: dict[Found, list[str]] = {}
    for k in range(int(codes.max()) + 1 if len(codes) else 0):
        i = int(np.argmax(codes == k))
        for d in spec_differences(o.iloc[i].to_dict(), a.iloc[i].to_dict(),
                                  alt.footprint_checked):
            found.setdefault(d, []).extend(refdes[codes == k].tolist())
    for i, d in _c_worst_losses(o, a, options):
        found.setdefault(d, []).append(refdes[i])
    order = {s: k for k, s in enumerate(SEVERITIES)}
    diffs = [Difference(f, sev, ov, av, text, short, tuple(dict.fromkeys(rs)))
             for (f, sev, ov, av, text, short), rs in found.items()]
    return sorted(diffs, key=lambda d: order[d.severity])
