"""A substitute verdict in words (``bomcheck.substitute.phrases``): one phrase per stress, in
the numbers the engine's messages show."""

import pytest

from bomcheck.substitute.phrases import phrase


def verdict(status, value=float("nan"), limit=float("nan"), message="C1: rule: text", **kw):
    return {"status_a": status, "value_a": value, "limit_a": limit, "message_a": message,
            "warn_limit_a": kw.get("warn", float("nan")), "check": kw.get("check", "max")}


@pytest.mark.parametrize("metric, rec, v, n, text", [
    # 24 V on a 16 V rating is 150 % of it (arithmetic), past the 70 % limit.
    ("voltage_ratio", {"voltage_v": 16.0, "applied_peak_v": 24.0}, verdict("fail", 1.5, 0.7), 2,
     "rated 16 V, the placements see 24 V peak = 150 % of the rating, above the 70 % limit"),
    ("voltage_ratio", {"voltage_v": 310.0, "voltage_kind": "ac", "v_ac_rms": 253.0},
     verdict("warn", 0.816, 0.9, warn=0.8), 1,
     "rated 310 V AC, the placement sees 253 V rms = 81.6 % of the rating, above the 80 % warn "
     "level"),
    ("temp_margin_c", {"temp_max_used_c": 85.0, "t_operating_c": 95.0}, verdict("fail", -10.0,
                                                                                 15.0), 1,
     "rated 85 degC, the placement runs at 95 degC"),
    ("t_operating_c", {}, verdict("fail", 130.0, 125.0), 3,
     "the placements run at 130 degC, above the 125 degC limit"),
    ("voltage_ratio", {}, verdict("nodata", message="C1: IND-CER-V: missing rated voltage; give "
                                                    "it"), 1,
     "cannot be checked, missing rated voltage"),
    ("esr_ratio", {}, verdict("warn", 0.9, 1.0, message="C1: ESR heating near its limit"), 1,
     "ESR heating near its limit"),
], ids=["voltage", "ac-voltage", "temperature-margin", "operating-temperature", "nodata",
        "other-metric"])
def test_phrase(metric, rec, v, n, text):
    assert phrase(metric, rec, v, n) == text
