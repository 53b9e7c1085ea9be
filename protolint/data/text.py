"""CSV and TSV files (UTF-8, a byte-order mark accepted)."""

from __future__ import annotations

import csv

from protolint.data.source import LINE, Cell, SourceTable
from protolint.data.where import DataError, Where, file_error

# Delimiters people paste by mistake; naming the one found makes the error actionable.
OTHER_DELIMITERS = {";": "semicolon", "\t": "tab", "|": "vertical bar"}


def read_text(path: str, delimiter: str = ",") -> SourceTable:
    """The rows of a delimited text file; blank lines are left out.

    A header that is one field containing another delimiter is refused here, since every
    later message would otherwise be about the wrong thing.
    """
    kind = "tab-separated" if delimiter == "\t" else "comma-separated"
    rows: list[tuple[Cell, ...]] = []
    numbers: list[int] = []
    try:
        with open(path, encoding="utf-8-sig", newline="") as stream:
            reader = csv.reader(stream, delimiter=delimiter, strict=True)
            try:
                for row in reader:
                    if row and any(cell.strip() for cell in row):
                        rows.append(tuple(cell.strip() or None for cell in row))
                        numbers.append(reader.line_num)
            except csv.Error as error:
                raise DataError(Where(path, str(reader.line_num)), f"malformed CSV: {error}") from None
    except (OSError, UnicodeDecodeError) as error:
        raise file_error(path, error) from None
    if not rows:
        raise DataError(Where(path, "1"), "the file is empty; expected a header row")
    header = tuple(str(cell or "") for cell in rows[0])
    if len(header) == 1:
        for other, name in OTHER_DELIMITERS.items():
            if other != delimiter and other in header[0]:
                raise DataError(Where(path, str(numbers[0])), f"the header is one field containing {name}s; the file must be {kind}")
    return SourceTable(
        path=path, format="tsv" if delimiter == "\t" else "csv", detail=kind,
        header=header, rows=tuple(rows[1:]), row_numbers=tuple(numbers[1:]), header_number=numbers[0], style=LINE,
    )
