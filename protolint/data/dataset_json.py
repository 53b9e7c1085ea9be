"""CDISC Dataset-JSON v1.1, as ``.json`` (one object) or ``.ndjson`` (metadata line, then one
array per row).

Layout as in the CDISC Dataset-JSON v1.1 specification (CDISC Data Exchange Standards Team,
final 2024-12-05): top-level ``datasetJSONVersion`` ("1.1" or "1.1.n"), ``records``,
``name``, ``columns`` (each with ``itemOID``, ``name``, ``label``, ``dataType``) and ``rows``
(arrays in column order). Version 1.0 kept the data under ``clinicalData`` or
``referenceData`` → ``itemGroupData``; it is refused with a message rather than guessed at.
Decimal values may be written as JSON strings (the specification allows it); they stay text
here and are parsed as numbers where a number is expected.
"""

from __future__ import annotations

import json
import re
from typing import Any

from protolint.data.source import LINE, RECORD, Cell, SourceTable
from protolint.data.rawfile import MAX_CELLS, decode_text, read_limited, too_many_cells
from protolint.data.where import DataError, Where
from protolint.wording import plural

_VERSION_1_1 = re.compile(r"^1\.1(\.(0|[1-9][0-9]*))?$")


class _NotANumber(ValueError):
    pass


def _refuse_constant(name: str) -> Any:
    # Python's json module reads NaN, Infinity and -Infinity, which JSON itself does not have.
    raise _NotANumber(f"{name} is not JSON (JSON has no NaN or Infinity; write null for a missing value)")


def _integer(text: str) -> Any:
    # A very long integer would exceed Python's 4,300-digit conversion limit; as a float it
    # becomes infinity or a huge number, which the number checks then refuse with a place.
    return int(text) if len(text) <= 18 else float(text)


def _load(path: str, text: str, line: int | None = None) -> Any:
    try:
        return json.loads(text, parse_constant=_refuse_constant, parse_int=_integer)
    except json.JSONDecodeError as error:
        place = f"{line}:{error.colno}" if line is not None else f"{error.lineno}:{error.colno}"
        raise DataError(Where(path, place), f"not valid JSON: {error.msg}") from None
    except _NotANumber as error:
        raise DataError(Where(path, str(line)) if line is not None else Where(path), str(error)) from None
    except RecursionError:
        raise DataError(Where(path), "JSON nested too deeply") from None


def _read_text(path: str) -> str:
    raw = read_limited(path)
    # Every value is at least one byte plus a comma: more commas than cells allowed means
    # more cells than the bound, refused before the parser builds them.
    if raw.data.count(b",") > MAX_CELLS:
        raise too_many_cells(Where(path))
    return decode_text(raw)


def _check_metadata(path: str, meta: Any, where: Where) -> tuple[str, tuple[str, ...], int]:
    if not isinstance(meta, dict):
        raise DataError(where, "expected a Dataset-JSON object with datasetJSONVersion, columns and rows")
    version = meta.get("datasetJSONVersion")
    if "clinicalData" in meta or "referenceData" in meta or (isinstance(version, str) and version.startswith("1.0")):
        raise DataError(
            where,
            f"Dataset-JSON version {version or '1.0'} is not read; export the dataset as Dataset-JSON 1.1 "
            "(1.1 moved the data from clinicalData/itemGroupData to top-level columns and rows)",
        )
    if not isinstance(version, str) or not _VERSION_1_1.match(version):
        raise DataError(where, f"datasetJSONVersion is {version!r}; expected a Dataset-JSON 1.1 version such as '1.1.0'")
    columns = meta.get("columns")
    if not isinstance(columns, list) or not columns:
        raise DataError(where, "'columns' is missing or empty; Dataset-JSON 1.1 lists the variables there")
    names: list[str] = []
    for index, column in enumerate(columns):
        name = column.get("name") if isinstance(column, dict) else None
        if not isinstance(name, str) or not name.strip():
            raise DataError(Where(path, f"columns[{index}]"), "a column without a 'name'")
        names.append(name.strip())
    records = meta.get("records")
    if not isinstance(records, int) or isinstance(records, bool) or records < 0:
        raise DataError(where, f"'records' is {records!r}; Dataset-JSON 1.1 requires the number of rows there")
    label = meta.get("name") or meta.get("itemGroupOID") or "dataset"
    return f"Dataset-JSON {version}, dataset {label}", tuple(names), records


def _cell(path: str, place: str, value: Any, column: str) -> Cell:
    if value is None:
        return None
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, (int, float)):
        return float(value)
    if isinstance(value, str):
        return value.strip() or None
    raise DataError(Where(path, place), f"column {column!r}: a {type(value).__name__} where a single value is expected")


def _row(path: str, place: str, row: Any, names: tuple[str, ...]) -> tuple[Cell, ...]:
    if not isinstance(row, list):
        raise DataError(Where(path, place), "a row must be an array of values in column order")
    if len(row) != len(names):
        raise DataError(Where(path, place), f"the row has {plural(len(row), 'value')}, the columns metadata lists {len(names)}")
    return tuple(_cell(path, place, value, name) for value, name in zip(row, names))


def read_dataset_json(path: str) -> SourceTable:
    """A Dataset-JSON 1.1 file; ``.ndjson`` by extension, ``.json`` otherwise."""
    text = _read_text(path)
    if path.lower().endswith(".ndjson"):
        return _read_ndjson(path, text)
    data = _load(path, text)
    detail, names, records = _check_metadata(path, data, Where(path))
    raw_rows = data.get("rows", [])
    if not isinstance(raw_rows, list):
        raise DataError(Where(path), "'rows' must be an array of row arrays")
    rows = tuple(_row(path, f"row {i}", row, names) for i, row in enumerate(raw_rows, start=1))
    if records != len(rows):
        raise DataError(Where(path), f"'records' says {plural(records, 'row')} but the file holds {len(rows)}; the file may be truncated")
    return SourceTable(path=path, format="dataset-json", detail=detail, header=names, rows=rows,
                       row_numbers=tuple(range(1, len(rows) + 1)), header_number=0, style=RECORD)


def _read_ndjson(path: str, text: str) -> SourceTable:
    lines = text.splitlines()
    numbered = [(number, line) for number, line in enumerate(lines, start=1) if line.strip()]
    if not numbered:
        raise DataError(Where(path, "1"), "the file is empty; expected the metadata object on line 1")
    first_number, first = numbered[0]
    detail, names, records = _check_metadata(path, _load(path, first, first_number), Where(path, str(first_number)))
    rows: list[tuple[Cell, ...]] = []
    numbers: list[int] = []
    for number, line in numbered[1:]:
        rows.append(_row(path, str(number), _load(path, line, number), names))
        numbers.append(number)
    if records != len(rows):
        raise DataError(Where(path, str(first_number)),
                        f"'records' says {plural(records, 'row')} but the file holds {len(rows)}; the file may be truncated")
    return SourceTable(path=path, format="dataset-json", detail=detail + " (NDJSON)", header=names, rows=tuple(rows),
                       row_numbers=tuple(numbers), header_number=first_number, style=LINE)
