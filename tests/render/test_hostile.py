"""Untrusted plan text: escaped in HTML, neutralised in Markdown, and never a fetch in PDF.

The hostile plan (fixtures/hostile.yaml) points at a secret file in a temporary folder and at
a local HTTP server started by the test; the test then checks that the server saw no request
and that the secret's content is nowhere in the document.
"""

from __future__ import annotations

import io
import re
from datetime import date
from pathlib import Path

import pytest

from protolint.plan import read_plan_file
from protolint.render import KINDS, render
from protolint.render.markdown import link_allowed, markdown_block, markdown_html
from protolint.render.pdf import PdfRenderError, PdfSource, html_to_pdf
from tests.leak_server import leak_server as recording_server

FIXTURE = Path(__file__).resolve().parent / "fixtures" / "hostile.yaml"
SECRET = "s3cret-token-7f3a9c"


@pytest.fixture
def leak_server():
    with recording_server() as server:
        yield server.url, server.requests


@pytest.fixture
def hostile(tmp_path: Path, leak_server):
    secret = tmp_path / "secret.txt"
    secret.write_text(SECRET, encoding="utf-8")
    url, requests = leak_server
    text = FIXTURE.read_text(encoding="utf-8").replace("__SECRET_URL__", secret.as_uri()).replace("__LEAK_URL__", url)
    plan = tmp_path / "hostile.yaml"
    plan.write_text(text, encoding="utf-8")
    return read_plan_file(str(plan)), secret, url, requests


_ACTIVE = re.compile(r"<(img|script|base|link|iframe|object|embed|video|style|image)\b", re.IGNORECASE)


@pytest.mark.parametrize("kind", KINDS)
def test_html_shows_hostile_text_as_text(kind: str, hostile) -> None:
    loaded, secret, url, _ = hostile
    page = render(kind, "html", loaded)
    body = page.split("</style>", 1)[1]  # our own stylesheet is the only <style>
    assert not _ACTIVE.search(body)
    assert "javascript:" not in re.findall(r'href="([^"]*)"', body).__str__()
    assert not re.search(r'href="(?!#|https?:|mailto:)', body)
    assert "{{ 7 * 7 }}" in body  # plan data is shown, never evaluated as a template
    if kind == "manual":
        assert "&lt;img src=" in body
        assert '<a href="https://example.org/guide" rel="noopener noreferrer nofollow">fine link</a>' in body
        assert f'href="{url}' in body  # an http image becomes a plain link, never an <img>
        assert f'href="{secret.as_uri()}' not in body


@pytest.mark.parametrize("kind", KINDS)
def test_markdown_output_neutralises_html_images_and_bad_links(kind: str, hostile) -> None:
    from markdown_it import MarkdownIt

    loaded, secret, _, _ = hostile
    text = render(kind, "markdown", loaded)
    # Parse it as a permissive wiki would (CommonMark with raw HTML on) and look at what it sees.
    tokens = MarkdownIt("commonmark").enable("table").parse(text)
    inline = [child for token in tokens for child in (token.children or [])]
    kinds = {token.type for token in tokens} | {token.type for token in inline}
    assert not kinds & {"html_block", "html_inline", "image"}
    hrefs = [token.attrGet("href") for token in inline if token.type == "link_open"]
    assert all(link_allowed(str(href)) for href in hrefs), hrefs
    if kind == "manual":
        assert "https://example.org/guide" in hrefs


@pytest.mark.parametrize("kind", KINDS)
def test_pdf_reads_no_file_and_makes_no_request(kind: str, hostile) -> None:
    pypdf = pytest.importorskip("pypdf")
    loaded, _, _, requests = hostile
    pdf = render(kind, "pdf", loaded)
    reader = pypdf.PdfReader(io.BytesIO(pdf))
    text = "".join(page.extract_text() for page in reader.pages)
    assert '<img src="file://' in text  # the hostile title is printed as text
    assert SECRET not in text
    assert list(reader.attachments) == ["hostile.yaml"]
    assert SECRET.encode() not in b"".join(reader.attachments["hostile.yaml"])
    assert requests == []


def test_fetcher_refuses_local_files_even_in_raw_html(tmp_path: Path) -> None:
    secret = tmp_path / "secret.txt"
    secret.write_text(SECRET, encoding="utf-8")
    for markup in (f'<img src="{secret.as_uri()}">', f'<base href="{tmp_path.as_uri()}/"><img src="secret.txt">',
                   f'<style>@import url("{secret.as_uri()}");</style>', '<img src="../../../etc/passwd">',
                   '<img src="data:image/png;base64,iVBORw0KGgo=">'):
        with pytest.raises(PdfRenderError, match="refused to fetch"):
            html_to_pdf(f"<html><body>{markup}<p>x</p></body></html>", PdfSource(date(2026, 1, 1)))


def test_fetcher_refuses_the_network_even_in_raw_html(leak_server) -> None:
    url, requests = leak_server
    for markup in (f'<img src="{url}/a.png">', f'<link rel="stylesheet" href="{url}/s.css">',
                   f'<style>p {{ background: url("{url}/b.png") }}</style>'):
        with pytest.raises(PdfRenderError, match="refused to fetch"):
            html_to_pdf(f"<html><head>{markup}</head><body><p>x</p></body></html>", PdfSource(date(2026, 1, 1)))
    assert requests == []


@pytest.mark.parametrize("url, allowed", [
    ("https://example.org", True), ("http://example.org", True), ("mailto:qa@example.org", True),
    ("javascript:alert(1)", False), ("file:///etc/passwd", False), ("data:text/html,x", False),
    ("../../etc/passwd", False), ("//evil.example/x", False), ("JaVaScRiPt:alert(1)", False),
])
def test_link_scheme_allow_list(url: str, allowed: bool) -> None:
    assert link_allowed(url) is allowed


def test_markdown_html_disables_raw_html_and_images() -> None:
    out = str(markdown_html('<b onclick="x()">b</b> ![i](https://example.org/i.png) [j](javascript:alert(1))'))
    assert "<b" not in out and "<img" not in out and "javascript:" not in re.findall(r'href="[^"]*"', out).__str__()
    assert "&lt;b onclick" in out


def test_markdown_block_keeps_safe_markdown() -> None:
    assert markdown_block("**bold** and [ok](https://example.org)") == "**bold** and [ok](https://example.org)"
    assert markdown_block("# Top") == "##### Top"
