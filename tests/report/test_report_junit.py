from __future__ import annotations

import xml.etree.ElementTree as ET

import pytest
import xmlschema

from protolint import CAUTION
from protolint.findings import CheckResult, PlanResult, Severity
from protolint.report import render_report

from .conftest import FILE_A, FILE_B, FILE_C, HOSTILE, SCHEMAS, finding


@pytest.fixture(scope="module")
def junit_schema() -> xmlschema.XMLSchema:
    return xmlschema.XMLSchema(str(SCHEMAS / "junit-10.xsd"))


@pytest.fixture
def xml_text(result, rules) -> str:
    return render_report("junit", result, rules)


def suites(xml_text: str) -> dict[str, ET.Element]:
    root = ET.fromstring(xml_text.encode("utf-8"))
    return {suite.get("name"): suite for suite in root.findall("testsuite")}


def cases(suite: ET.Element) -> dict[str, ET.Element]:
    return {case.get("name"): case for case in suite.findall("testcase")}


def test_validates_against_junit_10_xsd(xml_text, junit_schema):
    junit_schema.validate(xml_text)


def test_schema_check_is_real(junit_schema):
    with pytest.raises(xmlschema.XMLSchemaValidationError):
        junit_schema.validate('<testsuites><testsuite name="x"/></testsuites>')  # counts missing


def test_one_suite_per_plan_and_one_case_per_rule(xml_text):
    by_name = suites(xml_text)
    assert list(by_name) == [FILE_A, FILE_B, FILE_C]
    assert sorted(cases(by_name[FILE_A])) == ["otherfam/note-only", "testfam/low-reliability", "testfam/short-interval"]
    # Plan B: the rules it ran plus the schema rule that produced a finding.
    assert sorted(cases(by_name[FILE_B])) == ["otherfam/note-only", "schema/unknown-key", "testfam/low-reliability"]
    # Plan C recorded no rules_run: every rule given becomes a passing case.
    assert all(len(case) == 0 for case in cases(by_name[FILE_C]).values())
    for suite in by_name.values():
        assert {case.get("classname") for case in suite.findall("testcase")} == {suite.get("name")}


def test_counts_match_the_elements(xml_text):
    root = ET.fromstring(xml_text.encode("utf-8"))
    total = {"tests": 0, "failures": 0}
    for suite in root.findall("testsuite"):
        testcases = suite.findall("testcase")
        failed = [c for c in testcases if c.find("failure") is not None]
        skipped = [c for c in testcases if c.find("skipped") is not None]
        assert int(suite.get("tests")) == len(testcases)
        assert int(suite.get("failures")) == len(failed)
        assert int(suite.get("skipped")) == len(skipped)
        assert suite.get("errors") == "0"
        total["tests"] += len(testcases)
        total["failures"] += len(failed)
    assert (int(root.get("tests")), int(root.get("failures")), root.get("errors")) == (9, 3, "0")
    assert total == {"tests": 9, "failures": 3}


def test_failures_notes_and_waivers(xml_text):
    plan_a = cases(suites(xml_text)[FILE_A])
    low = plan_a["testfam/low-reliability"].find("failure")
    assert low.get("type") == "error"
    assert low.get("message").startswith(f"{FILE_A}:12:5: error testfam/low-reliability Assumed reliability")
    assert low.text.splitlines()[0] == f"{FILE_A}:12:5 Assumed reliability 0.9 exceeds the evidence (0.62); N should be 160"
    assert "n_required=160" in low.text

    short = plan_a["testfam/short-interval"]
    assert len(short.findall("failure")) == 1  # the waived one is not a failure
    assert "waived: Approved by QA <b>lead</b>" in short.find("system-out").text
    # Hostile text survives the round trip as text (ElementTree escaped it), control char shown.
    first_line = short.find("failure").text.splitlines()[0]
    assert first_line == f"{FILE_A}:30:3 " + HOSTILE.replace("\x1b", "\\x1b")

    note = plan_a["otherfam/note-only"]
    assert note.find("failure") is None and note.find("skipped") is None
    assert "note otherfam/note-only Consider a co-rating sample" in note.find("system-out").text

    waived_only = cases(suites(xml_text)[FILE_B])["otherfam/note-only"]
    assert waived_only.find("skipped").get("message") == "waived: accepted by the steering group"


def test_caution_and_hash_as_properties(xml_text):
    props = {p.get("name"): p.get("value") for p in suites(xml_text)[FILE_A].iter("property")}
    assert props["caution"] == CAUTION
    assert props["sha256"] == "a" * 64
    assert props["as_of"] == "2026-03-01"


def test_characters_xml_cannot_carry_are_escaped(junit_schema, rules):
    nasty = finding(
        "testfam/short-interval", Severity.WARNING, "nul\x00 and bell\x07", "plans/x.yaml", 1, 1, "/a"
    )
    result = CheckResult(plans=(PlanResult("plans/x.yaml", "d" * 64, (nasty,), ()),), tool_version="1")
    text = render_report("junit", result, rules)
    junit_schema.validate(text)
    assert "nul\\x00 and bell\\x07" in text
