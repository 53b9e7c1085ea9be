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


_EXPECTED_DEVIATIONS = ("uncertified-rater", "unplanned-rater-change", "out-of-window", "wrong-instrument-version", "rater-unblinded")


@rule("documents/deviations-incomplete", "warning",
      source="ICH E6(R3) 2.5.3 (deviations documented, important ones explained, recurrence prevented); the list of rating deviations is common practice")
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
      source="SPIRIT 2013 item 3 (protocol version and date); common practice (plans revised with each amendment)")
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
