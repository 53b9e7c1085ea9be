"""The typed, immutable model of a measurement plan.

Field names are the plan's keys (see ``schemas/plan.schema.json`` for what each means). Every
object remembers ``path``, its place in the plan data, so a rule can report a finding at
``obj.path + ("key",)`` and the engine turns that into ``file:line:column``.

The model is built only from data that already matches the schema and whose references
resolve, so builders do not re-validate.
"""

from __future__ import annotations

import dataclasses
import functools
import types
import typing
from collections.abc import Iterable
from dataclasses import dataclass
from datetime import date as Date
from functools import cached_property, lru_cache
from typing import Any, Callable, TypeVar

Path = tuple[str | int, ...]

RATER_KINDS = frozenset({"clinician-rated", "observer-rated", "performance"})


@dataclass(frozen=True)
class Amendment:
    path: Path
    id: str
    effective: Date
    version: str | None = None
    summary: str | None = None
    affects_instruments: tuple[str, ...] = ()
    changes: tuple[str, ...] = ()


@dataclass(frozen=True)
class Protocol:
    path: Path
    id: str
    version: str
    date: Date
    amendments: tuple[Amendment, ...] = ()


@dataclass(frozen=True)
class Population:
    path: Path
    condition: str | None = None
    severity: str | None = None
    age_group: str | None = None
    setting: str | None = None
    language: str | None = None

    FIELDS: typing.ClassVar[tuple[str, ...]] = ("condition", "severity", "age_group", "setting", "language")


@dataclass(frozen=True)
class Arm:
    path: Path
    id: str
    ratio: float
    name: str | None = None


@dataclass(frozen=True)
class Site:
    path: Path
    id: str
    name: str
    country: str | None = None
    first_assessment: Date | None = None


@dataclass(frozen=True)
class Study:
    path: Path
    id: str
    title: str
    design: str
    arms: tuple[Arm, ...]
    first_assessment: Date
    enrolment_weeks: int
    treatment_weeks: int
    sites: tuple[Site, ...]
    sponsor: str | None = None
    phase: str | None = None
    masking: str | None = None
    population: Population | None = None

    @property
    def allocation_ratio(self) -> float:
        """Participants in the second arm per participant in the first (1 for a single arm)."""
        if len(self.arms) >= 2 and self.arms[0].ratio:
            return self.arms[1].ratio / self.arms[0].ratio
        return 1.0

    def site(self, site_id: str) -> Site:
        return self._sites_by_id[site_id]

    @cached_property
    def _sites_by_id(self) -> dict[str, Site]:
        return _first_by_id(self.sites)


@dataclass(frozen=True)
class Scale:
    path: Path
    type: str
    min: float | None = None
    max: float | None = None
    items: int | None = None
    levels: int | None = None


@dataclass(frozen=True)
class Evidence:
    path: Path
    id: str
    type: str
    coefficient: str
    value: float
    ci: tuple[float, ...] | None = None
    ci_level: float | None = None
    subjects: int | None = None
    raters: int | None = None
    averaged_over: int | None = None
    no_systematic_difference: bool | None = None
    sem: float | None = None
    sdc: float | None = None
    population: Population | None = None
    rater_profession: str | None = None
    rater_experience: str | None = None
    administration: str | None = None
    instrument_version: str | None = None
    language: str | None = None
    citation: str | None = None


@dataclass(frozen=True)
class Instrument:
    path: Path
    id: str
    name: str
    kind: str
    scale: Scale
    version: str | None = None
    language: str | None = None
    administration: str | None = None
    score_sd: float | None = None
    conventions: str | None = None
    evidence: tuple[Evidence, ...] = ()

    @property
    def is_rated_by_people(self) -> bool:
        return self.kind in RATER_KINDS


@dataclass(frozen=True)
class Cutoff:
    path: Path
    kind: str
    value: float
    description: str | None = None
    confirmation: str | None = None


@dataclass(frozen=True)
class OutcomeUse:
    path: Path
    individual_decisions: bool | None = None
    thresholds: tuple[Cutoff, ...] = ()


