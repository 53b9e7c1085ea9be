"""What a QA reader of the demo documents objected to stays fixed: plan codes never reach the
page as codes, "NO" is never a bare country after a site id, a percent sign stays on its
number's line, the title page does not print the running title twice, the manual carries its
approval block, and the sample-size appendix shows the observed effect at both reliabilities
with the chart under its own heading."""

from __future__ import annotations

import re
from pathlib import Path

import pytest

from protolint.plan import load_plan
from protolint.plan.source import load_source
from protolint.render import render

DEMO = Path(__file__).resolve().parents[2] / "demo_protocol" / "plan.yaml"


@pytest.fixture(scope="module")
def demo():
    return load_plan(load_source(DEMO.read_bytes(), str(DEMO)))


@pytest.fixture(scope="module")
def pages(demo) -> dict[tuple[str, str], str]:
    return {(kind, fmt): render(kind, fmt, demo) for kind in ("manual", "checklist", "binder") for fmt in ("html", "markdown")}


def _document_text(page: str) -> str:
    """The document's own words: the check findings quote plan codes on purpose, so the lists
    of findings (the draft note and the check appendix) are left out."""
    page = re.sub(r'<div class="draft-note.*?</div>', "", page, flags=re.S)
    page = re.sub(r"^> .*$", "", page, flags=re.M)
    return page.split("Appendix B")[0]


@pytest.mark.parametrize("kind", ["manual", "checklist", "binder"])
@pytest.mark.parametrize("fmt", ["html", "markdown"])
def test_plan_codes_are_printed_as_words(pages, kind: str, fmt: str) -> None:
    text = _document_text(pages[(kind, fmt)])
    for code in ("weighted-kappa-quadratic", "central re rating", "central-re-rating", "data-surveillance"):
        assert code not in text, (kind, fmt, code)
    if kind in ("manual", "checklist"):
        assert "quadratically weighted kappa of at least" in text


def test_a_site_heading_names_its_country_as_a_country(pages) -> None:
    for fmt in ("html", "markdown"):
        text = pages[("checklist", fmt)]
        assert "(site S01, country NO)" in text
        assert ", NO)" not in text.replace("country NO)", "")


def test_a_percent_sign_stays_with_its_number(pages) -> None:
    html = pages[("binder", "html")]
    assert "0.5\u00a0%" in html and "15\u00a0%" in html
    assert not re.search(r"\d %", re.sub(r"<[^>]+>", "", html))


@pytest.mark.parametrize("kind", ["manual", "checklist", "binder"])
def test_the_title_page_prints_the_running_title_once(pages, demo, kind: str) -> None:
    html = pages[(kind, "html")]
    first_page = html.split("<body", 1)[1].split("</section>", 1)[0]
    running = re.search(r'data-running="([^"]+)"', first_page)
    # The running header is set from the title's data-running attribute, not from a second line.
    assert running is not None and running[1].startswith(f"{demo.plan.study.id} · ")
    assert re.sub(r'data-running="[^"]+"', "", first_page).count(running[1]) == 0
    assert '<p class="running' not in html


def test_the_binder_control_page_has_one_heading(pages) -> None:
    control = pages[("binder", "html")].split('id="control"', 1)[1].split("</section>", 1)[0]
    assert control.count("Document control") == 1


@pytest.mark.parametrize("fmt", ["html", "markdown"])
def test_the_manual_has_an_approval_block(pages, fmt: str) -> None:
    text = pages[("manual", fmt)]
    assert "Manual approval" in text
    for role in ("Prepared by", "Reviewed by (quality assurance)", "Approved by"):
        assert role in text


def test_the_sample_size_appendix_shows_the_observed_effect_at_both_reliabilities(pages) -> None:
    html = pages[("binder", "html")]
    # d = 0.45 on the true-score scale; the observed effect is d·√ρ: 0.45 at the assumed 1,
    # 0.45·√(0.88 / (2 − 0.88)) = 0.399 at the single-rating value the evidence supports.
    assert re.search(r"Observed effect at the assumed reliability 1</th><td>0\.450<", html)
    assert re.search(r"Observed effect at the supported reliability 0\.786</th><td>0\.399<", html)
    chart = html.split("Participants needed at each reliability", 1)
    assert len(chart) == 2 and "<svg" in chart[1].split("</figure>", 1)[0]
