"""The monitoring checklist: per site and rater pool, one form per round with a row per rater.

The rounds are :func:`protolint.plan.monitoring.monitoring_rounds`, the ones the monitoring
rules count and the calendar exports. Each round's form has one row for every rater the
plan's roster lists for that pool at that site; without a roster, numbered blank rows, as many
as the pool's ``raters_per_site`` (or :data:`DEFAULT_BLANK_ROWS`), for the site to fill in.

The printed form is a grid of lines (:class:`FormGrid`): every row is one line of text whose
cells are reached by tab stops one column apart. In the PDF the column rules are one generated
image stretched over each form's rows (:attr:`FormGrid.column_rules_image`, served by the PDF's
locked fetcher) and the row rules are underlines; the HTML file, which a browser shows and
prints, draws both as backgrounds. WeasyPrint spends about five times as long per page
on a table with a cell per field (0.2 s against 0.04 s a page, measured on the stress plan of
``bench/bench_checklist.py``), and a two-year weekly schedule at thirty sites with ten raters
each is 31,200 rows on a thousand pages.

The checklist refuses, with a message located at the plan number that multiplies its rows,
a plan whose checklist would exceed :data:`MAX_FORM_ROWS` rows, before any row is made.
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import date

from protolint.errors import LocatedError
from protolint.plan import LoadedPlan
from protolint.plan.model import Plan, RaterPool
from protolint.plan.monitoring import CENTRAL, monitoring_rounds, pool_spans, rostered_raters
from protolint.plan.timeline import study_window
from protolint.render.document import DocumentCheck, DocumentControl, document_control, valid_plan
from protolint.render.document import Fact
from protolint.render.pdf import PdfImage, asset_url
from protolint.render.phrases import monitoring_facts
from protolint.suggest import did_you_mean

DEFAULT_BLANK_ROWS = 4
"""Blank rows per round when the pool has no roster entries and states no raters_per_site."""

MAX_BLANK_ROWS = 100
"""Most blank rows one round may ask for (``raters_per_site`` beyond it is refused)."""

ROWS_PER_BLOCK = 30
"""Rater rows per printed block; a longer round continues in a second block (one page each)."""

MAX_FORM_ROWS = 100_000
"""Most rows (rater rows and round headings) one checklist may have: about 3,000 pages."""

CENTRAL_NAME = "Central rating"


@dataclass(frozen=True)
class FormGrid:
    """The round form's grid: equal columns, each ``column_px`` wide, reached by tab stops.

    Every cell is written as a space, its text and tabs to the next column, and the tab size
    is the column width, so a line is a few glyphs however wide the form: WeasyPrint's cost
    of a line grows with its glyphs. Widths are whole CSS pixels because that is how the tab
    stops are set; text longer than :attr:`cell_characters` is cut, with an ellipsis.
    """

    columns: int = 6
    column_px: int = 102
    cell_characters: int = 14
    """At 8 pt DejaVu Sans Mono (0.602 em a character) 14 characters and a space fit 102 px."""
    rule_colour: str = "#9aa5b1"
    """The form's rules and border, the colour print.css gives every table border."""

    @property
    def width_px(self) -> int:
        return self.columns * self.column_px

    @property
    def edges_px(self) -> tuple[int, ...]:
        """Where the column rules fall, in CSS pixels from the left edge."""
        return tuple(k * self.column_px for k in range(1, self.columns))

    @property
    def column_rules_image(self) -> PdfImage:
        """The column rules as one SVG image, stretched over a form's rows in the PDF edition.

        WeasyPrint draws an image once per form, but a gradient with four stops at every rule
        costs about 8 ms a page of the stress plan to write (``bench/bench_checklist.py``).
        """
        rules = "".join(f'<rect x="{edge - 0.5}" y="0" width="1" height="1" fill="{self.rule_colour}"/>'
                        for edge in self.edges_px)
        return PdfImage(COLUMN_RULES_IMAGE, f'<svg xmlns="http://www.w3.org/2000/svg" width="{self.width_px}" '
                                            f'height="1" viewBox="0 0 {self.width_px} 1" '
                                            f'preserveAspectRatio="none">{rules}</svg>')

    @property
    def column_rules_url(self) -> str:
        return asset_url(COLUMN_RULES_IMAGE)

    @property
    def heading_lines(self) -> tuple[str, ...]:
        """The column headings of every round's form, as form lines."""
        return tuple(self.line(*row) for row in HEADINGS)

    def line(self, *cells: str) -> str:
        """One form line: each cell after a space, cut to its column, then a tab to the next."""
        padded = cells + ("",) * (self.columns - len(cells))
        return "".join((" " + self.cut(cell) if cell else "") + "\t" for cell in padded[:self.columns])

    def cut(self, text: str) -> str:
        room = self.cell_characters
        return text if len(text) <= room else text[:room - 1] + "…"


