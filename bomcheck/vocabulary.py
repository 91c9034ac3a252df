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


METRICS: dict[str, Metric] = {
    m.name: m
    for m in (
        Metric("voltage_ratio", "dimensionless", "", "applied peak voltage / rated voltage "
               "(AC-rated parts: applied AC rms / rated AC rms)", ("applied_peak_v", "voltage_v"), True),
        Metric("reverse_ratio", "dimensionless", "", "peak reverse voltage / rated voltage "
               "(polarized parts)", ("v_reverse_pk", "voltage_v"), True),
        Metric("applied_peak_v", "voltage", "V", "applied peak voltage: upper bound of DC + ripple "
               "peak, or the transient peak where larger", ("v_dc",)),
        Metric("rated_voltage_v", "voltage", "V", "rated voltage of the part", ("voltage_v",)),
        Metric("t_operating_c", "temperature", "degC", "operating temperature: ambient + rise",
               ("t_ambient_c",)),
        Metric("temp_margin_c", "temperature_delta", "degC", "rated maximum temperature - "
               "operating temperature", ("temp_max_c", "t_ambient_c")),
        Metric("c_margin", "dimensionless", "", "worst-case minimum capacitance / capacitance the "
               "circuit needs", ("capacitance_f", "c_min_f"), True),
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
    "capacitance_f": "capacitance (value not parsed)",
    "c_min_f": "required capacitance (c_min_f in the design sheet)",
    "life_h": "required life (life_h in the design sheet)",
}
