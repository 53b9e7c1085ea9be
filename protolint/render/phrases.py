"""Plan values in words, shared by the documents (manual, checklist, binder).

Free text stays raw here and is made safe by the template filters (autoescape for plain text,
``markdown`` for plan Markdown).
"""

from __future__ import annotations

from datetime import date

from protolint.plan.model import Criterion, Instrument, Plan, RaterPool, Sop
from protolint.render.document import Fact
from protolint.render.environment import number, words
from protolint.wording import plural

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

# Plan codes whose hyphen is part of the word ("co-rating") or whose code is not English
# ("weighted-kappa-quadratic"): the documents print these names, never the code.
METHOD_WORDS = {
    "co-rating": "co-rating",
    "central-re-rating": "central re-rating",
    "recorded-cases": "recorded cases",
    "live-observed": "live observation",
    "video-review": "video review",
    "recalibration-cases": "recalibration cases",
    "data-surveillance": "data surveillance",
}
COEFFICIENT_WORDS = {
    "cohen-kappa": "Cohen's kappa",
    "weighted-kappa-linear": "linearly weighted kappa",
    "weighted-kappa-quadratic": "quadratically weighted kappa",
    "weighted-kappa": "weighted kappa (weights not stated)",
    "fleiss-kappa": "Fleiss' kappa",
    "krippendorff-alpha": "Krippendorff's alpha",
    "gwet-ac1": "Gwet's AC1",
    "cronbach-alpha": "Cronbach's alpha",
    "pearson-r": "Pearson's r",
    "spearman-rho": "Spearman's rho",
    "percent-agreement": "percent agreement",
}


def method_words(code: str) -> str:
    return METHOD_WORDS.get(code) or words(code)


def coefficient_words(code: str) -> str:
    """A coefficient code in its usual name; ICC forms ("ICC(2,1)") are already names."""
    return COEFFICIENT_WORDS.get(code) or code


def criterion_text(criterion: Criterion | None) -> str:
    """A pass or drift criterion in words."""
    if criterion is None:
        return "not stated in the plan"
    parts = []
    if criterion.coefficient and criterion.minimum is not None:
        parts.append(f"{coefficient_words(criterion.coefficient)} of at least {number(criterion.minimum)} against the reference scores")
    if criterion.max_deviation is not None:
        share = criterion.within_fraction
        who = "every case" if share is None or share >= 1 else f"at least {share * 100:g} % of cases"
        parts.append(f"{who} within {number(criterion.max_deviation)} points of the reference total")
    return "; and ".join(parts) if parts else "not stated in the plan"


def sop_status_text(sop: Sop, day: date) -> str:
    """An SOP's status as of the document's date ``day``: an effective version whose effective
    date is still to come is "effective from 2026-08-15 (not yet in force on 2026-07-15)"."""
    status = sop.status or "effective"  # the schema's default
    if status != "effective":
        return words(status)
    if sop.effective > day:
        return f"effective from {sop.effective.isoformat()} (not yet in force on {day.isoformat()})"
    return f"effective since {sop.effective.isoformat()}"


def scale_text(instrument: Instrument) -> str:
    scale = instrument.scale
    text = words(scale.type)
    if scale.min is not None and scale.max is not None:
        text += f", {number(scale.min)} to {number(scale.max)}"
    if scale.items:
        text += f", {plural(scale.items, 'item')}"
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


def join_or(items: tuple[str, ...] | None, empty: str = "not stated in the plan") -> str:
    return ", ".join(items) if items else empty


def sample_text(pool: RaterPool) -> str:
    m = pool.monitoring
    if m is None or m.duplicate_fraction is None:
        return "as the method requires (no share stated in the plan)"
    return f"{m.duplicate_fraction * 100:g} % of the assessments since the last round, independently re-rated"


def monitoring_facts(pool: RaterPool) -> tuple[Fact, ...]:
    """How a pool is monitored, in words (the manual's monitoring table; the checklist's
    "what to check in every round" without the interval, which heads each of its tables)."""
    m = pool.monitoring
    if m is None:
        return ()
    return (
        Fact("Interval", ("every week" if m.interval_weeks == 1 else f"every {m.interval_weeks} weeks") if m.interval_weeks else "no fixed interval in the plan"),
        Fact("Method", join_or(tuple(method_words(x) for x in m.method))),
        Fact("Sample", sample_text(pool)),
        Fact("Measures reviewed", join_or(m.metrics)),
        Fact("Drift threshold", criterion_text(m.drift_threshold)),
        Fact("Reviewer", m.reviewer or "not stated in the plan"),
    )
