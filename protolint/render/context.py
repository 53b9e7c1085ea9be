"""Typed document contexts: the typed plan turned into what each template shows.

Templates only lay out; every decision (which pools sign which SOP, what a criterion means in
words, which dates a checklist has) is made here, in small functions that can be tested
without rendering. Contexts are frozen dataclasses; free text stays raw text here and is made
safe by the template filters (autoescape for plain text, ``markdown`` for plan Markdown).
"""

from __future__ import annotations

import os
from dataclasses import dataclass
from datetime import date, datetime, timezone
from pathlib import PurePath
from typing import Any, Callable

from protolint import CAUTION, __version__
from protolint.plan import LoadedPlan
from protolint.plan.model import Criterion, Endpoint, Instrument, Plan, RaterPool, Sop
from protolint.plan.monitoring import CENTRAL, monitoring_rounds, pool_spans
from protolint.render.environment import number, words

SIGNATURE_NOTE = (
    "Signature and initials boxes in this document are placeholders for handwritten "
    "signatures on paper; they are not electronic signatures and carry no electronic "
    "signature controls."
)

DOCUMENT_TITLES = {"manual": "Rater manual", "checklist": "Rater monitoring checklist", "binder": "SOP binder"}

BLINDING_WORDS = {
    "treatment": "the participant's treatment allocation",
    "prior-scores": "scores given at earlier visits",
    "other-raters": "the other raters' scores for the same assessment",
    "visit-sequence": "which visit a recording or photograph comes from",
    "eligibility-cutoff": "the score needed for eligibility",
}
TRIGGER_WORDS = {
    "amendment": "a protocol amendment that changes a rated instrument",
    "failed-monitoring": "a failed monitoring round",
    "rater-turnover": "a change of rater",
    "instrument-version": "a new version of the instrument",
    "long-absence": "a long absence from rating",
}


@dataclass(frozen=True)
class Fact:
    """One labelled line in a facts table (short values only; long text goes below tables)."""

    label: str
    value: str


@dataclass(frozen=True)
class DocumentControl:
    kind: str
    title: str
    study_id: str
    study_title: str
    sponsor: str | None
    protocol: str | None
    plan_file: str
    plan_sha256: str
    plan_date: date
    format_version: int
    tool_version: str
    document_date: date
    date_basis: str
    paper: str
    caution: str = CAUTION
    signature_note: str = SIGNATURE_NOTE

    @property
    def running_title(self) -> str:
        return f"{self.study_id} · {self.title}"


def document_date(plan: Plan, environ: dict[str, str] | os._Environ[str] | None = None) -> tuple[date, str]:
    """The document's date: SOURCE_DATE_EPOCH when set (reproducible builds), else the plan's date.

    Never the wall clock, so the same plan always gives the same document.
    """
    environ = os.environ if environ is None else environ
    raw = environ.get("SOURCE_DATE_EPOCH")
    if raw:
        try:
            stamp = int(raw)
        except ValueError:
            raise ValueError(f"SOURCE_DATE_EPOCH must be a whole number of seconds, got {raw!r}") from None
        return datetime.fromtimestamp(stamp, tz=timezone.utc).date(), "SOURCE_DATE_EPOCH"
    return plan.plan_date, "plan date"


def document_control(loaded: LoadedPlan, kind: str, paper: str) -> DocumentControl:
    plan = _plan(loaded)
    day, basis = document_date(plan)
    protocol = f"{plan.protocol.id} version {plan.protocol.version} ({plan.protocol.date.isoformat()})" if plan.protocol else None
    return DocumentControl(
        kind=kind, title=DOCUMENT_TITLES[kind], study_id=plan.study.id, study_title=plan.study.title,
        sponsor=plan.study.sponsor, protocol=protocol, plan_file=PurePath(loaded.source.file).name,
        plan_sha256=loaded.source.sha256, plan_date=plan.plan_date, format_version=plan.format_version,
        tool_version=__version__, document_date=day, date_basis=basis, paper=paper)


def _plan(loaded: LoadedPlan) -> Plan:
    if loaded.plan is None:
        raise ValueError("the plan has schema or reference problems; documents are rendered only from a valid plan")
    return loaded.plan


# --- Words for plan values ----------------------------------------------------------------


def criterion_text(criterion: Criterion | None) -> str:
    """A pass or drift criterion in words."""
    if criterion is None:
        return "not stated in the plan"
    parts = []
    if criterion.coefficient and criterion.minimum is not None:
        parts.append(f"{criterion.coefficient} of at least {number(criterion.minimum)} against the reference scores")
    if criterion.max_deviation is not None:
        share = criterion.within_fraction
        who = "every case" if share is None or share >= 1 else f"at least {share * 100:g} % of cases"
        parts.append(f"{who} within {number(criterion.max_deviation)} points of the reference total")
    return "; and ".join(parts) if parts else "not stated in the plan"


