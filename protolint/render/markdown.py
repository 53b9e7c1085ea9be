"""Markdown from the plan (untrusted text) to safe HTML, and to safe Markdown.

Plan text is written by whoever edits the plan, and it ends up in documents that QA staff open
in a browser and that WeasyPrint lays out. So:

* one markdown-it-py instance, built from the ``zero`` preset with an explicit rule list:
  raw HTML off (tags are shown as text), no images (an image would be a fetch), no linkify,
  no typographer;
* links only to ``http``, ``https`` and ``mailto``; any other destination (``file:``,
  ``javascript:``, relative paths that a viewer would resolve against a local folder) is
  refused, and markdown-it then leaves the source text visible instead of a link;
* the result is wrapped as :class:`markupsafe.Markup` so that autoescaping does not escape it
  twice, and it is the only place in the package that produces ``Markup`` from plan text.
"""

from __future__ import annotations

import re
from functools import lru_cache

from markdown_it import MarkdownIt
from markupsafe import Markup

ALLOWED_SCHEMES = ("http", "https", "mailto")
_SCHEME = re.compile(r"^\s*([A-Za-z][A-Za-z0-9+.\-]*):")

# Block and inline rules we allow. Tables and HTML blocks are left out on purpose: long free
# text in table cells breaks pagination, and HTML is never passed through.
# "reference" lets a text use reference-style links (``[guide][1]`` … ``[1]: https://…``); a
# definition goes through the same link check, and a refused one stays visible as text.
_BLOCK_RULES = ["paragraph", "heading", "lheading", "list", "blockquote", "code", "fence", "hr", "reference"]
_INLINE_RULES = ["text", "newline", "escape", "backticks", "emphasis", "link", "autolink", "entity",
                 "strikethrough", "linkify"]


def link_allowed(url: str) -> bool:
    """True for an absolute http, https or mailto URL; everything else is refused."""
    match = _SCHEME.match(url)
    return match is not None and match.group(1).lower() in ALLOWED_SCHEMES


@lru_cache(maxsize=1)
def _parser() -> MarkdownIt:
    parser = MarkdownIt("zero", {"html": False, "linkify": False, "typographer": False})
    parser.enable([rule for rule in _BLOCK_RULES + _INLINE_RULES if _known(parser, rule)])
    parser.validateLink = link_allowed  # type: ignore[method-assign]
    # Headings inside plan text must not compete with the document's own headings (and their
    # PDF bookmarks): shift them below the section that shows the text. A whole document
    # shown as a section of ours (an SOP text) keeps its outline: its level-1 headings become
    # ``top_heading`` and the rest follow, down to h6.
    def heading_open(renderer, tokens, index, options, env):  # noqa: ANN001 - markdown-it's signature
        token = tokens[index]
        token.tag = _shifted_tag(int(token.tag[1]), (env or {}).get("top_heading"))
        tokens[index + 2].tag = token.tag
        return renderer.renderToken(tokens, index, options, env)

    parser.add_render_rule("heading_open", heading_open)

    # External links: never let the browser send the document's address along.
    def link_open(renderer, tokens, index, options, env):  # noqa: ANN001
        tokens[index].attrSet("rel", "noopener noreferrer nofollow")
        return renderer.renderToken(tokens, index, options, env)

    parser.add_render_rule("link_open", link_open)
    return parser


def _known(parser: MarkdownIt, rule: str) -> bool:
    chains = parser.get_all_rules()
    return any(rule in names for names in chains.values())


def _shifted_tag(level: int, top_heading: int | None) -> str:
    if top_heading is None:
        return "h5" if level <= 4 else "h6"
    return f"h{min(6, top_heading + level - 1)}"


def markdown_html(text: str | None, top_heading: int | None = None) -> Markup:
    """Plan Markdown as safe block HTML (empty Markup for no text).

    ``top_heading``: the HTML level (2-6) of the text's level-1 headings, for a text that is a
    document of its own; without it every heading is h5 or h6, below the document's sections.
    """
    if not text:
        return Markup("")
    if top_heading is not None and not 1 <= top_heading <= 6:
        raise ValueError(f"top_heading must be between 1 and 6, got {top_heading!r}")
    return Markup(_parser().render(text, {"top_heading": top_heading}))


