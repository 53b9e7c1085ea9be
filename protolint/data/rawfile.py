"""A data file's bytes, read with a size limit, and its text, decoded strictly.

Every reader takes its input through here, so ``agreement /dev/zero`` or a 3 GB sparse file
costs at most the limit, never the machine's memory: the limit is enforced while reading, not
by asking the file its size first (a device, a pipe or a growing file has no honest size).

Text must be UTF-8 (a byte-order mark is allowed). A file that is not is refused at the
first bad byte with its line and column; so is a NUL byte (UTF-16 without a byte-order mark
looks like text with a NUL after every letter, and would otherwise turn into category labels)
and any other control character except tab, carriage return and line feed.
"""

from __future__ import annotations

import codecs
import hashlib
import os
import stat
from dataclasses import dataclass

from protolint.bounded import read_at_most
from protolint.data.where import DataError, Where, file_error
from protolint.errors import CONTROL_CHARACTERS, line_column

# The largest data file read, and the most cells (values) taken from it. A trial's full export
# of one instrument is ~10^6 ratings (tens of MB; a few million cells in the long layout);
# these bounds are several times that and keep a read under about 1 GB of memory. Our bounds,
# stated in every analysis command's --help.
MAX_DATA_BYTES = 128 * 1024 * 1024
MAX_CELLS = 6_000_000

LIMITS_HELP = (f"Limits: a data file of at most {MAX_DATA_BYTES // (1024 * 1024)} MiB and "
               f"{MAX_CELLS:,} cells.")


def too_many_cells(where: Where) -> DataError:
    return DataError(where, f"more than {MAX_CELLS:,} cells (values) in the file, the most an analysis reads; "
                            "select the rows to analyse (e.g. one instrument or visit) before exporting")

_BOMS = {
    codecs.BOM_UTF32_LE: "UTF-32", codecs.BOM_UTF32_BE: "UTF-32",
    codecs.BOM_UTF16_LE: "UTF-16", codecs.BOM_UTF16_BE: "UTF-16",
}


@dataclass(frozen=True)
class RawFile:
    """The bytes of a data file and their SHA-256 (reports name the exact file analysed)."""

    path: str
    data: bytes

    @property
    def sha256(self) -> str:
        return hashlib.sha256(self.data).hexdigest()


def mib(limit: int) -> str:
    return f"{limit / (1024 * 1024):g} MiB"


def read_limited(path: str, limit: int = MAX_DATA_BYTES) -> RawFile:
    """The file's bytes; a file larger than ``limit`` is refused after reading ``limit + 1`` bytes."""
    try:
        with open(path, "rb") as stream:
            data = read_at_most(stream.read, limit)
    except OSError as error:
        raise file_error(path, error) from None
    if len(data) > limit:
        raise too_large(path, limit)
    return RawFile(path, data)


def too_large(path: str, limit: int = MAX_DATA_BYTES) -> DataError:
    return DataError(Where(path), f"the file is larger than {mib(limit)}, the most a data file may hold; "
                                  "split it or select the rows to analyse before exporting")


def file_on_disk(path: str, kind: str) -> int:
    """The size of a data file that a library opens itself (a workbook, a SAS transport file),
    refused unless it is a regular file within the limit: a regular file's size is honest, so
    the limit is judged from it before the library reads anything. ``kind`` names the format."""
    try:
        info = os.stat(path)
    except OSError as error:
        raise file_error(path, error) from None
    if stat.S_ISDIR(info.st_mode):
        raise file_error(path, IsADirectoryError())
    if not stat.S_ISREG(info.st_mode):
        raise DataError(Where(path), f"not a regular file; {kind} must be a file on disk")
    if info.st_size > MAX_DATA_BYTES:
        raise too_large(path)
    return info.st_size


def decode_text(raw: RawFile) -> str:
    """UTF-8 text of ``raw`` (BOM removed), or a located one-line error."""
    data = raw.data
    for bom, name in _BOMS.items():
        if data.startswith(bom):
            raise DataError(Where(raw.path), f"{name} text (it starts with a {name} byte-order mark); save the file as UTF-8")
    if data.startswith(codecs.BOM_UTF8):
        data = data[len(codecs.BOM_UTF8):]
    nul = data.find(b"\x00")
    if nul >= 0:
        line, column = line_column(data[:nul].decode("utf-8", "replace"))
        looks = data.count(b"\x00") * 3 >= len(data)
        hint = ("; the file looks like UTF-16 text without a byte-order mark: save it as UTF-8" if looks
                else "; a text data file has no NUL bytes (is it a binary file?)")
        raise DataError(Where(raw.path, f"{line}:{column}"), f"NUL byte{hint}")
    try:
        text = data.decode("utf-8")
    except UnicodeDecodeError as error:
        good = data[:error.start].decode("utf-8", "replace")
        line, column = line_column(good)
        byte = data[error.start]
        if error.reason == "unexpected end of data":
            hint = " (the file ends inside a character: is it truncated?)"
        else:
            hint = " (the file looks like Latin-1 or Windows-1252; save it as UTF-8)" if byte >= 0x80 else ""
        raise DataError(Where(raw.path, f"{line}:{column}"),
                        f"not UTF-8 text: byte 0x{byte:02x} at byte offset {error.start}{hint}") from None
    found = CONTROL_CHARACTERS.search(text)
    if found:
        line, column = line_column(text[:found.start()])
        char = found.group(0)
        raise DataError(Where(raw.path, f"{line}:{column}"),
                        f"control character U+{ord(char):04X} in the text; remove it (only tab and line breaks are allowed)")
    return text


def text_attachment(path: str) -> str | None:
    """A data file as text for a PDF report's attachment, or None when it is not text (a
    workbook, a SAS transport file): the report then names the file without attaching it."""
    try:
        return decode_text(read_limited(path))
    except DataError:
        return None
