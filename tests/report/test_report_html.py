"""HTML report: self-contained, escaped, with the working of computed findings."""

from __future__ import annotations

import re
from html.parser import HTMLParser

from protolint.findings import CheckResult, Finding, Location, PlanResult, Severity
from protolint.report import render_report

HOSTILE = '<script>alert(1)</script> <img src="file:///etc/passwd"> & "quotes"'


class _Collector(HTMLParser):
    def __init__(self) -> None:
        super().__init__()
        self.tags: list[str] = []
        self.attributes: list[tuple[str, str | None]] = []

    def handle_starttag(self, tag, attrs):
        self.tags.append(tag)
        self.attributes.extend(attrs)


def result() -> CheckResult:
    findings = (
        Finding("power/unadjusted-for-reliability", Severity.ERROR, "316 needed, 250 stated " + HOSTILE, "plans/a.yaml",
                Location(12, 5), "/sample_size/stated_n_total", {"n_total_needed": 316, "formula": "n = ... <b>"}),
        Finding("sop/review-overdue", Severity.WARNING, "review overdue", "plans/a.yaml", Location(30, 7), "/sops/0/review_due",
                waived=True, waiver_reason="approved by QA " + HOSTILE),
    )
    plan = PlanResult("plans/a.yaml", "ab" * 32, findings, ("power/unadjusted-for-reliability", "sop/review-overdue"), "2026-07-15")
    return CheckResult((plan,), "0.1.0")


def test_html_report_is_self_contained_and_escapes_plan_text():
    html = render_report("html", result(), [])
    parser = _Collector()
    parser.feed(html)
    assert "script" not in parser.tags and "img" not in parser.tags and "link" not in parser.tags
    assert not [value for name, value in parser.attributes if name in ("src", "href")]
    assert "&lt;script&gt;alert(1)&lt;/script&gt;" in html
    assert "default-src 'none'" in html   # the page itself forbids any fetch


def test_html_report_shows_locations_severities_waivers_and_working():
    html = render_report("html", result(), [])
    assert re.search(r">12:5<.*?sev-error.*?power/unadjusted-for-reliability", html)
    assert "sev-waived" in html and "approved by QA" in html
    assert "<th>n_total_needed</th><td>316</td>" in html
    assert "1 error, 0 warnings, 0 notes, 1 waived" in html
    assert "does not replace the trial statistician" in html


def test_check_command_writes_html(cli, starter_text, tmp_path):
    plan = tmp_path / "p.yaml"
    plan.write_text(starter_text.replace("    review_due: 2029-02-01\n", "    review_due: 2026-12-01\n"), encoding="utf-8")
    out = tmp_path / "report.html"
    assert cli("check", plan, "--format", "html", "--output", out).exit_code == 0
    page = out.read_text(encoding="utf-8")
    assert page.startswith("<!DOCTYPE html>") and "sop/review-overdue" in page
