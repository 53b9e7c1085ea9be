"""`protolint check` through the command line: formats, exit codes, errors without tracebacks."""

from __future__ import annotations

import json
import re
import os
from pathlib import Path

import pytest

BAD_YAML = "study:\n  id: [unclosed\n"


def write(tmp_path: Path, name: str, text: str | bytes) -> Path:
    path = tmp_path / name
    if isinstance(text, bytes):
        path.write_bytes(text)
    else:
        path.write_text(text, encoding="utf-8")
    return path


@pytest.fixture
def clean_plan(tmp_path, starter_text) -> Path:
    return write(tmp_path, "clean.yaml", starter_text)


@pytest.fixture
def warning_plan(tmp_path, starter_text) -> Path:
    return write(tmp_path, "warn.yaml", starter_text.replace("    review_due: 2029-02-01\n", "    review_due: 2026-12-01\n"))


@pytest.fixture
def error_plan(tmp_path, starter_text) -> Path:
    return write(tmp_path, "error.yaml", starter_text.replace("  power: 0.8\n", "  power: high\n"))


def test_clean_plan_exits_0(cli, clean_plan):
    result = cli("check", clean_plan)
    assert result.exit_code == 0
    assert "0 errors, 0 warnings" in result.stdout
    assert "does not replace the trial statistician" in result.stdout


def test_text_lines_are_file_line_column_severity_rule_message(cli, warning_plan):
    result = cli("check", warning_plan, "--no-color")
    lines = [line for line in result.stdout.splitlines() if "sop/review-overdue" in line]
    assert len(lines) == 1
    location, rest = lines[0].split(": warning ", 1)
    file, line, column = location.rsplit(":", 2)
    assert Path(file) == warning_plan and int(line) > 0 and int(column) > 0
    assert rest.startswith("sop/review-overdue ")
    assert "\x1b[" not in result.stdout


@pytest.mark.parametrize("fail_on, expected", [("error", 0), ("warning", 1), ("note", 1), ("never", 0)])
def test_fail_on_sets_the_exit_code(cli, warning_plan, fail_on, expected):
    assert cli("check", warning_plan, "--fail-on", fail_on).exit_code == expected


def test_schema_error_exits_1_and_is_located(cli, error_plan):
    result = cli("check", error_plan)
    assert result.exit_code == 1
    assert f"{error_plan}:" in result.stdout and "schema/wrong-type" in result.stdout


def test_json_follows_the_contract(cli, warning_plan):
    result = cli("check", warning_plan, "--format", "json")
    report = json.loads(result.stdout)
    assert report["tool"]["name"] == "protolint"
    [plan] = report["plans"]
    assert plan["file"] == str(warning_plan) and len(plan["sha256"]) == 64
    finding = next(f for f in plan["findings"] if f["rule"] == "sop/review-overdue")
    assert {"rule", "severity", "message", "line", "column", "pointer", "waived", "facts"} <= set(finding)
    assert finding["pointer"] == "/sops/0/review_due" and finding["waived"] is False
    assert report["summary"] == {"error": 0, "warning": 1, "note": 0, "waived": 0}


def test_sarif_output_validates_against_the_oasis_schema(cli, warning_plan, tmp_path, repo_root):
    from jsonschema import Draft4Validator

    out = tmp_path / "report.sarif"
    result = cli("check", warning_plan, "--format", "sarif", "--output", out)
    assert result.exit_code == 0 and "wrote sarif report" in result.stderr
    sarif = json.loads(out.read_text(encoding="utf-8"))
    schema = json.loads((repo_root / "tests" / "data" / "schemas" / "sarif-schema-2.1.0.json").read_text(encoding="utf-8"))
    Draft4Validator(schema).validate(sarif)
    rules = {rule["id"] for rule in sarif["runs"][0]["tool"]["driver"]["rules"]}
    assert "sop/review-overdue" in rules and "schema/missing-key" in rules


def test_junit_output_validates_and_has_a_case_per_rule(cli, warning_plan, repo_root):
    import xml.etree.ElementTree as ET

    import xmlschema

    result = cli("check", warning_plan, "--format", "junit")
    xmlschema.XMLSchema(str(repo_root / "tests" / "data" / "schemas" / "junit-10.xsd")).validate(result.stdout)
    root = ET.fromstring(result.stdout)
    cases = root.findall(".//testcase")
    assert len({c.get("name") for c in cases}) == len(cases) > 10
    failing = [c.get("name") for c in cases if c.find("failure") is not None]
    assert failing == ["sop/review-overdue"]


