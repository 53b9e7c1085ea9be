"""Every template renders under StrictUndefined, for the demo plan and a minimal plan."""

from __future__ import annotations

import html
import re
from datetime import date

import jinja2
import pytest

from protolint import CAUTION, __version__
from protolint.render import KINDS, render
from protolint.render.document import SIGNATURE_NOTE, document_date
from protolint.render.environment import make_env


def test_environment_is_strict_and_escapes() -> None:
    env = make_env()
    assert env.undefined is jinja2.StrictUndefined
    assert env.from_string("{{ x }}").render(x="<b>") == "&lt;b&gt;"
    with pytest.raises(jinja2.UndefinedError):
        env.from_string("{{ nope }}").render()


@pytest.mark.parametrize("kind", KINDS)
def test_a_missing_context_field_fails_instead_of_printing_nothing(kind: str, demo_loaded) -> None:
    from protolint.render import _fields, build_context

    fields = _fields(build_context(kind, demo_loaded))
    fields.pop("control")
    with pytest.raises(jinja2.UndefinedError):
        make_env().get_template(f"{kind}.html.j2").render(**fields)


@pytest.mark.parametrize("plan", ["demo_loaded", "minimal_loaded"])
@pytest.mark.parametrize("kind", KINDS)
@pytest.mark.parametrize("fmt", ["html", "markdown"])
def test_every_template_renders_with_caution_and_traceability(plan: str, kind: str, fmt: str, request) -> None:
    loaded = request.getfixturevalue(plan)
    text = render(kind, fmt, loaded)
    assert loaded.source.sha256 in text
    flat = " ".join(html.unescape(text).replace("\\", "").split())
    assert " ".join(CAUTION.split()) in flat
    assert "not electronic signatures" in flat
    assert f"protolint {__version__}" in flat


@pytest.mark.parametrize("kind", KINDS)
def test_html_is_one_self_contained_file(kind: str, demo_loaded) -> None:
    page = render(kind, "html", demo_loaded)
    assert page.startswith("<!DOCTYPE html>")
    assert "<style>" in page
    # Nothing the browser would load: no src, no stylesheet link, no CSS url() or @import.
    assert not re.search(r"\ssrc\s*=", page)
    assert "<link" not in page
    assert "@import" not in page
    # url() only for the chart's own clip paths (url(#id), inside the document).
    assert not re.search(r"url\((?!#)", page)
    assert not re.search(r"href=\"(?!#|https?:|mailto:)", page)


def test_binder_has_every_part(demo_loaded) -> None:
    html = render("binder", "html", demo_loaded)
    for heading in ("Document control", "Contents", "SOP-RAT-001 — Administering and scoring the hand lesion composite",
                    "Training sign-off: SOP-RAT-001 version 3.0 — Site dermatologists",
                    "Training sign-off: SOP-MON-003 version 1.0 — Central photograph readers",
                    "Revision history", "Appendix A. Reliability-adjusted sample size", "Appendix B. Check results"):
        assert heading in html, heading
    assert "<svg" in html and "class=\"chart\"" in html
    # The check appendix lists the waived finding with its reason.
    assert "sop/effective-too-late" in html
    assert "Baseline photographs are stored unread" in html


def test_manual_covers_each_rated_instrument_only(demo_loaded) -> None:
    html = render("manual", "html", demo_loaded)
    assert "Quick reference: HLSC-8" in html and "Quick reference: PHG-5" in html
    assert "Quick reference: ITCH-NRS" not in html  # patient-reported, nobody rates it
    assert "<strong>on the worst-affected hand area</strong>" in html  # plan Markdown rendered
    assert "the participant&#39;s treatment allocation" in html
    assert "ICC(2,1) of at least 0.80 against the reference scores" in html


def test_document_date_is_source_date_epoch_or_the_plan_date(demo_loaded) -> None:
    plan = demo_loaded.plan
    assert document_date(plan, {}) == (date(2026, 7, 15), "plan date")
    assert document_date(plan, {"SOURCE_DATE_EPOCH": "1767225600"}) == (date(2026, 1, 1), "SOURCE_DATE_EPOCH")
    from protolint.errors import ProtolintError

    # Not a number, negative, or past the plan schema's last year: one line, exit 2, no overflow.
    for value in ("yesterday", "-5", "1.5", "99999999999999999999", "7258118400", "１２"):
        with pytest.raises(ProtolintError, match="SOURCE_DATE_EPOCH"):
            document_date(plan, {"SOURCE_DATE_EPOCH": value})
    assert document_date(plan, {"SOURCE_DATE_EPOCH": "7258118399"})[0] == date(2199, 12, 31)


def test_source_date_epoch_dates_the_document(demo_loaded, monkeypatch) -> None:
    monkeypatch.setenv("SOURCE_DATE_EPOCH", "1767225600")
    html = render("manual", "html", demo_loaded)
    assert "2026-01-01 (from the SOURCE_DATE_EPOCH)" in html


@pytest.mark.parametrize("kind", KINDS)
@pytest.mark.parametrize("fmt", ["html", "markdown"])
def test_text_formats_are_deterministic(kind: str, fmt: str, demo_loaded) -> None:
    assert render(kind, fmt, demo_loaded) == render(kind, fmt, demo_loaded)


def test_signature_note_wording() -> None:
    assert "not electronic signatures" in SIGNATURE_NOTE
