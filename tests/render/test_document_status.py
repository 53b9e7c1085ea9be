"""Controlled documents say on every page whether they may be used, and record how the plan was
checked: the policy (file and SHA-256, or the default), the as-of date, the document's number,
version and status, and the versions of protolint and the rendering libraries.

The draft plan is the invented demo plan (it has open errors on purpose); the clean plan is the
rule tests' base plan, which has no finding at all.
"""

from __future__ import annotations

import hashlib
import io
from datetime import date
from importlib import metadata
from pathlib import Path

import pytest

from protolint import __version__
from protolint.pipeline import check_text
from protolint.render import build_context, render
from protolint.render.document import RENDERING_LIBRARIES, document_check
from protolint.render.phrases import sop_status_text

pypdf = pytest.importorskip("pypdf")

REPO = Path(__file__).resolve().parents[2]
DEMO = REPO / "demo_protocol" / "plan.yaml"
CLEAN = REPO / "tests" / "rules" / "base_plan.yaml"
DRAFT_MARK = "DRAFT — NOT FOR USE"


def _pages(pdf: bytes) -> list[str]:
    return [" ".join(page.extract_text().split()) for page in pypdf.PdfReader(io.BytesIO(pdf)).pages]


def _open_errors(path: Path, **options) -> list:
    result = check_text(path.read_bytes(), str(path), **options)
    return [f for f in result.findings if f.severity.label == "error" and not f.waived]


@pytest.fixture(scope="module")
def clean_loaded():
    from protolint.plan import read_plan_file

    return read_plan_file(str(CLEAN))


def test_the_plans_are_what_the_tests_need() -> None:
    # A check that cannot fail is no check: the demo has open errors, the base plan none.
    assert len(_open_errors(DEMO)) >= 1
    assert _open_errors(CLEAN) == []


def test_draft_mark_and_count_on_every_page_of_a_binder_with_open_errors(demo_binder_pdf: bytes) -> None:
    count = len(_open_errors(DEMO))
    pages = _pages(demo_binder_pdf)
    assert len(pages) >= 10
    for number, text in enumerate(pages, start=1):
        assert DRAFT_MARK in text, f"page {number}"
        assert f"Draft — {count} open errors in the plan check — not for use" in text, f"page {number}"


def test_clean_binder_has_no_draft_mark_and_says_final(clean_loaded) -> None:
    pages = _pages(render("binder", "pdf", clean_loaded))
    for number, text in enumerate(pages, start=1):
        assert "DRAFT" not in text and "Draft" not in text, f"page {number}"
        assert "Final — no open errors in the plan check as of 2026-07-15" in text, f"page {number}"


def test_document_number_and_version_run_on_every_page(demo_binder_pdf: bytes) -> None:
    # demo_protocol/plan.yaml: documents.binder = {number: NDS-QA-SB-016, version: "1.0"}
    pages = _pages(demo_binder_pdf)
    assert "Document NDS-QA-SB-016 version 1.0" in pages[0]  # the cover
    assert all("NDS-QA-SB-016 version 1.0 · Draft" in text for text in pages)


@pytest.mark.parametrize("kind", ["manual", "checklist", "binder"])
def test_every_kind_marks_a_draft_and_lists_or_points_to_its_errors(kind: str, demo_loaded) -> None:
    html = render(kind, "html", demo_loaded)
    errors = _open_errors(DEMO)
    assert f"{DRAFT_MARK}" in html  # the running mark of every printed page
    assert 'class="status-line draft"' in html
    for finding in errors:
        assert f"line {finding.location.line}, column {finding.location.column}" in html
    markdown = render(kind, "markdown", demo_loaded)
    assert f"**Draft — {len(errors)} open errors in the plan check — not for use.**" in markdown


@pytest.mark.parametrize("kind", ["manual", "checklist", "binder"])
def test_clean_plan_documents_carry_no_mark(kind: str, clean_loaded) -> None:
    html = render(kind, "html", clean_loaded)
    assert DRAFT_MARK not in html and "status-line draft" not in html
    assert "Final — no open errors in the plan check as of 2026-07-15" in html


def test_policy_that_lowers_the_errors_makes_the_document_final(tmp_path: Path, demo_loaded) -> None:
    # "After policy and waivers": the same plan, with a policy that makes its error rules
    # warnings, has no open error, so its documents are not drafts.
    rules = sorted({f.rule for f in _open_errors(DEMO)})
    policy = tmp_path / "lenient.yaml"
    policy.write_text("format_version: 1\nrules:\n" + "".join(f"  {r}: {{severity: warning}}\n" for r in rules),
                      encoding="utf-8")
    check = document_check(demo_loaded, str(policy))
    assert check.open_errors == ()
    html = render("manual", "html", demo_loaded, check=check)
    assert DRAFT_MARK not in html
    assert hashlib.sha256(policy.read_bytes()).hexdigest() in html


def test_render_final_refuses_a_draft_and_lists_the_open_errors(cli_process, tmp_path: Path) -> None:
    target = tmp_path / "binder.pdf"
    result = cli_process("render", "binder", DEMO, "--final", "--output", target)
    assert result.returncode == 1
    assert "Traceback" not in result.stderr
    errors = _open_errors(DEMO)
    lines = result.stderr.strip().splitlines()
    assert lines[0] == f"protolint: render binder --final: the plan has {len(errors)} open errors; nothing was written"
    assert [line.split(" ", 2)[:2] for line in lines[1:]] == [
        [f"{DEMO}:{f.location.line}:{f.location.column}:", "error"] for f in errors]
    assert not target.exists() and list(tmp_path.iterdir()) == []


