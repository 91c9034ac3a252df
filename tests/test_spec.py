"""The capacitor specification value (bomcheck/spec.py): its technology words, the polarity that
follows them, the safety classes, and a JSON-ready dict."""

from __future__ import annotations

import dataclasses
import json

import pytest

from bomcheck.spec import (FILM_MATERIALS, POLARIZED_TECHNOLOGIES, SAFETY_CLASSES, SPEC_KEYS,
                           TECHNOLOGIES, CapSpec)


def test_polarity_follows_the_technology():
    # Electrolytic and double-layer capacitors are polarized; ceramic, film, mica and glass are
    # not (IEC 60384 family; common practice).
    assert POLARIZED_TECHNOLOGIES <= set(TECHNOLOGIES)
    for tech in ("tantalum", "tantalum-wet", "aluminium-electrolytic", "aluminium-polymer",
                 "supercapacitor"):
        assert tech in POLARIZED_TECHNOLOGIES
    for tech in ("ceramic", "film", "mica", "glass"):
        assert tech not in POLARIZED_TECHNOLOGIES


def test_safety_classes_are_the_iec_60384_14_classes():
    # IEC 60384-14: X1, X2, X3 (line to line) and Y1 to Y4 (line to earth).
    assert SAFETY_CLASSES == ("X1", "X2", "X3", "Y1", "Y2", "Y3", "Y4")


def test_one_spelling_per_word():
    # One spelling per concept (project vocabulary): lower-case technologies, no duplicates.
    assert all(t == t.lower() for t in TECHNOLOGIES)
    assert len(set(TECHNOLOGIES)) == len(TECHNOLOGIES)
    assert len(set(FILM_MATERIALS)) == len(FILM_MATERIALS)


def test_spec_is_frozen_and_unknown_fields_are_none():
    s = CapSpec(text="100nF")
    assert not s.is_capacitor and s.capacitance_f is None and s.warnings == ()
    with pytest.raises(dataclasses.FrozenInstanceError):
        s.text = "x"  # type: ignore[misc]


def test_to_dict_is_json_ready_and_keyed_by_spec_keys():
    # RFC 8259: tuples become lists; the keys are the one field list SPEC_KEYS.
    s = CapSpec(text="10uF 16V", is_capacitor=True, capacitance_f=10e-6, voltage_v=16.0,
                warnings=("w",), unread=("u",))
    d = s.to_dict()
    assert tuple(d) == SPEC_KEYS and d["warnings"] == ["w"] and d["unread"] == ["u"]
    assert json.loads(json.dumps(d)) == d
