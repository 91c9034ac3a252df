"""Fuzz the value parser with 10^6 strings and count what must never happen.

Half the strings are random text (printable ASCII, BOM punctuation, a few non-ASCII glyphs), half
are mutations of real value strings (characters inserted, deleted, replaced; digits multiplied;
pieces of other values spliced in). Each string is parsed in a context picked at random. Prints
the counts of exceptions, non-finite numbers and numbers outside the plausible ranges without a
warning (all three must be 0), and the time.

    python benchmarks/fuzz_values.py [--count 1000000] [--seed 1]
"""

from __future__ import annotations

import argparse
import math
import random
import time

from bomcheck.parse import codes
from bomcheck.parse.values import CONTEXTS, parse_value

_SEEDS = (
    "100nF 50V X7R 0603", "C_0603_100n_50V_X7R", "4u7 16V X5R", "CAP CER 0.1UF 50V 10% X7R",
    "10uF -20%+80% 16V", "2R2C", "104K", "470uF 35V 105C 8x11.5", "CAP TANT POLY 100UF 6.3V 20% 2917",
    "4.7nF Y2 300VAC", "1206 (3216 Metric)", "CAPC1608X90N", "-55~125°C", "±0.25pF", "6V3",
    "1H", "22 MFD 250 WVDC", "C0G 1nF 5%", "Capacitor_SMD:C_0805_2012Metric", "0,1µF 6,3V",
)
_ALPHABET = ("0123456789" * 4 + "abcdefghijklmnopqrstuvwxyz" + "ABCDEFGHIJKLMNOPQRSTUVWXYZ"
             + " .,;:/-+_%()[]~=±°µΩ" + "eE" * 3)
_NUMBER_FIELDS = {"capacitance_f": "capacitance_f", "voltage_v": "voltage_v",
                  "tol_minus_pct": "tol_minus_pct", "tol_plus_pct": "tol_plus_pct",
                  "tol_abs_f": "tol_abs_f", "temp_min_c": "temp_c", "temp_max_c": "temp_c",
                  "tc_ppm": None, "tc_tol_ppm": None, "cap_change_minus_pct": None,
                  "cap_change_plus_pct": None}


def _mutate(rng: random.Random, text: str) -> str:
    chars = list(text)
    for _ in range(rng.randint(1, 4)):
        op = rng.randrange(5)
        pos = rng.randrange(len(chars) + 1)
        if op == 0:
            chars.insert(pos, rng.choice(_ALPHABET))
        elif op == 1 and chars:
            del chars[min(pos, len(chars) - 1)]
        elif op == 2 and chars:
            chars[min(pos, len(chars) - 1)] = rng.choice(_ALPHABET)
        elif op == 3:
            chars[pos:pos] = list(rng.choice("0123456789") * rng.randint(2, 400))
        else:
            chars[pos:pos] = list(" " + rng.choice(_SEEDS))
    return "".join(chars)


def fuzz_strings(rng: random.Random, count: int):
    """``count`` strings: random text and mutated real values, alternately."""
    for k in range(count):
        if k % 2:
            yield "".join(rng.choice(_ALPHABET) for _ in range(rng.randint(0, 40)))
        else:
            yield _mutate(rng, rng.choice(_SEEDS))


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--count", type=int, default=1_000_000)
    ap.add_argument("--seed", type=int, default=1)
    args = ap.parse_args()
    rng = random.Random(args.seed)
    contexts = sorted(CONTEXTS)
    exceptions = non_finite = silent_out_of_range = warned = 0
    t0 = time.perf_counter()
    for text in fuzz_strings(rng, args.count):
        try:
            spec = parse_value(text, context=rng.choice(contexts))
        except Exception:  # noqa: BLE001 - counting is the point
            exceptions += 1
            continue
        if any("internal parser error" in w for w in spec.warnings):
            exceptions += 1
        if any("outside the plausible range" in w for w in spec.warnings):
            warned += 1
        for name, quantity in _NUMBER_FIELDS.items():
            v = getattr(spec, name)
            if v is None:
                continue
            if not math.isfinite(v):
                non_finite += 1
            elif quantity is not None and not codes.plausible(quantity, v):
                silent_out_of_range += 1
    elapsed = time.perf_counter() - t0
    print(f"strings: {args.count} (seed {args.seed})")
    print(f"exceptions (raised or caught as internal parser errors): {exceptions}")
    print(f"non-finite numbers returned: {non_finite}")
    print(f"numbers out of the plausible range without a warning: {silent_out_of_range}")
    print(f"strings with a number unread as implausible (warned): {warned}")
    print(f"time: {elapsed:.1f} s ({args.count / elapsed / 1e3:.0f}k strings/s)")


if __name__ == "__main__":
    main()
