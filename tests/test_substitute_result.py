"""The substitute check's result value (``bomcheck.substitute.result``): its JSON form follows
the schema and the same inputs give the same bytes."""

import json
from importlib import resources

import jsonschema
import pytest
from substitute_boards import SAMPLE_ALTERNATES, SAMPLE_BOM, SAMPLE_DESIGN

from bomcheck.cli.main import main


def test_json_validates_against_its_schema_and_is_reproducible(tmp_path, capsys):
    outs = [tmp_path / "a.json", tmp_path / "b.json"]
    for out in outs:
        main(["substitute", str(SAMPLE_BOM), "--design", str(SAMPLE_DESIGN), "--alternates",
              str(SAMPLE_ALTERNATES), "--json", str(out)])
    capsys.readouterr()
    schema = json.loads(resources.files("bomcheck.schemas").joinpath(
        "substitute.schema.json").read_text(encoding="utf-8"))
    jsonschema.Draft202012Validator.check_schema(schema)
    data = json.loads(outs[0].read_text(encoding="utf-8"))
    jsonschema.validate(data, schema)
    assert outs[0].read_bytes() == outs[1].read_bytes()
    assert data["totals"]["alternates"] == len(data["alternates"]) == 9
    bad = dict(data, status="maybe")
    with pytest.raises(jsonschema.ValidationError):
        jsonschema.validate(bad, schema)
