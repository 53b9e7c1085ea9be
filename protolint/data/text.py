"""CSV and TSV files (UTF-8, a byte-order mark accepted)."""

from __future__ import annotations

import csv
import io

from protolint.data.rawfile import MAX_CELLS, decode_text, read_limited, too_many_cells
from protolint.data.source import LINE, Cell, SourceTable
from protolint.data.where import DataError, Where

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
    text = decode_text(read_limited(path))
    reader = csv.reader(io.StringIO(text, newline=""), delimiter=delimiter, strict=True)
    cells = 0
    try:
        for row in reader:
            if row and any(cell.strip() for cell in row):
                cells += len(row)
                if cells > MAX_CELLS:
                    raise too_many_cells(Where(path, str(reader.line_num)))
                rows.append(tuple(cell.strip() or None for cell in row))
                numbers.append(reader.line_num)
    except csv.Error as error:
        raise DataError(Where(path, str(reader.line_num)), f"malformed CSV: {error}") from None
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
