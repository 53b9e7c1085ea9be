"""``protolint diff``: what an amendment changed in a plan, and which findings it introduced or resolved."""

from __future__ import annotations

import sys
from datetime import date
import click

from protolint.commands._shared import check_options
from protolint.commands.base import ProtolintCommand

FORMATS = ("text", "json", "markdown", "html")


@click.command("diff", cls=ProtolintCommand)
@click.argument("old", metavar="OLD")
@click.argument("new", metavar="NEW")
@click.option("--format", "fmt", type=click.Choice(FORMATS), default="text", show_default=True, help="Report format.")
@click.option("--output", "-o", type=click.Path(dir_okay=False), help="Write the report to this file instead of standard output.")
@click.option("--fail-on-new", type=click.Choice(["error", "warning", "note"]), default=None,
              help="Exit 1 when NEW introduces a finding at or above this severity (waived findings do not count).")
@check_options("Date the rules of both versions compare with (default: each version's own plan_date).")
def command(old: str, new: str, fmt: str, output: str | None, fail_on_new: str | None,
            policy: str | None, as_of: date | None) -> None:
    """Compare two versions of a measurement plan.

    Entries are matched by their id, so reordering SOPs, visits or rater pools is no change.
    Each change is given with its JSON Pointer in NEW, its line in both files and a sentence;
    the findings of both versions, checked under --policy and --as-of as `protolint check`
    would, are split into introduced, resolved and unchanged. The SOP texts
    the plans name (sops[].text_file) are compared by SHA-256: each one added,
    removed, changed (with a unified diff, at most 300 lines) or unreadable
    is listed. The JSON format adds an RFC 6902 patch that turns OLD's data
    into NEW's.

    Exit code 0, or 1 with --fail-on-new when NEW introduces a finding at or above that
    level; 2 when a file cannot be read.

    \b
    Examples:
      protolint diff plan-v1.yaml plan.yaml
      mkdir base && git archive origin/main plans | tar -x -C base   # the plan with its SOP texts
      protolint diff base/plans/plan.yaml plans/plan.yaml --fail-on-new error
      protolint diff old.yaml new.yaml --format json --output amendment.json
    """
    from protolint.commands._shared import emit
    from protolint.compare import compare_plans
    from protolint.compare.report import render_comparison
    from protolint.findings import Severity
    from protolint.plan import read_source

    from protolint.pipeline import check_source, policy_record, resolve_policy

    chosen = resolve_policy(policy)  # read once; a bad policy file is exit 2 before any output
    old_source, new_source = read_source(old), read_source(new)
    comparison = compare_plans(old_source, new_source, check_source(old_source, chosen, as_of),
                               check_source(new_source, chosen, as_of), policy_record(chosen), as_of is not None)
    text = render_comparison(fmt, comparison)
    emit(text, output, f"{fmt} comparison")
    if fail_on_new and comparison.introduced_at_or_above(Severity.parse(fail_on_new)):
        sys.exit(1)