GRID = FormGrid()

COLUMN_RULES_IMAGE = "checklist/column-rules.svg"
"""The name the PDF's fetcher serves the grid's column rules under (``FormGrid.column_rules_image``)."""

RESULT_BOXES = "☐ yes  ☐ no"
HEADINGS = (("Rater", "What was", "Within drift", "Rater's", "Reviewer's", "Comment"),
            ("", "checked", "threshold?", "initials", "initials, date", ""))


@dataclass(frozen=True)
class RoundForm:
    """One monitoring round's form: a row per rater."""

    number: int
    due: date
    covers_from: date
    close_out: bool
    raters: tuple[str, ...]
    """One label per row: a rater id from the roster, or a row number for a blank row."""

    @property
    def blocks(self) -> tuple[RoundBlock, ...]:
        """The printed blocks: at most ``ROWS_PER_BLOCK`` rows each, so a block fits a page."""
        parts = [self.raters[i:i + ROWS_PER_BLOCK] for i in range(0, len(self.raters), ROWS_PER_BLOCK)]
        return tuple(RoundBlock(self, k, len(parts), part) for k, part in enumerate(parts, start=1))


@dataclass(frozen=True)
class RoundBlock:
    """A printed part of a round's form (a round with many raters has several)."""

    round: RoundForm
    part: int
    parts: int
    raters: tuple[str, ...]

    @property
    def lines(self) -> tuple[str, ...]:
        return tuple(GRID.line(rater, "", RESULT_BOXES) for rater in self.raters)


@dataclass(frozen=True)
class PoolChecklist:
    pool_id: str
    label: str
    instruments: str
    what_to_check: tuple[Fact, ...]
    remediation: str | None
    raters: tuple[str, ...]
    """Rater ids of the roster (empty when the rows are blank)."""
    blank_rows: int
    """Blank rows per round when there is no roster, else 0."""
    rounds: tuple[RoundForm, ...]


@dataclass(frozen=True)
class SiteChecklist:
    id: str
    name: str
    country: str | None
    pools: tuple[PoolChecklist, ...]

    @property
    def heading(self) -> str:
        if self.id == CENTRAL:
            return self.name
        # "country NO", not a bare "NO", which reads as the word "no".
        return f"{self.name} (site {self.id}{', country ' + self.country if self.country else ''})"


@dataclass(frozen=True)
class ChecklistContext:
    control: DocumentControl
    rating_ends: date
    sites: tuple[SiteChecklist, ...]
    unmonitored_pools: tuple[str, ...]
    round_count: int
    only_site: SiteChecklist | None = None
    """The site this copy is for (``render checklist --site``), None for the whole study."""
    grid: FormGrid = GRID

    @property
    def pdf_images(self) -> tuple[PdfImage, ...]:
        """The generated images the PDF edition refers to: the grid's column rules."""
        return (self.grid.column_rules_image,)


def interval_words(weeks: int) -> str:
    return "every week" if weeks == 1 else f"every {weeks} weeks"


def checklist_context(loaded: LoadedPlan, paper: str = "a4", site: str | None = None,
                      check: DocumentCheck | None = None) -> ChecklistContext:
    """The monitoring checklist, for every site or, with ``site``, for one site's copy.

    Raises ``ValueError`` for a ``site`` the plan does not name, and :class:`LocatedError` for
    a plan whose checklist would be longer than :data:`MAX_FORM_ROWS` rows.
    """
    plan = valid_plan(loaded)
    only = _chosen_site(plan, site)
    _refuse_oversized(loaded, plan, only.id if only else None)
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
            if only is not None and site_id != only.id:
                continue
            raters = _rostered(plan, pool, site_id)
            blank = 0 if raters else _blank_rows(pool)
            labels = raters or tuple(f"{n}." for n in range(1, blank + 1))
            forms = tuple(RoundForm(r.number, r.due, r.covers_from, r.close_out, labels) for r in site_rounds)
            by_site.setdefault(site_id, []).append(PoolChecklist(
                pool_id=pool.id, label=f"{pool.label} — {interval_words(pool.monitoring.interval_weeks)}",  # type: ignore[union-attr,arg-type]
                instruments=instruments, what_to_check=what, remediation=pool.monitoring.remediation,  # type: ignore[union-attr]
                raters=raters, blank_rows=blank, rounds=forms))
    sites = [SiteChecklist(s.id, s.name, s.country, tuple(by_site[s.id])) for s in plan.study.sites if s.id in by_site]
    if CENTRAL in by_site:
        sites.append(SiteChecklist(CENTRAL, CENTRAL_NAME, None, tuple(by_site[CENTRAL])))
    count = sum(len(p.rounds) for s in sites for p in s.pools)
    return ChecklistContext(document_control(loaded, "checklist", paper, check), study_window(plan).last, tuple(sites),
                            tuple(unmonitored), count, only)


