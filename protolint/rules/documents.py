"""Document rules: the plan is tied to a protocol version and defines its deviations."""

from __future__ import annotations

import dataclasses
import re
from functools import lru_cache
from typing import Any, Iterator

from protolint.plan.model import Plan
from protolint.rules import sources as S
from protolint.rules.sources import cite
from protolint.rules.registry import Hit, RuleContext, rule


@rule("documents/no-protocol-version", "warning", source=f"{S.SPIRIT_2013}, item 3 (date and version identifier)")
def no_protocol_version(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """The plan is not bound to a protocol version and date.

    A measurement plan belongs to one version of the protocol; without the version and date
    nobody can tell which amendments it already reflects, or whether it is current.

    **Passes**: `protocol: {id: NDS-HD-301, version: "2.0", date: 2026-06-30}`.

    **Fails**: no `protocol` section.
    """
    if plan.protocol is None:
        yield Hit(("format_version",), "the plan names no protocol version and date; add a protocol section")


_EXPECTED_DEVIATIONS = ("uncertified-rater", "unplanned-rater-change", "out-of-window", "wrong-instrument-version", "rater-unblinded")


@rule("documents/deviations-incomplete", "warning",
      source=cite(f"{S.E6}, Annex 1 section 2.5.3 (deviations documented; important ones explained and their recurrence prevented)", "the list of rating deviations: common practice"))
def deviations_incomplete(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """The plan does not define the usual rating deviations, or leaves their importance open.

    Which rating failures are deviations, which are important, and how each is handled must
    be settled before rating starts, not argued afterwards. The plan should define at least
    an uncertified rater, an unplanned rater change, an out-of-window rating, a wrong
    instrument version and an unblinded rater, each with `important` set. With no deviations
    at all this is an error.

    **Passes**: `deviations` listing those five kinds, each with `important` and `handling`.

    **Fails**: `deviations` with only `uncertified-rater` and `out-of-window`.
    """
    from protolint.findings import Severity

    if not plan.deviations:
        yield Hit(("format_version",), "the plan defines no rating deviations; list them with their handling",
                  severity=Severity.ERROR)
        return
    kinds = {d.kind for d in plan.deviations}
    missing = [k for k in _EXPECTED_DEVIATIONS if k not in kinds]
    if missing:
        yield Hit(("deviations",), f"the plan does not define these rating deviations: {', '.join(missing)}; say how each is "
                                   "documented and handled", {"missing": missing})
    for deviation in plan.deviations:
        if deviation.important is None:
            yield Hit(deviation.path + ("kind",), f"deviation {deviation.kind} is not classed as important or not; set important")


@rule("documents/plan-predates-amendment", "warning", computed=True,
      source=cite(f"{S.SPIRIT_2013}, item 3 (date and version identifier)", "revising the plan with each amendment: common practice"))
def plan_predates_amendment(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """The plan is dated before the protocol version or an amendment it lists.

    A plan dated before the protocol or amendment it claims to reflect was written against an
    earlier text; reissue it with a current date after checking it against the amendment.

    **Passes**: `plan_date: 2026-07-15`, protocol dated 2026-06-30.

    **Fails**: `plan_date: 2026-07-15`, amendment effective 2026-09-01.
    """
    protocol = plan.protocol
    if protocol is None:
        return
    if protocol.date > plan.plan_date:
        yield Hit(protocol.path + ("date",), f"protocol version {protocol.version} is dated {protocol.date.isoformat()}, after "
                                             f"the plan ({plan.plan_date.isoformat()})")
    for amendment in protocol.amendments:
        if amendment.effective > plan.plan_date:
            yield Hit(amendment.path + ("effective",),
                      f"amendment {amendment.id} takes effect on {amendment.effective.isoformat()}, after the plan's date "
                      f"{plan.plan_date.isoformat()}; reissue the plan once it reflects the amendment",
                      {"amendment": amendment.id, "effective": amendment.effective.isoformat(), "plan_date": plan.plan_date.isoformat()})


# Values that say the writer has not finished: the starter's own "Replace with …" text, and the
# usual markers of a gap. Matched against the whole value (or its start), so that a real text
# that merely mentions "todo" in a sentence is not reported.
_STARTER_PLACEHOLDER = re.compile(r"^\s*replace[\s_-]+with\b", re.IGNORECASE)
_GAP_MARKER = re.compile(r"^\s*(?:TBD|TBC|TBA|TODO|FIXME|XXX+)\b|^\s*\?{2,}\s*$|\bXXX+\b|\?{3,}", re.IGNORECASE)


# A value can match either pattern only if its first non-space character starts one of the
# markers or the starter's "Replace", or it holds "xxx" or "??" somewhere; most texts do not, and
# skipping the two searches for them is most of this rule's cost on a large plan.
_MARKER_STARTS = frozenset("tTfFxXrR?")


def _unfinished(value: str) -> str | None:
    stripped = value.lstrip()
    if not stripped:
        return "is empty"
    if stripped[0] not in _MARKER_STARTS and "??" not in value and "xxx" not in value.lower():
        return None
    if _STARTER_PLACEHOLDER.search(value):
        return f"still holds the starter's placeholder '{_shorten(value)}'"
    if _GAP_MARKER.search(value):
        return f"is marked unfinished ('{_shorten(value)}')"
    return None


def _shorten(value: str, limit: int = 60) -> str:
    value = " ".join(value.split())
    return value if len(value) <= limit else value[: limit - 1] + "…"


def _unfinished_texts(node: Any, label: tuple[str, ...],
                      found: list[tuple[tuple[str | int, ...], tuple[str, ...], str, str]]) -> None:
    """Add every unfinished text value below ``node`` to ``found``, with its data path, a
    readable label (ids instead of list positions, so the writer sees "instruments SCALE-1
    evidence EVIDENCE-1 citation") and why it is unfinished.

    One pass over the typed plan that only builds a path for a value that is reported: this
    rule reads every text of the plan, so it is the one whose cost grows fastest with its size.
    """
    for name in _text_fields(node.__class__):
        value = getattr(node, name)
        if isinstance(value, str):
            why = _unfinished(value)
            if why is not None:
                found.append((node.path + (name,), label + (name,), value, why))
        elif isinstance(value, tuple):
            for index, item in enumerate(value):
                if isinstance(item, str):
                    why = _unfinished(item)
                    if why is not None:
                        found.append((node.path + (name, index), label + (name,), item, why))
                elif _text_fields(item.__class__):
                    item_name = getattr(item, "id", None) or getattr(item, "kind", None)
                    _unfinished_texts(item, label + (name, str(item_name) if item_name else f"#{index + 1}"), found)
        elif _text_fields(value.__class__):
            _unfinished_texts(value, label + (name,), found)


@lru_cache(maxsize=None)
def _text_fields(cls: type) -> tuple[str, ...]:
    """The fields of a model class that can hold text (all but ``path``); none for a value."""
    if not dataclasses.is_dataclass(cls):
        return ()
    return tuple(field.name for field in dataclasses.fields(cls) if field.name != "path")


@rule("documents/placeholder-value", "error", waivable=False,
      source="common practice (a controlled document is not issued with blanks or placeholder text)")
def placeholder_value(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """A value is still a placeholder or plainly unfinished (Replace with …, TBD, TODO, XXX, ???, empty).

    `protolint init` writes a starter plan in which every text to fill in reads "Replace with
    …"; a plan that still holds one of them, or a gap marker such as `TBD`, `TBC`, `TODO`,
    `FIXME`, `XXX` or `???`, or a text that is empty or only spaces, is not finished, and the
    documents rendered from it would print the gap. Each such value is reported at its line,
    named by its section, so the writer can work through the plan from top to bottom. Numbers
    and dates in the starter are examples that pass the format; the writer checks them too.
    This check cannot be waived: a waiver would let a placeholder into a controlled document.

    **Passes**: `title: Topical cream in moderate plaque psoriasis`.

    **Fails**: `title: Replace with the full study title`, or `sponsor: TBD`.
    """
    found: list[tuple[tuple[str | int, ...], tuple[str, ...], str, str]] = []
    _unfinished_texts(plan, (), found)
    for path, label, value, why in found:
        section, *rest = label
        yield Hit(path, f"{section}: {' '.join(rest) or section} {why}; write the trial's own value",
                  {"section": section, "value": value})
