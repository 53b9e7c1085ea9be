"""``protolint init`` writes a starter whose first check lists what is still to fill in."""

from __future__ import annotations

import json
import re

from click.testing import CliRunner

from protolint.cli import main


def test_starter_fails_its_first_check_with_every_placeholder_listed(tmp_path) -> None:
    runner = CliRunner()
    plan = tmp_path / "starter.yaml"
    assert runner.invoke(main, ["init", str(plan)]).exit_code == 0
    text = plan.read_text(encoding="utf-8")
    placeholder_lines = {number for number, line in enumerate(text.splitlines(), start=1)
                         if re.search(r"Replace with|REPLACE-WITH", line) and not line.lstrip().startswith("#")}

    result = runner.invoke(main, ["check", str(plan), "--format", "json"])
    assert result.exit_code == 1
    findings = json.loads(result.stdout)["plans"][0]["findings"]
    reported = {f["line"] for f in findings if f["rule"] == "documents/placeholder-value"}
    assert reported == placeholder_lines
    assert len(placeholder_lines) >= 25
    assert all(f["severity"] == "error" for f in findings if f["rule"] == "documents/placeholder-value")
    # Nothing else is wrong with the starter: what it lists is only what the writer must fill in.
    assert {f["rule"] for f in findings} == {"documents/placeholder-value"}


def test_placeholder_messages_name_the_section(tmp_path) -> None:
    runner = CliRunner()
    plan = tmp_path / "plan.yaml"
    runner.invoke(main, ["init", str(plan)])
    out = runner.invoke(main, ["check", str(plan)]).stdout
    assert "study: title still holds the starter's placeholder 'Replace with the full study title'" in out
    assert "rater_pools: RATERS training records still holds" in out
    assert "sops: SOP-1 approvals #1 role still holds" in out


def test_init_refuses_to_overwrite(tmp_path) -> None:
    runner = CliRunner()
    plan = tmp_path / "plan.yaml"
    plan.write_text("kept", encoding="utf-8")
    result = runner.invoke(main, ["init", str(plan)])
    assert result.exit_code == 2
    assert plan.read_text(encoding="utf-8") == "kept"
