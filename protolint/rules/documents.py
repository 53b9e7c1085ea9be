"""Document rules: the plan is tied to a protocol version and defines its deviations."""

from __future__ import annotations

from typing import Iterator

from protolint.plan.model import Plan
from protolint.rules.registry import Hit, RuleContext, rule


@rule("documents/no-protocol-version", "warning", source="SPIRIT 2013 item 3 (protocol version and date)")
def no_protocol_version(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """The plan is not bound to a protocol version and date.

    A measurement plan belongs to one version of the protocol; without the version and date
    nobody can tell which amendments it already reflects, or whether it is current.

    **Passes**: `protocol: {id: NDS-HD-301, version: "2.0", date: 2026-06-30}`.

    **Fails**: no `protocol` section.
    """
    if plan.protocol is None:
        yield Hit(("format_version",), "the plan names no protocol version and date; add a protocol section")
