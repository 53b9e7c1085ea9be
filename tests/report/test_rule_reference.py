from __future__ import annotations

import subprocess
import sys
from pathlib import Path

from protolint import CAUTION
from protolint.report.rule_reference import demote_headings, rule_reference_markdown

ROOT = Path(__file__).resolve().parents[2]


def test_contents_grouped_by_family_then_sections(rules):
    text = rule_reference_markdown(rules)
    lines = text.splitlines()
    assert lines[0] == "# protolint rule reference"
    contents = text.split("## Contents", 1)[1].split("\n## ", 1)[0]
    assert contents.index("**otherfam**") < contents.index("`otherfam/note-only`") < contents.index("**testfam**")
    assert "[`testfam/low-reliability`](#rule-testfam-low-reliability) (error)" in contents
    assert [line for line in lines if line.startswith("## ")] == ["## Contents", "## otherfam", "## testfam"]
    assert '<a id="rule-testfam-short-interval"></a>' in lines
    assert f"> **Caution.** {CAUTION}" in lines


def test_rule_section_details(rules):
    text = rule_reference_markdown(rules)
    section = text.split("### `testfam/low-reliability`", 1)[1].split("### `", 1)[0]
    assert "The reliability assumed for the sample size exceeds the evidence." in section
    assert "Default severity **error**; waivable; computed" in section
    assert "| `margin` | 0.05 | 0.0 to 0.5 | Allowed excess over the evidence |" in section
    assert "**Source:** invented test source, 2024" in section
    # The documentation's "## Rationale" sits below the rule heading; the YAML comment does not move.
    assert "\n##### Rationale\n" in section
    assert "\n# a comment\n" in section


def test_demote_headings_skips_fences():
    source = "# Top\n```yaml\n# comment\n```\n## Next\n~~~\n## in tilde fence\n~~~"
    assert demote_headings(source, 2) == "### Top\n```yaml\n# comment\n```\n#### Next\n~~~\n## in tilde fence\n~~~"


def test_no_rules():
    assert "No rules are registered yet." in rule_reference_markdown([])


def test_output_is_deterministic_regardless_of_input_order(rules):
    assert rule_reference_markdown(rules) == rule_reference_markdown(list(reversed(rules)))


def test_docs_rules_md_is_up_to_date():
    # A subprocess so that rules registered by other tests in this session cannot leak in.
    run = subprocess.run(
        [sys.executable, str(ROOT / "tools" / "write_rule_reference.py"), "--check"],
        capture_output=True,
        text=True,
        cwd=ROOT,
    )
    assert run.returncode == 0, run.stderr or "docs/rules.md is stale: run python tools/write_rule_reference.py"
