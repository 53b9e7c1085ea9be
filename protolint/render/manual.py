"""The rater manual: per instrument, how it is scored, who rates it, how raters are trained,
certified and monitored, with a one-page quick reference."""

from __future__ import annotations

from dataclasses import dataclass

from protolint.plan import LoadedPlan
from protolint.plan.model import Endpoint, Instrument, Plan, RaterPool
from protolint.render.document import DocumentCheck, DocumentControl, Fact, document_control, valid_plan
from protolint.render.environment import number, words
from protolint.render.phrases import (
    BLINDING_WORDS,
    TRIGGER_WORDS,
    criterion_text,
    join_or,
    method_words,
    monitoring_facts,
    scale_text,
    visits_text,
    window_text,
    yes_no,
)


@dataclass(frozen=True)
class EndpointUse:
    id: str
    label: str
    facts: tuple[Fact, ...]
    blinded_to: tuple[str, ...]
    continuity_fallback: str | None
    prior_scores_safeguard: str | None
    unblinding_mitigation: str | None
    thresholds: tuple[Fact, ...]


@dataclass(frozen=True)
class PoolSection:
    id: str
    label: str
    qualifications: tuple[Fact, ...]
    training: tuple[Fact, ...]
    training_content: tuple[str, ...]
    training_records: str | None
    certification: tuple[Fact, ...]
    recertification: tuple[Fact, ...]
    recertification_triggers: tuple[str, ...]
    monitoring: tuple[Fact, ...]
    monitoring_remediation: str | None
    turnover: str | None
    unblinding_procedure: str | None


@dataclass(frozen=True)
class InstrumentSection:
    id: str
    name: str
    facts: tuple[Fact, ...]
    conventions: str | None
    endpoints: tuple[EndpointUse, ...]
    pools: tuple[PoolSection, ...]
    quick_reference: tuple[Fact, ...]


@dataclass(frozen=True)
class VisitRow:
    name: str
    day: int
    window: str


@dataclass(frozen=True)
class DeviationRow:
    kind: str
    important: str
    handling: str


@dataclass(frozen=True)
class ManualContext:
    control: DocumentControl
    instruments: tuple[InstrumentSection, ...]
    visits: tuple[VisitRow, ...]
    out_of_window: str | None
    deviations: tuple[DeviationRow, ...]


def _endpoint_use(plan: Plan, endpoint: Endpoint) -> EndpointUse:
    facts = [
        Fact("Role", words(endpoint.role)),
        Fact("Rated at", visits_text(plan, endpoint.visits)),
        Fact("How the rater sees the participant", words(endpoint.rating_mode)),
        Fact("Raters per assessment", str(endpoint.raters_per_assessment)
             + (f" ({words(endpoint.combination)})" if endpoint.combination else "")),
        Fact("Same rater follows a participant", yes_no(endpoint.same_rater_across_visits)),
    ]
    if endpoint.rater_assignment:
        facts.append(Fact("Rater assignment", words(endpoint.rater_assignment)))
    roles = tuple(r for r in endpoint.rater_roles if r != "none")
    facts.append(Fact("Other roles the rater holds", join_or(tuple(words(r) for r in roles), "none")))
    blinded = tuple(BLINDING_WORDS.get(item, words(item)) for item in endpoint.blinded_to or ())
    thresholds = tuple(
        Fact(words(cut.kind), (cut.description or f"{number(cut.value)}")
             + (f" (confirmation: {words(cut.confirmation)})" if cut.confirmation else ""))
        for cut in (endpoint.use.thresholds if endpoint.use else ()))
    return EndpointUse(endpoint.id, endpoint.label, tuple(facts), blinded, endpoint.continuity_fallback,
                       endpoint.prior_scores_safeguard, endpoint.unblinding_mitigation, thresholds)