@dataclass(frozen=True)
class Endpoint:
    path: Path
    id: str
    instrument: str
    role: str
    analysis: str
    visits: tuple[str, ...]
    rater_pool: str
    raters_per_assessment: int
    rating_mode: str
    name: str | None = None
    occasions_per_assessment: int | None = None
    combination: str | None = None
    same_rater_across_visits: bool | None = None
    rater_assignment: str | None = None
    continuity_fallback: str | None = None
    blinded_to: tuple[str, ...] | None = None
    rater_roles: tuple[str, ...] = ()
    unblinding_mitigation: str | None = None
    prior_scores_safeguard: str | None = None
    use: OutcomeUse | None = None

    @property
    def label(self) -> str:
        return self.name or self.id


@dataclass(frozen=True)
class Visit:
    path: Path
    id: str
    day: int
    name: str | None = None
    window_before: int | None = None
    window_after: int | None = None


@dataclass(frozen=True)
class Schedule:
    path: Path
    visits: tuple[Visit, ...]
    out_of_window: str | None = None


@dataclass(frozen=True)
class Criterion:
    path: Path
    coefficient: str | None = None
    minimum: float | None = None
    max_deviation: float | None = None
    within_fraction: float | None = None


@dataclass(frozen=True)
class Qualifications:
    path: Path
    profession: tuple[str, ...] = ()
    min_experience_years: float | None = None
    scale_experience: str | None = None
    languages: tuple[str, ...] = ()


@dataclass(frozen=True)
class Training:
    path: Path
    content: tuple[str, ...] = ()
    format: str | None = None
    trainer: str | None = None
    hours: float | None = None
    days_before_first_rating: int | None = None
    records: str | None = None


@dataclass(frozen=True)
class Certification:
    path: Path
    method: str | None = None
    cases: int | None = None
    expected_icc: float | None = None
    reference_scores: str | None = None
    criterion: Criterion | None = None
    attempts: int | None = None


@dataclass(frozen=True)
class Recertification:
    path: Path
    interval_months: int | None = None
    triggers: tuple[str, ...] = ()


@dataclass(frozen=True)
class Monitoring:
    path: Path
    interval_weeks: int | None = None
    method: tuple[str, ...] = ()
    duplicate_fraction: float | None = None
    metrics: tuple[str, ...] = ()
    drift_threshold: Criterion | None = None
    remediation: str | None = None
    reviewer: str | None = None


@dataclass(frozen=True)
class RaterPool:
    path: Path
    id: str
    instruments: tuple[str, ...]
    name: str | None = None
    location: str | None = None
    sites: tuple[str, ...] | None = None
    raters_per_site: int | None = None
    arm_assignment: str | None = None
    qualifications: Qualifications | None = None
    training: Training | None = None
    certification: Certification | None = None
    recertification: Recertification | None = None
    monitoring: Monitoring | None = None
    turnover: str | None = None
    unblinding_procedure: str | None = None

    @property
    def label(self) -> str:
        return self.name or self.id

    @property
    def is_central(self) -> bool:
        """Rates centrally (one team for every site) rather than at the sites."""
        return self.location == "central"


@dataclass(frozen=True)
class RaterCertification:
    path: Path
    instrument: str
    date: Date
    version: str | None = None
    expires: Date | None = None


@dataclass(frozen=True)
class Rater:
    path: Path
    id: str
    pool: str
    site: str | None = None
    profession: str | None = None
    experience_years: float | None = None
    first_rating: Date | None = None
    certifications: tuple[RaterCertification, ...] = ()


@dataclass(frozen=True)
class SampleSize:
    path: Path
    endpoint: str
    alpha: float
    power: float
    stated_n_total: int
    effect_size: float | None = None
    difference: float | None = None
    sd: float | None = None
    effect_basis: str | None = None
    source_reliability: float | None = None
    sides: int | None = None
    dropout: float | None = None
    assumed_reliability: float | None = None

    @property
    def standardised_effect(self) -> float | None:
        if self.effect_size is not None:
            return self.effect_size
        if self.difference is not None and self.sd:
            return self.difference / self.sd
        return None


