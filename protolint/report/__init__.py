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


__all__ = ["FORMATS", "render_report"]