def test_render_final_renders_a_clean_plan(cli, tmp_path: Path) -> None:
    target = tmp_path / "manual.html"
    result = cli("render", "manual", CLEAN, "--final", "--format", "html", "--output", target)
    assert result.exit_code == 0
    assert "Final — no open errors" in target.read_text(encoding="utf-8")


def test_policy_and_as_of_reach_the_pdf_control_block_and_check_appendix(cli, tmp_path: Path, monkeypatch) -> None:
    monkeypatch.chdir(tmp_path)
    policy = Path("sponsor-policy.yaml")
    policy.write_text("format_version: 1\nrules:\n  documents/deviations-incomplete: {enabled: false}\n", encoding="utf-8")
    result = cli("render", "binder", DEMO, "--policy", policy, "--as-of", "2027-01-01", "--output", "binder.pdf")
    assert result.exit_code == 0, result.output
    text = " ".join(_pages(Path("binder.pdf").read_bytes()))
    sha = hashlib.sha256(policy.read_bytes()).hexdigest()
    assert "checked the plan as of 2027-01-01 under policy sponsor-policy.yaml" in text
    assert sha[:32] in text.replace(" ", "")  # the hash may wrap in a table cell
    assert "switched off documents/deviations-incomplete" in text
    assert "Plan checked as of 2027-01-01" in text
    assert "Document date 2027-01-01 (from the --as-of date)" in text
    # The date changed the findings: the demo's waiver expires on 2026-12-31.
    assert "waivers/expired" in text
    assert "Error: documents/deviations-incomplete" not in text and "Warning: documents/deviations-incomplete" not in text


def test_without_options_the_document_says_default_policy_and_plan_date(demo_loaded) -> None:
    html = render("binder", "html", demo_loaded)
    assert "checked the plan as of 2026-07-15 under the default policy (no policy file)." in html
    assert "with the default policy" not in html


def test_sop_status_as_of_the_document_date(demo_loaded) -> None:
    ctx = build_context("binder", demo_loaded)
    status = {sop.id: next(f.value for f in sop.facts if f.label == "Status") for sop in ctx.sops}
    # demo plan date 2026-07-15; SOP-RAT-001 takes effect on 2026-08-15.
    assert status["SOP-RAT-001"] == "effective from 2026-08-15 (not yet in force on 2026-07-15)"
    later = build_context("binder", demo_loaded, check=document_check(demo_loaded, as_of=date(2026, 9, 1)))
    status = {sop.id: next(f.value for f in sop.facts if f.label == "Status") for sop in later.sops}
    assert status["SOP-RAT-001"] == "effective since 2026-08-15"
    sop = demo_loaded.plan.sops[0]
    assert sop_status_text(sop, sop.effective) == "effective since 2026-08-15"  # the day itself counts


def test_recorded_versions_are_the_installed_ones(demo_loaded) -> None:
    ctx = build_context("manual", demo_loaded)
    recorded = {fact.label: fact.value for fact in ctx.control.libraries}
    assert recorded == {name: metadata.version(name) for name in RENDERING_LIBRARIES}
    # The documents draw their charts themselves: a plotting library would be a false record.
    assert set(recorded) == {"weasyprint", "pydyf", "fonttools", "jinja2", "markdown-it-py"}
    # The binder's sample sizes are scipy's exact noncentral t (on numpy): both are named.
    binder = {fact.label: fact.value for fact in build_context("binder", demo_loaded).control.libraries}
    assert binder == {**recorded, "numpy": metadata.version("numpy"), "scipy": metadata.version("scipy")}
    html = render("manual", "html", demo_loaded)
    assert f"protolint {__version__}" in html
    for name in RENDERING_LIBRARIES:
        assert f"{name} {metadata.version(name)}" in html
    assert "The same plan with the same protolint and library versions gives the same document" in html


def test_calendar_records_policy_as_of_and_status(cli, tmp_path: Path) -> None:
    policy = tmp_path / "p.yaml"
    policy.write_text("format_version: 1\n", encoding="utf-8")
    result = cli("calendar", DEMO, "--policy", policy, "--as-of", "2026-08-01")
    assert result.exit_code == 0
    unfolded = result.stdout.replace("\r\n ", "").replace("\n ", "")
    assert f"under policy {policy.name} (SHA-256 {hashlib.sha256(policy.read_bytes()).hexdigest()})" in unfolded
    assert "checked as of 2026-08-01" in unfolded
    assert "DTSTAMP:20260801T000000Z" in unfolded
    assert f"icalendar {metadata.version('icalendar')}" in unfolded
    assert "open errors in the plan check — not for use." in unfolded
    clean = cli("calendar", CLEAN).stdout.replace("\r\n ", "").replace("\n ", "")
    assert "No open errors in the plan check." in clean and "not for use" not in clean


def test_bad_policy_file_is_exit_2_for_every_command(cli_process, tmp_path: Path) -> None:
    policy = tmp_path / "bad.yaml"
    policy.write_text("format_version: 1\nrules:\n  no/such-rule: {enabled: false}\n", encoding="utf-8")
    for args in (("render", "manual", DEMO, "--format", "html"), ("calendar", DEMO), ("diff", DEMO, DEMO)):
        result = cli_process(*args, "--policy", policy)
        assert result.returncode == 2, args
        assert result.stderr.startswith(f"{policy}:3:") and "Traceback" not in result.stderr
        assert result.stdout == ""
