"""Rater rules: who may rate, and how they show they can before they do."""

from __future__ import annotations

from typing import Iterator

from protolint.plan.model import Plan
from protolint.rules.registry import Hit, RuleContext, rule


@rule("raters/no-certification-criterion", "error",
      source="ICH E6(R3) 2.3.2 (trial-specific training of delegated staff); common practice for certification against reference cases")
def no_certification_criterion(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """A rater pool has no measurable certification pass criterion.

    Certification only separates raters who can score the instrument from those who cannot if
    the pass rule is explicit and measurable: a minimum coefficient against reference scores,
    or a maximum deviation from the reference total. A pool whose instruments are rated by
    people needs `certification.criterion` with `minimum` (and its `coefficient`) or
    `max_deviation`.

    **Passes**: `criterion: {coefficient: "ICC(2,1)", minimum: 0.80}`.

    **Fails**: a pool with `certification: {method: recorded-cases, cases: 10}` and no criterion.
    """
    for pool in plan.rater_pools:
        if not any(plan.instrument(i).is_rated_by_people for i in pool.instruments):
            continue
        certification = pool.certification
        criterion = certification.criterion if certification else None
        measurable = criterion is not None and (
            (criterion.minimum is not None and criterion.coefficient is not None) or criterion.max_deviation is not None
        )
        if not measurable:
            where = certification.path if certification else pool.path + ("id",)
            what = "no certification" if certification is None else "a certification without a measurable pass criterion"
            yield Hit(where, f"rater pool {pool.id} has {what}; state the coefficient and minimum, or the largest "
                             "allowed deviation from the reference scores, that a rater must reach")
