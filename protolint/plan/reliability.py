"""The reliability the trial can expect: which evidence fits, and how it carries to the trial.

A derived fact of the plan, shared by the evidence and power rules, the binder's sample-size
appendix and the analysis commands, so that they agree on which evidence counts, which ICC
form it quotes, what one rating is worth and what the trial's raters x occasions give:

1. fitting evidence: the evidence type that shows reproducibility for the instrument
   (inter-rater for scores made by people, test-retest otherwise) with a coefficient that
   suits the scale (:func:`fitting_evidence`);
2. single-rating value: an average-of-k ICC stepped down to one rating by Spearman-Brown
   (:func:`single_rating_value`);
3. the least favourable fitting record, stepped up by Spearman-Brown to the independent
   ratings the endpoint averages (:func:`trial_reliability`);
4. the true-score effect size behind the plan's stated effect (:func:`true_effect_size`).
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from typing import Iterator

from protolint.plan.formulas import single_from_average, spearman_brown
from protolint.plan.model import Endpoint, Evidence, Instrument, Plan, SampleSize

__all__ = [
    "CORRELATIONS", "KAPPAS", "REPEATED_TYPES", "UNWEIGHTED_KAPPAS", "WEIGHTED_KAPPAS", "IccForm", "TrialReliability",
    "TrueEffect", "evidence_pairs", "fitting_evidence", "fitting_type", "icc_form", "individual_use",
    "ratings_averaged", "single_rating_value", "trial_ratings", "trial_reliability", "true_effect_size",
    "usable_coefficient",
]

_ICC = re.compile(r"^ICC\((?P<model>[123AC]),(?P<type>1|k)\)$")

KAPPAS = frozenset({"cohen-kappa", "fleiss-kappa", "weighted-kappa", "weighted-kappa-linear", "weighted-kappa-quadratic"})
UNWEIGHTED_KAPPAS = frozenset({"cohen-kappa", "fleiss-kappa"})
WEIGHTED_KAPPAS = frozenset({"weighted-kappa-linear", "weighted-kappa-quadratic"})
CORRELATIONS = frozenset({"pearson-r", "spearman-rho"})
REPEATED_TYPES = frozenset({"inter-rater", "intra-rater", "test-retest"})


@dataclass(frozen=True)
class IccForm:
    """An ICC form in Shrout & Fleiss or McGraw & Wong notation."""

    model: str
    """'1', '2', '3' (Shrout & Fleiss) or 'A', 'C' (McGraw & Wong)."""
    average: bool

    @property
    def consistency(self) -> bool:
        # ICC(3,.) of Shrout & Fleiss is McGraw & Wong's consistency form ICC(C,.).
        return self.model in ("3", "C")


def icc_form(coefficient: str) -> IccForm | None:
    match = _ICC.match(coefficient)
    if match is None:
        return None
    return IccForm(match["model"], match["type"] == "k")


def fitting_type(instrument: Instrument) -> str:
    """The evidence type that shows reproducibility for this kind of instrument."""
    return "inter-rater" if instrument.is_rated_by_people else "test-retest"


def usable_coefficient(evidence: Evidence, scale_type: str) -> bool:
    """A coefficient that can stand for the reliability of this kind of score."""
    c = evidence.coefficient
    if scale_type == "interval":
        return icc_form(c) is not None
    if scale_type == "ordinal":
        return icc_form(c) is not None or c in WEIGHTED_KAPPAS or c == "krippendorff-alpha"
    return c in KAPPAS or c in ("krippendorff-alpha", "gwet-ac1")


def fitting_evidence(instrument: Instrument) -> tuple[Evidence, ...]:
    """Evidence of the right type with a coefficient that suits the score."""
    wanted = fitting_type(instrument)
    return tuple(e for e in instrument.evidence
                 if e.type == wanted and usable_coefficient(e, instrument.scale.type))


def ratings_averaged(evidence: Evidence) -> int | None:
    """How many ratings an average-form coefficient averaged (None for single forms)."""
    form = icc_form(evidence.coefficient)
    if form is None or not form.average:
        return None
    return evidence.averaged_over or evidence.raters


NEGLIGIBLE_RELIABILITY = 1e-6
"""Coefficients closer to zero than this count as zero. No study reports one, and the formulas
divide by the reliability: a value such as 5e-324 would ask for 10**323 raters or overflow."""


def single_rating_value(evidence: Evidence) -> float:
    """The reliability of one rating: average forms are stepped down by Spearman-Brown."""
    value = evidence.value if abs(evidence.value) >= NEGLIGIBLE_RELIABILITY else 0.0
    k = ratings_averaged(evidence)
    if k is None or k <= 1:
        return value
    return single_from_average(value, k)


def trial_ratings(endpoint: Endpoint) -> int:
    """Independent ratings averaged per assessment in the trial (raters x occasions).

    Consensus or sequential ratings are not independent, so they earn no Spearman-Brown gain.
    """
    if endpoint.combination in ("consensus", "sequential"):
        return 1
    return endpoint.raters_per_assessment * (endpoint.occasions_per_assessment or 1)


@dataclass(frozen=True)
class TrialReliability:
    """The reliability the plan's evidence supports for one endpoint as the trial rates it."""

    evidence: Evidence
    """The least favourable fitting record, the one the figure rests on."""
    single: float
    """Its single-rating value."""
    ratings: int
    """Independent ratings averaged per assessment in the trial (raters x occasions)."""
    reliability: float
    """Spearman-Brown of ``single`` to ``ratings``."""


