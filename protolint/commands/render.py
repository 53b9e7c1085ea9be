"""``protolint render``: rater manual, monitoring checklist or SOP binder from a plan."""

from __future__ import annotations

import sys
from datetime import date
from pathlib import PurePath
from typing import TYPE_CHECKING

import click

from protolint.commands._shared import check_options
from protolint.commands.base import ProtolintCommand
from protolint.errors import ProtolintError
from protolint.render import FORMATS, KINDS, PAPERS

if TYPE_CHECKING:
    from protolint.findings import Finding

_SUFFIX = {"pdf": ".pdf", "html": ".html", "markdown": ".md"}


def default_output(plan: str, kind: str, fmt: str, site: str | None = None) -> str | None:
    """PDF goes to ``<plan-stem>-<kind>[-<site>].pdf`` in the current folder; text formats to stdout."""
    if fmt != "pdf":
        return None
    stem = "plan" if plan == "-" else PurePath(plan).stem
    return f"{stem}-{kind}{'-' + site if site else ''}{_SUFFIX[fmt]}"


class _TerminalProgress:
    """One self-overwriting status line on stderr (only used when stderr is a terminal)."""

    def __init__(self) -> None:
        self.width = 0

    def __call__(self, message: str) -> None:
        text = message
        if message.startswith("Step "):
            # WeasyPrint's own steps: "Step 5 - Creating layout - Page 12".
            text = message.split(" - ", 1)[-1].lower()
        line = f"protolint: {text}"[:100]
        click.echo("\r" + line.ljust(self.width), err=True, nl=False)
        self.width = len(line)

    def done(self) -> None:
        if self.width:
            click.echo("\r" + " " * self.width + "\r", err=True, nl=False)


def _refuse_draft(kind: str, errors: tuple[Finding, ...]) -> None:
    """--final with open errors: list them as located lines on stderr, write nothing, exit 1."""
    from protolint.report.fmt_text import finding_line

    from protolint.wording import plural

    click.echo(f"protolint: render {kind} --final: the plan has {plural(len(errors), 'open error')}; "
               "nothing was written", err=True)
    for finding in errors:
        click.echo(finding_line(finding), err=True)
    sys.exit(1)


@click.command("render", cls=ProtolintCommand)
@click.argument("kind", type=click.Choice(KINDS))
@click.argument("plan", metavar="PLAN")
@click.option("--format", "fmt", type=click.Choice(FORMATS), default="pdf", show_default=True,
              help="pdf (PDF/A-3b with the plan embedded), html (one self-contained file) or markdown.")
@click.option("--output", "-o", type=click.Path(dir_okay=False, allow_dash=True),
              help="File to write ('-' for standard output). Default: <plan-stem>-<kind>.pdf for PDF, "
                   "standard output for html and markdown.")
@click.option("--paper", type=click.Choice(PAPERS), default="a4", show_default=True, help="Paper size for PDF and printing.")
@click.option("--site", metavar="SITE-ID", help="Checklist only: the copy for one site (its id, or 'central').")
@check_options("Date the rules compare with, and the document's date (default: the plan's plan_date; "
               "the document is then dated from SOURCE_DATE_EPOCH when set).")
@click.option("--final", is_flag=True,
              help="Refuse a plan with open errors (exit 1, errors listed) instead of rendering a draft.")
def command(kind: str, plan: str, fmt: str, output: str | None, paper: str, site: str | None,
            policy: str | None, as_of: date | None, final: bool) -> None:
    """Render a controlled document from PLAN: the rater manual, the monitoring
    checklist or the SOP binder.

    The plan is checked as `protolint check` checks it with the same --policy and --as-of;
    the document records both. A plan with open errors (not switched off by the policy, not
    waived) renders as a draft, marked on every page; with --final it is refused instead.

    The document is dated --as-of when given, else from SOURCE_DATE_EPOCH when it is set,
    otherwise from the plan's own date, so the same plan always gives the same bytes. Files are
    written atomically. Exit code 1 when --final refuses a draft, 2 when the plan or the policy
    cannot be read or the plan is not valid.

    \b
    Examples:
      protolint render binder demo_protocol/plan.yaml --output out/binder.pdf
      protolint render manual plan.yaml --format html --output manual.html
      protolint render checklist plan.yaml --format markdown > checklist.md
      protolint render binder plan.yaml --paper letter
      protolint render checklist plan.yaml --site S01 --output S01-checklist.pdf
      protolint render binder plan.yaml --policy sponsor-policy.yaml --as-of 2026-09-01 --final
    """
    from protolint.commands._shared import emit
    from protolint.plan import read_plan_file
    from protolint.render import render
    from protolint.render.document import document_check

    loaded = read_plan_file(plan)
    check = document_check(loaded, policy, as_of)
    if final and check.open_errors:
        _refuse_draft(kind, check.open_errors)
    target = output if output is not None else default_output(plan, kind, fmt, site)
    progress = _TerminalProgress() if sys.stderr.isatty() else None
    try:
        try:
            document = render(kind, fmt, loaded, paper, progress, site, check)
        except ValueError as error:
            raise ProtolintError(f"render {kind}: {error}") from None
    finally:
        if progress is not None:
            progress.done()
    if isinstance(document, str) and target in (None, "-") and not document.endswith("\n"):
        document += "\n"
    emit(document, target, f"{kind} ({fmt})", binary=fmt == "pdf")
