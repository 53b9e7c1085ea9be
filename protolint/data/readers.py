"""Choose the reader by ``--input-format`` or by the file's extension."""

from __future__ import annotations

import os

from protolint.data.source import FORMATS, SourceTable
from protolint.data.where import DataError, Where

EXTENSIONS = {
    ".csv": "csv", ".txt": "csv", ".tsv": "tsv", ".tab": "tsv", ".xlsx": "xlsx", ".xlsm": "xlsx",
    ".json": "dataset-json", ".ndjson": "dataset-json", ".xpt": "xpt",
}


def detect_format(path: str, input_format: str | None = None) -> str:
    """The format named, else the one the extension implies; CSV when there is none."""
    if input_format:
        if input_format not in FORMATS:
            raise DataError(Where(path), f"--input-format {input_format!r}: expected one of {', '.join(FORMATS)}")
        return input_format
    extension = os.path.splitext(path)[1].lower()
    if not extension:
        return "csv"
    if extension in (".xls", ".ods", ".sas7bdat"):
        raise DataError(Where(path), f"{extension} files are not read; save the data as .xlsx, .csv, Dataset-JSON or SAS transport (.xpt)")
    return EXTENSIONS.get(extension, "csv")


def read_source(path: str, input_format: str | None = None, sheet: str | None = None) -> SourceTable:
    """The header and rows of ``path``, whatever its format."""
    fmt = detect_format(path, input_format)
    if sheet is not None and fmt != "xlsx":
        raise DataError(Where(path), "--sheet applies to .xlsx workbooks only")
    if fmt in ("csv", "tsv"):
        from protolint.data.text import read_text

        return read_text(path, "\t" if fmt == "tsv" else ",")
    if fmt == "xlsx":
        from protolint.data.workbook import read_workbook

        return read_workbook(path, sheet)
    if fmt == "dataset-json":
        from protolint.data.dataset_json import read_dataset_json

        return read_dataset_json(path)
    from protolint.data.transport import read_transport

    return read_transport(path)
