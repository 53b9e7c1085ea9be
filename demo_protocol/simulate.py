"""Write the SIMULATED rating data of the demo trial into demo_protocol/data/.

Everything this script writes is simulated from a fixed seed for demonstrating protolint. It
is not data from any study and is never used as a check value in the tests.

* certification_hlsc8.csv: 12 recorded certification cases scored by 8 site raters on the
  invented 0-48 lesion composite (interval scale); one rater scores systematically high.
* photo_grades_phg5.csv: 60 photograph sets graded 0-4 by the two central readers (ordinal).
* items_hlsc8.csv: the eight 0-6 item scores of 120 screened participants (for internal
  consistency).

Run: python demo_protocol/simulate.py  (the files are committed; re-running rewrites them
byte for byte).
"""

from __future__ import annotations

import csv
from pathlib import Path

import numpy as np

SEED = 20260715
OUT = Path(__file__).resolve().parent / "data"
HEADER_NOTE = "SIMULATED demo data (invented trial NDS-HD-301); not from any study"


def write(name: str, header: list[str], rows: list[list[object]]) -> None:
    OUT.mkdir(exist_ok=True)
    with open(OUT / name, "w", newline="", encoding="utf-8") as handle:
        writer = csv.writer(handle, lineterminator="\n")
        writer.writerow(header)
        writer.writerows(rows)


def main() -> None:
    rng = np.random.default_rng(SEED)

    # Certification: case severity varies widely (cases are chosen to span the scale).
    cases, raters = 12, 8
    true = rng.uniform(8, 40, size=cases)
    bias = rng.normal(0, 1.2, size=raters)
    bias[5] += 4.0                                  # rater R6 scores about 4 points high
    noise = rng.normal(0, 2.2, size=(cases, raters))
    scores = np.clip(np.rint(true[:, None] + bias[None, :] + noise), 0, 48).astype(int)
    write("certification_hlsc8.csv", ["case"] + [f"R{j + 1}" for j in range(raters)],
          [[f"C{i + 1:02d}", *scores[i]] for i in range(cases)])

    # Photograph grades: a latent severity cut into five grades, read twice with error.
    sets = 60
    latent = rng.normal(2.0, 1.1, size=sets)
    readers = [np.clip(np.rint(latent + rng.normal(0, 0.45, size=sets)), 0, 4).astype(int) for _ in range(2)]
    rows: list[list[object]] = [[f"P{i + 1:03d}", readers[0][i], readers[1][i]] for i in range(sets)]
    for missing in (7, 33):                         # two sets the second reader could not grade
        rows[missing][2] = ""
    write("photo_grades_phg5.csv", ["photo_set", "reader_A", "reader_B"], rows)

    # Items: one common severity factor plus item-specific noise.
    people, items = 120, 8
    severity = rng.normal(0, 1, size=people)
    loadings = rng.uniform(0.6, 0.9, size=items)
    raw = severity[:, None] * loadings[None, :] + rng.normal(0, 0.6, size=(people, items))
    item_scores = np.clip(np.rint(3 + 1.3 * raw), 0, 6).astype(int)
    write("items_hlsc8.csv", ["participant"] + [f"item{j + 1}" for j in range(items)],
          [[f"S{i + 1:03d}", *item_scores[i]] for i in range(people)])

    (OUT / "README.md").write_text(
        f"# {HEADER_NOTE}\n\nWritten by `demo_protocol/simulate.py` (seed {SEED}). "
        "Used by `make demo` to show `protolint agreement` and `protolint consistency`.\n",
        encoding="utf-8")


if __name__ == "__main__":
    main()
