"""The capacitor specification value that the parse stage produces from BOM text."""

from __future__ import annotations

from dataclasses import asdict, dataclass, fields

# Technology words, lower case, one spelling each (see DEVELOPERS.md, vocabulary).
TECHNOLOGIES = (
    "ceramic",
    "tantalum",  # solid tantalum, manganese dioxide cathode
    "tantalum-polymer",
    "tantalum-wet",  # wet (non-solid) tantalum slug
    "tantalum-foil",
    "aluminium-electrolytic",
    "aluminium-polymer",
    "film",
    "mica",
    "glass",
    "supercapacitor",
)

# The largest capacitance a part of each technology plausibly has, far above the largest made
# (values from memory, each an order of magnitude or more above the largest parts: MLCCs reach
# about 1 mF, mica and glass parts about 0.1 uF, tantalum and polymer parts a few mF, film
# power capacitors tens of mF, screw-terminal aluminium electrolytics about 1 F). Above it a
# read value is a data-entry slip (uF written as F), never a pass; supercapacitors are held to
# the capacitance range of every reading (``parse/units.PLAUSIBLE``).
PLAUSIBLE_CAPACITANCE_F = {
    "ceramic": 1e-2,
    "mica": 1e-5,
    "glass": 1e-5,
    "tantalum": 1.0,
    "tantalum-polymer": 1.0,
    "tantalum-wet": 1.0,
    "tantalum-foil": 1.0,
    "aluminium-polymer": 1.0,
    "film": 1.0,
    "aluminium-electrolytic": 100.0,
}

# Polarity follows the technology.
POLARIZED_TECHNOLOGIES = frozenset(
    {
        "tantalum",
        "tantalum-polymer",
        "tantalum-wet",
        "aluminium-electrolytic",
        "aluminium-polymer",
        "supercapacitor",
    }
)

FILM_MATERIALS = ("PP", "PET", "PPS", "PEN", "PC", "PS", "PTFE", "paper")

SAFETY_CLASSES = ("X1", "X2", "X3", "Y1", "Y2", "Y3", "Y4")


@dataclass(frozen=True, slots=True)
class CapSpec:
    """What one BOM text says about a capacitor, in SI units; unknown fields are None.

    ``dielectric_class`` is the EIA class: 1 (C0G, U2J...), 2 (X7R, X5R, X6S...), 3 (Y5V, Z5U and
    the other codes whose change letter is T, U or V). ``cap_change_minus_pct`` and
    ``cap_change_plus_pct`` are the class II/III limits of capacitance change over the code's
    temperature range at 0 V bias (positive numbers: X7R gives 15 and 15, Y5V 82 and 22).
    ``tc_ppm`` and ``tc_tol_ppm`` are the class I temperature coefficient and its tolerance.
    """

    text: str
    is_capacitor: bool = False
    capacitance_f: float | None = None
    voltage_v: float | None = None
    voltage_kind: str | None = None  # "dc" or "ac"
    tol_minus_pct: float | None = None
    tol_plus_pct: float | None = None
    tol_abs_f: float | None = None
    dielectric: str | None = None  # canonical upper case; C0G for COG/NP0/NPO
    dielectric_class: int | None = None
    cap_change_minus_pct: float | None = None
    cap_change_plus_pct: float | None = None
    tc_ppm: float | None = None
    tc_tol_ppm: float | None = None
    technology: str | None = None
    film_material: str | None = None
    temp_min_c: float | None = None
    temp_max_c: float | None = None
    package: str | None = None
    package_note: str | None = None  # e.g. which reading of an imperial/metric chip code was taken
    safety_class: str | None = None  # X1/X2/Y1/Y2..., never a dielectric
    emi_filter: bool | None = None  # feedthrough / EMI filter capacitor
    polarized: bool | None = None
    warnings: tuple[str, ...] = ()
    unread: tuple[str, ...] = ()

    def to_dict(self) -> dict:
        """Plain dict with JSON-ready values (tuples become lists)."""
        d = asdict(self)
        d["warnings"] = list(self.warnings)
        d["unread"] = list(self.unread)
        return d


SPEC_KEYS: tuple[str, ...] = tuple(f.name for f in fields(CapSpec))
