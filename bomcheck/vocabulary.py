"""The fixed vocabulary shared by the stress stage and the rules engine: metrics and conditions.

A *metric* is a column the stress stage computes for every placement; a rule limits one metric.
A *condition* is a column the design sheet gives for a placement. Both are in SI units (see
``bomcheck.units.SI_UNITS``) with the names below; a rule file naming anything else is an error.
"""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class Metric:
    """A computed stress: its unit quantity (a key of ``SI_UNITS``), display unit and inputs.

    ``inputs`` are the table columns the metric needs; when one is missing for a placement the
    rule gives "no data" and the message names that input with its label from ``INPUT_LABELS``.
    """

    name: str
    quantity: str
    unit: str  # display unit in messages ("" for ratios shown as %)
    description: str
    inputs: tuple[str, ...]
    percent: bool = False  # shown as a percentage in messages
    # How a verdict message shows the measured value: literal text and ``{column:unit}`` fields,
    # printed before the value (e.g. "14.2 V peak / 25 V rated = "). Unit "F" prints with an SI
    # prefix; any other unit is printed after the number as written.
    explain: str = ""


METRICS: dict[str, Metric] = {
    m.name: m
    for m in (
        Metric("voltage_ratio", "dimensionless", "", "applied peak voltage / rated voltage "
               "(AC-rated parts: applied AC rms / rated AC rms)", ("applied_peak_v", "voltage_v"), True,
               "{applied_peak_v:V} peak / {voltage_v:V} rated = "),
        Metric("reverse_ratio", "dimensionless", "", "peak reverse voltage / rated voltage "
               "(polarized parts)", ("v_reverse_pk", "voltage_v"), True,
               "{v_reverse_pk:V} reverse / {voltage_v:V} rated = "),
        Metric("applied_peak_v", "voltage", "V", "applied peak voltage: upper bound of DC + ripple "
               "peak, or the transient peak where larger", ("v_dc",), explain="applied peak "),
        Metric("rated_voltage_v", "voltage", "V", "rated voltage of the part", ("voltage_v",),
               explain="rated "),
        Metric("t_operating_c", "temperature", "degC", "operating temperature: ambient + rise",
               ("t_ambient_c",), explain="operating "),
        Metric("temp_margin_c", "temperature_delta", "degC", "rated maximum temperature - "
               "operating temperature", ("temp_max_used_c", "t_ambient_c"),
               explain="{temp_max_used_c:degC} rated max - {t_operating_c:degC} operating = "),
        Metric("c_margin", "dimensionless", "", "worst-case minimum capacitance / capacitance the "
               "circuit needs", ("capacitance_f", "c_min_f"), True,
               "{c_worst_f:F} worst case / {c_min_f:F} required = "),
        Metric("c_worst_f", "capacitance", "F", "worst-case minimum capacitance: nominal less "
               "tolerance, temperature, DC-bias and aging losses", ("capacitance_f",),
               explain="worst-case "),
    )
}

# Design-sheet conditions (canonical names) with their quantity and the unit a bare number takes.
CONDITIONS: dict[str, tuple[str, str]] = {
    "v_dc": ("voltage", "V"),
    "v_dc_max": ("voltage", "V"),
    "v_tol_pct": ("dimensionless", "%"),
    "v_ripple_pk": ("voltage", "V"),
    "v_transient_pk": ("voltage", "V"),
    "v_reverse_pk": ("voltage", "V"),
    "v_ac_rms": ("voltage", "V"),
    "t_ambient_c": ("temperature", "degC"),
    "t_rise_c": ("temperature_delta", "delta_degC"),
    "c_min_f": ("capacitance", "F"),
    "life_h": ("time", "h"),
}

# How a missing input is named in a "no data" message.
INPUT_LABELS: dict[str, str] = {
    "applied_peak_v": "applied voltage (v_dc in the design sheet)",
    "v_dc": "working voltage (v_dc in the design sheet)",
    "voltage_v": "rated voltage (not in the BOM text or parts data)",
    "v_reverse_pk": "reverse voltage (v_reverse_pk in the design sheet)",
    "t_ambient_c": "ambient temperature (t_ambient_c in the design sheet)",
    "temp_max_c": "rated maximum temperature (not in the BOM text or from the dielectric code)",
    "temp_max_used_c": "rated maximum temperature (not in the BOM text, the dielectric code or "
                       "the rule set's typical ratings)",
    "capacitance_f": "capacitance (value not parsed)",
    "c_min_f": "required capacitance (c_min_f in the design sheet)",
    "life_h": "required life (life_h in the design sheet)",
}
