"""Reports: one formatter per output format, all built from the same :class:`CheckResult`.

Each formatter lives in its own module exposing ``render(result, rules, *, color) -> str``.
The modules are imported only when their format is asked for, so a pre-commit run that
prints text never loads the XML machinery.
"""

from __future__ import annotations

import importlib
from typing import TYPE_CHECKING, Sequence

if TYPE_CHECKING:  # imported for annotations only, keeps start-up light
    from protolint.findings import CheckResult
    from protolint.pipeline import CheckFailure
    from protolint.rules.registry import RuleMeta

FORMATS: tuple[str, ...] = ("text", "json", "sarif", "junit", "markdown", "html", "github")

# format name -> module that implements it
_FORMATTERS: dict[str, str] = {
    "text": "protolint.report.fmt_text",
    "json": "protolint.report.fmt_json",
    "sarif": "protolint.report.fmt_sarif",
    "junit": "protolint.report.fmt_junit",
    "markdown": "protolint.report.fmt_markdown",
    "html": "protolint.report.fmt_html",
    "github": "protolint.report.fmt_github",
}


def render_report(
    fmt: str, result: CheckResult, rules: Sequence[RuleMeta], *, color: bool = False
) -> str:
    """Render ``result`` in format ``fmt``.

    ``rules`` is the metadata of every rule that ran; SARIF lists them as rule descriptors and
    JUnit turns them into test cases. ``color`` only affects the text format; the caller
    decides it (terminal detection, ``NO_COLOR``).
    """
    module_name = _FORMATTERS.get(fmt)
    if module_name is None:
        raise ValueError(f"report format must be one of {', '.join(FORMATS)}; got {fmt!r}")
    module = importlib.import_module(module_name)
    return module.render(result, rules, color=color)


FAILURE_FORMATS: tuple[str, ...] = ("json", "sarif", "junit", "github")
"""Formats a tool reads: when the plans could not be checked (exit 2) they still get a report,
which says so. The formats people read get only the located lines on standard error."""


def render_failure_report(fmt: str, failure: CheckFailure) -> str | None:
    """The report of a run that could not check its plans, or None for a format people read."""
    if fmt not in FAILURE_FORMATS:
        return None
    return importlib.import_module(_FORMATTERS[fmt]).render_failure(failure)


__all__ = ["FAILURE_FORMATS", "FORMATS", "render_failure_report", "render_report"]
