"""Every rule fires exactly at the marked lines of its failing case and not at all on its passing case.

A case is the clean base plan with a few text edits (``cases/<family>/<name>/{pass,fail}.yaml``);
a line that must be reported carries ``# expect: family/name``. The plans are loaded through
the check pipeline (``protolint.pipeline.check_text``), as the command line does.
"""

from __future__ import annotations

import pytest

from tests.rules._cases import BASE, build_case, case_files, run_text

CASES = case_files()


def _lines_of(result, rule_id: str) -> set[int]:
    return {f.location.line for f in result.findings if f.rule == rule_id}


def test_base_plan_is_clean() -> None:
    result = run_text(BASE.read_text(encoding="utf-8"), "base_plan.yaml")
    assert [(f.rule, f.location.line, f.message) for f in result.findings] == []


@pytest.mark.parametrize("rule_id,file", CASES, ids=[f"{r}:{f.stem}" for r, f in CASES])
def test_case(rule_id: str, file) -> None:
    case = build_case(rule_id, file)
    result = run_text(case.text, str(file), case.as_of)
    expected = case.expected_lines()
    found = _lines_of(result, rule_id)
    if case.kind == "fail":
        assert expected, f"{file} marks no line with '# expect: {rule_id}'"
        assert found == expected, f"{rule_id} fired at lines {sorted(found)}, expected {sorted(expected)}"
    else:
        assert not expected, f"{file} is a passing case but marks expected lines"
        assert found == set(), f"{rule_id} fired at lines {sorted(found)} on its passing case"
