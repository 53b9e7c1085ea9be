"""Kept for imports written before the readers moved: see :mod:`protolint.data`."""

from __future__ import annotations

from protolint.data import read_rating_table as read_table
from protolint.data.table import RatingTable

import numpy as np
from numpy.typing import NDArray

from protolint.errors import LocatedError

# Delimiters people paste by mistake; naming the one found makes the error actionable.
_OTHER_DELIMITERS = {";": "semicolon", "\t": "tab", "|": "vertical bar"}


@dataclass(frozen=True)
class RatingTable:
    """A subjects x columns table of ratings.

    Attributes
    ----------
    path : str
        The file as given.
    id_header : str
        Header of the first (id) column.
    columns : tuple of str
        Headers of the rating columns (raters, occasions or items).
    subjects : tuple of str
        Subject ids, one per row.
    lines : tuple of int
        1-based file line of each subject row.
    values : ndarray, shape (n_subjects, n_columns)
        Ratings as floats, NaN = missing. For text categories (nominal scale only) the
        value is the index into ``labels``.
    labels : tuple of str or None
        The category labels when the cells are text, sorted; None for numeric cells.
    """

    path: str
    id_header: str
    columns: tuple[str, ...]
    subjects: tuple[str, ...]
    lines: tuple[int, ...]
    values: NDArray[np.float64]
    labels: tuple[str, ...] | None

    @property
    def missing(self) -> int:
        """Number of empty cells."""
        return int(np.isnan(self.values).sum())


def _read_rows(path: str) -> list[tuple[int, list[str]]]:
    try:
        with open(path, encoding="utf-8-sig", newline="") as stream:
            reader = csv.reader(stream, strict=True)
            rows: list[tuple[int, list[str]]] = []
            try:
                for row in reader:
                    if row and any(cell.strip() for cell in row):
                        rows.append((reader.line_num, row))
            except csv.Error as error:
                raise LocatedError(path, reader.line_num, None, f"malformed CSV: {error}") from None
    except FileNotFoundError:
        raise LocatedError(path, None, None, "no such file") from None
    except IsADirectoryError:
        raise LocatedError(path, None, None, "is a directory, expected a CSV file") from None
    except UnicodeDecodeError as error:
        raise LocatedError(path, None, None, f"not UTF-8 text ({error.reason} at byte {error.start})") from None
    except OSError as error:
        raise LocatedError(path, None, None, f"cannot read: {error.strerror}") from None
    return rows


def _parse_number(path: str, line: int, column: str, cell: str, scale_note: str) -> float:
    try:
        value = float(cell)
    except ValueError:
        raise LocatedError(
            path, line, None, f"column {column!r}: {cell!r} is not a number{scale_note}; leave the cell empty for a missing value"
        ) from None
    if not math.isfinite(value):
        raise LocatedError(path, line, None, f"column {column!r}: {cell!r} is not a finite number")
    return value


