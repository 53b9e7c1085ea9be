"""Monitoring limits: a drift threshold that can actually catch a rater who drifts.

Kept apart from ``monitoring.py`` (whose round counting is moving to the derived-facts layer);
the rule ids keep the ``monitoring/`` prefix.
"""

from __future__ import annotations

from typing import Iterator

from protolint.plan.model import Criterion, Plan, RaterPool
from protolint.rules._working import fmt
from protolint.rules.registry import Hit, RuleContext, Threshold, rule


def _instrument_ranges(plan: Plan, pool: RaterPool) -> list[tuple[str, float]]:
    ranges = []
    for instrument_id in pool.instruments:
        scale = plan.instrument(instrument_id).scale
        if scale.min is not None and scale.max is not None and scale.max > scale.min:
            ranges.append((instrument_id, scale.max - scale.min))
    return ranges


def _looser(drift: Criterion, certification: Criterion) -> str | None:
    """How the drift limit is looser than the pass mark, or None."""
    if (drift.minimum is not None and certification.minimum is not None
            and drift.coefficient and drift.coefficient == certification.coefficient
            and drift.minimum < certification.minimum):
        return (f"a rater is flagged only below {drift.coefficient} {fmt(drift.minimum)}, though certification asked for "
                f"{fmt(certification.minimum)}")
    if (drift.max_deviation is not None and certification.max_deviation is not None
            and drift.max_deviation > certification.max_deviation):
        return (f"a rater is flagged only beyond {fmt(drift.max_deviation)} points from the reference, though certification "
                f"allowed {fmt(certification.max_deviation)}")
    return None


@rule("monitoring/drift-limit-too-loose", "warning",
      thresholds=[Threshold("max_share_of_range", 0.25, "Largest allowed deviation, as a share of the instrument's score range, beyond which drift could hardly ever be flagged.", 0.01, 1.0)],
      source="common practice (a rater is held to the standard they were certified at; a limit must be reachable on the scale)")
def drift_limit_too_loose(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """A monitoring drift limit is looser than the certification pass mark, or too wide on the scale ever to trigger.

    Monitoring exists to catch raters who drift away from the standard they were certified
    at. A drift limit looser than the pass mark (a lower minimum of the same coefficient, or
    a larger allowed deviation from the reference) lets a certified rater fall below the
    certified standard without any flag. An allowed deviation that is a large share of the
    score range (over `max_share_of_range`, e.g. 20 points on a 0–40 scale) would flag only
    ratings that are nonsense anyway.

    **Passes**: pass mark and drift limit both a deviation of at most 4 points on a 0–40 scale.

    **Fails**: a drift limit of 20 points on a 0–40 scale, or a drift minimum kappa of 0.60 after certification at 0.70.
    """
    share_limit = float(ctx.thresholds["max_share_of_range"])
    for pool in plan.rater_pools:
        drift = pool.monitoring.drift_threshold if pool.monitoring else None
        if drift is None:
            continue
        certification = pool.certification.criterion if pool.certification else None
        looser = _looser(drift, certification) if certification is not None else None
        if looser is not None:
            key = "minimum" if drift.minimum is not None and certification and certification.minimum is not None else "max_deviation"
            yield Hit(drift.path + (key,),
                      f"the drift limit of rater pool {pool.id} is looser than its certification pass mark: {looser}; "
                      "set the drift limit at least as strict as the pass mark",
                      {"pool": pool.id, "drift_minimum": drift.minimum, "drift_max_deviation": drift.max_deviation,
                       "pass_minimum": certification.minimum if certification else None,
                       "pass_max_deviation": certification.max_deviation if certification else None})
            continue
        if drift.max_deviation is None:
            continue
        for instrument_id, width in _instrument_ranges(plan, pool):
            share = drift.max_deviation / width
            if share > share_limit:
                yield Hit(drift.path + ("max_deviation",),
                          f"the drift limit of rater pool {pool.id} allows a deviation of {fmt(drift.max_deviation)} points, "
                          f"{share:.0%} of the {fmt(width)}-point range of {instrument_id} (more than {share_limit:.0%}); "
                          "a drifting rater would almost never reach it, so set a limit that real drift can cross",
                          {"pool": pool.id, "instrument": instrument_id, "max_deviation": drift.max_deviation,
                           "score_range": width, "share_of_range": round(share, 4), "max_share_of_range": share_limit})
                break
