"""``protolint rules [RULE-ID | FAMILY]``: list the rules, list one family, or explain one rule."""

from __future__ import annotations

import json
import shutil
import textwrap
from itertools import groupby
from typing import TYPE_CHECKING, Any, Sequence

import click

from protolint.commands.base import ProtolintCommand
from protolint.errors import ProtolintError
from protolint.rules.registry import RuleMeta, iter_metas, similar_rule_ids

if TYPE_CHECKING:
    from markdown_it.token import Token


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
    return similar_rule_ids(rule_id, known)


def find_rule(rule_id: str, metas: Sequence[RuleMeta]) -> RuleMeta:
    for meta in metas:
        if meta.id == rule_id:
            return meta
    close = suggestions(rule_id, [meta.id for meta in metas])
    hint = f"did you mean {', '.join(close)}?" if close else "'protolint rules' lists them, 'protolint rules FAMILY' one family"
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


def _width() -> int:
    return max(40, min(100, shutil.get_terminal_size((100, 24)).columns) - 2)


def _inline_text(children: Sequence[Token] | None) -> str:
    """The text of a Markdown inline run, without its markup: **bold** and `code` read as plain words."""
    parts = []
    for child in children or ():
        if child.type in ("text", "code_inline"):
            parts.append(child.content)
        elif child.type in ("softbreak", "hardbreak"):
            parts.append(" ")
    return "".join(parts)


def markdown_as_text(markdown: str, width: int | None = None) -> str:
    """A rule's Markdown documentation as plain text for a terminal: paragraphs re-flowed to the
    width, list items as indented dashes, no raw markup left."""
    from markdown_it import MarkdownIt

    width = width or _width()
    blocks: list[tuple[str, bool]] = []
    depth = 0
    for token in MarkdownIt("commonmark").parse(markdown):
        if token.type in ("bullet_list_open", "ordered_list_open"):
            depth += 1
        elif token.type in ("bullet_list_close", "ordered_list_close"):
            depth -= 1
        elif token.type == "inline":
            text = " ".join(_inline_text(token.children).split())
            if depth:
                indent = "  " * (depth - 1)
                blocks.append((textwrap.fill(text, width, initial_indent=indent + "- ",
                                             subsequent_indent=indent + "  "), True))
            else:
                blocks.append((textwrap.fill(text, width), False))
        elif token.type in ("fence", "code_block"):
            blocks.append((textwrap.indent(token.content.rstrip("\n"), "    "), False))
    out = ""
    for index, (text, item) in enumerate(blocks):
        if index:
            out += "\n" if item and blocks[index - 1][1] else "\n\n"
        out += text
    return out


def _sources_text(source: str, width: int) -> str:
    from protolint.rules.sources import split_sources

    parts = split_sources(source)
    if len(parts) == 1:
        return textwrap.fill(f"Source: {parts[0]}", width, subsequent_indent="  ")
    lines = ["Sources:"]
    lines += [textwrap.fill(part, width, initial_indent="  - ", subsequent_indent="    ") for part in parts]
    return "\n".join(lines)


def explain_text(meta: RuleMeta, width: int | None = None) -> str:
    width = width or _width()
    traits = [
        f"default severity {meta.severity.label}",
        "waivable" if meta.waivable else "not waivable",
        "computed: recomputes numbers from the plan" if meta.computed else "not computed",
    ]
    blocks = [meta.id, textwrap.fill(meta.summary, width), "; ".join(traits)]
    if meta.thresholds:
        name_width = max(len(t.name) for t in meta.thresholds)
        lines = ["Thresholds (defaults; a policy file may change them):"]
        for t in meta.thresholds:
            head = f"  {t.name:<{name_width}} = {t.default}  "
            lines.append(textwrap.fill(t.description, width, initial_indent=head,
                                       subsequent_indent=" " * len(head)))
        blocks.append("\n".join(lines))
    else:
        blocks.append("Thresholds: none")
    blocks.append(_sources_text(meta.source, width))
    if meta.documentation:
        blocks.append(markdown_as_text(meta.documentation, width))
    return "\n\n".join(blocks)


@click.command("rules", cls=ProtolintCommand)
@click.argument("rule_id", required=False, metavar="[RULE-ID | FAMILY]")
@click.option(
    "--format",
    "fmt",
    type=click.Choice(["text", "json"]),
    default="text",
    show_default=True,
    help="Output format.",
)
def command(rule_id: str | None, fmt: str) -> None:
    """List every rule, list the rules of one family, or explain one rule: its rationale,
    thresholds and sources.

    \b
    Examples:
      protolint rules
      protolint rules sop
      protolint rules --format json
      protolint rules FAMILY/RULE-NAME
    """
    metas = sorted(iter_metas(), key=lambda m: m.id)
    families = {m.family for m in metas}
    if rule_id is None or rule_id.rstrip("/") in families:
        chosen = metas if rule_id is None else [m for m in metas if m.family == rule_id.rstrip("/")]
        if fmt == "json":
            click.echo(json.dumps([rule_as_dict(m) for m in chosen], ensure_ascii=False, indent=2))
        else:
            click.echo(list_text(chosen))
        return
    meta = find_rule(rule_id, metas)
    if fmt == "json":
        click.echo(json.dumps(rule_as_dict(meta), ensure_ascii=False, indent=2))
    else:
        click.echo(explain_text(meta))