def read_table(
    path: str,
    *,
    numeric: bool = True,
    kind: str = "rater",
    scale: str | None = None,
    min_columns: int = 2,
    allow_constant: bool = False,
) -> RatingTable:
    """Read a ratings or items CSV file.

    Parameters
    ----------
    path : str
        The CSV file.
    numeric : bool, default True
        Require every non-empty cell to be a number. When False (nominal scale), text
        categories are accepted and coded by their sorted labels.
    kind : str, default "rater"
        What a column is ("rater" or "item"), for messages.
    scale : str, optional
        The scale, named in the message about a non-numeric cell.
    min_columns : int, default 2
        Fewest rating columns accepted.
    allow_constant : bool, default False
        Accept a column with one value throughout (the analysis then warns about it).

    Raises
    ------
    LocatedError
        For an unreadable or empty file, a wrong delimiter, a ragged row, a non-numeric cell
        where numbers are required, a duplicate or empty subject id or header, fewer than
        ``min_columns`` columns or 2 subjects, an empty or a constant column.
    """
    rows = _read_rows(path)
    if not rows:
        raise LocatedError(path, 1, None, f"the file is empty; expected a header row (subject id, then one column per {kind})")
    header_line, header = rows[0]
    if len(header) == 1:
        raw = header[0]
        for delimiter, name in _OTHER_DELIMITERS.items():
            if delimiter in raw:
                raise LocatedError(path, header_line, None, f"the header is one field containing {name}s; the file must be comma-separated")
    header = [h.strip() for h in header]
    if len(header) - 1 < min_columns:
        raise LocatedError(
            path, header_line, None,
            f"found {len(header) - 1} {kind} column(s); expected a subject id column and at least {min_columns} {kind} columns",
        )
    seen: dict[str, int] = {}
    for position, name in enumerate(header[1:], start=2):
        if not name:
            raise LocatedError(path, header_line, None, f"header field {position} is empty; every {kind} column needs a name")
        if name in seen:
            raise LocatedError(path, header_line, None, f"{kind} column {name!r} appears twice in the header (fields {seen[name]} and {position})")
        seen[name] = position
    columns = tuple(header[1:])
    width = len(header)
    scale_note = f" (the scale is {scale})" if scale else ""

    subjects: list[str] = []
    lines: list[int] = []
    cells: list[list[str]] = []
    first_line: dict[str, int] = {}
    for line, row in rows[1:]:
        if len(row) != width:
            hint = ""
            if len(row) == 1 and any(d in row[0] for d in _OTHER_DELIMITERS):
                hint = "; the row does not seem to be comma-separated"
            raise LocatedError(path, line, None, f"row has {len(row)} field(s), the header has {width}{hint}")
        subject = row[0].strip()
        if not subject:
            raise LocatedError(path, line, None, "the subject id (first field) is empty")
        if subject in first_line:
            raise LocatedError(path, line, None, f"subject {subject!r} appears again (first on line {first_line[subject]})")
        first_line[subject] = line
        subjects.append(subject)
        lines.append(line)
        cells.append([cell.strip() for cell in row[1:]])
    if len(subjects) < 2:
        last = rows[-1][0]
        raise LocatedError(path, last, None, f"found {len(subjects)} subject row(s); at least 2 are needed")

    values = np.full((len(subjects), len(columns)), np.nan)
    labels: tuple[str, ...] | None = None
    text_found = False
    if not numeric:
        for row_cells in cells:
            for cell in row_cells:
                if cell:
                    try:
                        float(cell)
                    except ValueError:
                        text_found = True
                        break
            if text_found:
                break
    if text_found:
        labels = tuple(sorted({cell for row_cells in cells for cell in row_cells if cell}))
        index = {label: float(i) for i, label in enumerate(labels)}
        for i, row_cells in enumerate(cells):
            for j, cell in enumerate(row_cells):
                if cell:
                    values[i, j] = index[cell]
    else:
        for i, (line, row_cells) in enumerate(zip(lines, cells)):
            for j, cell in enumerate(row_cells):
                if cell:
                    values[i, j] = _parse_number(path, line, columns[j], cell, scale_note)

    for j, name in enumerate(columns):
        present = values[~np.isnan(values[:, j]), j]
        if present.size == 0:
            raise LocatedError(path, header_line, None, f"{kind} column {name!r} has no values")
        if not allow_constant and present.size >= 2 and np.all(present == present[0]):
            shown = labels[int(present[0])] if labels is not None else f"{present[0]:g}"
            raise LocatedError(
                path, header_line, None,
                f"{kind} column {name!r} has the same value ({shown}) in every row; check the file (a constant column is usually a copy or export error)",
            )
    return RatingTable(
        path=path,
        id_header=header[0],
        columns=columns,
        subjects=tuple(subjects),
        lines=tuple(lines),
        values=values,
        labels=labels,
    )
