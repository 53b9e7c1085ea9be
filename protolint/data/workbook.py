"""Excel workbooks (``.xlsx``) through openpyxl.

A formula is never evaluated: a formula cell is read as the value the spreadsheet program
stored with it, and refused when the file holds no stored value (a workbook written by a
program that does not calculate). Merged cells are refused: only their first cell holds a
value, so reading them would silently empty the others.
"""

from __future__ import annotations

import datetime as dt
import re
import zipfile
from typing import Any

from protolint.data.source import SHEET, Cell, SourceTable, column_letter
from protolint.data.rawfile import MAX_CELLS, MAX_DATA_BYTES, file_on_disk, mib, too_many_cells
from protolint.data.where import DataError, Where


def _cell(value: Any) -> Cell:
    if value is None:
        return None
    if isinstance(value, bool):
        # Excel's TRUE/FALSE are not ratings; keep the text so the coding step names it.
        return "TRUE" if value else "FALSE"
    if isinstance(value, (int, float)):
        return float(value)
    if isinstance(value, (dt.datetime, dt.date)):
        if isinstance(value, dt.datetime) and value.time() == dt.time(0):
            value = value.date()
        return value.isoformat()
    if isinstance(value, dt.time):
        return value.isoformat()
    text = str(value).strip()
    return text or None


# A merged range is one <mergeCell ref="B1:C1"/> element (any namespace prefix) after the cells.
_MERGE_CELL = re.compile(rb'<(?:[A-Za-z_][\w.-]*:)?mergeCell\b[^>]*?\bref="([^"]+)"')


def _merged_ranges(path: str, worksheet_path: str) -> list[str]:
    # openpyxl's fast read-only mode does not load merged ranges; a search of the sheet's XML
    # for the one element that declares them costs milliseconds, where parsing it again
    # would cost as much as reading the cells.
    with zipfile.ZipFile(path) as archive:
        data = archive.read(worksheet_path.lstrip("/"))
    return [match.group(1).decode("ascii", "replace") for match in _MERGE_CELL.finditer(data)]


def _rows(sheet: Any) -> Any:
    # Plain values are several times faster than cell objects. A formula then reads as its
    # text ("=B3+1"); so does a text cell that starts with "=", and both are resolved by the
    # stored-values pass, which returns the stored result or the text itself.
    return enumerate(sheet.iter_rows(min_row=1, min_col=1, values_only=True), start=1)


# A workbook is a zip archive of XML; what it unpacks to is bounded as well as the file, so a
# small archive that inflates to gigabytes (a "zip bomb") is refused before openpyxl reads it.
MAX_UNPACKED_BYTES = 8 * MAX_DATA_BYTES


def _check_archive(path: str) -> None:
    file_on_disk(path, "an .xlsx workbook")
    try:
        with zipfile.ZipFile(path) as archive:
            unpacked = sum(member.file_size for member in archive.infolist())
    except (zipfile.BadZipFile, OSError, ValueError) as error:
        raise DataError(Where(path), f"not a readable .xlsx workbook ({error})") from None
    if unpacked > MAX_UNPACKED_BYTES:
        raise DataError(Where(path), f"the workbook unpacks to {mib(unpacked)}, more than {mib(MAX_UNPACKED_BYTES)}; "
                                     "save the data as CSV or select the rows to analyse")


def _checked_rows(path: str, sheet: Any) -> Any:
    # A damaged worksheet's XML fails only while its rows are read.
    rows = _rows(sheet)
    while True:
        try:
            item = next(rows)
        except StopIteration:
            return
        except Exception as error:
            raise DataError(Where(path), f"not a readable .xlsx workbook ({type(error).__name__}: {error})") from None
        yield item


def read_workbook(path: str, sheet: str | None = None) -> SourceTable:
    """The rows of one worksheet (``sheet``, default the first)."""
    import openpyxl

    _check_archive(path)

    def load(data_only: bool) -> Any:
        try:
            return openpyxl.load_workbook(path, read_only=True, data_only=data_only)
        except FileNotFoundError:
            raise DataError(Where(path), "no such file") from None
        except Exception as error:  # openpyxl and its XML parser raise many kinds on a damaged file
            raise DataError(Where(path), f"not a readable .xlsx workbook ({type(error).__name__}: {error})") from None

    book = load(data_only=False)
    names = book.sheetnames
    if sheet is None:
        chosen = names[0]
    elif sheet in names:
        chosen = sheet
    else:
        raise DataError(Where(path), f"no sheet {sheet!r} in the workbook; its sheets are {', '.join(map(repr, names))}")
    ws = book[chosen]
    merged = _merged_ranges(path, ws._worksheet_path)
    if merged:
        raise DataError(Where(path, f"{chosen}!{merged[0]}"),
                        "merged cells; unmerge them so every column has its own header and every row its own values")

    table: list[tuple[int, list[Cell]]] = []
    formulas: dict[tuple[int, int], str] = {}
    cell_count = 0
    for number, row in _checked_rows(path, ws):
        cell_count += len(row)
        if cell_count > MAX_CELLS:
            raise too_many_cells(Where(path, f"{chosen}!{number}:{number}"))
        values: list[Cell] = []
        for column, value in enumerate(row):
            if isinstance(value, str) and value.startswith("="):
                formulas[(number, column)] = value
                values.append(None)
            else:
                values.append(_cell(value))
        table.append((number, values))
    book.close()
    text_cells = 0
    if formulas:
        # The values the spreadsheet program stored when it last calculated the formulas.
        stored_book = load(data_only=True)
        for number, row in _checked_rows(path, stored_book[chosen]):
            for column, value in enumerate(row):
                if (number, column) in formulas:
                    if value is None:
                        raise DataError(
                            Where(path, f"{chosen}!{column_letter(column)}{number}"),
                            f"formula {formulas[(number, column)]} has no stored value; formulas are not evaluated: "
                            "open and save the workbook in a spreadsheet program, or paste the values",
                        )
                    table[number - 1][1][column] = _cell(value)
                    if value == formulas[(number, column)]:
                        text_cells += 1  # a text cell that starts with "=", not a formula
        stored_book.close()
    table = [(number, values) for number, values in table if any(v is not None for v in values)]
    if not table:
        raise DataError(Where(path, f"{chosen}!A1"), "the sheet is empty; expected a header row")
    header_number, header_cells = table[0]
    width = len(header_cells)
    while width and header_cells[width - 1] is None:
        width -= 1
    header = tuple("" if cell is None else (cell if isinstance(cell, str) else _number_header(cell)) for cell in header_cells[:width])
    rows: list[tuple[Cell, ...]] = []
    numbers: list[int] = []
    for number, cells in table[1:]:
        beyond = [j for j in range(width, len(cells)) if cells[j] is not None]
        if beyond:
            raise DataError(Where(path, f"{chosen}!{column_letter(beyond[0])}{number}"), "a value in a column that has no header")
        rows.append(tuple(cells[:width]) + (None,) * (width - len(cells[:width])))
        numbers.append(number)
    detail = f"sheet {chosen!r}" + (f" (first of {len(names)})" if sheet is None and len(names) > 1 else "")
    return SourceTable(
        path=path, format="xlsx", detail=detail, header=header, rows=tuple(rows), row_numbers=tuple(numbers),
        header_number=header_number, style=SHEET, sheet=chosen, stored_formula_values=len(formulas) - text_cells,
    )


def _number_header(value: float) -> str:
    return str(int(value)) if float(value).is_integer() else repr(value)
