"""Write the demo's SIMULATED item scores as an SDTM-QS-shaped Dataset-JSON 1.1 file (NDJSON).

Shows `protolint consistency` reading a CDISC export as a data manager would receive it:
``make demo`` writes ``out/demo-qs-hlsc8.ndjson`` from ``demo_protocol/data/items_hlsc8.csv``
and analyses it with ``--columns sdtm-qs``. Same invented trial, same simulated values (so
Cronbach's alpha equals the CSV's), plus what a real export holds: a derived total record per
participant (QSDRVFL = Y), which the analysis leaves out with ``--where QSTESTCD!=HLSC8TOT``,
and a week-2 visit not done for three participants (QSSTAT = NOT DONE), which the reader skips
and counts. Not data from any study; never used as a check value.

Run: python demo_protocol/export_qs.py OUT.ndjson
"""

from __future__ import annotations

import csv
import json
import sys
from pathlib import Path

DATA = Path(__file__).resolve().parent / "data" / "items_hlsc8.csv"
STUDY = "NDS-HD-301"
COLUMNS = [("STUDYID", "string"), ("DOMAIN", "string"), ("USUBJID", "string"), ("QSSEQ", "integer"),
           ("QSTESTCD", "string"), ("QSTEST", "string"), ("QSCAT", "string"), ("QSSTRESN", "double"),
           ("QSSTAT", "string"), ("QSDRVFL", "string"), ("VISITNUM", "double"), ("QSDTC", "string")]


def records() -> list[list[object]]:
    with open(DATA, encoding="utf-8", newline="") as stream:
        rows = [row for row in csv.reader(stream) if row and not row[0].startswith("#")]
    header, body = rows[0], rows[1:]
    out: list[list[object]] = []
    for number, row in enumerate(body):
        subject = f"{STUDY}-{row[0]}"
        seq = 0
        scores = [float(cell) if cell else None for cell in row[1:]]
        for name, score in zip(header[1:], scores):
            seq += 1
            code = f"HLSC8{name[4:].zfill(2)}" if name.startswith("item") else name.upper()
            out.append([STUDY, "QS", subject, seq, code, f"HLSC-8 {name}", "HLSC-8", score, "", "", 1.0, "2026-02-02"])
        seq += 1
        total = sum(s for s in scores if s is not None) if None not in scores else None
        out.append([STUDY, "QS", subject, seq, "HLSC8TOT", "HLSC-8 total", "HLSC-8", total, "", "Y", 1.0, "2026-02-02"])
        if number < 3:
            seq += 1
            out.append([STUDY, "QS", subject, seq, "HLSCALL", "HLSC-8 all items", "HLSC-8", None, "NOT DONE", "", 2.0, ""])
    return out


def main(target: str) -> None:
    rows = records()
    meta = {
        "datasetJSONCreationDateTime": "2026-02-10T09:00:00",
        "datasetJSONVersion": "1.1.0",
        "originator": "SIMULATED demo data (invented trial NDS-HD-301); not from any study",
        "itemGroupOID": "IG.QS",
        "records": len(rows),
        "name": "QS",
        "label": "Questionnaires (SIMULATED demo data)",
        "columns": [{"itemOID": f"IT.QS.{name}", "name": name, "label": name, "dataType": kind} for name, kind in COLUMNS],
    }
    Path(target).parent.mkdir(parents=True, exist_ok=True)
    with open(target, "w", encoding="utf-8", newline="\n") as stream:
        stream.write(json.dumps(meta) + "\n")
        for row in rows:
            stream.write(json.dumps(row) + "\n")


if __name__ == "__main__":
    if len(sys.argv) != 2:
        sys.exit("usage: python demo_protocol/export_qs.py OUT.ndjson")
    main(sys.argv[1])
