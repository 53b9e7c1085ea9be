"""A check that could not be done (exit 2) never looks like a clean result.

When a plan or the policy cannot be read, no rule runs. The formats a tool reads (SARIF for
code scanning, JUnit for CI test views, JSON, GitHub annotations) still get a report, and it
says the run failed, located at the file that stopped it; the formats people read get only the
located lines on standard error.
"""

from __future__ import annotations

import json
import xml.etree.ElementTree as ET
from pathlib import Path

import jsonschema
import pytest
import xmlschema

from .conftest import SCHEMAS

BAD_YAML = "format_version: 1\nstudy:\n  id: [unclosed\n"


@pytest.fixture()
def inputs(tmp_path, starter_text):
    bad = tmp_path / "bad.yaml"
    bad.write_text(BAD_YAML, encoding="utf-8")
    good = tmp_path / "good.yaml"
    good.write_text(starter_text, encoding="utf-8")
    return bad, good, tmp_path / "missing.yaml"


def test_sarif_says_the_execution_failed_located_at_each_file(cli_process, inputs):
    bad, good, missing = inputs
    result = cli_process("check", bad, good, missing, "--format", "sarif")
    assert result.returncode == 2 and "Traceback" not in result.stderr
    log = json.loads(result.stdout)
    jsonschema.Draft4Validator(json.loads((SCHEMAS / "sarif-schema-2.1.0.json").read_text(encoding="utf-8"))).validate(log)
    [run] = log["runs"]
    [invocation] = run["invocations"]
    assert invocation["executionSuccessful"] is False and invocation["exitCode"] == 2
    assert run["results"] == []
    errors = [n for n in invocation["toolExecutionNotifications"] if n["level"] == "error"]
    places = [(n["locations"][0]["physicalLocation"]["artifactLocation"]["uri"],
               n["locations"][0]["physicalLocation"].get("region", {}).get("startLine")) for n in errors]
    assert places == [(f"file://{bad}", 4), (f"file://{missing}", None)]
    notes = [n for n in invocation["toolExecutionNotifications"] if n["level"] == "note"]
    assert [n["locations"][0]["physicalLocation"]["artifactLocation"]["uri"] for n in notes] == [f"file://{good}"]


def test_json_carries_the_error_in_the_plan_entry(cli_process, inputs):
    bad, good, missing = inputs
    result = cli_process("check", bad, good, missing, "--format", "json")
    assert result.returncode == 2
    report = json.loads(result.stdout)
    assert report["execution_successful"] is False
    entries = {plan["file"]: plan for plan in report["plans"]}
    assert entries[str(bad)]["error"]["line"] == 4 and entries[str(bad)]["findings"] == []
    assert entries[str(missing)]["error"] == {"file": str(missing), "line": 0, "column": 0, "message": "no such file"}
    assert entries[str(good)]["error"] is None and entries[str(good)]["not_run_reason"].startswith("not checked")
    assert report["summary"] == {"error": 0, "warning": 0, "note": 0, "waived": 0}


def test_a_checked_json_report_says_the_execution_succeeded(cli_process, inputs):
    _, good, _ = inputs
    report = json.loads(cli_process("check", good, "--format", "json", "--fail-on", "never").stdout)
    assert report["execution_successful"] is True and report["errors"] == []


def test_junit_has_an_error_element_and_counts_it(cli_process, inputs):
    bad, good, missing = inputs
    result = cli_process("check", bad, good, missing, "--format", "junit")
    assert result.returncode == 2
    xmlschema.XMLSchema(str(SCHEMAS / "junit-10.xsd")).validate(result.stdout)
    root = ET.fromstring(result.stdout)
    assert root.get("errors") == "2" and root.get("failures") == "0"
    errors = {suite.get("name"): suite.find("testcase/error") for suite in root.iter("testsuite")}
    assert errors[str(bad)] is not None and errors[str(bad)].text.startswith(f"{bad}:4:")
    assert errors[str(missing)].get("message") == "no such file"
    assert errors[str(good)] is None


def test_a_policy_that_cannot_be_read_is_reported_with_the_plans(cli_process, inputs, tmp_path):
    bad, good, _ = inputs
    result = cli_process("check", bad, good, "--policy", tmp_path / "none.yaml", "--format", "junit")
    lines = result.stderr.splitlines()
    assert result.returncode == 2 and len(lines) == 2
    assert lines[0].startswith(f"{tmp_path / 'none.yaml'}:0:0:") and lines[1].startswith(f"{bad}:4:")
    suites = [suite.get("name") for suite in ET.fromstring(result.stdout).iter("testsuite")]
    assert suites == [str(bad), str(good), str(tmp_path / "none.yaml")]


def test_github_annotates_the_file_that_failed(cli_process, inputs):
    bad, _, _ = inputs
    result = cli_process("check", bad, "--format", "github")
    assert result.returncode == 2
    assert result.stdout.splitlines()[0].startswith(f"::error file={bad},line=4,")


@pytest.mark.parametrize("fmt", ["sarif", "json", "junit"])
def test_output_file_gets_the_failure_report_not_a_stale_clean_one(cli_process, inputs, tmp_path, fmt):
    # A code-scanning upload reads the file a step wrote; a clean log left from an earlier run
    # must not survive a run that could not check the plan.
    bad, good, _ = inputs
    target = tmp_path / f"report.{fmt}"
    assert cli_process("check", good, "--format", fmt, "--output", target, "--fail-on", "never").returncode == 0
    result = cli_process("check", bad, "--format", fmt, "--output", target)
    assert result.returncode == 2 and result.stdout == ""
    assert result.stderr.splitlines() == [line for line in result.stderr.splitlines() if line.startswith(f"{bad}:4:")]
    text = target.read_text(encoding="utf-8")
    assert ("executionSuccessful\": false" in text) or ("execution_successful\": false" in text) or ('errors="1"' in text)
    assert not [p for p in tmp_path.iterdir() if p.name.startswith(".")]


@pytest.mark.parametrize("fmt", ["text", "markdown", "html"])
def test_formats_people_read_leave_an_existing_output_alone(cli_process, inputs, tmp_path, fmt):
    bad, _, _ = inputs
    target = tmp_path / "report.out"
    target.write_text("earlier report\n", encoding="utf-8")
    result = cli_process("check", bad, "--format", fmt, "--output", target)
    assert result.returncode == 2 and result.stdout == ""
    assert target.read_text(encoding="utf-8") == "earlier report\n"


def test_the_library_describes_the_failure(inputs):
    from protolint.errors import InputErrors
    from protolint.pipeline import check_files, failure_of

    bad, good, missing = inputs
    with pytest.raises(InputErrors) as caught:
        check_files([bad, good, missing])
    failure = failure_of([bad, good, missing], caught.value)
    assert [p.file for p in failure.problems] == [str(bad), str(missing)]
    assert failure.problem_of(str(good)) is None and failure.other_problems == ()
    assert Path(failure.problems[0].text()).name.startswith("bad.yaml:4:")
