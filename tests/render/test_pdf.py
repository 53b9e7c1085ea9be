"""The PDF read back: pages, running footer, bookmarks, traceability, PDF/A, fonts, paper."""

from __future__ import annotations

import io
import re
from pathlib import Path

import pytest

pypdf = pytest.importorskip("pypdf")

from protolint.render import render  # noqa: E402
from protolint.render.pdf import PdfRenderError, PdfSource, html_to_pdf  # noqa: E402


def _reader(data: bytes):
    return pypdf.PdfReader(io.BytesIO(data))


def _text(page) -> str:
    return " ".join(page.extract_text().split())


def test_binder_pages_and_page_x_of_y(demo_binder_pdf: bytes) -> None:
    assert demo_binder_pdf.startswith(b"%PDF-1.7")
    reader = _reader(demo_binder_pdf)
    total = len(reader.pages)
    assert total >= 10  # cover, control, contents, 3 SOPs with sign-off sheets, appendices
    for number in (1, total // 2, total):
        assert f"Page {number} of {total}" in _text(reader.pages[number - 1])


def test_binder_running_header_names_study_and_document(demo_binder_pdf: bytes) -> None:
    reader = _reader(demo_binder_pdf)
    assert "NDS-HD-301 · SOP binder" in _text(reader.pages[3])


def test_binder_bookmarks_follow_the_headings(demo_binder_pdf: bytes) -> None:
    reader = _reader(demo_binder_pdf)

    def titles(items) -> list[str]:
        out = []
        for item in items:
            out.extend(titles(item) if isinstance(item, list) else [item.title])
        return out

    outline = titles(reader.outline)
    for expected in ("Document control", "Contents", "SOP-RAT-001 — Administering and scoring the hand lesion composite",
                     "Revision history", "Appendix A. Reliability-adjusted sample size", "Appendix B. Check results",
                     "Caution"):
        assert expected in outline
    assert any(t.startswith("Training sign-off: SOP-MON-003") for t in outline)


def test_binder_document_control_carries_the_plan_hash(demo_binder_pdf: bytes, demo_loaded) -> None:
    reader = _reader(demo_binder_pdf)
    control = "".join(reader.pages[1].extract_text().split())  # the hash may wrap in its cell
    assert demo_loaded.source.sha256 in control
    assert "Planformatversion1" in control
    assert "2026-07-15(fromtheplandate)" in control


def test_binder_is_pdf_a_3b_with_the_plan_attached(demo_binder_pdf: bytes, demo_loaded) -> None:
    reader = _reader(demo_binder_pdf)
    xmp = reader.trailer["/Root"]["/Metadata"].get_object().get_data().decode("utf-8")
    assert re.search(r"pdfaid:part(>|=\")3", xmp)
    assert re.search(r"pdfaid:conformance(>|=\")B", xmp)
    assert "/OutputIntents" in reader.trailer["/Root"]
    assert reader.attachments["plan.yaml"] == [demo_loaded.source.text.encode("utf-8")]
    assert reader.metadata.title == "NDS-HD-301 · SOP binder"


def test_binder_embeds_each_sop_text_it_prints_as_an_associated_source_file(demo_binder_pdf: bytes, demo_loaded) -> None:
    """PDF/A-3 associated files: the plan first, then every SOP text byte for byte under the
    path the plan writes, each a /Filespec with /AFRelationship /Source in the catalogue's /AF."""
    reader = _reader(demo_binder_pdf)
    texts = demo_loaded.sop_texts
    assert [t.path for t in texts] == ["sops/SOP-RAT-001.md", "sops/SOP-IMG-002.md", "sops/SOP-MON-003.md"]
    assert list(reader.attachments) == ["plan.yaml", *(t.path for t in texts)]
    folder = Path(demo_loaded.source.file).parent
    for text in texts:
        assert reader.attachments[text.path] == [(folder / text.path).read_bytes()]
    specs = {}
    for ref in reader.trailer["/Root"]["/AF"]:
        spec = ref.get_object()
        specs[str(spec["/F"])] = spec
    assert set(specs) == {"plan.yaml", *(t.path for t in texts)}
    assert all(spec["/AFRelationship"] == "/Source" for spec in specs.values())
    assert texts[0].sha256 in str(specs[texts[0].path]["/Desc"])


def test_only_the_binder_embeds_sop_texts(demo_loaded) -> None:
    reader = _reader(render("manual", "pdf", demo_loaded))
    assert list(reader.attachments) == ["plan.yaml"]


def test_binder_fonts_are_the_packaged_ones_embedded(demo_binder_pdf: bytes) -> None:
    reader = _reader(demo_binder_pdf)
    names = set()
    for page in reader.pages:
        fonts = page["/Resources"].get("/Font", {})
        for ref in fonts.values():
            font = ref.get_object()
            descendant = font["/DescendantFonts"][0].get_object()
            descriptor = descendant["/FontDescriptor"].get_object()
            assert "/FontFile2" in descriptor, font["/BaseFont"]
            names.add(str(font["/BaseFont"]).split("+", 1)[-1])
    assert names and all(name.startswith("protolint-") for name in names), names


def test_pdf_is_byte_identical_across_renders(minimal_loaded) -> None:
    assert render("manual", "pdf", minimal_loaded) == render("manual", "pdf", minimal_loaded)


def test_letter_paper(minimal_loaded) -> None:
    reader = _reader(render("checklist", "pdf", minimal_loaded, paper="letter"))
    box = reader.pages[0].mediabox
    assert (round(float(box.width)), round(float(box.height))) == (612, 792)


def test_source_date_epoch_is_restored_after_writing(minimal_loaded, monkeypatch) -> None:
    import os

    monkeypatch.delenv("SOURCE_DATE_EPOCH", raising=False)
    render("manual", "pdf", minimal_loaded)
    assert "SOURCE_DATE_EPOCH" not in os.environ


def test_weasyprint_warnings_fail_the_render() -> None:
    # An unknown CSS property is only a warning to WeasyPrint; for us it is an error.
    page = "<html><head><style>p { colr: red }</style></head><body><p>x</p></body></html>"
    with pytest.raises(PdfRenderError, match="colr"):
        html_to_pdf(page, PdfSource(document_date=__import__("datetime").date(2026, 1, 1)))
