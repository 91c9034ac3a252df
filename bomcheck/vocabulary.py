"""The fixed vocabulary shared by the stress stage and the rules engine: metrics and conditions.

A *metric* is a column the stress stage computes for every placement; a rule limits one metric.
A *condition* is a column the design sheet gives for a placement. Both are in SI units (see
``bomcheck.parse.units.SI_UNITS``) with the names below; a rule file naming anything else is an error.
"""

from __future__ import annotations

import re

from bomcheck.frozen import frozen


@frozen
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
    # The check family a rule on this metric belongs to (see FAMILIES); "" for a component.
    family: str = ""
    # A component is computed only to feed the stresses named here (never limited itself);
    # every other metric is a stress, and a stress is limited by a rule or not reported.
    feeds: tuple[str, ...] = ()
    # A column header a reviewer reads (workbook, HTML); "" takes the description's head.
    label: str = ""

    @property
    def title(self) -> str:
        """The metric's short name for a column header: its label, else the description up to
        its first colon, parenthesis, semicolon or comma."""
        return self.label or re.split(r":| \(|;|,", self.description)[0]

    @property
    def display_unit(self) -> str:
        """The unit its figures are shown in: "%" for a ratio shown as a percentage."""
        return "%" if self.percent else self.unit

    @property
    def is_stress(self) -> bool:
        """True for a stress a rule must limit (not a component of one)."""
        return not self.feeds


