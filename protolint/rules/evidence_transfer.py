"""Evidence transfer: was the evidence obtained under conditions like the trial's?

Reliability belongs to scores obtained in a given way from given people. These rules compare
the evidence study's population, raters, mode of administration and instrument version
with the trial's. Their ids keep the released ``evidence/`` prefix.
"""

from __future__ import annotations

from typing import Iterator

from protolint.plan.model import Endpoint, Evidence, Instrument, Plan
from protolint.plan.reliability import REPEATED_TYPES, evidence_pairs
from protolint.rules._working import same_text, unique
from protolint.rules._working import fmt
from protolint.rules import sources as S
from protolint.rules.sources import cite
from protolint.rules.registry import Hit, RuleContext, Threshold, rule


def _repeated(evidence: Evidence) -> bool:
    return evidence.type in REPEATED_TYPES


@rule("evidence/population-differs", "warning",
      source=cite(f"{S.GRRAS_2011}, item 3 (the subject population)", f"{S.MULSANT_2002} (ICCs are higher when the patients rated span the full range)", f"{S.ICH_E9}, section 2.2.2 (the primary variable reliable and valid in the trial population)"))
def population_differs(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """Reliability evidence comes from another population than the trial's, or the population is not described.

    Reliability depends on the spread of true scores: a study that included mild cases
    usually reports a higher ICC than a trial restricted to moderate-to-severe disease will
    see. Each field given both in the evidence's `population` and in `study.population`
    (condition, severity, age group, setting, language) is compared.

    **Passes**: evidence and trial both `severity: moderate to severe`.

    **Fails**: evidence `severity: mild to severe`, trial `severity: moderate to severe`.
    """
    trial = plan.study.population
    for instrument, evidence, _ in evidence_pairs(plan):
        if not _repeated(evidence):
            continue
        if evidence.population is None:
            yield Hit(evidence.path + ("id",),
                      f"evidence {evidence.id} for {instrument.id} does not describe the population it was obtained in; "
                      "add its population so it can be compared with the trial's")
            continue
        if trial is None:
            continue
        for name in evidence.population.FIELDS:
            theirs, ours = getattr(evidence.population, name), getattr(trial, name)
            if theirs is not None and ours is not None and not same_text(str(theirs), str(ours)):
                yield Hit(evidence.population.path + (name,),
                          f"evidence {evidence.id} for {instrument.id} was obtained with {name.replace('_', ' ')} "
                          f"'{theirs}', the trial enrols '{ours}'; reliability may differ, so justify the transfer "
                          "or measure it in the trial population",
                          {"evidence": evidence.id, "field": name, "evidence_value": theirs, "trial_value": ours})


@rule("evidence/rater-type-differs", "warning",
      thresholds=[Threshold("expert_years", 5, "Years of experience below which a pool's raters are not comparable with the experts of an evidence study.", 0, 40)],
      source=f"{S.GRRAS_2011}, items 4 and 12 (the rater population; the raters' training and experience)")
def rater_type_differs(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """Raters in the evidence study differ from the raters the trial qualifies.

    Scale developers and senior specialists usually agree more closely than the site raters a
    trial recruits, so their figures flatter what the trial will see. The evidence's `rater_profession` is compared with the pool's accepted
    professions, and evidence from `expert` raters is compared with the pool's minimum
    experience (`expert_years`). Evidence that describes neither is reported too.

    **Passes**: evidence from trained dermatologists, pool of dermatologists with 5 years' experience.

    **Fails**: evidence from expert dermatologists, pool admitting raters with 2 years' experience.
    """
    expert_years = float(ctx.thresholds["expert_years"])

    def hits() -> Iterator[Hit]:
        for instrument, evidence, endpoints in evidence_pairs(plan):
            if evidence.type not in ("inter-rater", "intra-rater") or not instrument.is_rated_by_people:
                continue
            if evidence.rater_profession is None and evidence.rater_experience is None:
                yield Hit(evidence.path + ("id",),
                          f"evidence {evidence.id} for {instrument.id} does not say who rated; add rater_profession and rater_experience")
                continue
            for endpoint in endpoints:
                pool = plan.pool(endpoint.rater_pool)
                q = pool.qualifications
                if q is None:
                    continue
                theirs = evidence.rater_profession
                if theirs and q.profession and not any(theirs.lower() in p.lower() or p.lower() in theirs.lower() for p in q.profession):
                    yield Hit(evidence.path + ("rater_profession",),
                              f"evidence {evidence.id} was rated by raters described as {theirs!r}, but pool {pool.id} accepts "
                              f"{', '.join(q.profession)}; show the evidence holds for the trial's raters")
                    break
                years = q.min_experience_years
                if evidence.rater_experience == "expert" and (years is None or years < expert_years):
                    admitted = "any experience" if years is None else f"{fmt(years)} years' experience"
                    yield Hit(evidence.path + ("rater_experience",),
                              f"evidence {evidence.id} comes from expert raters, but pool {pool.id} admits raters with "
                              f"{admitted}, below the {fmt(expert_years)} years that make a rater comparable with the "
                              "evidence's experts; expect lower agreement, or confirm it in the trial's certification data",
                              {"evidence": evidence.id, "pool": pool.id, "pool_min_years": years, "expert_years": expert_years})
                    break
    yield from unique(hits())


_MODE_OF_RATING = {"central-remote": "remote"}


def _trial_mode(instrument: Instrument, endpoint: Endpoint) -> str | None:
    if instrument.is_rated_by_people:
        return _MODE_OF_RATING.get(endpoint.rating_mode, endpoint.rating_mode)
    return instrument.administration


@rule("evidence/administration-differs", "warning",
      source=cite(f"{S.FDA_PRO_2009} (a changed mode of administration needs evidence that the measurement properties hold)", f"{S.COSMIN_RISK_OF_BIAS_2020}, design standard 3 (similar measurement conditions)"))
def administration_differs(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """Reliability evidence was obtained with another mode of administration than the trial uses.

    Rating a participant live, from video, from photographs or over the telephone are
    different measurements; so are paper and electronic self-report. Evidence should match the
    trial's mode, or equivalence should be shown. For instruments rated by people the trial's
    mode is the endpoint's `rating_mode`; for others, the instrument's `administration`.

    **Passes**: evidence `administration: live`, endpoint `rating_mode: live`.

    **Fails**: evidence `administration: live`, endpoint `rating_mode: video`.
    """
    def hits() -> Iterator[Hit]:
        for instrument, evidence, endpoints in evidence_pairs(plan):
            if not _repeated(evidence) or evidence.administration is None:
                continue
            for endpoint in endpoints:
                mode = _trial_mode(instrument, endpoint)
                if mode is not None and mode != evidence.administration:
                    yield Hit(evidence.path + ("administration",),
                              f"evidence {evidence.id} for {instrument.id} was obtained by {evidence.administration} "
                              f"administration, but endpoint {endpoint.id} is rated by {mode}; show the modes are equivalent "
                              "or measure reliability in the trial's mode")
                    break
    yield from unique(hits())


@rule("evidence/version-differs", "warning",
      source=cite(f"{S.FDA_PRO_2009} (a modified instrument needs evidence that its measurement properties are preserved)", f"{S.GRRAS_2011}, item 2 (the instrument named and described)"))
def version_differs(plan: Plan, ctx: RuleContext) -> Iterator[Hit]:
    """Reliability evidence was obtained with another version or language of the instrument.

    Changed wording, anchors, scoring or translation can change how raters and participants
    respond. The evidence's `instrument_version` and `language` are compared with the
    instrument's.

    **Passes**: evidence `instrument_version: "1.2"`, instrument `version: "1.2"`.

    **Fails**: evidence `instrument_version: "1.0"`, instrument `version: "1.2"`.
    """
    for instrument, evidence, _ in evidence_pairs(plan):
        if not _repeated(evidence):
            continue
        if evidence.instrument_version and instrument.version and evidence.instrument_version != instrument.version:
            yield Hit(evidence.path + ("instrument_version",),
                      f"evidence {evidence.id} used version {evidence.instrument_version} of {instrument.id}; the trial uses "
                      f"version {instrument.version}; show the change does not affect reliability")
        if evidence.language and instrument.language and not same_text(evidence.language, instrument.language):
            yield Hit(evidence.path + ("language",),
                      f"evidence {evidence.id} used the '{evidence.language}' version of {instrument.id}; the trial uses "
                      f"'{instrument.language}'; cite evidence for the trial's language version")