def test_markdown_output(cli, warning_plan):
    result = cli("check", warning_plan, "--format", "markdown")
    assert "sop/review-overdue" in result.stdout and "|" in result.stdout


def test_several_plans_in_one_call(cli, clean_plan, warning_plan):
    report = json.loads(cli("check", clean_plan, warning_plan, "--format", "json").stdout)
    assert [p["file"] for p in report["plans"]] == [str(clean_plan), str(warning_plan)]


def test_as_of_option(cli, warning_plan):
    early = json.loads(cli("check", warning_plan, "--format", "json", "--as-of", "2026-06-01").stdout)
    assert early["summary"]["warning"] == 0
    assert cli("check", warning_plan, "--as-of", "01/06/2026").exit_code == 2


def test_policy_option(cli, warning_plan, tmp_path):
    policy = write(tmp_path, "policy.yaml", "format_version: 1\nrules:\n  sop/review-overdue: {severity: error}\n")
    assert cli("check", warning_plan, "--policy", policy).exit_code == 1


# -- input that cannot be checked: exit 2, one located line, no traceback, in a real process --

@pytest.mark.parametrize("content, location", [
    (BAD_YAML, ":3:1:"),
    ("a: 1\na: 2\n", ":2:1:"),
    ("a: !!python/object/apply:os.system ['true']\n", ":1:4:"),
    ("a:\n\tb: 1\n", ":2:1:"),
    ("a: 1\n".encode("utf-16"), ":0:0:"),  # the encoding is the whole file's
])
def test_unreadable_plans_exit_2_with_a_located_line(cli_process, tmp_path, content, location):
    plan = write(tmp_path, "bad.yaml", content)
    result = cli_process("check", plan)
    assert result.returncode == 2
    assert "Traceback" not in result.stderr
    [line] = result.stderr.strip().splitlines()
    assert line.startswith(f"{plan}{location}")


def test_missing_file_exits_2(cli_process, tmp_path):
    result = cli_process("check", tmp_path / "nope.yaml")
    assert result.returncode == 2 and "no such file" in result.stderr and "Traceback" not in result.stderr


@pytest.mark.parametrize("fmt", ["text", "markdown", "html", "json", "sarif"])
def test_exit_2_prints_the_located_message_on_stderr_and_nothing_else_there(cli_process, tmp_path, fmt):
    # A file that does not exist is reported at line 0, column 0: the file as a whole. The
    # formats people read print nothing else; the formats tools read get a failure report
    # (tests/report/test_report_failure.py).
    missing = tmp_path / "nonexist.yaml"
    result = cli_process("check", missing, "--format", fmt)
    assert result.returncode == 2
    assert result.stderr == f"{missing}:0:0: no such file\n"
    if fmt in ("text", "markdown", "html"):
        assert result.stdout == ""
    else:
        assert '"executionSuccessful": false' in result.stdout or '"execution_successful": false' in result.stdout


def test_a_missing_policy_file_is_located_like_a_missing_plan(cli_process, tmp_path, starter_text):
    plan = write(tmp_path, "p.yaml", starter_text)
    result = cli_process("check", plan, "--policy", tmp_path / "none.yaml")
    assert result.returncode == 2 and result.stdout == ""
    assert result.stderr.startswith(f"{tmp_path / 'none.yaml'}:0:0: cannot read the policy file")


def test_a_control_character_in_a_plan_gives_one_located_line(cli_process, tmp_path):
    plan = write(tmp_path, "bell.yaml", 'format_version: 1\nplan_date: "a\x07b"\n')
    result = cli_process("check", plan)
    assert result.returncode == 2 and result.stdout == "" and "Traceback" not in result.stderr
    [line] = result.stderr.splitlines()
    # Line 2, column 14: the character itself (columns count from 1).
    assert line == f"{plan}:2:14: the control character U+0007 is not allowed in a plan; remove it (YAML allows tabs and line breaks only)"