METRICS: dict[str, Metric] = {
    m.name: m
    for m in (
        Metric("voltage_ratio", "dimensionless", "", "applied peak voltage / rated voltage "
               "(AC-rated parts: applied AC rms / rated AC rms)", ("applied_peak_v", "voltage_v"), True,
               "{applied_peak_v:V} peak / {voltage_v:V} rated = ", family="voltage",
               label="voltage ratio (applied peak / rated)"),
        Metric("reverse_ratio", "dimensionless", "", "peak reverse voltage / rated voltage "
               "(polarized parts)", ("v_reverse_pk", "voltage_v"), True,
               "{reverse_peak_v:V} reverse / {voltage_v:V} rated = ", family="reverse",
               label="reverse voltage ratio"),
        Metric("reverse_peak_v", "voltage", "V", "peak reverse voltage of a polarized part: "
               "v_reverse_pk, the ripple and AC swing below zero (ripple peak + sqrt(2) x AC rms "
               "- the rail's lower bound), or the whole applied peak on a negative v_dc, the "
               "largest", ("v_reverse_pk",), explain="reverse ", feeds=("reverse_ratio",),
               label="peak reverse voltage"),
        Metric("ac_peak_ratio", "dimensionless", "", "applied peak voltage (DC upper bound + "
               "ripple peak + sqrt(2) x AC rms) / the rated peak sqrt(2) x rated AC rms "
               "(AC-rated parts)", ("applied_peak_v", "voltage_v"), True,
               "{applied_peak_v:V} peak / {rated_peak_v:V} rated peak = ", family="voltage",
               label="AC peak ratio (applied peak / rated peak)"),
        Metric("rated_peak_v", "voltage", "V", "rated peak voltage: the DC rating, or sqrt(2) x "
               "the AC rms rating of an AC-rated part", ("voltage_v",), explain="rated peak ",
               feeds=("ac_peak_ratio", "transient_ratio")),
        Metric("applied_peak_v", "voltage", "V", "applied peak voltage: upper bound of DC + ripple "
               "peak, or the transient peak where larger", ("v_dc",), explain="applied peak ", feeds=("voltage_ratio", "transient_ratio")),
        Metric("rated_voltage_v", "voltage", "V", "rated voltage of the part", ("voltage_v",),
               explain="rated ", feeds=("voltage_ratio", "transient_ratio", "reverse_ratio"),
               label="rated voltage"),
        Metric("t_operating_c", "temperature", "degC", "operating temperature: ambient + rise",
               ("t_ambient_c",), explain="operating ", family="temperature"),
        Metric("temp_margin_c", "temperature_delta", "degC", "rated maximum temperature - "
               "operating temperature", ("temp_max_used_c", "t_ambient_c"),
               explain="{temp_max_used_c:degC} rated max - {t_operating_c:degC} operating = ", family="temperature",
               label="temperature margin (rated max - operating)"),
        Metric("transient_ratio", "dimensionless", "", "transient peak voltage / rated "
               "peak voltage (the DC rating; sqrt(2) x the AC rating of an AC-rated part, where "
               "the design gives v_transient_pk): the applied peak or the design's transient "
               "peak, whichever is larger", ("applied_peak_v", "voltage_v"), True,
               "{transient_peak_v:V} transient peak / {rated_peak_v:V} rated peak = ",
               family="transient", label="transient ratio"),
        Metric("transient_peak_v", "voltage", "V", "transient peak voltage: the design's "
               "transient peak, at least the applied peak", ("v_dc",), explain="transient peak ",
               feeds=("transient_ratio",), label="transient peak voltage"),
        Metric("v_upper_v", "voltage", "V", "upper bound of the DC rail: v_dc_max, else v_dc x "
               "(1 + v_tol_pct)", ("v_dc",), explain="rail upper bound ",
               feeds=("applied_peak_v",), label="rail upper bound"),
        Metric("temp_min_margin_c", "temperature_delta", "degC", "lowest operating (ambient) "
               "temperature - rated minimum temperature", ("temp_min_c",),
               explain="{t_cold_c:degC} coldest - {temp_min_c:degC} rated min = ",
               family="temperature", label="cold margin (coldest - rated min)"),
        Metric("t_cold_c", "temperature", "degC", "lowest operating temperature: t_ambient_min_c "
               "(at most t_ambient_c); without it, t_ambient_c only where that is already below "
               "the rated minimum", ("t_ambient_min_c",), explain="coldest ",
               feeds=("temp_min_margin_c",), label="coldest operating temperature"),
        Metric("temp_max_used_c", "temperature", "degC", "rated maximum temperature used: the "
               "part's, else the technology's typical rating (generic)", ("temp_max_c",),
               explain="rated max ", feeds=("temp_margin_c",),
               label="rated maximum temperature used"),
        Metric("c_margin", "dimensionless", "", "worst-case minimum capacitance / capacitance the "
               "circuit needs", ("capacitance_f", "c_min_f"), True,
               "{c_worst_f:F} worst case / {c_min_f:F} required = ", family="capacitance",
               label="capacitance margin (worst case / required)"),
        Metric("c_worst_f", "capacitance", "F", "worst-case minimum capacitance: nominal less "
               "tolerance, temperature, DC-bias and aging losses", ("capacitance_f",),
               explain="worst-case ", feeds=("c_margin", "bank_c_margin")),
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
    "t_ambient_min_c": ("temperature", "degC"),  # coldest ambient, for the rated minimum
    "c_min_f": ("capacitance", "F"),
    "life_h": ("time", "h"),
}

# Check families every fitted placement needs a firm verdict in, from a rule made for its
# technology (a backstop rule does not count): without one the placement is "nodata".
REQUIRED_FAMILIES: tuple[str, ...] = ("voltage", "temperature")

# How a missing input is named in a "no data" message.
INPUT_LABELS: dict[str, str] = {
    "applied_peak_v": "applied voltage (v_dc in the design sheet)",
    "v_dc": "working voltage (v_dc in the design sheet)",
    "voltage_v": "rated voltage (not in the BOM text or parts data)",
    "v_reverse_pk": "reverse voltage (v_reverse_pk in the design sheet)",
    "t_ambient_c": "ambient temperature (t_ambient_c in the design sheet)",
    "temp_min_c": "rated minimum temperature (not in the BOM text, dielectric code or parts data)",
    "temp_max_c": "rated maximum temperature (not in the BOM text or from the dielectric code)",
    "temp_max_used_c": "rated maximum temperature (not in the BOM text, the dielectric code or "
                       "the rule set's typical ratings)",
    "capacitance_f": "capacitance (value not parsed)",
    "c_min_f": "required capacitance (c_min_f in the design sheet)",
    "life_h": "required life (life_h in the design sheet)",
}


# --- Circuit-level stresses (bomcheck.stress.circuit, bomcheck.parse.parts) --------------------------------
# Kept in one block: the design-sheet conditions of groups and drives, the metrics computed from
# them and the parts data, and the labels of their inputs.

CONDITIONS.update({
    "r_balance_ohm": ("resistance", "ohm"),  # balancing resistor across one series-stack member
    "r_balance_tol_pct": ("dimensionless", "%"),
    "r_bleeder_ohm": ("resistance", "ohm"),  # discharge path across the placement, bank or stack
    "v_safe_v": ("voltage", "V"),  # safe voltage of the discharge requirement
    "t_discharge_max_s": ("seconds", "s"),  # time allowed to fall to v_safe_v
    "slew_v_per_s": ("slew", "V / s"),  # rate of rise of the rail at switch-on
    "r_source_ohm": ("resistance", "ohm"),  # effective series resistance of the feeding circuit
    "i_ripple_a": ("current", "A"),  # rms ripple current (a bank's is shared by its members)
    "f_ripple_hz": ("frequency", "Hz"),
})

METRICS.update({
    m.name: m
    for m in (
        Metric("c_max_f", "capacitance", "F", "maximum capacitance: nominal + positive tolerance",
               ("capacitance_f",), explain="maximum ", feeds=("energy_j", "node_energy_j", "surge_a")),
        Metric("v_stored_v", "voltage", "V", "worst voltage the placement holds: applied peak, "
               "or sqrt(2) x AC rms for AC-rated parts", ("v_dc",), explain="held ", feeds=("energy_j", "node_v"),
               label="voltage held"),
        Metric("energy_j", "energy", "J", "stored energy 1/2 C V^2 at the maximum capacitance "
               "and the worst voltage held", ("capacitance_f", "v_stored_v"),
               explain="1/2 x {c_max_f:F} x ({v_stored_v:V})^2 = ", feeds=("node_energy_j",),
               label="stored energy"),
        Metric("node_v", "voltage", "V", "voltage across the placement's node: a series stack's "
               "whole voltage, a bank's rail, else the placement's own", ("v_dc",),
               explain="node ", feeds=("node_energy_j", "discharge_s", "t_to_60v_s"),
               label="node voltage"),
        Metric("node_c_f", "capacitance", "F", "maximum capacitance on the node: a series "
               "stack's series combination, a bank's sum, else the placement's own",
               ("capacitance_f",), explain="node ", feeds=("node_energy_j", "discharge_s", "t_to_60v_s"),
               label="node capacitance"),
        Metric("node_energy_j", "energy", "J", "stored energy of the node, 1/2 C V^2",
               ("capacitance_f", "node_v"), explain="{node_c_f:F} at {node_v:V} stores ", feeds=("shock_energy_j",),
               label="node energy"),
        Metric("shock_energy_j", "energy", "J", "node energy where the node holds at least "
               "100 V (the shock-hazard practice); none below 100 V", ("node_energy_j",),
               explain="{node_c_f:F} at {node_v:V} stores ", family="safety",
               label="shock energy (node at 100 V or more)"),
        Metric("r_discharge_ohm", "resistance", "ohm", "discharge resistance across the node: "
               "the bleeder, in parallel with a series stack's balancing resistors",
               ("r_bleeder_ohm",), explain="discharge resistance ", feeds=("discharge_s", "t_to_60v_s", "v_after_1s_v", "charge_after_5s_uc"),
               label="discharge resistance"),
        Metric("v_safe_used_v", "voltage", "V", "safe voltage of the discharge time: v_safe_v, "
               "else the rule set's default", ("v_safe_v",), explain="safe voltage ", feeds=("discharge_s",),
               label="safe voltage used"),
        Metric("discharge_s", "seconds", "s", "time for the node to fall to the safe voltage, "
               "t = R C ln(V0 / V_safe); 0 where it starts at or below it",
               ("r_discharge_ohm", "node_v"),
               explain="{node_v:V} through {r_discharge_ohm:ohm} and {node_c_f:F} to "
                       "{v_safe_used_v:V} in ", feeds=("discharge_ratio",),
                       label="discharge time to the safe voltage"),
        Metric("discharge_ratio", "dimensionless", "", "discharge time to the safe voltage / "
               "the time the design allows", ("discharge_s", "t_discharge_max_s"), True,
               "{discharge_s:s} to {v_safe_used_v:V} / {t_discharge_max_s:s} allowed = ", family="discharge",
               label="discharge ratio (time / allowed)"),
        Metric("t_to_60v_s", "seconds", "s", "time for the node to fall to 60 V after "
               "disconnection; 0 where it holds 60 V or less", ("r_discharge_ohm", "node_v"),
               explain="{node_v:V} through {r_discharge_ohm:ohm} and {node_c_f:F} falls to "
                       "60 V in ", family="safety", label="time to 60 V"),
        Metric("v_after_1s_v", "voltage", "V", "node voltage 1 s after disconnection",
               ("r_discharge_ohm", "node_v"),
               explain="{node_v:V} through {r_discharge_ohm:ohm} and {node_c_f:F} after 1 s: ", family="safety",
               label="node voltage after 1 s"),
        Metric("charge_after_5s_uc", "charge", "uC", "charge left on the node 5 s after "
               "disconnection", ("r_discharge_ohm", "node_v"),
               explain="{node_c_f:F} from {node_v:V} through {r_discharge_ohm:ohm} after 5 s: ", family="safety",
               label="charge after 5 s"),
        Metric("surge_a", "current", "A", "peak surge current at switch-on: C dV/dt from the "
               "rail's slew rate, else V / R from the source resistance", ("capacitance_f",),
               explain="surge ", feeds=("surge_ratio",), label="surge current"),
        Metric("surge_ratio", "dimensionless", "", "surge current / the part's surge current "
               "rating", ("surge_a", "surge_rated_a"), True,
               "{surge_a:A} surge / {surge_rated_a:A} rated = ", family="surge",
               label="surge ratio (surge / rated)"),
        Metric("series_r_ohm", "resistance", "ohm", "effective series circuit resistance "
               "feeding the part", ("r_source_ohm",), explain="series resistance ", family="surge",
               label="series circuit resistance"),
        Metric("ripple_power_w", "power", "W", "ripple dissipation I^2 x ESR",
               ("i_ripple_a", "esr_ohm"), explain="ripple dissipation ", feeds=("ripple_rise_c",),
               label="ripple dissipation"),
        Metric("ripple_rise_c", "temperature_delta", "degC", "temperature rise from ripple "
               "heating: I^2 x ESR x thermal resistance", ("i_ripple_a", "esr_ohm"),
               explain="{ripple_power_w:W} ripple dissipation gives a rise of ", feeds=("t_operating_c", "temp_margin_c", "life_ratio"),
               label="ripple temperature rise"),
        Metric("ripple_allowed_a", "current", "A", "rated ripple current x frequency "
               "multiplier x temperature multiplier", ("ripple_rated_a",), explain="allowed ", feeds=("ripple_ratio",),
               label="allowed ripple current"),
        Metric("ripple_ratio", "dimensionless", "", "ripple current / the allowed ripple "
               "current", ("i_ripple_a", "ripple_rated_a"), True,
               "{i_ripple_a:A} rms / {ripple_allowed_a:A} allowed = ", family="ripple",
               label="ripple ratio (ripple / allowed)"),
        Metric("life_est_h", "time", "h", "estimated life L0 x 2^((T0 - T)/10), with the ripple "
               "factor 2^(-dT/5) where the rule set asks for it", ("life_l0_h", "t_ambient_c"),
               explain="estimated ", feeds=("life_ratio",), label="estimated life"),
        Metric("life_ratio", "dimensionless", "", "estimated life / required life",
               ("life_l0_h", "life_h"), True,
               "{life_est_h:h} estimated / {life_h:h} required = ", family="life",
               label="life ratio (estimated / required)"),
        Metric("v_share_cap_v", "voltage", "V", "series-stack member's worst share of the "
               "stack's DC upper bound by capacitive division (tolerances at their extremes)",
               ("v_dc",), explain="capacitive share ", feeds=("voltage_ratio",),
               label="series share, capacitive"),
        Metric("v_share_dc_v", "voltage", "V", "series-stack member's worst DC steady-state "
               "share from the balancing resistors and leakage currents", ("r_balance_ohm",),
               explain="resistive share ", feeds=("voltage_ratio",),
               label="series share, resistive (DC)"),
        Metric("bank_c_min_f", "capacitance", "F", "capacitance the bank the placement belongs "
               "to must provide (the bank's c_min_f)", ("c_min_f",), explain="bank needs ", feeds=("bank_c_margin",),
               label="bank required capacitance"),
        Metric("bank_c_worst_f", "capacitance", "F", "sum of the bank members' worst-case "
               "minimum capacitances", ("capacitance_f",), explain="bank worst case ", feeds=("bank_c_margin",),
               label="bank worst-case capacitance"),
        Metric("bank_c_margin", "dimensionless", "", "bank worst-case capacitance / the bank's "
               "requirement", ("capacitance_f", "bank_c_min_f"), True,
               "{bank_c_worst_f:F} bank worst case / {bank_c_min_f:F} required = ", family="capacitance",
               label="bank capacitance margin (worst case / required)"),
    )
})

INPUT_LABELS.update({
    "esr_ohm": "ESR (parts data, --parts)",
    "ripple_rated_a": "rated ripple current (parts data, --parts)",
    "surge_rated_a": "surge current rating (parts data, --parts)",
    "life_l0_h": "rated life L0 (parts data, --parts)",
    "i_ripple_a": "ripple current (i_ripple_a in the design sheet)",
    "r_source_ohm": "series circuit resistance (r_source_ohm in the design sheet)",
    "r_bleeder_ohm": "discharge resistance (r_bleeder_ohm in the design sheet)",
    "r_balance_ohm": "balancing resistance (r_balance_ohm in the design sheet)",
    "r_discharge_ohm": "discharge resistance (r_bleeder_ohm in the design sheet, or a series "
                       "stack's balancing resistors)",
    "t_discharge_max_s": "discharge time limit (t_discharge_max_s in the design sheet)",
    "node_v": "node voltage (v_dc in the design sheet)",
    "node_energy_j": "node voltage and capacitance (v_dc in the design sheet, value in the BOM)",
    "surge_a": "surge current (slew_v_per_s or r_source_ohm in the design sheet)",
    "bank_c_min_f": "bank requirement (c_min_f of the bank row in the design sheet)",
    "v_stored_v": "voltage held (v_dc or v_ac_rms in the design sheet)",
})
