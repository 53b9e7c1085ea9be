"""HTML -> archival PDF with WeasyPrint, with every resource fetch locked down.

* **Fetcher.** :class:`PackagedAssetFetcher` serves only the files we ship (the fonts under
  ``templates/fonts/``) from a fake origin, ``https://assets.invalid/`` (``.invalid`` can never
  resolve, RFC 2606). Any other URL — ``file:``, ``http:``, ``data:``, a relative path — is
  refused, and the refusal is fatal: rendering stops with an error instead of producing a
  document with a hole in it. The same fetcher goes to ``HTML()``, to every ``CSS()`` (which
  fetches ``@import`` with its own fetcher) and to the attachment.
  A document may also hand the fetcher SVG images its own code generated (the checklist's
  column rules), served under the same origin from memory.
* **Fonts.** Bundled DejaVu faces (free licence, shipped beside the templates) are loaded
  through the fetcher with one ``FontConfiguration``, so a binder looks the same on every
  machine and every glyph is embedded.
* **PDF/A-3b.** Archivable (ISO 19005-3, level B: visual appearance preserved), and part 3 is
  the only PDF/A part that allows an arbitrary embedded file: we attach the exact plan YAML
  that produced the document, and the binder also each SOP text it prints (every one an
  associated file of the document, ``AFRelationship /Source``, listed in the catalogue's
  ``/AF``), so a filed binder carries its own sources. PDF/A-2 would refuse them (it allows
  only embedded PDF/A files). Level A (tagged) would double the size and time for no gain on a printed binder.
* **Warnings are errors.** Every WARNING or ERROR from the ``weasyprint`` logger (a refused
  fetch, a missing glyph, a CSS parse error) fails the render, except the one note that the
  system lacks HarfBuzz-Subset (an environment matter; see ``SOURCE_DATE_EPOCH`` below).
* **Determinism.** Dates come from the caller (never the clock); ``/ID`` is WeasyPrint's hash
  of the content; without ``libharfbuzz-subset0`` WeasyPrint subsets fonts with fontTools,
  which stamps the current time into each subset unless ``SOURCE_DATE_EPOCH`` is set, so it is
  set from the document date for the duration of the write and restored afterwards.
* **Collector.** Layout allocates hundreds of thousands of short-lived boxes, and each full
  collection of Python's cyclic garbage collector would also walk every object alive before
  it (the modules, the plan, the HTML), none of which the layout can free; they are frozen
  (``gc.freeze``) for the duration of the layout and unfrozen afterwards, which saves about
  0.1 s of processor time on the demo binder and changes no byte of the output.
"""

from __future__ import annotations

import contextlib
import gc
import logging
import os
import threading
from dataclasses import dataclass
from datetime import date, datetime, time, timezone
from functools import lru_cache
from typing import Callable, Iterator, Mapping

from protolint.errors import ProtolintError
from protolint.resources import templates_dir

ASSET_ORIGIN = "https://assets.invalid/"
PDF_VARIANT = "pdf/a-3b"
PAPER_SIZES = {"a4": "A4", "letter": "letter"}

# Font families the PDF stylesheet declares; print.css names them first in every font stack.
_FONT_FACES = (
    ("protolint sans", "normal", "normal", "DejaVuSans.ttf"),
    ("protolint sans", "bold", "normal", "DejaVuSans-Bold.ttf"),
    ("protolint sans", "normal", "italic", "DejaVuSans-Oblique.ttf"),
    ("protolint sans", "bold", "italic", "DejaVuSans-BoldOblique.ttf"),
    ("protolint mono", "normal", "normal", "DejaVuSansMono.ttf"),
)

# The only WeasyPrint warning that is not about the document: the machine lacks
# libharfbuzz-subset0, so fontTools subsets the fonts (made deterministic below).
_TOLERATED = ("Using fontTools instead of HarfBuzz-Subset",)

_ENV_LOCK = threading.Lock()


class PdfRenderError(ProtolintError):
    """The PDF could not be produced as required (refused fetch, layout warning …)."""


@dataclass(frozen=True)
class PdfAttachment:
    """A further text file embedded in the PDF (PDF/A-3 associated file, ``/Source``)."""

    name: str
    text: str
    description: str


