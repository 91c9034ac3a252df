"""The metric registry: every stress the audit reports is limited by a rule in force, and every
component feeds a stress (no stress computed and shown unchecked)."""

from __future__ import annotations

import numpy as np
import pytest

from bomcheck.evaluate import rules
from bomcheck.vocabulary import METRICS, REQUIRED_FAMILIES


@pytest.mark.parametrize("name", rules.shipped_names())
def test_every_stress_is_limited_in_every_shipped_set(name):
    ruleset = rules.load_rules([name])
    limited = {r.metric for r in ruleset.rules}
    stresses = {m.name for m in METRICS.values() if m.is_stress}
    assert stresses <= limited, sorted(stresses - limited)


def test_components_feed_metrics_that_exist():
    for m in METRICS.values():
        assert all(f in METRICS for f in m.feeds), m.name
        assert m.is_stress == bool(m.family), m.name  # a stress belongs to a check family


@pytest.mark.parametrize("name", rules.shipped_names())
def test_the_audit_reports_no_stress_that_no_rule_in_force_checks(name, sample_report_for):
    report = sample_report_for(name)
    in_force = {r.metric for r in report.rules.enabled_rules}
    for metric in METRICS:
        if metric in report.table and np.isfinite(report.table[metric].to_numpy(float)).any():
            m = METRICS[metric]
            assert metric in in_force or not m.is_stress, metric


@pytest.mark.parametrize("name", rules.shipped_names())
def test_every_technology_has_a_derating_rule_of_each_required_family(name):
    # A technology with no rule of a required family would leave its placements "nodata"; the
    # shipped sets cover every technology they derate, or say so (NASA EEE-INST-002 Section C1
    # gives no row for mica, aluminium electrolytic or polymer tantalum: the strict set carries
    # common-practice rules for them).
    ruleset = rules.load_rules([name])
    from bomcheck.spec import TECHNOLOGIES

    for family in REQUIRED_FAMILIES:
        techs = set()
        for r in ruleset.enabled_rules:
            if r.family == family and not r.backstop:
                techs |= set(r.applies.technology or TECHNOLOGIES)
        missing = set(TECHNOLOGIES) - techs
        assert missing <= {"supercapacitor"}, (family, sorted(missing))