def markdown_inline_html(text: str | None) -> Markup:
    """Plan Markdown as safe inline HTML (no paragraphs), for short fields."""
    if not text:
        return Markup("")
    return Markup(_parser().renderInline(text))


# --- Markdown output ------------------------------------------------------------------------
# The Markdown documents keep plan Markdown as Markdown, but a wiki that renders them may pass
# raw HTML through or follow any link, so the same safety rules are applied to the text.

_ATX_HEADING = re.compile(r"^( {0,3})(#{1,6})([ \t]+)", re.MULTILINE)
_LINK_DESTINATION = re.compile(r"\]\(\s*<?([^)\s>]*)")
# A link reference definition may open any line of a container (a list item, a block quote),
# and its destination may follow on the next line: so the label is looked for anywhere.
_REFERENCE_DEFINITION = re.compile(r"(\[)((?:[^\[\]\\\n]|\\.){1,999}\]:[ \t]*(?:\n[ \t>]*)?<?)(\S*)")


def markdown_block(text: str | None, top_heading: int | None = None) -> str:
    """Plan Markdown made safe to embed in a Markdown document.

    Raw HTML and autolinks lose their ``<`` (shown as text), images become plain links, and a
    link (inline or by a reference definition, wherever it stands) whose destination is not
    http, https or mailto loses its brackets. The result is then parsed as a permissive
    CommonMark renderer would (raw HTML on, every link accepted); should anything active be
    left, every bracket is escaped, so no link survives at all. ``top_heading`` as for
    :func:`markdown_html` (Markdown heading levels).
    """
    if not text:
        return ""
    safe = text.replace("\r\n", "\n").replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")
    safe = safe.replace("![", "!\\[")
    safe = _neutralise_links(safe)
    if not markdown_is_inert(safe):
        safe = re.sub(r"([\\\[\]])", r"\\\1", safe)
    # Plan headings sit below the document's own sections, as in the HTML edition.
    safe = _ATX_HEADING.sub(lambda m: m.group(1) + "#" * int(_shifted_tag(len(m.group(2)), top_heading)[1]) + m.group(3), safe)
    return safe.strip("\n")


@lru_cache(maxsize=1)
def _permissive_parser() -> MarkdownIt:
    parser = MarkdownIt("commonmark", {"html": True}).enable(["table", "strikethrough"])
    parser.validateLink = lambda url: True  # type: ignore[method-assign]  # see every link, to judge it
    return parser


def markdown_is_inert(text: str) -> bool:
    """True when ``text``, read by a permissive CommonMark renderer (raw HTML on, every link
    destination accepted), yields no HTML, no image and no link other than http, https or mailto."""
    for token in _permissive_parser().parse(text):
        for part in (token, *(token.children or ())):
            if part.type in ("html_block", "html_inline", "image"):
                return False
            if part.type == "link_open" and not link_allowed(str(part.attrGet("href") or "")):
                return False
    return True


def _neutralise_links(text: str) -> str:
    out: list[str] = []
    position = 0
    for match in _LINK_DESTINATION.finditer(text):
        if link_allowed(match.group(1)):
            continue
        # Find the '[' that opens this link text and escape both brackets.
        close = match.start()
        open_ = text.rfind("[", position, close)
        if open_ == -1:
            continue
        out.append(text[position:open_] + "\\[" + text[open_ + 1:close] + "\\]")
        position = close + 1
    out.append(text[position:])
    text = "".join(out)
    return _REFERENCE_DEFINITION.sub(
        lambda m: m.group(0) if link_allowed(m.group(3)) else "\\[" + m.group(2) + m.group(3), text)


# Mid-line text needs only these escaped; line-start markers (#, -, 1.) never occur because
# every value is placed after a fixed prefix such as "| " or "## ".
_INLINE_SPECIAL = re.compile(r"([\\`*_\[\]|~])")


def markdown_escape(text: object) -> str:
    """Any value as literal Markdown text on one line (for table cells and headings)."""
    if text is None:
        return ""
    value = " ".join(str(text).split())
    value = value.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")
    return _INLINE_SPECIAL.sub(r"\\\1", value)
