"""Runs the rules on a loaded plan, applies the policy, then the plan's waivers.

Every finding is made by :func:`protolint.findings.finding_at` (one way to locate a finding and
give it its JSON Pointer) and :class:`~protolint.findings.PlanResult` sorts them once.
"""

from __future__ import annotations

from dataclasses import replace
from datetime import date
from typing import Any, Iterable, Mapping

from protolint.findings import Finding, PlanResult, Severity, finding_at
from protolint.plan import LoadedPlan
from protolint.plan.model import Plan, Waiver
from protolint.plan.references import walk
from protolint.plan.source import LoadedSource
from protolint.rules.policy import DEFAULT_POLICY, Policy
from protolint.rules.registry import Rule, RuleContext, all_rules, similar_rule_ids

NOT_RUN_REASON = "the plan has schema or reference problems"
"""Why rules did not run. They run on the whole typed plan or not at all: a rule that recomputes
a number reads several sections (evidence, endpoints, schedule, sample size), and one computed
from a plan with parts left out would be a wrong number presented as a finding."""


def check_loaded(loaded: LoadedPlan, policy: Policy = DEFAULT_POLICY, as_of: date | None = None,
                 rules: Iterable[Rule] | None = None) -> PlanResult:
    """Check one loaded plan. ``as_of`` defaults to the plan's own date, never the wall clock.

    A plan with schema or reference problems gets those problems (and any waiver that names an
    unknown rule), and the result lists every rule that could not run because of them.
    """
    rules = tuple(all_rules() if rules is None else rules)
    source = loaded.source
    known = {r.meta.id for r in rules}
    enabled = [r for r in rules if policy.enabled(r.meta.id)]
    waiver_rules = [f for f in unknown_waiver_rules(source, known) if policy.enabled(f.rule)]
    if loaded.plan is None:
        problems = [f for f in loaded.problems if policy.enabled(f.rule)] + waiver_rules
        ran = tuple(sorted(r.meta.id for r in enabled if r.meta.family == "schema"))
        return PlanResult(file=source.file, sha256=source.sha256, findings=tuple(problems), rules_run=ran,
                          as_of=as_of.isoformat() if as_of else None,
                          rules_not_run=tuple(sorted(r.meta.id for r in enabled if r.meta.id not in ran)),
                          not_run_reason=NOT_RUN_REASON, sop_texts=loaded.sop_texts)

    plan = loaded.plan
    as_of = as_of or plan.plan_date
    findings: list[Finding] = list(waiver_rules)
    for registered in enabled:
        meta = registered.meta
        if registered.check is None:
            continue
        context = RuleContext(thresholds=policy.thresholds_for(meta), as_of=as_of)
        severity = policy.severity(meta)
        for hit in registered.check(plan, context):
            own = hit.severity is not None and meta.id not in policy.severities
            findings.append(finding_at(source, hit.path, meta.id, hit.severity if own else severity,  # type: ignore[arg-type]
                                       hit.message, facts=hit.facts))
    waivable = {r.meta.id for r in rules if r.meta.waivable}
    severities = {r.meta.id: policy.severity(r.meta) for r in enabled}
    findings = apply_waivers(findings, plan, source, as_of, waivable, severities, known)
    return PlanResult(file=source.file, sha256=source.sha256, findings=tuple(findings),
                      rules_run=tuple(sorted(r.meta.id for r in enabled)), as_of=as_of.isoformat(),
                      sop_texts=loaded.sop_texts)


def unknown_waiver_rules(source: LoadedSource, known: set[str]) -> list[Finding]:
    """A waiver must name a rule that exists (checked on the data, so it is reported whether
    or not the rest of the plan loads)."""
    findings = []
    for path, waiver in walk(source.data, ("waivers", "*")):
        rule = waiver.get("rule") if isinstance(waiver, dict) else None
        if isinstance(rule, str) and rule not in known:
            close = similar_rule_ids(rule, sorted(known), n=1)
            hint = f" (did you mean {close[0]!r}?)" if close else ""
            findings.append(finding_at(source, path + ("rule",), "schema/unknown-reference", Severity.ERROR,
                                       f"waiver names rule {rule!r}, which does not exist{hint}"))
    return findings


def _matches(waiver: Waiver, finding: Finding) -> bool:
    if waiver.rule != finding.rule:
        return False
    target = waiver.target
    return not target or finding.pointer == target or finding.pointer.startswith(target.rstrip("/") + "/")


def apply_waivers(findings: list[Finding], plan: Plan, source: LoadedSource, as_of: date, waivable: set[str],
                  severities: Mapping[str, Severity], known: set[str]) -> list[Finding]:
    """Mark findings covered by a waiver in force; report expired and unused waivers.

    ``severities`` holds the enabled rules and the severity the policy gives each; a waiver
    check switched off by the policy reports nothing. A waiver for an unknown rule has been
    reported already (:func:`unknown_waiver_rules`) and is not reported again as unused.
    """
    result: list[Finding] = []
    used: set[int] = set()
    expired = [(w, w.expires) for w in plan.waivers if w.expires is not None and w.expires < as_of]
    in_force = [w for w in plan.waivers if w.expires is None or w.expires >= as_of]
    for finding in findings:
        waiver = next((w for w in in_force if finding.rule in waivable and _matches(w, finding)), None)
        if waiver is None:
            result.append(finding)
            continue
        used.add(id(waiver))
        until = f", until {waiver.expires.isoformat()}" if waiver.expires else ""
        result.append(replace(finding, waived=True,
                              waiver_reason=f"{waiver.reason} (approved by {waiver.approved_by} on {waiver.date.isoformat()}{until})"))

    def waiver_finding(rule: str, waiver: Waiver, message: str, facts: dict[str, Any]) -> None:
        if rule in severities:
            result.append(finding_at(source, waiver.path, rule, severities[rule], message, facts=facts))

    for waiver, expiry in expired:
        waiver_finding("waivers/expired", waiver,
                       f"the waiver for {waiver.rule} expired on {expiry.isoformat()} (checked as of {as_of.isoformat()}); "
                       "what it covered is reported again",
                       {"rule": waiver.rule, "expires": expiry.isoformat(), "as_of": as_of.isoformat()})
    for waiver in in_force:
        if id(waiver) not in used and waiver.rule in known:
            where = f" at {waiver.target}" if waiver.target else ""
            waiver_finding("waivers/unused", waiver,
                           f"the waiver for {waiver.rule}{where} matches no finding; remove it or correct its target",
                           {"rule": waiver.rule, "target": waiver.target})
    return result
