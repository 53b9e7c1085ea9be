"""The one Jinja environment every document is rendered with.

Autoescaping is on for every template and for strings (plan text is untrusted), undefined
names raise (``StrictUndefined``) so a template typo fails in the tests instead of printing
an empty string, and the filters are registered here explicitly.
"""

from __future__ import annotations

import re
from datetime import date
from functools import lru_cache

import jinja2
from markupsafe import Markup

from protolint.render.markdown import markdown_block, markdown_escape, markdown_html, markdown_inline_html
from protolint.resources import templates_dir


def long_date(value: date | None) -> str:
    """``2026-09-01`` as ``1 Sep 2026``: unambiguous in every locale, unlike 09/01/2026."""
    if value is None:
        return ""
    return f"{value.day} {value:%b %Y}"


def iso_date(value: date | None) -> str:
    return "" if value is None else value.isoformat()


def words(code: str | None) -> str:
    """A plan code such as ``fixed-per-participant`` in words: ``fixed per participant``."""
    return "" if code is None else str(code).replace("-", " ").replace("_", " ")


def number(value: float | int | None, digits: int = 2) -> str:
    """Numbers without float noise: 0.8 -> ``0.80``, 3.0 hours -> ``3``."""
    if value is None:
        return ""
    if isinstance(value, int) or float(value).is_integer():
        return f"{int(value):,}"
    return f"{value:.{digits}f}"


def percent(value: float | None) -> str:
    return "" if value is None else f"{value * 100:g} %"


def md_cell(value: object) -> str:
    """A value as one Markdown table cell (pipes and markup escaped, one line)."""
    return markdown_escape(value) or "—"


_NUMBER_THEN_PERCENT = re.compile(r"(?<=\d) (?=%)")


def keep_percent_with_number(value: object) -> object:
    """Every printed value, plan text included: "0.5 %" keeps its sign on the number's line
    (a no-break space), so a line never starts with "%". Markup (already rendered HTML) is
    left alone."""
    if isinstance(value, str) and not isinstance(value, Markup):
        return _NUMBER_THEN_PERCENT.sub("\u00a0", value)
    return value


@lru_cache(maxsize=1)
def make_env() -> jinja2.Environment:
    """Build (once per process) the environment for ``templates/``."""
    env = jinja2.Environment(
        loader=jinja2.FileSystemLoader(str(templates_dir())),
        # Markdown templates (*.md.j2) are escaped too, but for HTML; they therefore print
        # every plan value through the ``md`` or ``md_block`` filters, which return Markup.
        autoescape=True,
        undefined=jinja2.StrictUndefined,
        trim_blocks=True,
        lstrip_blocks=True,
        keep_trailing_newline=True,
        finalize=keep_percent_with_number,
    )
    env.filters.update({
        "long_date": long_date,
        "iso_date": iso_date,
        "words": words,
        "number": number,
        "percent": percent,
        "markdown": markdown_html,
        "markdown_inline": markdown_inline_html,
        "md": lambda value: Markup(md_cell(value)),
        "md_block": lambda value, top_heading=None: Markup(markdown_block(value, top_heading)),
    })
    return env
