"""Subjects x columns rating tables, from either layout.

Wide layout (the default): a header row; one row per subject (or respondent); the first
column is the subject id, every further column one rater, occasion or item; an empty cell is
a missing value. Long layout (roles given, see :mod:`protolint.data.roles`): one row per
rating, turned into the same table, one row per subject (with item and occasion where
given) and one column per rater (or per item).

The steps are separate functions: the header, the rows, the coding of cells as numbers or
categories, and the checks on each column.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np
from numpy.typing import NDArray

from protolint.data.provenance import Provenance
from protolint.data.roles import ReadOptions, select_rows
from protolint.data.source import Cell, SourceTable, cell_text, is_number_text, parse_number
from protolint.data.text import OTHER_DELIMITERS
from protolint.data.where import DataError, Where
from protolint.wording import plural


@dataclass(frozen=True)
class RatingTable:
    """A subjects x columns table of ratings.

    Attributes
    ----------
    path : str
        The file as given.
    id_header : str
        Header of the first (id) column, or the unit's columns joined with " / " (long layout).
    columns : tuple of str
        Headers of the rating columns (raters, occasions or items).
    subjects : tuple of str
        Subject ids, one per row.
    lines : tuple of int
        The file's number of each subject row (its first rating row in the long layout).
    values : ndarray, shape (n_subjects, n_columns)
        Ratings as floats, NaN = missing. For text categories (nominal scale only) the
        value is the index into ``labels``.
    labels : tuple of str or None
        The category labels when the cells are text, sorted; None for numeric cells.
    provenance : Provenance or None
        Rows read, used and skipped, and the columns' roles.
    """

    path: str
    id_header: str
    columns: tuple[str, ...]
    subjects: tuple[str, ...]
    lines: tuple[int, ...]
    values: NDArray[np.float64]
    labels: tuple[str, ...] | None
    provenance: Provenance | None = None

    @property
    def missing(self) -> int:
        """Number of empty cells."""
        return int(np.isnan(self.values).sum())


@dataclass(frozen=True)
class _Grid:
    """Cells arranged as the table before coding; ``place(i, j)`` is where cell (i, j) came
    from (computed only for an error, so large files pay nothing for it)."""

    subjects: list[str]
    lines: list[int]
    cells: list[list[Cell]]
    place: Callable[[int, int], Where]


# --- the header -------------------------------------------------------------------------

def check_header(source: SourceTable, kind: str, min_columns: int) -> tuple[str, ...]:
    """The rating columns' names (every header field after the first), checked."""
    header = source.header
    where = source.header_where()
    if len(header) - 1 < min_columns:
        raise DataError(where, f"found {plural(len(header) - 1, kind + ' column')}; expected a subject id column and at least "
                               f"{min_columns} {kind} columns")
    seen: dict[str, int] = {}
    for position, name in enumerate(header[1:], start=2):
        if not name:
            raise DataError(source.header_where(position - 1) if source.style == "sheet" else where,
                            f"header field {position} is empty; every {kind} column needs a name")
        if name in seen:
            raise DataError(where, f"{kind} column {name!r} appears twice in the header (fields {seen[name]} and {position})")
        seen[name] = position
    return header[1:]


# --- the rows ---------------------------------------------------------------------------

def wide_rows(source: SourceTable, columns: tuple[str, ...]) -> _Grid:
    """One row per subject: ragged rows, empty or repeated subject ids refused."""
    width = len(columns) + 1
    grid = _Grid([], [], [], lambda i, j: source.where(i, j + 1))
    first: dict[str, int] = {}
    for index, row in enumerate(source.rows):
        where = source.where(index)
        if len(row) != width:
            hint = ""
            if len(row) == 1 and isinstance(row[0], str) and any(d in row[0] for d in OTHER_DELIMITERS):
                hint = "; the row does not seem to be comma-separated"
            raise DataError(where, f"row has {plural(len(row), 'field')}, the header has {width}{hint}")
        subject = cell_text(row[0])
        if not subject:
            raise DataError(source.where(index, 0), "the subject id (first field) is empty")
        number = source.row_numbers[index]
        if subject in first:
            raise DataError(source.where(index, 0), f"subject {subject!r} appears again (first on line {first[subject]})")
        first[subject] = number
        grid.subjects.append(subject)
        grid.lines.append(number)
        grid.cells.append(list(row[1:]))
    if len(grid.subjects) < 2:
        last = source.row_numbers[-1] if source.row_numbers else source.header_number
        raise DataError(source.where_number(last), f"found {plural(len(grid.subjects), 'subject row')}; at least 2 are needed")
    return grid


