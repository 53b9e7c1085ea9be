"""Long data (one row per rating) mapped to the roles an analysis needs.

A role is what a column means to the analysis: the subject rated, the rater, the score, the
item of a scale, the occasion (visit), the case of a certification set, the reference
(expert) score, the date, the site. Columns are named by options; a preset names them for a
standard layout. Rows can be filtered (``--where``); rows flagged not done or without a score
are skipped and counted, never guessed at.
"""

from __future__ import annotations

from collections import Counter
from dataclasses import dataclass, field

from protolint.data.source import Cell, SourceTable, cell_text
from protolint.data.where import DataError
from protolint.wording import plural

ROLES = ("subject", "rater", "score", "item", "occasion", "case", "reference", "date", "site")

ROLE_HELP = {
    "subject": "the subject (participant, respondent) rated",
    "rater": "the rater (evaluator)",
    "score": "the score",
    "item": "the item of a multi-item scale",
    "occasion": "the occasion (visit number or date) of a repeated rating",
    "case": "the case of a certification or monitoring set",
    "reference": "the reference (expert) score of a case",
    "date": "the date of the rating",
    "site": "the site",
}

# The CDISC SDTM questionnaire (QS) domain: one record per question per subject per visit.
# Candidates are tried in order; the first column present is used. The rater is kept in
# QSEVALID (an evaluator label such as "RATER 1") or QSEVAL (the evaluator's role); a personal
# rater id kept in a supplemental dataset is merged in first and named with --rater.
SDTM_QS = "sdtm-qs"
PRESETS: dict[str, dict[str, tuple[str, ...]]] = {
    SDTM_QS: {
        "subject": ("USUBJID",),
        "item": ("QSTESTCD",),
        "score": ("QSSTRESN",),
        "occasion": ("VISITNUM", "QSDTC"),
        "rater": ("QSEVALID", "QSEVAL"),
        "date": ("QSDTC",),
    },
}
# Per preset: the status column and the value that marks a record not done.
NOT_DONE: dict[str, tuple[str, str]] = {SDTM_QS: ("QSSTAT", "NOT DONE")}
# Per preset: the column that names the instrument, which must be one per analysis.
INSTRUMENT: dict[str, str] = {SDTM_QS: "QSCAT"}


@dataclass(frozen=True)
class ReadOptions:
    """How to read a data file: its format, sheet, column roles, preset and filters."""

    input_format: str | None = None
    sheet: str | None = None
    roles: tuple[tuple[str, str], ...] = ()
    preset: str | None = None
    where: tuple[str, ...] = ()

    @property
    def long(self) -> bool:
        """True when the file is read as one row per rating (roles or a preset given)."""
        return bool(self.roles or self.preset)


@dataclass(frozen=True)
class Condition:
    column: int
    name: str
    value: str
    equal: bool

    def text(self) -> str:
        return f"{self.name}{'=' if self.equal else '!='}{self.value}"


@dataclass(frozen=True)
class Selection:
    """Rows kept for the analysis and the count of each reason for leaving one out."""

    rows: tuple[int, ...]
    roles: dict[str, int]
    skipped: tuple[tuple[str, int], ...]
    notes: tuple[str, ...] = field(default=())


def find_column(source: SourceTable, name: str, option: str) -> int:
    """Index of column ``name`` (exact, else the one matching without regard to case)."""
    if name in source.header:
        return source.header.index(name)
    folded = [i for i, header in enumerate(source.header) if header.casefold() == name.casefold()]
    if len(folded) == 1:
        return folded[0]
    shown = ", ".join(source.header[:30]) + (" …" if len(source.header) > 30 else "")
    raise DataError(source.header_where(), f"no column {name!r} (named by {option}); the columns are: {shown}")


def _optional_column(source: SourceTable, name: str) -> int | None:
    try:
        return find_column(source, name, "")
    except DataError:
        return None


def resolve_roles(source: SourceTable, options: ReadOptions, wanted: tuple[str, ...]) -> dict[str, int]:
    """Column index of each wanted role: options first, then the preset, then a column
    named like the role."""
    given = dict(options.roles)
    preset = PRESETS.get(options.preset or "", {})
    roles: dict[str, int] = {}
    for role in wanted:
        if role in given:
            roles[role] = find_column(source, given[role], f"--{role}")
        elif role in preset:
            found = [i for i in (_optional_column(source, name) for name in preset[role]) if i is not None]
            if found:
                roles[role] = found[0]
        elif not preset:
            found_same = _optional_column(source, role)
            if found_same is not None:
                roles[role] = found_same
    return roles


