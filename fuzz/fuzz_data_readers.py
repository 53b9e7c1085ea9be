"""Coverage-guided fuzzing (atheris) of the data readers: CSV/TSV, Dataset-JSON (.json and
.ndjson), .xlsx and SAS transport, through the shared reader and the wide/long table builder.

The only acceptable outcomes for any bytes are a table or a ``DataError`` (one located line);
any other exception is a finding, and atheris stops with the input that caused it. Run by
``make fuzz`` a fixed number of iterations; not part of ``make test``.

    python fuzz/fuzz_data_readers.py -runs=20000 [corpus folder]
"""

from __future__ import annotations

import os
import sys
import tempfile

import atheris

with atheris.instrument_imports(include=["protolint"]):
    # Every reader module imported here, so coverage guidance sees inside them (the package
    # imports them lazily otherwise).
    from protolint.data import DataError, ReadOptions, read_rating_table
    from protolint.data import dataset_json, rawfile, readers, roles, source, table, text, transport, workbook  # noqa: F401
    from protolint.data.records import read_role_rows

# Seeds: one small valid file per format, so mutations start inside each grammar.
SEEDS = {
    ".csv": b"subject,r1,r2\nS01,3,4\nS02,2,5\nS03,4,4\n",
    ".tsv": b"subject\tr1\tr2\nS01\t3\t4\nS02\t2\t5\n",
    ".json": (b'{"datasetJSONVersion": "1.1.0", "records": 2, "name": "R", "columns": [{"itemOID": "A", "name": "subject"}, '
              b'{"itemOID": "B", "name": "r1"}, {"itemOID": "C", "name": "r2"}], "rows": [["S01", 3, 4], ["S02", 2, 5]]}'),
    ".ndjson": (b'{"datasetJSONVersion": "1.1.0", "records": 2, "name": "R", "columns": [{"itemOID": "A", "name": "subject"}, '
                b'{"itemOID": "B", "name": "r1"}, {"itemOID": "C", "name": "r2"}]}\n["S01", 3, 4]\n["S02", 2, 5]\n'),
}
EXTENSIONS = (".csv", ".tsv", ".json", ".ndjson", ".xlsx", ".xpt")
FOLDER = tempfile.mkdtemp(prefix="protolint-fuzz-")


def one_input(data: bytes) -> None:
    if not data:
        return
    # The first byte picks the format and the reading; the rest is the file.
    choice, body = data[0], data[1:]
    extension = EXTENSIONS[choice % len(EXTENSIONS)]
    if extension in SEEDS and choice & 0x80:
        body = SEEDS[extension] + body
    path = os.path.join(FOLDER, "input" + extension)
    with open(path, "wb") as stream:
        stream.write(body)
    try:
        if choice & 0x40:
            read_role_rows(path, ReadOptions(), ("subject", "rater", "score"), skip_missing_score=False)
        else:
            read_rating_table(path, ReadOptions(), numeric=not choice & 0x20, allow_constant=True)
    except DataError as error:
        message = error.format_message()
        if "\n" in message or "\r" in message:
            raise AssertionError(f"a message on more than one line: {message!r}") from None


def main() -> None:
    atheris.Setup(sys.argv, one_input)
    atheris.Fuzz()


if __name__ == "__main__":
    main()