def long_rows(source: SourceTable, options: ReadOptions, column_role: str, unit_roles: tuple[str, ...],
              kind: str, min_columns: int) -> tuple[_Grid, tuple[str, ...], str, Provenance]:
    """One row per rating pivoted to one row per unit and one column per ``column_role``."""
    wanted = (*unit_roles, column_role, "score")
    selection = select_rows(source, options, wanted, required=(column_role, "score"))
    roles = selection.roles
    units = [role for role in unit_roles if role in roles]
    if not any(role in roles for role in ("subject", "case")):
        raise DataError(source.header_where(), "no column for the subject: name it with --subject (or --case)")
    score, across = roles["score"], roles[column_role]
    columns: list[str] = []
    column_index: dict[str, int] = {}
    unit_index: dict[tuple[str, ...], int] = {}
    filled: dict[tuple[int, int], int] = {}
    grid = _Grid([], [], [], lambda i, j: source.where(filled[(i, j)], score))
    for row in selection.rows:
        cells = source.rows[row]
        name = cell_text(cells[across])
        if not name:
            raise DataError(source.where(row, across), f"the {column_role} ({source.header[across]}) is empty")
        key = tuple(cell_text(cells[roles[role]]) for role in units)
        if not key[0]:
            first_role = roles[units[0]]
            raise DataError(source.where(row, first_role), f"the {units[0]} ({source.header[first_role]}) is empty")
        if name not in column_index:
            column_index[name] = len(columns)
            columns.append(name)
            for line in grid.cells:
                line.append(None)
        if key not in unit_index:
            unit_index[key] = len(grid.subjects)
            grid.subjects.append(" / ".join(key))
            grid.lines.append(source.row_numbers[row])
            grid.cells.append([None] * len(columns))
        i, j = unit_index[key], column_index[name]
        if (i, j) in filled:
            first = source.where(filled[(i, j)])
            raise DataError(source.where(row), f"a second score for {' / '.join(key)} by {column_role} {name!r} "
                                               f"(first at {first}); each {column_role} scores each unit once")
        filled[(i, j)] = row
        grid.cells[i][j] = cells[score]
    if len(columns) < min_columns:
        raise DataError(source.header_where(across),
                        f"found {plural(len(columns), kind)} in column {source.header[across]!r}; at least {min_columns} are needed")
    if len(grid.subjects) < 2:
        raise DataError(source.header_where(), f"found {plural(len(grid.subjects), 'unit')} with a score; at least 2 are needed")
    mapped = tuple((role, source.header[index]) for role, index in roles.items())
    provenance = _provenance(source, "long", len(selection.rows), selection.skipped, mapped, selection.notes)
    id_header = " / ".join(source.header[roles[role]] for role in units)
    return grid, tuple(columns), id_header, provenance


# --- coding -----------------------------------------------------------------------------

def _number(cell: Cell, grid: _Grid, i: int, j: int, column: str, number_note: str) -> float:
    try:
        return parse_number(cell)
    except ValueError as error:
        reason = str(error)
        if reason.endswith("is not a number"):
            reason += f"{number_note}; leave the cell empty for a missing value"
        raise DataError(grid.place(i, j), f"column {column!r}: {reason}") from None


def _is_text(cell: Cell) -> bool:
    # A category label: text that is not written as a number ("nan" and "1_00" are labels
    # on a nominal scale, never numbers).
    return isinstance(cell, str) and not is_number_text(cell)


