"""Rows of long data as text by role, each with its place: the input of `drift` and `design`.

Those commands validate their own columns (dates, scores, case ids); they take these rows
instead of reading a file themselves, so every format and option of the shared reader
reaches them with one function call.
"""

from __future__ import annotations

from dataclasses import dataclass

from protolint.data.provenance import Provenance
from protolint.data.readers import read_source
from protolint.data.roles import ReadOptions, select_rows
from protolint.data.source import cell_text
from protolint.data.where import Where


@dataclass(frozen=True)
class Record:
    """One data row: the text of each mapped role ("" when empty) and where it is."""

    values: dict[str, str]
    where: Where
    cells: dict[str, Where]


@dataclass(frozen=True)
class Records:
    rows: tuple[Record, ...]
    provenance: Provenance


def read_records(path: str, options: ReadOptions | None, roles: tuple[str, ...], required: tuple[str, ...] = ()) -> Records:
    """The rows of ``path`` with ``roles`` mapped to columns (by option, preset, or a column
    named like the role), filtered, and with not-done and score-less rows skipped."""
    options = options or ReadOptions()
    source = read_source(path, options.input_format, options.sheet)
    selection = select_rows(source, options, roles, required)
    rows = tuple(
        Record(
            values={role: cell_text(source.rows[i][column]) for role, column in selection.roles.items()},
            where=source.where(i),
            cells={role: source.where(i, column) for role, column in selection.roles.items()},
        )
        for i in selection.rows
    )
    mapped = tuple((role, source.header[column]) for role, column in selection.roles.items())
    provenance = Provenance(file=path, format=source.format, detail=source.detail, layout="long",
                            rows_read=len(source.rows), rows_used=len(rows), skipped=selection.skipped, columns=mapped)
    return Records(rows=rows, provenance=provenance)


def read_role_rows(path: str, options: ReadOptions | None, roles: tuple[str, ...], required: tuple[str, ...] = (),
                   keep: tuple[str, ...] = (), skip_missing_score: bool = True) -> tuple[list[tuple[int, list[str]]], Provenance]:
    """Rows of text with the file's row numbers, header first, each column renamed to its role.

    The shape a command's own validation of delimited text takes (``[(line, cells), …]``), so
    a command that validated its CSV rows reads every format and option by calling this
    instead of its CSV reader. Only the roles found appear, in the order of ``roles``; the
    numbers are text lines, worksheet rows or record numbers (the provenance's ``format`` says
    which). ``keep`` names further columns passed through under their own name when present
    (e.g. a command's own optional columns that are not roles). ``skip_missing_score=False``
    keeps rows without a score for a command that counts them itself.
    """
    options = options or ReadOptions()
    source = read_source(path, options.input_format, options.sheet)
    selection = select_rows(source, options, roles, required, skip_missing_score)
    order = [role for role in roles if role in selection.roles]
    columns = [selection.roles[role] for role in order]
    for name in keep:
        found = [i for i, header in enumerate(source.header) if header.casefold() == name.casefold()]
        if found and name not in order:
            order.append(name)
            columns.append(found[0])
    rows: list[tuple[int, list[str]]] = [(source.header_number, list(order))]
    rows += [(source.row_numbers[i], [cell_text(source.rows[i][c]) for c in columns]) for i in selection.rows]
    mapped = tuple((role, source.header[column]) for role, column in zip(order, columns))
    provenance = Provenance(file=path, format=source.format, detail=source.detail, layout="long",
                            rows_read=len(source.rows), rows_used=len(rows) - 1, skipped=selection.skipped, columns=mapped)
    return rows, provenance