def scale_text(instrument: Instrument) -> str:
    scale = instrument.scale
    text = words(scale.type)
    if scale.min is not None and scale.max is not None:
        text += f", {number(scale.min)} to {number(scale.max)}"
    if scale.items:
        text += f", {scale.items} item{'s' if scale.items != 1 else ''}"
    if scale.levels:
        text += f", {scale.levels} levels"
    return text


def visits_text(plan: Plan, visit_ids: tuple[str, ...]) -> str:
    return ", ".join(plan.visit(v).name or v for v in visit_ids)


def window_text(before: int | None, after: int | None) -> str:
    if not before and not after:
        return "on the day"
    return f"−{before or 0} / +{after or 0} days"


def yes_no(value: bool | None, unknown: str = "not stated in the plan") -> str:
    return unknown if value is None else ("yes" if value else "no")


def _join(items: tuple[str, ...] | None, empty: str = "not stated in the plan") -> str:
    return ", ".join(items) if items else empty


# --- Rater manual ---------------------------------------------------------------------------


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
    facts.append(Fact("Other roles the rater holds", _join(tuple(words(r) for r in roles), "none")))
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
        Fact("Profession or licence", _join(q.profession if q else ())),
        Fact("Clinical experience", f"at least {number(q.min_experience_years)} years" if q and q.min_experience_years is not None else "not stated in the plan"),
        Fact("Experience with the instrument", (q.scale_experience if q and q.scale_experience else "not stated in the plan")),
        Fact("Languages", _join(q.languages if q else ())),
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
        Fact("Method", words(c.method) if c and c.method else "not stated in the plan"),
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
    monitoring: tuple[Fact, ...] = ()
    if m is not None:
        monitoring = (
            Fact("Interval", f"every {m.interval_weeks} weeks" if m.interval_weeks else "no fixed interval in the plan"),
            Fact("Method", _join(tuple(words(x) for x in m.method))),
            Fact("Sample", sample_text(pool)),
            Fact("Measures reviewed", _join(m.metrics)),
            Fact("Drift threshold", criterion_text(m.drift_threshold)),
            Fact("Reviewer", m.reviewer or "not stated in the plan"),
        )
    return PoolSection(
        id=pool.id, label=pool.label, qualifications=qualifications, training=training,
        training_content=t.content if t else (), training_records=t.records if t else None,
        certification=certification, recertification=recertification, recertification_triggers=triggers,
        monitoring=monitoring, monitoring_remediation=m.remediation if m else None,
        turnover=pool.turnover, unblinding_procedure=pool.unblinding_procedure)


def sample_text(pool: RaterPool) -> str:
    m = pool.monitoring
    if m is None or m.duplicate_fraction is None:
        return "as the method requires (no share stated in the plan)"
    return f"{m.duplicate_fraction * 100:g} % of the assessments since the last round, independently re-rated"


def _quick_reference(instrument: Instrument, endpoints: tuple[EndpointUse, ...], pools: tuple[RaterPool, ...],
                     plan: Plan) -> tuple[Fact, ...]:
    rows = [Fact("Instrument", f"{instrument.name}" + (f", version {instrument.version}" if instrument.version else "")),
            Fact("Score", scale_text(instrument))]
    for endpoint in plan.endpoints_for(instrument.id):
        rows.append(Fact(f"Rated for {endpoint.label}", visits_text(plan, endpoint.visits)))
    for pool in pools:
        c, r = pool.certification, pool.recertification
        rows.append(Fact(f"Who rates ({pool.label})", _join(pool.qualifications.profession if pool.qualifications else ())))
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


def manual_context(loaded: LoadedPlan, paper: str = "a4") -> ManualContext:
    plan = _plan(loaded)
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
    return ManualContext(document_control(loaded, "manual", paper), tuple(sections), visits,
                         plan.schedule.out_of_window, deviations)


# --- Monitoring checklist -------------------------------------------------------------------


@dataclass(frozen=True)
class RoundRow:
    number: int
    due: date
    covers_from: date
    close_out: bool


