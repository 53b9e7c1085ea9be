"""The SOP binder prints each SOP's own text: after its summary page, with its headings in the
PDF bookmarks, its file's SHA-256 in the document control; an SOP without text says where the
controlled copy is. Markdown edition likewise, made safe for any wiki."""

from __future__ import annotations

import hashlib
import io
import re
from pathlib import Path

import pytest

from protolint.plan import read_plan_file
from protolint.render import render
from protolint.render.markdown import link_allowed, markdown_block, markdown_is_inert
from tests.conftest import write_demo_plan

pypdf = pytest.importorskip("pypdf")

REPO = Path(__file__).resolve().parents[2]
DEMO = REPO / "demo_protocol" / "plan.yaml"
SOPS = DEMO.parent / "sops"


def _outline(items, depth: int = 0) -> list[tuple[int, str]]:
    out: list[tuple[int, str]] = []
    for item in items:
        if isinstance(item, list):
            out += _outline(item, depth + 1)
        else:
            out.append((depth, item.title))
    return out


def _page_texts(pdf: bytes) -> list[str]:
    return [" ".join(page.extract_text().split()) for page in pypdf.PdfReader(io.BytesIO(pdf)).pages]


def test_each_text_follows_its_summary_page_and_precedes_its_sign_off_sheets(demo_binder_pdf: bytes) -> None:
    pages = _page_texts(demo_binder_pdf)
    for sop_id, version, sentence in (
            ("SOP-RAT-001", "3.0", "Rate the worst-affected area of either hand"),
            ("SOP-IMG-002", "1.1", "Place the hands palm down on the blue mat"),
            ("SOP-MON-003", "1.0", "At each monitoring round the rater scores the recalibration cases")):
        summary = next(i for i, text in enumerate(pages) if f"{sop_id} — " in text and "Approvals recorded" in text)
        full = next(i for i, text in enumerate(pages) if f"{sop_id} version {version}: full text" in text)
        sign_off = next(i for i, text in enumerate(pages) if f"Training sign-off: {sop_id} version {version}" in text)
        assert summary < full < sign_off
        assert sentence in " ".join(pages[full:sign_off])
        assert "The full text follows this page" in pages[summary]


def test_the_texts_own_headings_are_bookmarks_under_their_sop(demo_binder_pdf: bytes) -> None:
    outline = _outline(pypdf.PdfReader(io.BytesIO(demo_binder_pdf)).outline)
    start = outline.index((0, "SOP-RAT-001 — Administering and scoring the hand lesion composite"))
    chapter = outline[start + 1:outline.index((0, "SOP-IMG-002 — Standardised hand photography and central grading"))]
    # The text's "# Purpose and scope" and "## Choosing the area", one and two levels below
    # the text's own section.
    assert chapter[:3] == [(1, "SOP-RAT-001 version 3.0: full text"), (2, "Purpose and scope"), (2, "Before the visit")]
    assert (3, "Choosing the area") in chapter and (2, "When a rater changes") in chapter
    assert chapter[-1] == (1, "Training sign-off: SOP-RAT-001 version 3.0 — Site dermatologists")


def test_document_control_records_each_texts_sha256(demo_loaded) -> None:
    html = render("binder", "html", demo_loaded)
    control = html[html.index('id="control"'):html.index('id="contents"')]
    for name, label in (("SOP-RAT-001.md", "SOP-RAT-001 3.0 text"), ("SOP-IMG-002.md", "SOP-IMG-002 1.1 text"),
                        ("SOP-MON-003.md", "SOP-MON-003 1.0 text")):
        digest = hashlib.sha256((SOPS / name).read_bytes()).hexdigest()
        assert re.search(rf"SHA-256 of {label}</th><td><span class=\"mono\">sops/{name}</span><br><span class=\"mono digest\">{digest}</span>", control)
    markdown = render("binder", "markdown", demo_loaded)
    digest = hashlib.sha256((SOPS / "SOP-RAT-001.md").read_bytes()).hexdigest()
    assert f"| SHA-256 of SOP-RAT-001 3.0 text | sops/SOP-RAT-001.md: `{digest}` |" in markdown


def test_the_digest_changes_when_the_file_changes(tmp_path: Path) -> None:
    plan = write_demo_plan(tmp_path / "plan.yaml", DEMO.read_text(encoding="utf-8"))
    before = render("binder", "html", read_plan_file(str(plan)))
    text_file = tmp_path / "sops" / "SOP-IMG-002.md"
    text_file.write_text(text_file.read_text(encoding="utf-8") + "\nOne more invented sentence.\n", encoding="utf-8")
    after = render("binder", "html", read_plan_file(str(plan)))
    new_digest = hashlib.sha256(text_file.read_bytes()).hexdigest()
    assert new_digest not in before and new_digest in after and "One more invented sentence." in after
    # Nothing else in the plan changed, so the plan's own digest did not.
    plan_digest = hashlib.sha256(plan.read_bytes()).hexdigest()
    assert plan_digest in before and plan_digest in after


