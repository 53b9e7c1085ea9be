"""SAS transport files (``.xpt``, version 5 as regulators receive them) through pyreadstat.

pyreadstat (the ReadStat C library) reads the file; its ``dict`` output needs neither pandas
nor polars. A version 5 file is a sequence of 80-byte records, so a size that is not a
multiple of 80 means a truncated or damaged file, which is refused before reading.
"""

from __future__ import annotations

import datetime as dt
import math
from typing import Any

from protolint.data.source import RECORD, Cell, SourceTable
from protolint.data.rawfile import MAX_CELLS, file_on_disk, too_many_cells
from protolint.data.where import DataError, Where, file_error

_V5_HEADER = b"HEADER RECORD*******LIBRARY HEADER RECORD!!!!!!!"
_V8_HEADER = b"HEADER RECORD*******LIBV8   HEADER RECORD!!!!!!!"


def _cell(value: Any) -> Cell:
    if value is None:
        return None
    if isinstance(value, float):
        return None if math.isnan(value) else value
    if isinstance(value, int):
        return float(value)
    if isinstance(value, dt.datetime) and value.time() == dt.time(0):
        return value.date().isoformat()
    if isinstance(value, (dt.date, dt.time)):
        # pyreadstat turns numbers with a SAS date, time or datetime format into these.
        return value.isoformat()
    text = str(value).strip()
    return text or None


def read_transport(path: str) -> SourceTable:
    """The first (normally the only) dataset of a SAS transport file."""
    size = file_on_disk(path, "a SAS transport file")
    try:
        with open(path, "rb") as stream:
            head = stream.read(80)
    except OSError as error:
        raise file_error(path, error) from None
    if head.startswith(_V8_HEADER):
        version = "8"
    elif head.startswith(_V5_HEADER):
        version = "5"
    else:
        raise DataError(Where(path), "not a SAS transport (.xpt) file: the library header record is missing")
    if size % 80:
        raise DataError(Where(path), f"truncated SAS transport file: {size} bytes is not a whole number of 80-byte records")

    import pyreadstat

    try:
        _, about = pyreadstat.read_xport(path, metadataonly=True, output_format="dict")
        width = max(1, len(about.column_names or ()))
        most_rows = MAX_CELLS // width
        data, meta = pyreadstat.read_xport(path, output_format="dict", row_limit=most_rows + 1)
    except Exception as error:  # ReadstatError, and others from a damaged file
        raise DataError(Where(path), f"damaged SAS transport file (ReadStat: {type(error).__name__}: {error})") from None
    names = tuple(str(name) for name in data)
    columns = [data[name] for name in data]
    count = len(columns[0]) if columns else 0
    if count > most_rows:
        raise too_many_cells(Where(path, f"row {count}"))
    rows = tuple(tuple(_cell(column[i]) for column in columns) for i in range(count))
    detail = f"SAS transport v{version}, dataset {meta.table_name or 'unnamed'}"
    return SourceTable(path=path, format="xpt", detail=detail, header=names, rows=rows,
                       row_numbers=tuple(range(1, count + 1)), header_number=0, style=RECORD)