@dataclass(frozen=True)
class Approval:
    path: Path
    name: str
    date: Date
    role: str | None = None
    meaning: str | None = None


@dataclass(frozen=True)
class Coverage:
    path: Path
    instruments: tuple[str, ...] = ()
    procedures: tuple[str, ...] = ()


@dataclass(frozen=True)
class Revision:
    path: Path
    version: str
    date: Date
    summary: str | None = None


@dataclass(frozen=True)
class Sop:
    path: Path
    id: str
    title: str
    version: str
    effective: Date
    status: str | None = None
    review_due: Date | None = None
    owner: str | None = None
    approvals: tuple[Approval, ...] = ()
    covers: Coverage | None = None
    summary: str | None = None
    revisions: tuple[Revision, ...] = ()
    text_file: str | None = None
    """Path of the SOP's full text (Markdown), relative to the plan's folder; read by ``plan.sop_texts``."""
    location: str | None = None
    """Where the controlled copy is kept, for an SOP whose text the plan does not include."""


@dataclass(frozen=True)
class Deviation:
    path: Path
    kind: str
    handling: str
    important: bool | None = None


@dataclass(frozen=True)
class Waiver:
    path: Path
    rule: str
    reason: str
    approved_by: str
    date: Date
    target: str | None = None
    expires: Date | None = None


@dataclass(frozen=True)
class DocumentIdentity:
    """A controlled document's number and version in the sponsor's document system."""

    path: Path
    number: str | None = None
    version: str | None = None


@dataclass(frozen=True)
class DocumentIdentities:
    """The plan's ``documents`` section: number and version per document kind."""

    path: Path
    manual: DocumentIdentity | None = None
    checklist: DocumentIdentity | None = None
    binder: DocumentIdentity | None = None


@dataclass(frozen=True)
class Plan:
    path: Path
    format_version: int
    plan_date: Date
    study: Study
    instruments: tuple[Instrument, ...]
    endpoints: tuple[Endpoint, ...]
    schedule: Schedule
    rater_pools: tuple[RaterPool, ...]
    protocol: Protocol | None = None
    roster: tuple[Rater, ...] = ()
    sample_size: SampleSize | None = None
    sops: tuple[Sop, ...] = ()
    deviations: tuple[Deviation, ...] = ()
    waivers: tuple[Waiver, ...] = ()
    documents: DocumentIdentities | None = None

    # Look-ups by id go through indexes built once per plan, so a rule that looks up every
    # endpoint's pool and visits stays linear in the plan's size. The model is immutable, so an
    # index can never go stale; ``cached_property`` stores it beside the fields (not a field:
    # equality, ``dataclasses.fields`` and ``replace`` do not see it).

    def instrument(self, instrument_id: str) -> Instrument:
        return self._by_id("instruments")[instrument_id]

    def endpoint(self, endpoint_id: str) -> Endpoint:
        return self._by_id("endpoints")[endpoint_id]

    def pool(self, pool_id: str) -> RaterPool:
        return self._by_id("rater_pools")[pool_id]

    def visit(self, visit_id: str) -> Visit:
        return self._by_id("visits")[visit_id]

    def endpoints_for(self, instrument_id: str) -> tuple[Endpoint, ...]:
        return self._endpoints_by_instrument.get(instrument_id, ())

    def people_pools(self) -> tuple[RaterPool, ...]:
        """Pools that rate at least one instrument scored by people (the ones that need
        training, certification and monitoring; a device or diary needs none)."""
        return tuple(pool for pool in self.rater_pools
                     if any(self.instrument(i).is_rated_by_people for i in pool.instruments))

    def _by_id(self, section: str) -> dict[str, Any]:
        return self._indexes[section]

    @cached_property
    def _indexes(self) -> dict[str, dict[str, Any]]:
        sections: dict[str, tuple[Any, ...]] = {
            "instruments": self.instruments, "endpoints": self.endpoints,
            "rater_pools": self.rater_pools, "visits": self.schedule.visits}
        return {name: _first_by_id(items) for name, items in sections.items()}

    @cached_property
    def _endpoints_by_instrument(self) -> dict[str, tuple[Endpoint, ...]]:
        grouped: dict[str, list[Endpoint]] = {}
        for endpoint in self.endpoints:
            grouped.setdefault(endpoint.instrument, []).append(endpoint)
        return {instrument: tuple(endpoints) for instrument, endpoints in grouped.items()}


