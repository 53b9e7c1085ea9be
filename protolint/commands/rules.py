"""``protolint rules [RULE-ID]``: list the rules, or explain one."""

from __future__ import annotations

import difflib
import json
from itertools import groupby
from typing import Any, Sequence

import click

from protolint.errors import ProtolintError
from protolint.rules.registry import RuleMeta, iter_metas


def rule_as_dict(meta: RuleMeta) -> dict[str, Any]:
    """The JSON form of one rule (``protolint rules --format json``)."""
    return {
        "id": meta.id,
        "family": meta.family,
        "severity": meta.severity.label,
        "summary": meta.summary,
        "documentation": meta.documentation,
        "source": meta.source,
        "thresholds": [
            {"name": t.name, "default": t.default, "description": t.description}
            for t in meta.thresholds
        ],
        "computed": meta.computed,
        "waivable": meta.waivable,
    }


def suggestions(rule_id: str, known: Sequence[str]) -> list[str]:
    """Close matches on the full id, or on the name alone (people often omit the family)."""
    close = difflib.get_close_matches(rule_id, known, n=3, cutoff=0.6)
    wanted_name = rule_id.rsplit("/", 1)[-1]
    by_name = {rid.split("/", 1)[-1]: rid for rid in known}
    for name in difflib.get_close_matches(wanted_name, list(by_name), n=3, cutoff=0.75):
        if by_name[name] not in close:
            close.append(by_name[name])
    return close[:3]


def find_rule(rule_id: str, metas: Sequence[RuleMeta]) -> RuleMeta:
    for meta in metas:
        if meta.id == rule_id:
            return meta
    close = suggestions(rule_id, [meta.id for meta in metas])
    hint = f"did you mean {', '.join(close)}?" if close else "'protolint rules' lists them"
    raise ProtolintError(f"unknown rule {rule_id!r}; {hint}")


def list_text(metas: Sequence[RuleMeta]) -> str:
    if not metas:
        return "No rules are registered."
    id_width = max(len(meta.id) for meta in metas)
    blocks = []
    ordered = sorted(metas, key=lambda m: (m.family, m.id))
    for family, members in groupby(ordered, key=lambda m: m.family):
        lines = [f"{family}:"]
        for meta in members:
            lines.append(f"  {meta.id:<{id_width}}  {meta.severity.label:<7}  {meta.summary}")
        blocks.append("\n".join(lines))
    count = f"{len(metas)} rule" + ("" if len(metas) == 1 else "s")
    blocks.append(f"{count}. 'protolint rules RULE-ID' explains one.")
    return "\n\n".join(blocks)


def explain_text(meta: RuleMeta) -> str:
    traits = [
        f"default severity {meta.severity.label}",
        "waivable" if meta.waivable else "not waivable",
        "computed: recomputes numbers from the plan" if meta.computed else "not computed",
    ]
    blocks = [meta.id, meta.summary, "; ".join(traits)]
    if meta.thresholds:
        width = max(len(t.name) for t in meta.thresholds)
        lines = ["Thresholds (defaults; a policy file may change them):"]
        for t in meta.thresholds:
            lines.append(f"  {t.name:<{width}} = {t.default}  {t.description}")
        blocks.append("\n".join(lines))
    else:
        blocks.append("Thresholds: none")
    blocks.append(f"Source: {meta.source}")
    if meta.documentation:
        blocks.append(meta.documentation)
    return "\n\n".join(blocks)


@click.command(name="rules")
@click.argument("rule_id", required=False, metavar="[RULE-ID]")
@click.option(
    "--format",
    "fmt",
    type=click.Choice(["text", "json"]),
    default="text",
    show_default=True,
    help="Output format.",
)
def command(rule_id: str | None, fmt: str) -> None:
    """List every rule, or explain one rule: its rationale, thresholds and source.

    \b
    Examples:
      protolint rules
      protolint rules --format json
      protolint rules FAMILY/RULE-NAME
    """
    metas = sorted(iter_metas(), key=lambda m: m.id)
    if rule_id is None:
        if fmt == "json":
            click.echo(json.dumps([rule_as_dict(m) for m in metas], ensure_ascii=False, indent=2))
        else:
            click.echo(list_text(metas))
        return
    meta = find_rule(rule_id, metas)
    if fmt == "json":
        click.echo(json.dumps(rule_as_dict(meta), ensure_ascii=False, indent=2))
    else:
        click.echo(explain_text(meta))