def code_cells(grid: _Grid, columns: tuple[str, ...], numeric: bool, number_reason: str | None) -> tuple[NDArray[np.float64], tuple[str, ...] | None]:
    """Cells as numbers, or (nominal scale, text found) as indices into sorted labels.

    ``number_reason`` says why the cells must be numbers, for the message about one that is
    not: "'x' is not a number; item scores must be numbers; leave the cell empty …"."""
    values = np.full((len(grid.subjects), len(columns)), np.nan)
    number_note = f"; {number_reason}" if number_reason else ""
    text_found = not numeric and any(_is_text(cell) for row in grid.cells for cell in row)
    if text_found:
        labels = tuple(sorted({cell_text(cell) for row in grid.cells for cell in row if cell is not None}))
        index = {label: float(i) for i, label in enumerate(labels)}
        for i, row in enumerate(grid.cells):
            for j, cell in enumerate(row):
                if cell is not None:
                    values[i, j] = index[cell_text(cell)]
        return values, labels
    for i, row in enumerate(grid.cells):
        for j, cell in enumerate(row):
            if cell is not None:
                values[i, j] = _number(cell, grid, i, j, columns[j], number_note)
    return values, None


# --- column checks ----------------------------------------------------------------------

def check_columns(where: Where, columns: tuple[str, ...], values: NDArray[np.float64],
                  labels: tuple[str, ...] | None, kind: str, allow_constant: bool = False) -> None:
    """Refuse a column with no values, or (unless ``allow_constant``) the same value in every
    row (usually an export error)."""
    for j, name in enumerate(columns):
        present = values[~np.isnan(values[:, j]), j]
        if present.size == 0:
            raise DataError(where, f"{kind} column {name!r} has no values")
        if not allow_constant and present.size >= 2 and np.all(present == present[0]):
            shown = labels[int(present[0])] if labels is not None else f"{present[0]:g}"
            raise DataError(where, f"{kind} column {name!r} has the same value ({shown}) in every row; check the file "
                                   "(a constant column is usually a copy or export error)")


def _provenance(source: SourceTable, layout: str, used: int, skipped: tuple[tuple[str, int], ...] = (),
                columns: tuple[tuple[str, str], ...] = (), notes: tuple[str, ...] = ()) -> Provenance:
    if source.stored_formula_values:
        notes = (*notes, f"{plural(source.stored_formula_values, 'formula cell')} read as the values the workbook stored "
                         "(formulas are not evaluated)")
    return Provenance(file=source.path, format=source.format, detail=source.detail, layout=layout,
                      rows_read=len(source.rows), rows_used=used, skipped=skipped, columns=columns, notes=notes)


# --- the whole read ---------------------------------------------------------------------

# Per kind of table: the role that becomes its columns, and the roles that identify a row.
# A command reading such a table offers exactly these roles and "score"
# (``protolint.data.options.TABLE_ROLES``), so no option it accepts is ignored.
LAYOUTS = {
    "rater": ("rater", ("subject", "case", "item", "occasion")),
    "item": ("item", ("subject", "case", "rater", "occasion")),
}


def build_table(source: SourceTable, options: ReadOptions | None = None, *, numeric: bool = True, kind: str = "rater",
                number_reason: str | None = None, min_columns: int = 2, allow_constant: bool = False) -> RatingTable:
    """The rating table of ``source``, wide or (roles given) long; ``number_reason`` says why
    the cells must be numbers, for the message about one that is not (see :func:`code_cells`).

    Raises
    ------
    DataError
        For a short or repeated header, a ragged row, an empty or repeated subject id, a
        non-numeric cell where numbers are required, fewer than ``min_columns`` columns or 2
        subjects, an empty column or (unless ``allow_constant``) a constant one, and (long layout) an unknown column, a missing
        role or a second score for the same unit and rater.
    """
    options = options or ReadOptions()
    if options.long:
        column_role, unit_roles = LAYOUTS.get(kind, LAYOUTS["rater"])
        grid, columns, id_header, provenance = long_rows(source, options, column_role, unit_roles, kind, min_columns)
    else:
        if options.where:
            raise DataError(source.header_where(), "--where applies to long data (one row per rating); name the "
                                                   "columns with --subject, --rater, --score … or --columns")
        columns = check_header(source, kind, min_columns)
        grid = wide_rows(source, columns)
        id_header = source.header[0]
        provenance = _provenance(source, "wide", len(grid.subjects))
    values, labels = code_cells(grid, columns, numeric, number_reason)
    check_columns(source.header_where(), columns, values, labels, kind, allow_constant)
    return RatingTable(path=source.path, id_header=id_header, columns=columns, subjects=tuple(grid.subjects),
                       lines=tuple(grid.lines), values=values, labels=labels, provenance=provenance)