def site_choices(plan: Plan) -> tuple[str, ...]:
    """The ids ``--site`` accepts: the plan's sites, and ``central`` when a pool rates centrally."""
    ids = [s.id for s in plan.study.sites]
    if any(pool.is_central for pool in plan.rater_pools):
        ids.append(CENTRAL)
    return tuple(ids)


def _chosen_site(plan: Plan, site: str | None) -> SiteChecklist | None:
    if site is None:
        return None
    choices = site_choices(plan)
    if site not in choices:
        raise ValueError(f"unknown site {site!r}{did_you_mean(site, choices)}; "
                         f"the plan's sites are: {', '.join(choices) or 'none'}")
    if site == CENTRAL:
        return SiteChecklist(CENTRAL, CENTRAL_NAME, None, ())
    chosen = next(s for s in plan.study.sites if s.id == site)
    return SiteChecklist(chosen.id, chosen.name, chosen.country, ())


def _rostered(plan: Plan, pool: RaterPool, site_id: str) -> tuple[str, ...]:
    return tuple(r.id for r in rostered_raters(plan, pool.id, site_id))


def _blank_rows(pool: RaterPool) -> int:
    # Checked against MAX_BLANK_ROWS by _refuse_oversized before any row is made.
    return int(pool.raters_per_site) if pool.raters_per_site else DEFAULT_BLANK_ROWS


def _refuse_oversized(loaded: LoadedPlan, plan: Plan, site: str | None) -> None:
    """Refuse a checklist longer than MAX_FORM_ROWS, counting from the plan's numbers alone.

    Rounds are counted from each pool's rating spans and interval, rows from the roster or
    ``raters_per_site``, so an absurd number is refused before anything is allocated.
    """
    total = 0
    largest: tuple[int, tuple[str | int, ...]] | None = None
    for pool in plan.rater_pools:
        weeks = pool.monitoring.interval_weeks if pool.monitoring else None
        if not weeks:
            continue
        rows = 0
        for span in pool_spans(plan, pool):
            if site is not None and span.site != site:
                continue
            raters = len(_rostered(plan, pool, span.site))
            if not raters and pool.raters_per_site and pool.raters_per_site > MAX_BLANK_ROWS:
                raise _located(loaded, pool.path + ("raters_per_site",),
                               f"the monitoring checklist prints a blank row per rater in every round where the "
                               f"roster lists none, and raters_per_site {pool.raters_per_site:g} is more than the "
                               f"{MAX_BLANK_ROWS} rows a round may have; list the pool's raters in the roster, "
                               f"or state a smaller number")
            raters = raters or _blank_rows(pool)
            # As rounds_between counts them: the regular rounds, and a close-out round when the
            # last one falls before the last rating day (or there is none).
            rounds = max(1, -(-(span.last_rating - span.first_rating).days // (7 * weeks)))
            rows += rounds * (raters + 1)
        total += rows
        if largest is None or rows > largest[0]:
            largest = (rows, pool.monitoring.path + ("interval_weeks",))  # type: ignore[union-attr]
    if total > MAX_FORM_ROWS and largest is not None:
        raise _located(loaded, largest[1],
                       f"the monitoring checklist would have {total:,} rows (rater rows and round headings), "
                       f"more than the {MAX_FORM_ROWS:,} it is made for; "
                       f"{'' if site else 'render one site at a time (--site), or '}check the monitoring interval and the rating period")


def _located(loaded: LoadedPlan, path: tuple[str | int, ...], message: str) -> LocatedError:
    where = loaded.source.source_map.locate(path)
    return LocatedError(loaded.source.file, where.line, where.column, message)
