"""The review report (``check --format html``): self-contained, escaped, readable by a reviewer."""

from __future__ import annotations

import base64
import hashlib
import re
from html.parser import HTMLParser
from pathlib import Path

from protolint.findings import CheckResult, Finding, Location, PlanResult, Severity
from protolint.report import render_report
from tests.conftest import write_demo_plan

HOSTILE = '<script>alert(1)</script> <img src="file:///etc/passwd"> & "quotes"'


class _Collector(HTMLParser):
    def __init__(self) -> None:
        super().__init__()
        self.tags: list[str] = []
        self.attributes: list[tuple[str, str | None]] = []
        self.scripts: list[str] = []
        self._in_script = False

    def handle_starttag(self, tag, attrs):
        self.tags.append(tag)
        self.attributes.extend(attrs)
        self._in_script = tag == "script"

    def handle_endtag(self, tag):
        self._in_script = False

    def handle_data(self, data):
        if self._in_script:
            self.scripts.append(data)


def parsed(html: str) -> _Collector:
    parser = _Collector()
    parser.feed(html)
    return parser


def assert_self_contained(html: str) -> None:
    """No fetch possible: no resource tags, only in-page links, one script allowed by its hash."""
    page = parsed(html)
    assert not {"img", "link", "iframe", "object", "embed", "base", "audio", "video"} & set(page.tags)
    for name, value in page.attributes:
        if name in ("src", "href", "action", "xlink:href", "srcset", "formaction"):
            assert name == "href" and (value or "").startswith("#"), (name, value)
        assert not name.startswith("on"), name   # no inline event handler
    assert page.tags.count("script") == 1 and len(page.scripts) == 1
    digest = base64.b64encode(hashlib.sha256(page.scripts[0].encode("utf-8")).digest()).decode()
    policy = re.search(r'http-equiv="Content-Security-Policy" content="([^"]+)"', html).group(1)
    assert "default-src 'none'" in policy and f"script-src 'sha256-{digest}'" in policy
    assert "url(" not in html and "@import" not in html


def hand_built() -> CheckResult:
    findings = (
        Finding("power/unadjusted-for-reliability", Severity.ERROR, "316 needed, 250 stated " + HOSTILE, "plans/a.yaml",
                Location(12, 5), "/sample_size/stated_n_total", {"n_total_needed": 316, "formula": "n = ... <b>"}),
        Finding("sop/review-overdue", Severity.WARNING, "review overdue", "plans/a.yaml", Location(30, 7), "/sops/0/review_due",
                waived=True, waiver_reason="approved by QA " + HOSTILE),
    )
    plan = PlanResult("plans/a.yaml", "ab" * 32, findings, ("power/unadjusted-for-reliability", "sop/review-overdue"), "2026-07-15")
    return CheckResult((plan,), "0.1.0")


def test_report_escapes_plan_text_and_loads_nothing():
    html = render_report("html", hand_built(), [])
    assert_self_contained(html)
    assert "&lt;script&gt;alert(1)&lt;/script&gt;" in html and "<b>" not in html
    # The file is not on disk: the report says why there is no excerpt instead of inventing one.
    assert "could not be read again" in html


def test_facts_are_in_words_with_units():
    html = render_report("html", hand_built(), [])
    assert '<dt>Participants needed (enrolled)</dt><dd class="short">316 participants</dd>' in html
    assert "n_total_needed" not in html
    assert "Formula: n = ... &lt;b&gt;" in html


def demo_findings(cli, demo_plan: Path) -> list[dict]:
    """The demo's findings as the JSON report gives them: what the HTML page must show."""
    import json

    return json.loads(cli("check", demo_plan, "--format", "json").output)["plans"][0]["findings"]


def demo_report(cli, demo_plan: Path, tmp_path: Path, *extra: str) -> str:
    out = tmp_path / "report.html"
    assert cli("check", demo_plan, "--format", "html", "--output", out, *extra).exit_code == 1
    return out.read_text(encoding="utf-8")


def test_demo_report_identity_summary_and_caution(cli, demo_plan, tmp_path):
    html = demo_report(cli, demo_plan, tmp_path)
    assert_self_contained(html)
    sha = hashlib.sha256(demo_plan.read_bytes()).hexdigest()
    for label, value in (("SHA-256", f"<code>{sha}</code>"), ("Plan format", "1"), ("Protocol", "NDS-HD-301 version 2.0"),
                         ("Dates checked as of", "2026-07-15"), ("Policy", "")):
        assert re.search(rf"<dt>{label}</dt><dd>[^<]*{re.escape(value)}", html), label
    # Summary by family and severity; the totals row equals the check's counts.
    findings = demo_findings(cli, demo_plan)
    kinds = ["waived" if f["waived"] else f["severity"] for f in findings]
    totals = "".join(f'<td class="num">{kinds.count(k)}</td>' for k in ("error", "warning", "note", "waived"))
    assert f'<tfoot><tr><th scope="row">All</th>{totals}</tr></tfoot>' in html
    assert kinds.count("error") and kinds.count("warning") and kinds.count("note") and kinds.count("waived")
    power = [k for f, k in zip(findings, kinds) if f["rule"].startswith("power/")]
    cells = "".join(f'<td class="num">{power.count(k) or "–"}</td>' for k in ("error", "warning", "note", "waived"))
    assert f'<th scope="row">power</th>{cells}</tr>' in html
    assert "does not replace the trial statistician" in html


