"""Reading trial-sized long rating data in every format (a measurement that prints figures).

Invented data, for timing only: 20,000 subjects x 3 raters = 60,000 rows of long data, read
through `protolint.data.read_rating_table` with --subject/--rater/--score roles, from CSV,
.xlsx, Dataset-JSON, NDJSON and SAS transport files written by the libraries' own writers.
"""

from __future__ import annotations

import json
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from protolint.data import ReadOptions, read_rating_table  # noqa: E402

N_SUBJECTS, N_RATERS = 20_000, 3


def main() -> None:
    import pandas as pd
    import pyreadstat

    rng = np.random.default_rng(7)
    true = rng.normal(20, 5, N_SUBJECTS)
    rows = [(f"S{i:05d}", f"R{r}", float(round(true[i] + rng.normal(0, 2)))) for i in range(N_SUBJECTS) for r in range(N_RATERS)]
    frame = pd.DataFrame(rows, columns=["SUBJ", "RATER", "SCORE"])
    options = ReadOptions(roles=(("subject", "SUBJ"), ("rater", "RATER"), ("score", "SCORE")))
    with tempfile.TemporaryDirectory() as folder:
        base = Path(folder)
        paths = {"csv": base / "r.csv", "xlsx": base / "r.xlsx", "json": base / "r.json", "ndjson": base / "r.ndjson",
                 "xpt": base / "r.xpt"}
        frame.to_csv(paths["csv"], index=False)
        frame.to_excel(paths["xlsx"], index=False, engine="openpyxl")
        meta = {"datasetJSONCreationDateTime": "2026-01-01T00:00:00", "datasetJSONVersion": "1.1.0",
                "itemGroupOID": "IG.R", "records": len(rows), "name": "R", "label": "invented",
                "columns": [{"itemOID": f"IT.{c}", "name": c, "label": c, "dataType": t}
                            for c, t in zip(frame.columns, ("string", "string", "double"))]}
        paths["json"].write_text(json.dumps({**meta, "rows": [list(r) for r in rows]}))
        paths["ndjson"].write_text("\n".join([json.dumps(meta), *(json.dumps(list(r)) for r in rows)]) + "\n")
        pyreadstat.write_xport(frame, str(paths["xpt"]), table_name="R", file_format_version=5)
        print(f"{len(rows):,} rows ({N_SUBJECTS:,} subjects x {N_RATERS} raters), long layout")
        for name, path in paths.items():
            start = time.perf_counter()
            table = read_rating_table(str(path), options)
            elapsed = time.perf_counter() - start
            assert table.values.shape == (N_SUBJECTS, N_RATERS)
            print(f"  {name:<7} {elapsed:6.2f} s  ({path.stat().st_size / 1e6:5.1f} MB)")


if __name__ == "__main__":
    main()