def test_an_sop_without_text_says_where_the_controlled_copy_is(tmp_path: Path) -> None:
    text = DEMO.read_text(encoding="utf-8").replace("    text_file: sops/SOP-RAT-001.md\n", "")
    plan = write_demo_plan(tmp_path / "plan.yaml", text)
    loaded = read_plan_file(str(plan))
    html = render("binder", "html", loaded)
    assert "SOP-RAT-001 version 3.0: full text" not in html and 'id="sop-text-SOP-RAT-001"' not in html
    assert ("This binder does not include the text of SOP-RAT-001: the plan names no text file for it. "
            "The controlled copy is kept at: Northwind document system (fictional), document NDS-QD-0141") in html
    # Without a location either, the page says that too.
    text = text.replace("    location: Northwind document system (fictional), document NDS-QD-0141\n", "")
    plan = write_demo_plan(tmp_path / "plan.yaml", text)
    html = render("binder", "html", read_plan_file(str(plan)))
    assert "The plan does not say where the controlled copy is kept." in html
    assert "SHA-256 of SOP-RAT-001" not in html and "SHA-256 of SOP-IMG-002 1.1 text" in html
    markdown = render("binder", "markdown", read_plan_file(str(plan)))
    assert "_This binder does not include the text of SOP-RAT-001" in markdown


def test_markdown_edition_keeps_the_texts_outline_below_its_own(demo_loaded) -> None:
    markdown = render("binder", "markdown", demo_loaded)
    section = markdown[markdown.index("### SOP-RAT-001 version 3.0: full text"):]
    assert "\n#### Purpose and scope\n" in section and "\n##### Choosing the area\n" in section
    assert markdown_is_inert(markdown)


def test_hostile_sop_text_yields_neither_the_file_nor_markup(tmp_path: Path) -> None:
    secret = tmp_path / "secret.txt"
    secret.write_text("secret-5d1e", encoding="utf-8")
    hostile = (f'# Steps\n\n<script>alert(1)</script> <img src="{secret.as_uri()}"> ![x]({secret.as_uri()})\n\n'
               "[click](javascript:alert(2)) [local](secret.txt) [ok](https://example.org/sop)\n\n"
               f"- [ref]: javascript:alert(3)\n\n[ref] and [r2]\n\n> [r2]:\n> {secret.as_uri()}\n")
    plan = write_demo_plan(tmp_path / "plan.yaml", DEMO.read_text(encoding="utf-8"))
    (tmp_path / "sops" / "SOP-RAT-001.md").write_text(hostile, encoding="utf-8")
    loaded = read_plan_file(str(plan))
    html = render("binder", "html", loaded)
    body = html[html.index('id="sop-text-SOP-RAT-001"'):html.index('id="signoff-SOP-RAT-001-1"')]
    assert "<script" not in body and "<img" not in body and "&lt;script&gt;" in body
    hrefs = re.findall(r'href="([^"]*)"', body)
    assert hrefs == ["https://example.org/sop"]
    markdown = render("binder", "markdown", loaded)
    assert markdown_is_inert(markdown) and "secret-5d1e" not in markdown + html
    pdf = render("binder", "pdf", loaded)
    assert b"secret-5d1e" not in pdf


@pytest.mark.parametrize("text", [
    "- [guide]: javascript:alert(1)\n\n[guide]",
    "* [guide]: file:///etc/passwd\n\n[guide]",
    "1. [guide]: data:text/html,x\n\n[guide]",
    "> [guide]: javascript:alert(1)\n\n[guide]",
    "[guide]:\n  javascript:alert(1)\n\n[guide]",
    "   [guide]: <javascript:alert(1)>\n\n[guide]",
    "[a \\[b\\]](javascript:alert(1))",
    "[a [b] c](javascript:alert(1))",
    "[x](java&#115;cript:alert(1))",
])
def test_markdown_block_neutralises_links_however_they_are_written(text: str) -> None:
    from markdown_it import MarkdownIt

    out = markdown_block(text)
    parser = MarkdownIt("commonmark", {"html": True})
    parser.validateLink = lambda url: True
    links = [child.attrGet("href") for token in parser.parse(out) for child in (token.children or ())
             if child.type == "link_open"]
    assert all(link_allowed(str(href)) for href in links), (out, links)


def test_markdown_block_keeps_safe_reference_links() -> None:
    out = markdown_block("See [the guide].\n\n[the guide]: https://example.org/guide")
    assert out == "See [the guide].\n\n[the guide]: https://example.org/guide"


def test_html_keeps_safe_reference_links_and_shows_refused_definitions_as_text() -> None:
    from protolint.render.markdown import markdown_html

    assert str(markdown_html("See [the guide][g].\n\n[g]: https://example.org/g")) == (
        '<p>See <a href="https://example.org/g" rel="noopener noreferrer nofollow">the guide</a>.</p>\n')
    for text in ("See [bad][b].\n\n[b]: javascript:alert(1)", "- item\n- [b]: file:///etc/passwd\n\n[b]",
                 "> [b]: data:text/html,x\n\n[b]", "[b]:\n  javascript:alert(1)\n\n[b]"):
        html = str(markdown_html(text))
        assert "href" not in html and "[b]:" in html, html