def test_demo_finding_shows_marked_plan_lines_rationale_and_source(cli, demo_plan, tmp_path):
    html = demo_report(cli, demo_plan, tmp_path)
    lines = demo_plan.read_text(encoding="utf-8").splitlines()
    article = re.search(r'<article class="finding sev-error"[^>]*data-family="evidence">.*?</article>', html, re.S).group(0)
    assert "evidence/average-icc-for-single-rating" in article and "line 68, column 22" in article
    # Lines 66..70 shown, 68 marked, each with its number, in the file's own text (escaped).
    from markupsafe import escape

    for number in range(66, 71):
        marked = ' marked' if number == 68 else ''
        arrow = "▶ " if number == 68 else ""
        assert f'<span class="line{marked}"><span class="number">{arrow}{number}</span>{escape(lines[number - 1])}</span>' in article
    assert "Why it matters:" in article
    assert "Source:</strong> Shrout PE, Fleiss JL (1979). Intraclass correlations" in article
    # The facts in words: no internal key survives anywhere on the page.
    assert '<dt>Ratings averaged in the evidence</dt><dd class="short">2 ratings</dd>' in article
    for key in ("k_reported", "m_trial", "reliability_for_trial", "n_total_needed", " facts)"):
        assert key not in html, key


def test_demo_waiver_shows_reason_approver_date_and_expiry(cli, demo_plan, tmp_path):
    html = demo_report(cli, demo_plan, tmp_path)
    waived = re.search(r'<article class="finding sev-waived".*?</article>', html, re.S).group(0)
    assert "sop/effective-too-late" in waived and '<span class="badge sev-waived">waived error</span>' in waived
    assert "<dt>Approved by</dt><dd>Dr. Tomas Reyes (fictional), imaging core lead</dd>" in waived
    assert "<dt>Approved on</dt><dd>2026-07-10</dd>" in waived and "<dt>Expires</dt><dd>2026-12-31</dd>" in waived
    assert "<dt>Reason</dt><dd>Baseline photographs are stored unread" in waived


def test_demo_chart_marks_the_plan_and_the_evidence_on_the_curve(cli, demo_plan, tmp_path):
    html = demo_report(cli, demo_plan, tmp_path)
    svg = re.search(r"<svg .*?</svg>", html, re.S).group(0)
    # The demo states 250 at an assumed reliability of 1.0; the evidence supports 0.786, which
    # needs 316 (the sample-size rule's own figures, see tests/rules/test_computed.py).
    assert "plan: 250 at 1.00" in svg and "evidence: 316 at 0.79" in svg
    points = re.findall(r'M?L?([\d.]+),([\d.]+)', re.search(r'class="curve"', svg) and re.search(r'<path d="([^"]+)"', svg).group(1))
    circle = re.search(r'<circle cx="([\d.]+)" cy="([\d.]+)"', svg)
    # The evidence point lies on the curve (the curve is drawn with the rule's own formula).
    nearest = min(points, key=lambda p: abs(float(p[0]) - float(circle.group(1))))
    assert abs(float(nearest[1]) - float(circle.group(2))) < 4
    assert "for which 316 are needed" in html


def test_filters_are_hidden_without_script_and_every_finding_is_visible(cli, demo_plan, tmp_path):
    html = demo_report(cli, demo_plan, tmp_path)
    assert '<form id="filters" hidden' in html
    assert len(re.findall(r"<article class=\"finding", html)) == len(demo_findings(cli, demo_plan)) > 20
    assert not re.search(r"<article[^>]* hidden", html)
    families = set(re.findall(r'data-family="([a-z]+)"', html))
    for family in families:
        assert f'name="family" value="{family}" checked' in html


def test_hostile_plan_is_escaped_in_excerpts_and_messages(cli, starter_text, tmp_path):
    hostile = '"<script>alert(1)</script><img src=x onerror=alert(2)> & </pre></article>"'
    text = starter_text.replace("    review_due: 2029-02-01\n", "    review_due: 2026-12-01\n", 1)
    # The SOP's version sits two lines above the finding's line, so it is in the excerpt.
    text = re.sub(r'(\n  - id: SOP-1\n    title: [^\n]*\n    version: )"1.0"\n', lambda m: f"{m.group(1)}'{hostile}'\n", text, count=1)
    assert hostile in text
    plan = tmp_path / "hostile.yaml"
    plan.write_text(text, encoding="utf-8")
    out = tmp_path / "report.html"
    assert cli("check", plan, "--format", "html", "--output", out).exit_code == 0
    html = out.read_text(encoding="utf-8")
    assert_self_contained(html)
    assert "&lt;script&gt;alert(1)&lt;/script&gt;&lt;img src=x onerror=alert(2)&gt;" in html
    assert "</pre></article>\"" not in html and "onerror=alert(2)>" not in html


def test_changed_file_gets_no_excerpt(demo_plan, tmp_path):
    from protolint.plan import read_plan_file
    from protolint.rules.engine import check_loaded

    copy = write_demo_plan(tmp_path / "plan.yaml", demo_plan.read_text(encoding="utf-8"))
    checked = check_loaded(read_plan_file(str(copy)))
    copy.write_text(demo_plan.read_text(encoding="utf-8").replace("NDS-HD-301", "CHANGED"), encoding="utf-8")
    # A report rendered after the file changed must not show the new lines as the checked ones.
    html = render_report("html", CheckResult((checked,), "0"), [])
    assert "has changed since it was checked" in html and '<pre class="excerpt"' not in html