@dataclass(frozen=True)
class PdfImage:
    """An SVG image the document's stylesheet refers to by :func:`asset_url`, made by the
    document's own code (never read from a file) and served by the locked fetcher."""

    name: str
    svg: str


def asset_url(name: str) -> str:
    """The URL under which the fetcher serves the packaged or generated asset ``name``."""
    return ASSET_ORIGIN + name


def attachment_if_text(name: str, text: str | None, description: str) -> tuple[PdfAttachment, ...]:
    """The file to embed, or none when it is not text to attach (a workbook is named instead)."""
    return () if text is None else (PdfAttachment(name, text, description),)


@dataclass(frozen=True)
class PdfSource:
    """What the PDF needs besides the HTML: its date, and the files it was made from or prints
    (the plan, the binder's SOP texts, an analysis's data), each embedded as is."""

    document_date: date
    attachments: tuple[PdfAttachment, ...] = ()
    images: tuple[PdfImage, ...] = ()


@lru_cache(maxsize=1)
def packaged_assets() -> Mapping[str, tuple[bytes, str]]:
    """URL -> (bytes, media type) for every asset the fetcher may serve."""
    fonts = templates_dir() / "fonts"
    assets: dict[str, tuple[bytes, str]] = {}
    for _family, _weight, _style, file in _FONT_FACES:
        assets[asset_url("fonts/" + file)] = ((fonts / file).read_bytes(), "font/ttf")
    return assets


def font_css() -> str:
    rules = [
        f'@font-face {{ font-family: "{family}"; font-weight: {weight}; font-style: {style}; '
        f'src: url("{ASSET_ORIGIN}fonts/{file}"); }}'
        for family, weight, style, file in _FONT_FACES
    ]
    return "\n".join(rules) + "\n"


def page_size_css(paper: str) -> str:
    try:
        return f"@page {{ size: {PAPER_SIZES[paper]}; }}\n"
    except KeyError:
        raise ValueError(f"paper must be one of {', '.join(PAPER_SIZES)}, got {paper!r}") from None


def _fetcher_class() -> type:
    from weasyprint.urls import FatalURLFetchingError, URLFetcher, URLFetcherResponse

    class RefusedURL(FatalURLFetchingError):
        pass

    class PackagedAssetFetcher(URLFetcher):
        """Serves the packaged assets and nothing else; every other URL stops the render."""

        def __init__(self, assets: Mapping[str, tuple[bytes, str]]) -> None:
            # No protocol is allowed to the parent class, so even a call that reached
            # URLFetcher.fetch could not open anything.
            super().__init__(timeout=1, allowed_protocols=frozenset(), allow_redirects=False, fail_on_errors=True)
            self._assets = dict(assets)
            self.served: list[str] = []
            self.refused: list[str] = []

        def fetch(self, url: str, headers: Mapping[str, str] | None = None) -> URLFetcherResponse:
            asset = self._assets.get(url)
            if asset is None:
                self.refused.append(url)
                raise RefusedURL(f"refused to fetch {url[:200]!r}: only packaged assets are loaded")
            self.served.append(url)
            body, media_type = asset
            return URLFetcherResponse(url, body, {"Content-Type": media_type})

    return PackagedAssetFetcher


@lru_cache(maxsize=1)
def fetcher_class() -> type:
    """The locked fetcher class (built lazily: importing weasyprint is slow)."""
    return _fetcher_class()


def served_assets(images: tuple[PdfImage, ...] = ()) -> Mapping[str, tuple[bytes, str]]:
    """URL -> (bytes, media type): the packaged fonts, and a document's own generated ``images``."""
    generated = {asset_url(image.name): (image.svg.encode("utf-8"), "image/svg+xml") for image in images}
    return {**packaged_assets(), **generated}


def make_fetcher(images: tuple[PdfImage, ...] = ()):  # noqa: ANN201 - weasyprint has no type hints
    """The locked fetcher, serving :func:`served_assets` and nothing else."""
    return fetcher_class()(served_assets(images))


class _Collector(logging.Handler):
    def __init__(self) -> None:
        super().__init__(logging.WARNING)
        self.messages: list[str] = []

    def emit(self, record: logging.LogRecord) -> None:
        message = record.getMessage()
        if not message.startswith(_TOLERATED):
            self.messages.append(message)


