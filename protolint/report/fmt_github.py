"""GitHub Actions workflow commands: one annotation per finding on the pull request's files.

``::error file=plans/x.yaml,line=14,col=5,title=sop/review-overdue::message``. Messages and
property values are escaped as the workflow-command syntax requires (``%``, CR and LF in
messages; additionally ``:`` and ``,`` in properties), so plan text cannot end an annotation
early or start a command of its own. Notes become ``::notice``; waived findings are left out
(they are recorded exceptions, not things to fix). Annotations do not fail a job by
themselves: the exit code of ``protolint check`` does.
"""

from __future__ import annotations

from typing import TYPE_CHECKING, Sequence

from protolint import CAUTION
from protolint.report._common import RUN_NOT_CHECKED, check_basis, counts_phrase, forward_slashes, not_run_note

if TYPE_CHECKING:
    from protolint.findings import CheckResult
    from protolint.pipeline import CheckFailure
    from protolint.rules.registry import RuleMeta

_LEVEL = {"error": "error", "warning": "warning", "note": "notice"}


def escape_data(text: str) -> str:
    return text.replace("%", "%25").replace("\r", "%0D").replace("\n", "%0A")


def escape_property(text: str) -> str:
    return escape_data(text).replace(":", "%3A").replace(",", "%2C")


def render(result: CheckResult, rules: Sequence[RuleMeta], *, color: bool = False) -> str:
    lines = []
    for plan in result.plans:
        note = not_run_note(plan)
        if note:
            lines.append(f"::warning file={escape_property(forward_slashes(plan.file))},title=rules not run::{escape_data(note)}")
        for finding in plan.findings:
            if finding.waived:
                continue
            where = finding.location
            properties = [f"file={escape_property(forward_slashes(finding.file))}", f"line={where.line}", f"col={where.column}"]
            if where.end_line is not None and where.end_column is not None:
                properties += [f"endLine={where.end_line}", f"endColumn={where.end_column}"]
            properties.append(f"title={escape_property(finding.rule)}")
            lines.append(f"::{_LEVEL[finding.severity.label]} {','.join(properties)}::{escape_data(finding.message)}")
    lines.append(f"protolint: {escape_data(counts_phrase(result.counts()))}")
    lines.append(f"protolint: {escape_data(check_basis(result))}")
    lines.append(f"protolint: caution: {escape_data(CAUTION)}")
    return "\n".join(lines) + "\n"


def render_failure(failure: CheckFailure) -> str:
    """A run that could not check its plans: an error annotation at each input that failed."""
    lines = []
    for problem in failure.problems:
        properties = [f"file={escape_property(forward_slashes(problem.file))}"] if problem.file else []
        if problem.line >= 1:
            properties.append(f"line={problem.line}")
            if problem.column >= 1:
                properties.append(f"col={problem.column}")
        properties.append("title=protolint could not check this file")
        lines.append(f"::error {','.join(properties)}::{escape_data(problem.message)}")
    lines.append(f"protolint: {escape_data(RUN_NOT_CHECKED)}")
    return "\n".join(lines) + "\n"
