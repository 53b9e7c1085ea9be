"""Controlled documents from a plan: rater manual, monitoring checklist and SOP binder.

plan -> typed context (one module per document: :mod:`.manual`, :mod:`.checklist`,
:mod:`.binder`; shared parts in :mod:`.document` and :mod:`.phrases`) -> Jinja template (``templates/``) -> HTML, Markdown,
or PDF (:mod:`.pdf`, a thin wrapper around the HTML). iCalendar export is in :mod:`.calendar`.
Nothing here reads the clock, the network or a file other than the packaged templates.

Templates only lay out; every decision (which pools sign which SOP, what a criterion means in
words, which dates a checklist has) is made in the context modules, in small functions that
can be tested without rendering. Contexts are frozen dataclasses; dated facts (monitoring
rounds, rating spans, the reliability the trial can expect) come from ``protolint.plan``.
"""

from __future__ import annotations

import dataclasses
from typing import TYPE_CHECKING, Any, Callable

from protolint.plan import LoadedPlan

if TYPE_CHECKING:
    from protolint.render.document import DocumentCheck

KINDS = ("manual", "checklist", "binder")
FORMATS = ("pdf", "html", "markdown")
PAPERS = ("a4", "letter")

Progress = Callable[[str], None]


def build_context(kind: str, loaded: LoadedPlan, paper: str = "a4", progress: Progress | None = None,
                  site: str | None = None, check: DocumentCheck | None = None) -> Any:
    """The typed context of document ``kind`` for ``loaded`` (``site``: one site's checklist).

    ``check`` is the plan's check under the policy and as-of date in force
    (:func:`protolint.render.document.document_check`); None checks with the default policy as
    of the plan's date, as ``protolint check`` does without options.
    """
    if site is not None and kind != "checklist":
        raise ValueError("a single site can be chosen for the checklist only")
    from protolint.render.document import document_check

    check = check or document_check(loaded)
    if kind == "manual":
        from protolint.render.manual import manual_context

        return manual_context(loaded, paper, check)
    if kind == "checklist":
        from protolint.render.checklist import checklist_context

        return checklist_context(loaded, paper, site, check)
    if kind == "binder":
        from protolint.render.binder import binder_context

        return binder_context(loaded, paper, progress, check)
    raise ValueError(f"document kind must be one of {', '.join(KINDS)}, got {kind!r}")


def _fields(ctx: Any) -> dict[str, Any]:
    # Shallow: the templates get the top-level fields as names, nested objects stay typed.
    return {field.name: getattr(ctx, field.name) for field in dataclasses.fields(ctx)}


def _html(kind: str, ctx: Any, *, pdf_edition: bool) -> str:
    from protolint.render.environment import make_env

    return make_env().get_template(f"{kind}.html.j2").render(**_fields(ctx), pdf_edition=pdf_edition)


def render_html(kind: str, loaded: LoadedPlan, paper: str = "a4", progress: Progress | None = None,
                site: str | None = None, check: DocumentCheck | None = None, *, pdf_edition: bool = False) -> str:
    """One self-contained HTML file (inline CSS and SVG, no external resource).

    ``pdf_edition``: the HTML that :func:`render_pdf` lays out, which may refer to the images
    its context lists in ``pdf_images`` and the PDF's locked fetcher serves (see
    :mod:`protolint.render.pdf`); a browser cannot load them.
    """
    return _html(kind, build_context(kind, loaded, paper, progress, site, check), pdf_edition=pdf_edition)


def render_markdown(kind: str, loaded: LoadedPlan, paper: str = "a4", progress: Progress | None = None,
                    site: str | None = None, check: DocumentCheck | None = None) -> str:
    """Markdown for wikis and electronic document systems (CommonMark with pipe tables)."""
    from protolint.render.environment import make_env

    ctx = build_context(kind, loaded, paper, progress, site, check)
    return make_env().get_template(f"{kind}.md.j2").render(**_fields(ctx))


def render_pdf(kind: str, loaded: LoadedPlan, paper: str = "a4", progress: Progress | None = None,
               site: str | None = None, check: DocumentCheck | None = None) -> bytes:
    """PDF/A-3b with the plan file embedded; see :mod:`protolint.render.pdf`.

    A context that draws with generated images (the checklist's column rules) lists them in
    its ``pdf_images``; the PDF's fetcher serves exactly those besides the packaged fonts.
    """
    from pathlib import PurePath

    from protolint.render.document import document_check, document_date
    from protolint.render.pdf import PdfAttachment, PdfSource, html_to_pdf

    check = check or document_check(loaded)
    ctx = build_context(kind, loaded, paper, progress, site, check)
    html = _html(kind, ctx, pdf_edition=True)
    assert loaded.plan is not None  # build_context has refused an invalid plan already
    day, _ = document_date(loaded.plan, as_of=check.given_as_of)
    name = PurePath(loaded.source.file).name
    plan_file = PdfAttachment(name, loaded.source.text,
                              f"The measurement plan this document was generated from (SHA-256 {loaded.source.sha256})")
    attachments: tuple[PdfAttachment, ...] = (plan_file,)
    if kind == "binder":
        from protolint.render.binder import sop_text_attachments

        attachments += sop_text_attachments(loaded.plan, loaded.sop_texts)
    source = PdfSource(document_date=day, attachments=attachments, images=getattr(ctx, "pdf_images", ()))
    if progress:
        progress("laying out pages")
    return html_to_pdf(html, source, paper, progress)


def render(kind: str, fmt: str, loaded: LoadedPlan, paper: str = "a4", progress: Progress | None = None,
           site: str | None = None, check: DocumentCheck | None = None) -> str | bytes:
    """Document ``kind`` in format ``fmt`` (see ``KINDS`` and ``FORMATS``); ``site`` limits the
    checklist to one site's copy; ``check`` is the plan's check under the policy and as-of date
    in force (see :func:`build_context`)."""
    if paper not in PAPERS:
        raise ValueError(f"paper must be one of {', '.join(PAPERS)}, got {paper!r}")
    if fmt == "pdf":
        return render_pdf(kind, loaded, paper, progress, site, check)
    if fmt == "html":
        return render_html(kind, loaded, paper, progress, site, check)
    if fmt == "markdown":
        return render_markdown(kind, loaded, paper, progress, site, check)
    raise ValueError(f"format must be one of {', '.join(FORMATS)}, got {fmt!r}")
