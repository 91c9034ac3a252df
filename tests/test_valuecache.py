"""Tests of bomcheck.parse.valuecache: many texts read shape by shape give, field for field, the
spec ``parse_value`` gives each text alone."""

import ast
import random
from pathlib import Path

import pytest

from bomcheck.parse import valuecache
from bomcheck.parse.valuecache import ValueParser
from bomcheck.parse.values import CONTEXTS, parse_value

_TESTS = Path(__file__).parent
_SEEDS = (
    "100nF 50V X7R 0603", "C_0603_100n_50V_X7R", "4u7 16V X5R", "CAP CER 0.1UF 50V 10% X7R",
    "10uF -20%+80% 16V", "2R2C", "104K", "470uF 35V 105C 8x11.5", "CAP TANT POLY 100UF 6.3V 2917",
    "4.7nF Y2 300VAC", "1206 (3216 Metric)", "CAPC1608X90N", "-55~125°C", "±0.25pF", "6V3",
    "1H", "22 MFD 250 WVDC", "C0G 1nF 5%", "Capacitor_SMD:C_0805_2012Metric", "0,1µF 6,3V",
    "47uF 16V tantalum case D", "RES 10K 1% 0603", "CAP CER 18pF crystal load",
)
# What hand-kept descriptions carry beside the readings (common practice: lot, serial and part
# numbers, notes), some of them next to words that join a number ("to", "x", units).
_EXTRAS = ("lot {k:06d}", "LOT{k}", "KV-{k:06d}", "{k}", "X{k}Q", "{k}ab", "to {k}", "{k} V",
           "{k} x 5", "5 to {k}", "{k} %", "case {k}", "S/N {k}", "{k}-{k}", "R{k}", "n{k}",
           "{k}.5", "+{k}", "{k:03d}")


def _literals() -> list[str]:
    """Every string constant of the value parser's own tests (their cases and fragments)."""
    out = []
    for name in ("test_values.py", "test_valuetext.py", "test_valuenumbers.py",
                 "test_valuewords.py", "test_readings.py", "test_scanstate.py", "test_linespec.py"):
        tree = ast.parse((_TESTS / name).read_text(encoding="utf-8"))
        out += [n.value for n in ast.walk(tree)
                if isinstance(n, ast.Constant) and isinstance(n.value, str) and len(n.value) < 200]
    return out


def _mutated(rng: random.Random, text: str) -> str:
    chars = list(text)
    for _ in range(rng.randint(1, 3)):
        pos = rng.randrange(len(chars) + 1)
        op = rng.randrange(3)
        if op == 0:
            chars.insert(pos, rng.choice("0123456789 .,;:/-+_%()~xVFuKCR"))
        elif op == 1 and chars:
            del chars[min(pos, len(chars) - 1)]
        else:
            chars[pos:pos] = list(" " + rng.choice(_SEEDS))
    return "".join(chars)


def _texts(count: int, seed: int) -> list[str]:
    """Test strings, mutated values and descriptions with unread words shuffled in."""
    rng = random.Random(seed)
    base = _literals() + list(_SEEDS)
    out = list(base)
    for k in range(count):
        words = (_mutated(rng, rng.choice(_SEEDS)) if k % 3 == 0 else rng.choice(base)).split()
        words += [rng.choice(_EXTRAS).format(k=rng.randrange(10**7))
                  for _ in range(rng.randint(1, 3))]
        rng.shuffle(words)
        out.append(" ".join(words))
    return out


@pytest.mark.parametrize("seed", [1, 2])
def test_same_spec_as_parse_value_for_every_text(seed):
    texts = _texts(6000, seed)
    contexts = sorted(CONTEXTS) + ["no-such-context"]
    rng = random.Random(seed)
    parser = ValueParser()  # one parser for all: later texts reuse earlier shapes
    differ = []
    for text in texts:
        context = rng.choice(("description", "description", "value", "any", *contexts))
        if parser.parse(text, context) != parse_value(text, context=context):
            differ.append((text, context))
    assert differ == []


def test_descriptions_differing_in_lot_numbers_are_parsed_once(monkeypatch):
    calls = []
    real = valuecache._parse_shape
    monkeypatch.setattr(valuecache, "_parse_shape", lambda *a: calls.append(a) or real(*a))
    parser = ValueParser()
    specs = [parser.parse(f"CAP CER 0.1UF 16V 10% X5R 0402 LOT {k:06d}", "description")
             for k in range(4711, 4911)]
    assert len(calls) == 1
    assert [s.unread for s in specs[:2]] == [("LOT", "004711"), ("LOT", "004712")]
    assert specs[1] == parse_value("CAP CER 0.1UF 16V 10% X5R 0402 LOT 004712",
                                   context="description")
    assert specs[1].capacitance_f == pytest.approx(0.1e-6)


@pytest.mark.parametrize("text", [
    "CAP 10uF 000123 V", "CAP 10uF 5 to 000123 C", "CAP 10uF 10 x 000123", "CAP 000123 uF",
    "100nF 50V lot 7 lot 8 lot 000009 000010", "CAP 1uF KV-0001 (X2) 275VAC lot 12345",
])
def test_tokens_joined_by_their_neighbours_are_read_as_parse_value_reads_them(text):
    assert ValueParser().parse(text, "description") == parse_value(text, context="description")


# Layout keys: texts whose tokens differ only where the parser reads nothing share a shape,
# texts that differ in a token it reads do not.
@pytest.mark.parametrize("texts", [
    # A number before "x" is read as a can size (diameter x length), not stood in for: the two
    # texts share the key of marked tokens but not the number the parser reads.
    ("8707235 x 5 KV-2865454 any", "1234567 x 5 KV-2865454 any", "8707235 x 5 KV-1 other"),
    # A lot number read as a bare number, then the same shape with other lot numbers.
    ("CAP CER 100nF 50V X7R 0603 lot 000001", "CAP CER 100nF 50V X7R 0603 lot 999999",
     "CAP CER 100nF 50V X7R 0603 lot 12345678901234567890"),
    # Three-digit tokens are codes (104 = 100 nF), never stood in for as lot numbers.
    ("104 lot 4711", "105 lot 4711", "104 lot 0815"),
    # A number joined to the unit after it is read.
    ("lot 4711 10 uF 16 V", "lot 4712 22 uF 16 V", "lot 4711 10 V"),
])
def test_texts_alike_but_for_read_tokens_give_parse_value_each(texts):
    # Each text alone, as parse_value reads it (the reference), also when read one after
    # another by one cache that has seen the others' shapes.
    parser = ValueParser()
    for context in ("description", "value", "any"):
        for text in (*texts, *reversed(texts)):
            assert parser.parse(text, context) == parse_value(text, context=context)


def test_many_lot_numbers_share_one_shape():
    parser = ValueParser()
    texts = [f"capacitor 1uF 25V X5R 0805 lot {k:06d} bulk" for k in range(200)]
    for text in texts:
        assert parser.parse(text, "description") == parse_value(text, context="description")
    # One layout for all 200 texts: the lot number is the text's own token.
    assert len(parser._layouts) == 1