@dataclass(frozen=True)
class PoolChecklist:
    pool_id: str
    label: str
    instruments: str
    what_to_check: tuple[Fact, ...]
    remediation: str | None
    raters: tuple[str, ...]
    rounds: tuple[RoundRow, ...]

    @property
    def round_blocks(self) -> tuple[tuple[RoundRow, ...], ...]:
        """Rounds in blocks of at most ``ROUNDS_PER_TABLE``, one table each.

        WeasyPrint's time to lay out a table grows with the number of pages it spans, so a
        two-year weekly schedule as one table takes minutes; page-sized tables keep it linear.
        """
        return tuple(self.rounds[i:i + ROUNDS_PER_TABLE] for i in range(0, len(self.rounds), ROUNDS_PER_TABLE))


ROUNDS_PER_TABLE = 26


@dataclass(frozen=True)
class SiteChecklist:
    id: str
    name: str
    country: str | None
    pools: tuple[PoolChecklist, ...]


@dataclass(frozen=True)
class ChecklistContext:
    control: DocumentControl
    rating_ends: date
    sites: tuple[SiteChecklist, ...]
    unmonitored_pools: tuple[str, ...]
    round_count: int
    only_site: str | None = None
    """Set when this copy covers one site (``render checklist --site``)."""


def checklist_context(loaded: LoadedPlan, paper: str = "a4", site: str | None = None) -> ChecklistContext:
    """The monitoring checklist, for every site or, with ``site``, for one site's copy."""
    from protolint.plan.timeline import study_window

    plan = _plan(loaded)
    by_site: dict[str, list[PoolChecklist]] = {}
    unmonitored = []
    for pool in plan.rater_pools:
        rounds = monitoring_rounds(plan, pool)
        if not rounds:
            unmonitored.append(pool.label)
            continue
        what = tuple(f for f in _pool_section(plan, pool).monitoring if f.label != "Interval")
        instruments = ", ".join(plan.instrument(i).name for i in pool.instruments)
        for site_id, site_rounds in rounds.items():
            raters = tuple(r.id for r in plan.roster
                           if r.pool == pool.id and (site_id == CENTRAL or r.site == site_id))
            by_site.setdefault(site_id, []).append(PoolChecklist(
                pool_id=pool.id, label=f"{pool.label} — every {pool.monitoring.interval_weeks} weeks",  # type: ignore[union-attr]
                instruments=instruments, what_to_check=what, remediation=pool.monitoring.remediation,  # type: ignore[union-attr]
                raters=raters,
                rounds=tuple(RoundRow(r.number, r.due, r.covers_from, r.close_out) for r in site_rounds)))
    sites = [SiteChecklist(s.id, s.name, s.country, tuple(by_site[s.id])) for s in plan.study.sites if s.id in by_site]
    if CENTRAL in by_site:
        sites.append(SiteChecklist(CENTRAL, "Central rating", None, tuple(by_site[CENTRAL])))
    if site is not None:
        known = [s.id for s in sites]
        if site not in known:
            raise ValueError(f"site {site!r} has no monitoring rounds in this plan; choose one of: {', '.join(known) or 'none'}")
        sites = [s for s in sites if s.id == site]
    count = sum(len(p.rounds) for s in sites for p in s.pools)
    return ChecklistContext(document_control(loaded, "checklist", paper), study_window(plan).last, tuple(sites),
                            tuple(unmonitored), count, site)


# --- SOP binder -----------------------------------------------------------------------------


@dataclass(frozen=True)
class SignOffRow:
    rater_id: str
    site: str


@dataclass(frozen=True)
class SignOffSheet:
    pool_label: str
    rows: tuple[SignOffRow, ...]
    blank_rows: int


@dataclass(frozen=True)
class SopSection:
    id: str
    title: str
    version: str
    facts: tuple[Fact, ...]
    approvals: tuple[Fact, ...]
    summary: str | None
    sheets: tuple[SignOffSheet, ...]


@dataclass(frozen=True)
class RevisionRow:
    document: str
    version: str
    date: date
    summary: str


@dataclass(frozen=True)
class SampleSizeAppendix:
    inputs: tuple[Fact, ...]
    results: tuple[Fact, ...]
    chart_svg: str
    convention: str
    note: str | None


@dataclass(frozen=True)
class FindingRow:
    severity: str
    rule: str
    where: str
    message: str
    waiver_reason: str | None


@dataclass(frozen=True)
class CheckAppendix:
    as_of: date
    counts: tuple[Fact, ...]
    findings: tuple[FindingRow, ...]
    waived: tuple[FindingRow, ...]


@dataclass(frozen=True)
class BinderContext:
    control: DocumentControl
    sops: tuple[SopSection, ...]
    revisions: tuple[RevisionRow, ...]
    amendments: tuple[RevisionRow, ...]
    sample_size: SampleSizeAppendix | None
    check: CheckAppendix


MIN_SIGNOFF_ROWS = 6


