"""The monitoring checklist: one table of rounds per rater pool and site, to tick and initial.

The rounds are :func:`protolint.plan.monitoring.monitoring_rounds`, the ones the monitoring
rules count and the calendar exports.
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import date

from protolint.plan import LoadedPlan
from protolint.plan.monitoring import CENTRAL, monitoring_rounds
from protolint.plan.timeline import study_window
from protolint.render.document import DocumentCheck, DocumentControl, document_control, valid_plan
from protolint.render.document import Fact
from protolint.render.phrases import monitoring_facts


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


def checklist_context(loaded: LoadedPlan, paper: str = "a4", site: str | None = None,
                      check: DocumentCheck | None = None) -> ChecklistContext:
    """The monitoring checklist, for every site or, with ``site``, for one site's copy."""
    plan = valid_plan(loaded)
    by_site: dict[str, list[PoolChecklist]] = {}
    unmonitored = []
    for pool in plan.rater_pools:
        rounds = monitoring_rounds(plan, pool)
        if not rounds:
            unmonitored.append(pool.label)
            continue
        what = tuple(f for f in monitoring_facts(pool) if f.label != "Interval")
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
    return ChecklistContext(document_control(loaded, "checklist", paper, check), study_window(plan).last, tuple(sites),
                            tuple(unmonitored), count, site)
