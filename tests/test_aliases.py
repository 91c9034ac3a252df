"""Normalise stage data (bomcheck/parse/aliases.py): the canonical BOM fields, the header aliases
that name them, their labels and the header units; checked for consistency, since every column
mapping reads them."""

from __future__ import annotations

from bomcheck.parse import aliases
from bomcheck.parse.columns import normalise_header


def test_every_field_has_aliases_a_label_and_no_stray_entries():
    # One source per fact (project style guide): every table speaks of the same fields.
    assert len(set(aliases.FIELDS)) == len(aliases.FIELDS)
    assert set(aliases.FIELD_LABELS) == set(aliases.FIELDS)
    assert set(aliases.ALIASES) <= set(aliases.FIELDS)
    assert all(aliases.ALIASES[f] for f in aliases.ALIASES)
    assert set(aliases.ALT_FIELDS.values()) <= set(aliases.FIELDS)
    assert set(aliases.HEADER_UNITS) <= set(aliases.FIELDS)


def test_the_trade_words_name_their_fields():
    # Common practice of EDA and ERP exports; German and French words are the ordinary
    # dictionary words for the field.
    for field, header in (("refdes", "Designator"), ("mpn", "Manufacturer Part Number"),
                          ("qty", "Menge"), ("refdes", "Repère"), ("voltage", "Spannung")):
        assert header in aliases.ALIASES[field], (field, header)


def test_negative_fitted_headers_are_fitted_aliases():
    # A "DNP" column answers the fitted question the other way round: it must map to "fitted".
    fitted = {normalise_header(a) for a in aliases.ALIASES["fitted"]}
    assert {normalise_header(h) for h in aliases.NEGATIVE_FITTED} <= fitted


def test_header_units_are_units_of_their_quantity():
    # SI prefixes on the farad (SI brochure); degree Celsius, kelvin and Fahrenheit for a
    # temperature; volts for a voltage.
    assert set(aliases.HEADER_UNITS["value"].values()) <= {"pF", "nF", "uF", "mF", "F"}
    assert all(u.endswith(("V", "VDC", "VAC")) for u in aliases.HEADER_UNITS["voltage"].values())
    assert set(aliases.HEADER_UNITS["temperature"].values()) <= {"°C", "K", "°F"}
    assert all(k == k.casefold() for units in aliases.HEADER_UNITS.values() for k in units)


def test_no_alias_names_two_fields():
    seen: dict[str, str] = {}
    for field, names in aliases.ALIASES.items():
        assert field in aliases.FIELDS
        for alias in names:
            folded = normalise_header(alias)
            assert seen.setdefault(folded, field) == field, alias