def signing_pools(plan: Plan, sop: Sop) -> tuple[RaterPool, ...]:
    """Pools whose raters sign ``sop``: those rating an instrument it covers, or all pools when
    it covers procedures only (such as monitoring for every pool)."""
    covered = set(sop.covers.instruments) if sop.covers else set()
    if not covered:
        return plan.rater_pools
    return tuple(pool for pool in plan.rater_pools if covered & set(pool.instruments))


def signoff_sheet(plan: Plan, pool: RaterPool) -> SignOffSheet:
    rows = tuple(SignOffRow(r.id, r.site or "central") for r in plan.roster if r.pool == pool.id)
    sites = 1 if pool.is_central else len(pool_spans(plan, pool)) or len(plan.study.sites)
    expected = (pool.raters_per_site or 1) * sites
    blank = max(MIN_SIGNOFF_ROWS, expected - len(rows)) if len(rows) < expected else MIN_SIGNOFF_ROWS // 2
    return SignOffSheet(pool.label, rows, blank)


def _sop_section(plan: Plan, sop: Sop) -> SopSection:
    covers = sop.covers
    facts = (
        Fact("Version", sop.version),
        Fact("Status", words(sop.status) or "not stated in the plan"),
        Fact("Effective", sop.effective.isoformat()),
        Fact("Next review", sop.review_due.isoformat() if sop.review_due else "not stated in the plan"),
        Fact("Owner", sop.owner or "not stated in the plan"),
        Fact("Instruments covered", _join(tuple(plan.instrument(i).name for i in covers.instruments) if covers else (), "none")),
        Fact("Procedures covered", _join(tuple(words(p) for p in covers.procedures) if covers else (), "none")),
    )
    approvals = tuple(Fact(a.name + (f", {a.role}" if a.role else ""), f"{a.date.isoformat()}" + (f" — {a.meaning}" if a.meaning else ""))
                      for a in sop.approvals)
    sheets = tuple(signoff_sheet(plan, pool) for pool in signing_pools(plan, sop))
    return SopSection(sop.id, sop.title, sop.version, facts, approvals, sop.summary, sheets)


@dataclass(frozen=True)
class EvidencePoint:
    reliability: float
    n_total: int
    power: float
    description: str


def _evidence_point(plan: Plan, endpoint: Endpoint, effect: float, common: dict[str, Any]) -> EvidencePoint | None:
    """The N the same comparison needs at the reliability the plan's own evidence supports for
    the way the endpoint is rated (the figure `power/unadjusted-for-reliability` checks)."""
    from protolint.plan.reliability import trial_reliability
    from protolint.stats import SolverError, sample_size_two_group

    expected = trial_reliability(plan, endpoint)
    if expected is None or not 0.0 < expected.reliability <= 1.0:
        return None
    try:
        result = sample_size_two_group(effect, reliability=expected.reliability, **common)
    except (SolverError, ValueError):
        return None
    ratings = "one rating" if expected.ratings == 1 else f"the mean of {expected.ratings} ratings"
    description = (f"{number(expected.reliability, 3)} ({ratings}; single-rating value "
                   f"{number(expected.single, 3)} from evidence {expected.evidence.id})")
    return EvidencePoint(expected.reliability, result.n_total_enrolled, result.achieved_power, description)