def test_error_messages_never_span_lines() -> None:
    from protolint.errors import LocatedError, ProtolintError

    error = LocatedError("data.csv", 3, None, "cell 'a\nb\x1b[31m' is not a number")
    assert error.format_message() == "data.csv:3:0: cell 'a\\nb\\x1b[31m' is not a number"
    assert "\n" not in ProtolintError("one\ntwo").format_message()


def test_bad_policy_exits_2(cli_process, tmp_path, starter_text):
    plan = write(tmp_path, "p.yaml", starter_text)
    policy = write(tmp_path, "policy.yaml", "format_version: 1\nrules:\n  nope/rule: {enabled: false}\n")
    result = cli_process("check", plan, "--policy", policy)
    assert result.returncode == 2 and result.stderr.startswith(f"{policy}:3:3:")


def test_bad_option_exits_2(cli_process, tmp_path, starter_text):
    plan = write(tmp_path, "p.yaml", starter_text)
    assert cli_process("check", plan, "--format", "pdf").returncode == 2


def test_an_unreadable_plan_stops_the_check_with_only_its_located_message(cli_process, tmp_path, starter_text):
    # Exit 2 means the input could not be checked: no result (not even of the other plans) that
    # a CI step could mistake for one, and one `file:line:column:` line per unreadable file.
    good = write(tmp_path, "good.yaml", starter_text)
    bad = write(tmp_path, "bad.yaml", BAD_YAML)
    missing = tmp_path / "missing.yaml"
    result = cli_process("check", bad, good, missing, "--format", "text")
    assert result.returncode == 2
    assert result.stdout == ""
    lines = result.stderr.splitlines()
    assert len(lines) == 2
    assert re.match(rf"^{re.escape(str(bad))}:\d+:\d+: ", lines[0])
    assert lines[1] == f"{missing}:0:0: no such file"


def test_output_file_is_not_half_written_when_the_folder_is_missing_rights(cli_process, tmp_path, starter_text):
    plan = write(tmp_path, "p.yaml", starter_text)
    locked = tmp_path / "locked"
    locked.mkdir()
    (locked / "report.json").write_text("previous report", encoding="utf-8")
    locked.chmod(0o500)
    try:
        result = cli_process("check", plan, "--format", "json", "--output", locked / "report.json")
        if os.geteuid() == 0:  # root may write anyway; then the write must be whole
            assert json.loads((locked / "report.json").read_text(encoding="utf-8"))["plans"]
        else:
            assert result.returncode == 2
            assert (locked / "report.json").read_text(encoding="utf-8") == "previous report"
    finally:
        locked.chmod(0o700)
    assert [p.name for p in locked.iterdir()] == ["report.json"]   # no temporary file left behind


def test_colour_only_on_a_terminal_and_never_with_no_color(cli, warning_plan):
    assert "\x1b[" in cli("check", warning_plan, "--color").stdout
    assert "\x1b[" not in cli("check", warning_plan).stdout   # CliRunner's stdout is not a terminal


def test_the_wall_clock_does_not_change_the_answer(cli_process, warning_plan, tmp_path):
    """Run check with the clock moved to 2099: the findings must be the same."""
    shim = tmp_path / "shim"
    shim.mkdir()
    (shim / "sitecustomize.py").write_text(
        "import datetime, time\n"
        "class FutureDate(datetime.date):\n"
        "    @classmethod\n"
        "    def today(cls):\n"
        "        return cls(2099, 1, 1)\n"
        "class FutureDateTime(datetime.datetime):\n"
        "    @classmethod\n"
        "    def now(cls, tz=None):\n"
        "        return cls(2099, 1, 1, tzinfo=tz)\n"
        "datetime.date = FutureDate\n"
        "datetime.datetime = FutureDateTime\n"
        "time.time = lambda: 4070908800.0\n",
        encoding="utf-8")
    env = dict(os.environ, PYTHONPATH=os.pathsep.join([str(shim), str(Path(__file__).resolve().parents[2])]))
    moved = cli_process("check", warning_plan, "--format", "json", env=env)
    normal = cli_process("check", warning_plan, "--format", "json")
    assert moved.returncode == normal.returncode == 0
    assert json.loads(moved.stdout) == json.loads(normal.stdout)


def test_python_dash_m_and_help(cli_process):
    result = cli_process("--help")
    assert result.returncode == 0 and "check" in result.stdout and "render" in result.stdout
    assert "Example" in cli_process("check", "--help").stdout