class _Progress(logging.Handler):
    def __init__(self, report: Callable[[str], None]) -> None:
        super().__init__(logging.INFO)
        self.report = report

    def emit(self, record: logging.LogRecord) -> None:
        self.report(record.getMessage())


@contextlib.contextmanager
def _weasyprint_logs(progress: Callable[[str], None] | None) -> Iterator[_Collector]:
    logger = logging.getLogger("weasyprint")
    progress_logger = logging.getLogger("weasyprint.progress")
    collector = _Collector()
    # The progress logger is a child of "weasyprint"; it only logs INFO, which the collector
    # (WARNING and up) ignores.
    logger.addHandler(collector)
    saved_level = logger.level
    if logger.level == logging.NOTSET or logger.level > logging.WARNING:
        logger.setLevel(logging.WARNING)
    progress_handler = None
    saved_progress_level = progress_logger.level
    if progress is not None:
        progress_handler = _Progress(progress)
        progress_logger.addHandler(progress_handler)
        progress_logger.setLevel(logging.INFO)
    try:
        yield collector
    finally:
        logger.removeHandler(collector)
        logger.setLevel(saved_level)
        if progress_handler is not None:
            progress_logger.removeHandler(progress_handler)
            progress_logger.setLevel(saved_progress_level)


@contextlib.contextmanager
def _long_lived_objects_frozen() -> Iterator[None]:
    """Keep the objects alive before the layout out of the collector's full passes during it."""
    gc.freeze()
    try:
        yield
    finally:
        gc.unfreeze()


@contextlib.contextmanager
def _source_date_epoch(day: date) -> Iterator[None]:
    """Set SOURCE_DATE_EPOCH (when unset) for the duration of the block, then restore it."""
    with _ENV_LOCK:
        if "SOURCE_DATE_EPOCH" in os.environ:
            yield
            return
        os.environ["SOURCE_DATE_EPOCH"] = str(int(_midnight(day).timestamp()))
        try:
            yield
        finally:
            os.environ.pop("SOURCE_DATE_EPOCH", None)


def _midnight(day: date) -> datetime:
    return datetime.combine(day, time(0, 0), tzinfo=timezone.utc)


def html_to_pdf(html: str, source: PdfSource, paper: str = "a4",
                progress: Callable[[str], None] | None = None) -> bytes:
    """Lay out ``html`` and return PDF/A-3b bytes; raise :class:`PdfRenderError` on any problem.

    ``html`` is expected to carry its own stylesheet inline; this adds the packaged fonts and
    the paper size. The same input gives the same bytes.
    """
    from weasyprint import CSS, HTML, Attachment
    from weasyprint.text.fonts import FontConfiguration
    from weasyprint.urls import FatalURLFetchingError

    fetcher = make_fetcher(source.images)
    font_config = FontConfiguration()
    stamp = _midnight(source.document_date)
    with _weasyprint_logs(progress) as collector, _source_date_epoch(source.document_date), \
            _long_lived_objects_frozen():
        try:
            stylesheet = CSS(string=font_css() + page_size_css(paper), base_url=ASSET_ORIGIN,
                             url_fetcher=fetcher, font_config=font_config)
            attachments = [Attachment(string=item.text, base_url=ASSET_ORIGIN, url_fetcher=fetcher,
                                      name=item.name, description=item.description,
                                      created=stamp, modified=stamp, relationship="Source")
                           for item in source.attachments]
            document = HTML(string=html, base_url=ASSET_ORIGIN, url_fetcher=fetcher).render(
                stylesheets=[stylesheet], font_config=font_config, pdf_variant=PDF_VARIANT)
            pdf = document.write_pdf(pdf_variant=PDF_VARIANT, attachments=attachments)
        except FatalURLFetchingError as error:
            reason = error.__cause__ or error
            raise PdfRenderError(f"PDF not written: {reason}") from None
    if fetcher.refused:
        raise PdfRenderError(f"PDF not written: refused to fetch {fetcher.refused[0][:200]!r}")
    if collector.messages:
        raise PdfRenderError(f"PDF not written: {collector.messages[0]}"
                             + (f" (and {len(collector.messages) - 1} more)" if len(collector.messages) > 1 else ""))
    return pdf
