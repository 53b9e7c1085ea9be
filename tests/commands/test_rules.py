"""``protolint rules`` through the real command group.

Other rule families are being written alongside this command, so the expectations are built
from whatever ``all_rules()`` returns, plus one rule registered here for the test only (and
removed again afterwards, since the registry is global).
"""

from __future__ import annotations

import json
from typing import Iterator

import pytest
from click.testing import CliRunner

from protolint.cli import main
from protolint.rules import registry
from protolint.rules.registry import RuleMeta, Threshold, all_rules

TEST_RULE_ID = "testonly/example-rule"
EXPECTED_KEYS = {
    "id", "family", "severity", "summary", "documentation", "source", "thresholds", "computed", "waivable",
}


def _example_rule(plan, context):
    """An invented rule that exists only for these tests.

    Rationale: none, it never runs.

    **Passes**: anything.
    """
    return ()


@pytest.fixture
def test_rule() -> Iterator[RuleMeta]:
    all_rules()  # make sure the real families are registered first
    registry.rule(
        TEST_RULE_ID,
        "warning",
        source="invented for tests",
        thresholds=[Threshold("max_gap_weeks", 8, "Longest gap allowed (test value)")],
        computed=True,
    )(_example_rule)
    try:
        yield registry.get_rule(TEST_RULE_ID).meta
    finally:
        # The registry offers no unregister on purpose; tests reach in to stay isolated.
        registry._REGISTRY.pop(TEST_RULE_ID, None)


def invoke(*args: str):
    return CliRunner().invoke(main, ["rules", *args], catch_exceptions=False)


def test_list_text_groups_every_rule_by_family(test_rule):
    result = invoke()
    assert result.exit_code == 0, result.stderr
    lines = result.stdout.splitlines()
    metas = [r.meta for r in all_rules()]
    for meta in metas:
        row = next(line for line in lines if line.split() and line.split()[0] == meta.id)
        assert row.split()[1] == meta.severity.label
        assert row.rstrip().endswith(meta.summary)
    headers = [line[:-1] for line in lines if line.endswith(":") and not line.startswith(" ")]
    assert headers == sorted({m.family for m in metas})
    assert headers.index("testonly") >= 0
    assert f"{len(metas)} rules." in result.stdout


def test_list_json_has_every_rule_with_the_contract_keys(test_rule):
    result = invoke("--format", "json")
    assert result.exit_code == 0
    data = json.loads(result.stdout)
    assert [item["id"] for item in data] == [r.meta.id for r in all_rules()]
    for item in data:
        assert set(item) == EXPECTED_KEYS


def test_explain_one_rule_text(test_rule):
    result = invoke(TEST_RULE_ID)
    assert result.exit_code == 0
    out = result.stdout
    assert out.startswith(f"{TEST_RULE_ID}\n\nAn invented rule that exists only for these tests.")
    assert "default severity warning; waivable; computed" in out
    assert "max_gap_weeks = 8  Longest gap allowed (test value)" in out
    assert "Source: invented for tests" in out
    assert "Passes: anything." in out and "**" not in out


def test_explain_prints_markdown_as_plain_text():
    from protolint.commands.rules import markdown_as_text

    text = markdown_as_text("Why `x` matters.\n\n- one\n- **two**\n\n**Passes**: `a: 1`.", width=60)
    assert text == "Why x matters.\n\n- one\n- two\n\nPasses: a: 1."


def test_every_rule_explained_as_text_has_no_raw_markup(test_rule):
    for registered in all_rules():
        out = invoke(registered.meta.id).stdout
        assert "**" not in out and "`" not in out, registered.meta.id
        assert "Passes:" in out or registered.check is None


def test_multiple_sources_are_listed_one_per_line():
    out = invoke("evidence/population-differs").stdout
    block = out.split("Sources:\n", 1)[1].split("\n\n", 1)[0]
    assert [line.startswith("  - ") for line in block.splitlines() if not line.startswith("    ")] == [True] * 3
    assert "Kottner J" in block and "Mulsant BH" in block


def test_family_lists_only_that_family(test_rule):
    result = invoke("sop")
    assert result.exit_code == 0
    ids = [line.split()[0] for line in result.stdout.splitlines() if line.startswith("  ")]
    assert ids == sorted(r.meta.id for r in all_rules() if r.meta.family == "sop")
    assert len(ids) >= 6
    data = json.loads(invoke("testonly", "--format", "json").stdout)
    assert [item["id"] for item in data] == [TEST_RULE_ID]


def test_explain_one_rule_json(test_rule):
    result = invoke(TEST_RULE_ID, "--format", "json")
    assert result.exit_code == 0
    assert json.loads(result.stdout) == {
        "id": TEST_RULE_ID,
        "family": "testonly",
        "severity": "warning",
        "summary": "An invented rule that exists only for these tests.",
        "documentation": "Rationale: none, it never runs.\n\n**Passes**: anything.",
        "source": "invented for tests",
        "thresholds": [{"name": "max_gap_weeks", "default": 8, "description": "Longest gap allowed (test value)"}],
        "computed": True,
        "waivable": True,
    }


def test_every_registered_rule_can_be_explained(test_rule):
    for registered in all_rules():
        result = invoke(registered.meta.id, "--format", "json")
        assert result.exit_code == 0
        assert json.loads(result.stdout)["summary"] == registered.meta.summary


def test_unknown_rule_suggests_close_matches(test_rule):
    result = invoke("testonly/exampel-rule")
    assert result.exit_code == 2
    assert result.stdout == ""
    assert result.stderr.count("\n") == 1
    assert "unknown rule 'testonly/exampel-rule'" in result.stderr
    assert "did you mean testonly/example-rule" in result.stderr


def test_unknown_rule_by_name_only_suggests_the_full_id(test_rule):
    result = invoke("example-rule")
    assert result.exit_code == 2
    assert "did you mean testonly/example-rule" in result.stderr


def test_unknown_rule_without_any_match(test_rule):
    result = invoke("zzz/qqq")
    assert result.exit_code == 2
    assert "'protolint rules' lists them" in result.stderr


def test_bad_format_is_a_usage_error(test_rule):
    result = invoke("--format", "xml")
    assert result.exit_code == 2


def test_test_rule_is_gone_afterwards():
    # Runs after the fixture-using tests in this module; the global registry must be clean.
    assert TEST_RULE_ID not in {r.meta.id for r in all_rules()}