T = TypeVar("T")
def _first_by_id(items: Iterable[Any]) -> dict[str, Any]:
    """Items by their ``id``; of a repeated id, the first (as a search through the list finds it)."""
    index: dict[str, Any] = {}
    for item in items:
        index.setdefault(item.id, item)
    return index


F = TypeVar("F", bound=Callable[..., Any])


def per_plan(function: F) -> F:
    """Compute a derived fact once per plan: memoised on the plan object itself.

    Derived facts are pure functions of the immutable plan, and several rules and documents
    ask for the same one (the rated visit days, a pool's monitoring rounds); computing it once
    keeps a check linear in the plan's size. The arguments after the plan are compared by
    value (frozen model objects hash by value), so a fact never answers for another argument.
    The memo lives in the plan's ``__dict__`` (a frozen dataclass forbids attribute assignment,
    not that), so it goes when the plan goes; a plan that is not a model object is not memoised.
    """
    name = f"{function.__module__}.{function.__qualname__}"

    @functools.wraps(function)
    def memoised(plan: Any, *args: Any) -> Any:
        store = getattr(plan, "__dict__", None)
        if store is None:
            return function(plan, *args)
        memo = store.setdefault("_derived_facts", {})
        key = (name, *args)
        try:
            return memo[key]
        except KeyError:
            value = memo[key] = function(plan, *args)
            return value

    return memoised  # type: ignore[return-value]


def build_plan(data: dict[str, Any]) -> Plan:
    """Build the typed plan from schema-valid data."""
    return _build(Plan, data, ())


Convert = Callable[[Any, Path], Any]


def _build(cls: Any, data: dict[str, Any], path: Path) -> Any:
    values: dict[str, Any] = {"path": path}
    for name, convert in _field_converters(cls):
        if name in data:
            raw = data[name]
            values[name] = None if raw is None else convert(raw, path + (name,))
    return cls(**values)


@lru_cache(maxsize=None)
def _field_converters(cls: Any) -> tuple[tuple[str, Convert], ...]:
    """(field, converter) for every field but ``path``, worked out once per model class from its
    type hints, so building a large plan does not read the hints again for every value."""
    hints = typing.get_type_hints(cls)
    return tuple((field.name, _converter(hints[field.name])) for field in dataclasses.fields(cls) if field.name != "path")


def _same(raw: Any, path: Path) -> Any:
    return raw


def _to_date(raw: Any, path: Path) -> Any:
    return Date.fromisoformat(raw)


def _to_float(raw: Any, path: Path) -> Any:
    return float(raw)


def _to_int(raw: Any, path: Path) -> Any:
    # JSON Schema counts 10.0 as an integer; the model holds a real int.
    return int(raw)


@lru_cache(maxsize=None)
def _converter(hint: Any) -> Convert:
    """The function that turns schema-valid data into a value of ``hint`` (never given None)."""
    origin = typing.get_origin(hint)
    if origin in (typing.Union, types.UnionType):
        inner = [arg for arg in typing.get_args(hint) if arg is not type(None)]
        return _converter(inner[0])
    if origin is tuple:
        item = _converter(typing.get_args(hint)[0])
        if item is _same:
            return lambda raw, path: tuple(raw)
        return lambda raw, path: tuple(None if value is None else item(value, path + (index,))
                                       for index, value in enumerate(raw))
    if hint is Date:
        return _to_date
    if hint is float:
        return _to_float
    if hint is int:
        return _to_int
    if dataclasses.is_dataclass(hint):
        return lambda raw, path: _build(hint, raw, path)
    return _same
