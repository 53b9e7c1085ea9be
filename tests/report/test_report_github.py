"""GitHub Actions annotations: one workflow command per unwaived finding, safely escaped."""

from __future__ import annotations

from protolint.findings import CheckResult, Finding, Location, PlanResult, Severity
from protolint.report import render_report


def result() -> CheckResult:
    findings = (
        Finding("sop/review-overdue", Severity.WARNING, "due 50%\nthen ::error file=x::injected", "plans\\a,b.yaml",
                Location(14, 5, 14, 17), "/sops/0/review_due"),
        Finding("documents/no-protocol-version", Severity.NOTE, "no protocol", "plans\\a,b.yaml", Location(1, 1), ""),
        Finding("blinding/rater-knows-treatment", Severity.ERROR, "waived one", "plans\\a,b.yaml", Location(3, 1), "/x",
                waived=True, waiver_reason="approved"),
    )
    return CheckResult((PlanResult("plans\\a,b.yaml", "0" * 64, findings, ()),), "0.1.0")


def test_one_annotation_per_unwaived_finding_with_escaping():
    lines = render_report("github", result(), []).splitlines()
    annotations = [line for line in lines if line.startswith("::")]
    assert annotations == [
        "::notice file=plans/a%2Cb.yaml,line=1,col=1,title=documents/no-protocol-version::no protocol",
        "::warning file=plans/a%2Cb.yaml,line=14,col=5,endLine=14,endColumn=17,title=sop/review-overdue"
        "::due 50%25%0Athen ::error file=x::injected",
    ]
    # The injected text stays inside the message: no line of output starts a second command.
    assert sum(line.startswith("::error") for line in lines) == 0
    assert lines[-1].startswith("protolint: caution:") and "statistician" in lines[-1]