def _pool_section(plan: Plan, pool: RaterPool) -> PoolSection:
    q = pool.qualifications
    qualifications = (
        Fact("Profession or licence", join_or(q.profession if q else ())),
        Fact("Clinical experience", f"at least {number(q.min_experience_years)} years" if q and q.min_experience_years is not None else "not stated in the plan"),
        Fact("Experience with the instrument", (q.scale_experience if q and q.scale_experience else "not stated in the plan")),
        Fact("Languages", join_or(q.languages if q else ())),
    )
    t = pool.training
    training = (
        Fact("Format", t.format if t and t.format else "not stated in the plan"),
        Fact("Trainer", t.trainer if t and t.trainer else "not stated in the plan"),
        Fact("Length", f"{number(t.hours)} hours" if t and t.hours is not None else "not stated in the plan"),
        Fact("Complete by", f"{t.days_before_first_rating} days before the rater's first rating"
             if t and t.days_before_first_rating is not None else "before the rater's first rating"),
    )
    c = pool.certification
    certification = (
        Fact("Method", method_words(c.method) if c and c.method else "not stated in the plan"),
        Fact("Reference cases", str(c.cases) if c and c.cases is not None else "not stated in the plan"),
        Fact("Reference scores set by", c.reference_scores if c and c.reference_scores else "not stated in the plan"),
        Fact("Pass criterion", criterion_text(c.criterion if c else None)),
        Fact("Attempts allowed", str(c.attempts) if c and c.attempts is not None else "not stated in the plan"),
    )
    r = pool.recertification
    recertification = (
        Fact("Interval", f"every {r.interval_months} months" if r and r.interval_months else "no fixed interval in the plan"),
    )
    triggers = tuple(TRIGGER_WORDS.get(item, words(item)) for item in (r.triggers if r else ()))
    m = pool.monitoring
    return PoolSection(
        id=pool.id, label=pool.label, qualifications=qualifications, training=training,
        training_content=t.content if t else (), training_records=t.records if t else None,
        certification=certification, recertification=recertification, recertification_triggers=triggers,
        monitoring=monitoring_facts(pool), monitoring_remediation=m.remediation if m else None,
        turnover=pool.turnover, unblinding_procedure=pool.unblinding_procedure)


def _quick_reference(instrument: Instrument, endpoints: tuple[EndpointUse, ...], pools: tuple[RaterPool, ...],
                     plan: Plan) -> tuple[Fact, ...]:
    rows = [Fact("Instrument", f"{instrument.name}" + (f", version {instrument.version}" if instrument.version else "")),
            Fact("Score", scale_text(instrument))]
    for endpoint in plan.endpoints_for(instrument.id):
        rows.append(Fact(f"Rated for {endpoint.label}", visits_text(plan, endpoint.visits)))
    for pool in pools:
        c, r = pool.certification, pool.recertification
        rows.append(Fact(f"Who rates ({pool.label})", join_or(pool.qualifications.profession if pool.qualifications else ())))
        rows.append(Fact("Certify before rating", criterion_text(c.criterion if c else None)))
        rows.append(Fact("Certify again", (f"every {r.interval_months} months" if r and r.interval_months else "no fixed interval")
                         + (f"; also after {', '.join(TRIGGER_WORDS.get(t, words(t)) for t in r.triggers)}" if r and r.triggers else "")))
        if pool.monitoring and pool.monitoring.reviewer:
            rows.append(Fact("Questions and monitoring", pool.monitoring.reviewer))
    blinded = sorted({b for e in endpoints for b in e.blinded_to})
    rows.append(Fact("Never look at", "; ".join(blinded) if blinded else "nothing listed in the plan"))
    same = {e.label: f for e in endpoints for f in e.facts if f.label == "Same rater follows a participant"}
    for label, fact in same.items():
        rows.append(Fact(f"Same rater ({label})", fact.value))
    return tuple(rows)


def manual_context(loaded: LoadedPlan, paper: str = "a4", check: DocumentCheck | None = None) -> ManualContext:
    plan = valid_plan(loaded)
    sections = []
    for instrument in plan.instruments:
        if not instrument.is_rated_by_people:
            continue
        endpoint_uses = tuple(_endpoint_use(plan, e) for e in plan.endpoints_for(instrument.id))
        pools = tuple(p for p in plan.rater_pools if instrument.id in p.instruments)
        facts = (
            Fact("Version", instrument.version or "not stated in the plan"),
            Fact("Kind", words(instrument.kind)),
            Fact("Score", scale_text(instrument)),
            Fact("Administration", words(instrument.administration) or "not stated in the plan"),
            Fact("Language", instrument.language or "not stated in the plan"),
        )
        sections.append(InstrumentSection(
            id=instrument.id, name=instrument.name, facts=facts, conventions=instrument.conventions,
            endpoints=endpoint_uses, pools=tuple(_pool_section(plan, p) for p in pools),
            quick_reference=_quick_reference(instrument, endpoint_uses, pools, plan)))
    visits = tuple(VisitRow(v.name or v.id, v.day, window_text(v.window_before, v.window_after)) for v in plan.schedule.visits)
    deviations = tuple(DeviationRow(words(d.kind), yes_no(d.important, "not stated"), d.handling) for d in plan.deviations)
    return ManualContext(document_control(loaded, "manual", paper, check), tuple(sections), visits,
                         plan.schedule.out_of_window, deviations)
