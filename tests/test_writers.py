"""The writer of each output (bomcheck.render.writers): what each one writes is its renderer's
text for the report, through the atomic writer; with no report, the substitute check's."""

import json

import pytest
from substitute_boards import sample_result

from bomcheck.render.csvrows import csv_rows
from bomcheck.render.junit import junit_xml
from bomcheck.render.markdown import markdown_summary
from bomcheck.render.registry import OUTPUTS, OutputContext
from bomcheck.render.sarif import annotations, sarif_json
from bomcheck.render.substitute_md import substitute_markdown
from bomcheck.render import writers


@pytest.fixture(scope="module")
def report(sample_report_bare):
    return sample_report_bare


@pytest.mark.parametrize("writer, render", [
    (writers.write_junit, lambda r: junit_xml(r, warn_as="pass")),
    (writers.write_markdown, markdown_summary),
    (writers.write_csv, csv_rows),
    (writers.write_sarif, sarif_json),
    (writers.write_json, lambda r: r.to_json()),
], ids=["junit", "markdown", "csv", "sarif", "json"])
def test_each_writer_writes_its_renderers_text(report, tmp_path, writer, render):
    path = tmp_path / "out"
    writer(report, str(path), OutputContext(warn_as="pass"))
    assert path.read_bytes().decode("utf-8") == render(report)  # byte for byte (CRLF kept)
    assert [p.name for p in tmp_path.iterdir()] == ["out"]  # no temporary file left


def test_json_writes_the_text_already_built(report, tmp_path):
    path = tmp_path / "r.json"
    writers.write_json(report, str(path), OutputContext(json_text='{"given":1}'))
    assert path.read_text(encoding="utf-8") == '{"given":1}'


def test_annotations_go_to_standard_output_one_a_line(report, capsys):
    writers.write_annotations(report, "ignored", OutputContext())
    assert capsys.readouterr().out.splitlines() == annotations(report)


def test_without_a_report_the_substitute_check_is_written(tmp_path):
    result = sample_result()
    ctx = OutputContext(substitutes=result)
    writers.write_json(None, str(tmp_path / "s.json"), ctx)
    assert json.loads((tmp_path / "s.json").read_text(encoding="utf-8")) == json.loads(
        result.to_json())
    writers.write_markdown(None, str(tmp_path / "s.md"), ctx)
    assert (tmp_path / "s.md").read_text(encoding="utf-8") == substitute_markdown(result)
    writers.write_html(None, str(tmp_path / "s.html"), ctx)
    assert "Substitutes" in (tmp_path / "s.html").read_text(encoding="utf-8")


@pytest.mark.parametrize("name", sorted(n for n, o in OUTPUTS.items() if o.kind == "file"))
def test_every_file_output_of_the_registry_writes_a_file(report, tmp_path, name):
    path = tmp_path / f"out.{name}"
    OUTPUTS[name].load()(report, str(path), OutputContext())
    assert path.stat().st_size > 0
    assert [p.name for p in tmp_path.iterdir()] == [path.name]