def trial_reliability(plan: Plan, endpoint: Endpoint) -> TrialReliability | None:
    """The reliability the evidence supports for the way this endpoint is rated.

    Takes the least favourable fitting record, so that a plan is never credited with its best
    study alone.
    """
    instrument = plan.instrument(endpoint.instrument)
    candidates = fitting_evidence(instrument)
    if not candidates:
        return None
    evidence = min(candidates, key=single_rating_value)
    single = single_rating_value(evidence)
    m = trial_ratings(endpoint)
    return TrialReliability(evidence, single, m, spearman_brown(single, m) if m > 1 else single)


@dataclass(frozen=True)
class TrueEffect:
    value: float
    basis: str
    """The effect's scale in words, for messages and documents."""


def true_effect_size(size: SampleSize, trial_reliability_value: float) -> TrueEffect | None:
    """The standardised effect on the error-free scale.

    An effect stated as ``observed`` in a previous trial carries that trial's measurement
    error: the true effect is d / √ρ_src, so that it is not penalised twice. Without
    ``source_reliability`` the source is taken to be as reliable as this trial.
    """
    d = size.standardised_effect
    if d is None:
        return None
    if size.effect_basis == "observed":
        source = size.source_reliability if size.source_reliability is not None else trial_reliability_value
        if source <= 0.0:
            return None
        assumed = "" if size.source_reliability is not None else " (assumed equal to the trial's)"
        return TrueEffect(d / source ** 0.5, f"observed with reliability {source:.3g}{assumed}")
    basis = "on the true-score scale" if size.effect_basis == "true-score" else "taken as true-score (effect_basis not stated)"
    return TrueEffect(d, basis)


def evidence_pairs(plan: Plan) -> Iterator[tuple[Instrument, Evidence, tuple[Endpoint, ...]]]:
    """Each evidence record of an instrument that some endpoint uses, with those endpoints."""
    for instrument in plan.instruments:
        endpoints = plan.endpoints_for(instrument.id)
        if not endpoints:
            continue
        for evidence in instrument.evidence:
            yield instrument, evidence, endpoints


def individual_use(endpoint: Endpoint) -> bool:
    """Whether scores decide something about one participant."""
    use = endpoint.use
    return use is not None and (bool(use.individual_decisions) or bool(use.thresholds))
