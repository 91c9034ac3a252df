"""The output registry (bomcheck.render.registry): one list read by the CLI and by [tool.bomcheck]."""

from __future__ import annotations

import argparse
import pytest

from bomcheck.cli import config
from bomcheck.cli.main import build_parser
from bomcheck.errors import InputError
from bomcheck.render.registry import OUTPUTS, file_outputs, flag_outputs, for_command


def _options(command: str) -> set[str]:
    parser = build_parser()
    sub = next(a for a in parser._actions if isinstance(a, argparse._SubParsersAction))
    return {s for a in sub.choices[command]._actions for s in a.option_strings}


@pytest.mark.parametrize("command", ["audit", "substitute"])
def test_cli_options_come_from_the_registry(command):
    options = _options(command)
    for output in for_command(command):
        assert f"--{output.name}" in options


def test_config_keys_come_from_the_registry():
    for name, output in OUTPUTS.items():
        assert name in config.KEYS
        assert (name in config.PATH_KEYS) == (output.kind == "file")


@pytest.mark.parametrize("name", sorted(OUTPUTS))
def test_every_writer_loads(name):
    assert callable(OUTPUTS[name].load())


def test_file_and_flag_outputs_split_the_registry():
    # every output is either written to a file (--NAME OUT) or printed by a flag (--NAME)
    files, flags = set(file_outputs()), set(flag_outputs())
    assert files | flags == set(OUTPUTS) and not files & flags
    assert "json" in files and "annotations" in flags


def test_for_command_keeps_the_registry_order_and_the_commands_outputs():
    audit = [o.name for o in for_command("audit")]
    assert audit == [n for n in OUTPUTS if "audit" in OUTPUTS[n].commands]
    substitute = {o.name for o in for_command("substitute")}
    assert {"json", "markdown", "xlsx", "html"} <= substitute
    assert "junit" not in substitute and for_command("no-such-command") == []


def test_a_writer_that_cannot_be_imported_is_an_input_error():
    from bomcheck.render.registry import Output

    broken = Output("tsv", "file", "OUT", "help", "bomcheck.render.no_such_module:write")
    with pytest.raises(InputError, match="--tsv is not available in this installation"):
        broken.load()
