"""Corpus inputs that are binary (workbooks, SAS transport) or too large to commit, written at
test time with the libraries' own writers. Each function writes one file into ``folder`` and
returns its path; the manifest names them under ``generate:``."""

from __future__ import annotations

import os
import zipfile
from collections.abc import Callable
from pathlib import Path

GENERATORS: dict[str, Callable[[Path], Path]] = {}


def generator(function: Callable[[Path], Path]) -> Callable[[Path], Path]:
    GENERATORS[function.__name__] = function
    return function


def _workbook(folder: Path, name: str, rows: list[list[object]], merge: str | None = None) -> Path:
    import openpyxl

    book = openpyxl.Workbook()
    sheet = book.active
    sheet.title = "Ratings"
    for row in rows:
        sheet.append(row)
    if merge:
        sheet.merge_cells(merge)
    path = folder / name
    book.save(path)
    return path


_GOOD = [["subject", "r1", "r2"], ["S01", 3, 4], ["S02", 2, 5], ["S03", 3, 3]]


@generator
def xlsx_merged_header(folder: Path) -> Path:
    return _workbook(folder, "merged_header.xlsx", [["subject", "raters", None], *_GOOD[1:]], merge="B1:C1")


@generator
def xlsx_formula_without_value(folder: Path) -> Path:
    # openpyxl writes formulas without a cached result, as a program that does not calculate would.
    return _workbook(folder, "formula_without_value.xlsx", [*_GOOD[:2], ["S02", "=B2+1", 5], _GOOD[3]])


@generator
def xlsx_empty_sheet(folder: Path) -> Path:
    return _workbook(folder, "empty_sheet.xlsx", [])


@generator
def xlsx_value_beyond_header(folder: Path) -> Path:
    return _workbook(folder, "value_beyond_header.xlsx", [*_GOOD[:2], ["S02", 2, 5, 9], _GOOD[3]])


@generator
def xlsx_boolean_score(folder: Path) -> Path:
    return _workbook(folder, "boolean_score.xlsx", [*_GOOD[:2], ["S02", True, 5], _GOOD[3]])


@generator
def xlsx_huge_number(folder: Path) -> Path:
    return _workbook(folder, "huge_number.xlsx", [*_GOOD[:2], ["S02", 1e305, 5], _GOOD[3]])


@generator
def xlsx_duplicate_subject(folder: Path) -> Path:
    return _workbook(folder, "duplicate_subject.xlsx", [*_GOOD, ["S01", 4, 4]])


@generator
def xlsx_truncated(folder: Path) -> Path:
    whole = xlsx_huge_number(folder).read_bytes()
    path = folder / "truncated.xlsx"
    path.write_bytes(whole[: len(whole) // 2])
    return path


@generator
def xlsx_broken_sheet_xml(folder: Path) -> Path:
    source = _workbook(folder, "source.xlsx", _GOOD)
    path = folder / "broken_sheet_xml.xlsx"
    with zipfile.ZipFile(source) as old, zipfile.ZipFile(path, "w") as new:
        for item in old.infolist():
            data = old.read(item)
            if item.filename.endswith("sheet1.xml"):
                data = data[: len(data) // 2]
            new.writestr(item, data)
    return path


def _transport(folder: Path, name: str, columns: dict[str, list[object]]) -> Path:
    import pandas as pd
    import pyreadstat

    path = folder / name
    pyreadstat.write_xport(pd.DataFrame(columns), str(path), table_name="RATINGS", file_format_version=5)
    return path


@generator
def xpt_truncated(folder: Path) -> Path:
    whole = _transport(folder, "whole.xpt", {"SUBJECT": ["S01", "S02", "S03"], "R1": [3.0, 2.0, 3.0], "R2": [4.0, 5.0, 3.0]})
    path = folder / "truncated.xpt"
    path.write_bytes(whole.read_bytes()[:-37])
    return path


@generator
def xpt_damaged_records(folder: Path) -> Path:
    whole = _transport(folder, "whole.xpt", {"SUBJECT": ["S01", "S02", "S03"], "R1": [3.0, 2.0, 3.0], "R2": [4.0, 5.0, 3.0]})
    data = bytearray(whole.read_bytes())
    data[80:] = b"\xff" * (len(data) - 80)
    path = folder / "damaged_records.xpt"
    path.write_bytes(bytes(data))
    return path


@generator
def xpt_one_subject(folder: Path) -> Path:
    return _transport(folder, "one_subject.xpt", {"SUBJECT": ["S01"], "R1": [3.0], "R2": [4.0]})


@generator
def xpt_text_score(folder: Path) -> Path:
    return _transport(folder, "text_score.xpt", {"SUBJECT": ["S01", "S02", "S03"], "R1": ["3", "high", "3"], "R2": [4.0, 5.0, 3.0]})


# --- large and endless inputs (run in a subprocess under resource limits) -----------------

@generator
def endless_csv(folder: Path) -> Path:
    path = folder / "endless.csv"
    os.symlink("/dev/zero", path)
    return path


@generator
def sparse_3gb_csv(folder: Path) -> Path:
    path = folder / "sparse_3gb.csv"
    with open(path, "wb") as stream:
        stream.write(b"subject,r1,r2\n")
        stream.truncate(3 * 1024**3)
    return path


@generator
def too_many_cells_csv(folder: Path) -> Path:
    path = folder / "too_many_cells.csv"
    line = "S," + ",".join(["1"] * 99) + "\n"
    with open(path, "w", encoding="utf-8") as stream:
        stream.write("subject," + ",".join(f"r{i}" for i in range(99)) + "\n")
        for _ in range(61_000):
            stream.write(line)
    return path


@generator
def folder_as_input(folder: Path) -> Path:
    path = folder / "ratings_folder.csv"
    path.mkdir()
    return path


@generator
def missing_file(folder: Path) -> Path:
    return folder / "no_such_ratings.csv"
