"""Read stage, the one TOML loader: nesting capped, one message for a syntax error."""

import hashlib
import importlib

import pytest

from bomcheck.errors import BomcheckError, InputError
from bomcheck.read import reader


def test_toml_nested_thousands_deep_is_an_input_error():
    with pytest.raises(InputError, match="nested more than 32 levels"):
        reader.load_toml("a = " + "[" * 3000 + "]" * 3000, "x.toml")
    with pytest.raises(InputError, match="nested more than 32 levels"):
        reader.load_toml("a = " + "[" * 40 + "]" * 40, "x.toml")  # below tomllib's recursion
    assert reader.load_toml("a = [[1], [2]]", "x.toml") == {"a": [[1], [2]]}


def _call(module, function):
    return lambda path: getattr(importlib.import_module(module), function)(str(path))


def _load_config(path):
    from bomcheck.cli.config import load_config

    return load_config(path.parent)


def _load_rules(path):
    from bomcheck.evaluate.rules import load_rules

    return load_rules([str(path)])


# Every TOML input goes through the one loader: a syntax error reads the same everywhere, naming
# the file and the line (the project's rule: one-line errors naming file, row and problem).
_LOADERS = {
    "waivers": ("waivers.toml", _call("bomcheck.evaluate.waivers", "load_waivers")),
    "design sheet": ("design.toml", _call("bomcheck.parse.design", "read_design")),
    "parts file": ("parts.toml", _call("bomcheck.parse.parts", "read_parts")),
    "alternates": ("alternates.toml", _call("bomcheck.substitute.alternates", "read_alternates")),
    "column map": ("columns.toml", _call("bomcheck.parse.columns", "load_column_map")),
    "manifest": ("boards.toml", _call("bomcheck.pipeline.batch", "read_manifest")),
    "project configuration": ("pyproject.toml", _load_config),
    "rule set": ("rules.toml", _load_rules),
}


@pytest.mark.parametrize("what", sorted(_LOADERS))
def test_a_toml_syntax_error_reads_the_same_in_every_input(tmp_path, what):
    name, load = _LOADERS[what]
    text = "[tool.bomcheck]\nkey = 1\nbroken = = 2\nother = 3\n"
    with pytest.raises(InputError) as direct:
        reader.load_toml(text, "x.toml")
    assert direct.value.problem.startswith("not valid TOML (") and direct.value.row == 3
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    with pytest.raises(BomcheckError) as info:  # a rule set collects its problems (RuleError)
        load(path)
    assert direct.value.problem in str(info.value) and str(path) in str(info.value)
    if isinstance(info.value, InputError):
        assert info.value.row == 3 and "\n" not in str(info.value)


def test_read_toml_gives_the_document_and_the_hash_of_its_bytes(tmp_path):
    data = "\ufeffa = 1\n".encode("utf-8")  # a byte-order mark is allowed
    path = tmp_path / "x.toml"
    path.write_bytes(data)
    doc, digest = reader.read_toml(str(path), "test file")
    assert doc == {"a": 1}
    assert digest == hashlib.sha256(data).hexdigest()


def test_toml_must_be_utf8(tmp_path):
    path = tmp_path / "x.toml"
    path.write_bytes(b'a = "\xb5F"\n')  # cp1252 micro sign
    with pytest.raises(InputError, match="TOML must be UTF-8"):
        reader.read_toml(str(path), "test file")