def sample_size_appendix(plan: Plan) -> SampleSizeAppendix | None:
    """The reliability-adjusted sample size of the plan's comparison, with its curve.

    Uses the classical-test-theory convention (observed d = d·√ρ, DESIGN section 5). An effect
    the plan states as observed in a previous trial is first brought to the true-score scale
    exactly as the sample-size rule does (``plan.reliability.true_effect_size``).
    """
    from protolint.render.charts import SampleSizeCurve, reliability_grid, sample_size_chart
    from protolint.stats import SolverError, sample_size_two_group

    from protolint.plan.reliability import trial_reliability, true_effect_size

    spec = plan.sample_size
    if spec is None:
        return None
    endpoint = plan.endpoint(spec.endpoint)
    reliability = spec.assumed_reliability if spec.assumed_reliability is not None else 1.0
    expected = trial_reliability(plan, endpoint)
    effect = true_effect_size(spec, expected.reliability if expected else reliability)
    if effect is None:
        return None
    d = effect.value
    ratio = plan.study.allocation_ratio
    common = dict(alpha=spec.alpha, power=spec.power, sides=spec.sides or 2, ratio=ratio, dropout=spec.dropout or 0.0)
    try:
        at_plan = sample_size_two_group(d, reliability=reliability, **common)  # type: ignore[arg-type]
        grid = [r for r in reliability_grid() if r <= 1.0]
        curve = [sample_size_two_group(d, reliability=r, **common).n_total_enrolled for r in grid]  # type: ignore[arg-type]
    except (SolverError, ValueError) as error:
        return SampleSizeAppendix((), (Fact("Could not compute", str(error)),), "", "", None)
    supported = _evidence_point(plan, endpoint, d, common)
    stated = () if spec.effect_basis != "observed" else (
        Fact("Standardised effect as stated", f"{number(spec.standardised_effect or 0, 3)} ({effect.basis})"),)
    inputs = (
        Fact("Endpoint", endpoint.label),
        *stated,
        Fact("Standardised effect (true score)", number(d, 3)),
        Fact("Significance level", f"{number(spec.alpha, 3)}, {spec.sides or 2}-sided"),
        Fact("Target power", number(spec.power)),
        Fact("Allocation ratio (group 2 / group 1)", number(ratio)),
        Fact("Expected dropout", f"{(spec.dropout or 0) * 100:g} %"),
        Fact("Reliability the calculation assumes", number(reliability)),
        Fact("Total N to enrol stated in the plan", str(spec.stated_n_total)),
    )
    results: tuple[Fact, ...] = (
        Fact("Observed effect after attenuation", number(at_plan.effect_size_observed, 3)),
        Fact("Analysable N per group", " / ".join(str(n) for n in at_plan.n_per_group)),
        Fact("Analysable N in total", str(at_plan.n_total)),
        Fact("To enrol, allowing for dropout", str(at_plan.n_total_enrolled)),
        Fact("Power achieved", number(at_plan.achieved_power, 3)),
        Fact("N at perfect reliability (total)", str(at_plan.n_total_perfect_reliability)),
        Fact("Method", at_plan.method),
    )
    if supported is not None:
        results += (
            Fact("Reliability the evidence supports", supported.description),
            Fact("To enrol at that reliability", f"{supported.n_total} (power {number(supported.power, 3)})"),
        )
    note = None
    if reliability >= 1.0:
        note = ("The plan assumes perfect reliability. No rated score is perfectly reliable; the curve "
                "shows how many participants the same comparison needs at realistic reliabilities.")
    svg = sample_size_chart(SampleSizeCurve(
        tuple(grid), tuple(curve), reliability, at_plan.n_total_enrolled, spec.stated_n_total,
        supported.reliability if supported else None, supported.n_total if supported else None))
    convention = ("Classical test theory: the observed standardised effect is d·√ρ, so the analysable N "
                  "grows as 1/ρ. Exact power from the noncentral t distribution. The curve shows the "
                  "participants to enrol (analysable N increased for the expected dropout), which is what "
                  "the plan's stated N counts.")
    return SampleSizeAppendix(inputs, results, svg, convention, note)


def check_appendix(loaded: LoadedPlan, as_of: date) -> CheckAppendix:
    from protolint.pipeline import check_source

    result = check_source(loaded.source, as_of=as_of)
    rows = [FindingRow(f.severity.label, f.rule, f"line {f.location.line}, column {f.location.column}",
                       f.message, f.waiver_reason) for f in result.findings]
    findings = tuple(r for r, f in zip(rows, result.findings) if not f.waived)
    waived = tuple(r for r, f in zip(rows, result.findings) if f.waived)
    counts = tuple(Fact(level, str(sum(1 for r in findings if r.severity == level))) for level in ("error", "warning", "note"))
    return CheckAppendix(as_of, counts + (Fact("waived", str(len(waived))),), findings, waived)


def binder_context(loaded: LoadedPlan, paper: str = "a4",
                   progress: Callable[[str], None] | None = None) -> BinderContext:
    plan = _plan(loaded)
    control = document_control(loaded, "binder", paper)
    sops = tuple(_sop_section(plan, sop) for sop in plan.sops)
    revisions = tuple(sorted(
        (RevisionRow(f"{sop.id} {sop.title}", rev.version, rev.date, rev.summary or "")
         for sop in plan.sops for rev in sop.revisions),
        key=lambda row: (row.date, row.document, row.version)))
    amendments: tuple[RevisionRow, ...] = ()
    if plan.protocol:
        amendments = tuple(RevisionRow(f"{plan.protocol.id} {a.id}", a.version or "", a.effective, a.summary or "")
                           for a in plan.protocol.amendments)
    if progress:
        progress("computing the sample-size appendix")
    sample = sample_size_appendix(plan)
    if progress:
        progress("running the checks")
    check = check_appendix(loaded, plan.plan_date)
    return BinderContext(control, sops, revisions, amendments, sample, check)