def parse_conditions(source: SourceTable, where: tuple[str, ...]) -> list[Condition]:
    conditions = []
    for text in where:
        name, equal, value = text, True, ""
        if "!=" in text:
            name, value = text.split("!=", 1)
            equal = False
        elif "=" in text:
            name, value = text.split("=", 1)
        else:
            raise DataError(source.header_where(), f"--where {text!r}: expected COLUMN=VALUE or COLUMN!=VALUE")
        conditions.append(Condition(find_column(source, name.strip(), "--where"), name.strip(), value.strip(), equal))
    return conditions


def _selected(cells: tuple[Cell, ...], conditions: list[Condition]) -> bool:
    # Several COLUMN=VALUE on one column are alternatives; everything else must hold together.
    wanted: dict[int, set[str]] = {}
    for condition in conditions:
        value = cell_text(cells[condition.column])
        if condition.equal:
            wanted.setdefault(condition.column, set()).add(condition.value)
        elif value == condition.value:
            return False
    return all(cell_text(cells[column]) in values for column, values in wanted.items())


def select_rows(source: SourceTable, options: ReadOptions, wanted: tuple[str, ...], required: tuple[str, ...],
                skip_missing_score: bool = True) -> Selection:
    """The rows of ``source`` that enter the analysis, with the reason each other row left.

    ``skip_missing_score=False`` keeps rows without a score, for a caller that counts them.

    Raises
    ------
    DataError
        For a role that is required but has no column, an unknown column in an option or a
        filter, or rows from more than one instrument under a preset.
    """
    roles = resolve_roles(source, options, wanted)
    for role in required:
        if role not in roles:
            hint = ""
            if options.preset == SDTM_QS and role == "rater":
                hint = ("; SDTM QS keeps the evaluator in QSEVALID or QSEVAL, and a personal rater id in a "
                        "supplemental dataset: merge it in and name it with --rater")
            raise DataError(source.header_where(), f"no column for the {role} ({ROLE_HELP[role]}): name it with --{role}{hint}")
    for role, column in roles.items():
        name = source.header[column]
        if sum(1 for header in source.header if header.casefold() == name.casefold()) > 1:
            raise DataError(source.header_where(), f"column {name!r} ({role}) appears more than once in the header; "
                                                   "rename one so the column to read is clear")
    conditions = parse_conditions(source, options.where)
    status = NOT_DONE.get(options.preset or "")
    status_column = _optional_column(source, status[0]) if status else None
    score = roles.get("score")
    counts: Counter[str] = Counter()
    kept: list[int] = []
    filter_reason = "not selected by --where " + " ".join(c.text() for c in conditions) if conditions else ""
    width = len(source.header)
    for index, cells in enumerate(source.rows):
        if len(cells) != width:
            raise DataError(source.where(index), f"row has {plural(len(cells), 'field')}, the header has {width}")
        if conditions and not _selected(cells, conditions):
            counts[filter_reason] += 1
        elif status and status_column is not None and cell_text(cells[status_column]).upper() == status[1]:
            counts[f"not done ({status[0]}={status[1]})"] += 1
        elif skip_missing_score and score is not None and cells[score] is None:
            counts[f"missing score ({source.header[score]})"] += 1
        else:
            kept.append(index)
    notes: list[str] = []
    instrument = INSTRUMENT.get(options.preset or "")
    if instrument is not None:
        instrument_column = _optional_column(source, instrument)
        if instrument_column is not None:
            found = sorted({cell_text(source.rows[i][instrument_column]) for i in kept})
            if len(found) > 1:
                raise DataError(source.header_where(),
                                f"rows from {len(found)} instruments ({instrument}: {', '.join(found[:8])}); "
                                f"choose one with --where {instrument}=VALUE")
    order = [filter_reason, *(f"not done ({s[0]}={s[1]})" for s in ([status] if status else []))]
    skipped = tuple((reason, counts[reason]) for reason in order if counts.get(reason)) + tuple(
        (reason, count) for reason, count in counts.items() if reason not in order)
    return Selection(rows=tuple(kept), roles=roles, skipped=skipped, notes=tuple(notes))
