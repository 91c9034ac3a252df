"""JUnit XML of an audit (bomcheck.render.junit): counts, messages and classnames, control
characters, and validation against a schema derived from the Jenkins xunit junit-10.xsd."""

import xml.etree.ElementTree as ET

import pytest
from tiny_reports import tiny_report

from conftest import ROOT
from bomcheck.render.junit import junit_xml


def _parse(xml_text: str) -> ET.Element:
    return ET.fromstring(xml_text.encode("utf-8"))


@pytest.mark.parametrize("warn_as, failures, skipped", [
    ("failure", 2, 1),   # fail + warn as failures; the waived one skipped
    ("skipped", 1, 2),   # warn joins the skipped
    ("pass", 1, 1),      # warn passes
])
def test_junit_counts_match_the_report(warn_as, failures, skipped):
    report = tiny_report()
    root = _parse(junit_xml(report, warn_as=warn_as))
    suites = root.findall("testsuite")
    assert len(suites) == 1
    suite = suites[0]
    cases = suite.findall("testcase")
    assert [c.get("name") for c in cases] == list(report.table["refdes"])
    assert len(suite.findall("testcase/failure")) == failures
    assert len(suite.findall("testcase/error")) == 1
    assert len(suite.findall("testcase/skipped")) == skipped
    for node in (root, suite):
        assert node.get("tests") == str(len(report.table))
        assert node.get("failures") == str(failures)
        assert node.get("errors") == "1"  # nodata is an error: the check could not run
    assert suite.get("skipped") == str(skipped)
    # junit-10.xsd (Jenkins xunit) allows no "skipped" attribute on <testsuites>
    assert root.get("skipped") is None


def test_junit_carries_messages_classnames_and_waiver_reason():
    root = _parse(junit_xml(tiny_report()))
    cases = {c.get("name"): c for c in root.iter("testcase")}
    assert cases["C2"].get("classname") == "bomcheck.ceramic"
    assert cases["C5"].get("classname") == "bomcheck.unknown"
    failure = cases["C2"].find("failure")
    assert failure.get("type") == "fail"
    assert failure.get("message") == "C2: ratio 80 % > 70 % limit"
    assert "FAIL R-V: C2: ratio 80 % > 70 % limit" in failure.text
    assert "R-T" not in failure.text  # passing verdicts are not listed
    assert cases["C3"].find("failure").get("type") == "warn"
    assert cases["C4"].find("error").get("message") == "C4: no data: missing applied voltage"
    skipped = cases["C5"].find("skipped")
    assert skipped.get("type") == "waived" and "test report TR-9" in skipped.get("message")
    assert list(cases["C1"]) == []
    out = root.find("testsuite/system-out").text
    assert "C9 (design sheet row 8) is not in the BOM" in out and "expired" in out


def test_junit_warn_as_pass_keeps_the_warning_text():
    root = _parse(junit_xml(tiny_report(), warn_as="pass"))
    c3 = next(c for c in root.iter("testcase") if c.get("name") == "C3")
    assert [child.tag for child in c3] == ["system-out"]
    assert "WARN R-V" in c3.find("system-out").text


def test_junit_survives_control_characters_and_markup():
    report = tiny_report()
    report.verdicts.loc[2, "message"] = "C2: <b>ratio</b> & \x01 bell\x07"
    root = _parse(junit_xml(report))
    msg = next(c for c in root.iter("testcase") if c.get("name") == "C2").find("failure")
    assert msg.get("message") == "C2: <b>ratio</b> & \ufffd bell\ufffd"


def test_junit_rejects_unknown_warn_as():
    with pytest.raises(ValueError):
        junit_xml(tiny_report(), warn_as="error")


def test_junit_is_deterministic():
    assert junit_xml(tiny_report()) == junit_xml(tiny_report())


@pytest.mark.parametrize("warn_as", ["failure", "skipped", "pass"])
def test_junit_validates_against_the_junit_schema(sample_report_bare, warn_as):
    xmlschema = pytest.importorskip("xmlschema", reason="xmlschema (test extra) validates XSD")
    # tests/data/junit-derived.xsd: derived from the structure of the Jenkins xunit
    # junit-10.xsd (see its header); the tiny report has every status, the sample board a FAIL
    schema = xmlschema.XMLSchema(str(ROOT / "tests" / "data" / "junit-derived.xsd"))
    for report in (tiny_report({"C2": "\ufffe<x>"}), sample_report_bare):
        schema.validate(junit_xml(report, warn_as=warn_as))


def test_junit_schema_rejects_skipped_on_testsuites():
    xmlschema = pytest.importorskip("xmlschema", reason="xmlschema (test extra) validates XSD")
    schema = xmlschema.XMLSchema(str(ROOT / "tests" / "data" / "junit-derived.xsd"))
    text = junit_xml(tiny_report())
    assert schema.is_valid(text)
    # the output before the fix: <testsuites ... skipped="1">, refused by junit-10.xsd
    assert not schema.is_valid(text.replace("<testsuites ", '<testsuites skipped="1" ', 1))
