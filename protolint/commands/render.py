"""``protolint render``: rater manual, monitoring checklist or SOP binder from a plan."""

from __future__ import annotations

import sys
from pathlib import PurePath

import click

from protolint.commands.base import ProtolintCommand
from protolint.errors import ProtolintError
from protolint.render import FORMATS, KINDS, PAPERS

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
def command(kind: str, plan: str, fmt: str, output: str | None, paper: str, site: str | None) -> None:
    """Render a controlled document from PLAN: the rater manual, the monitoring
    checklist or the SOP binder.

    The document is dated from SOURCE_DATE_EPOCH when it is set, otherwise from the plan's
    own date, so the same plan always gives the same bytes. Files are written atomically.
    Exit code 2 when the plan cannot be read or is not valid.

    \b
    Examples:
      protolint render binder demo_protocol/plan.yaml --output out/binder.pdf
      protolint render manual plan.yaml --format html --output manual.html
      protolint render checklist plan.yaml --format markdown > checklist.md
      protolint render binder plan.yaml --paper letter
      protolint render checklist plan.yaml --site S01 --output S01-checklist.pdf
    """
    from protolint.atomic import write_atomic
    from protolint.plan import read_plan_file
    from protolint.render import render

    loaded = read_plan_file(plan)
    target = output if output is not None else default_output(plan, kind, fmt, site)
    progress = _TerminalProgress() if sys.stderr.isatty() else None
    try:
        try:
            document = render(kind, fmt, loaded, paper, progress, site)
        except ValueError as error:
            raise ProtolintError(f"render {kind}: {error}") from None
    finally:
        if progress is not None:
            progress.done()
    if target is None or target == "-":
        if isinstance(document, bytes):
            sys.stdout.buffer.write(document)
            sys.stdout.buffer.flush()
        else:
            click.echo(document, nl=not document.endswith("\n"))
        return
    write_atomic(target, document)
    click.echo(f"protolint: wrote {kind} ({fmt}) to {target}", err=True)
