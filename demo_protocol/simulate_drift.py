"""Write the SIMULATED certification and monitoring ratings of the demo trial's site raters.

Everything this script writes is simulated from a fixed seed to demonstrate ``protolint drift``.
It is not data from any study and is never used as a check value in the tests.

demo_protocol/data/drift_hlsc8.csv: long form, one row per rating of a reference case on the
invented HLSC-8 composite (0-48), for pool SITE-DERM of demo_protocol/plan.yaml:

* R-S01-A (on the roster) certifies on 2026-08-10, then drifts upwards from the spring of 2027
  (about +0.5 points more each monthly round); their 12-month recertification is overdue.
* R-S02-A (on the roster) fails certification on 2026-09-05 (scores about 6 points high).
* R-S03-A and R-S04-A are stable; they rate but are not on the plan's roster. R-S03-A
  recertifies in August 2027.

Monthly monitoring rounds of 5 reference cases each, from October 2026 to September 2027.
Run: python demo_protocol/simulate_drift.py (re-running rewrites the file byte for byte).
"""

from __future__ import annotations

import csv
from datetime import date, timedelta
from pathlib import Path

import numpy as np

SEED = 20260901
OUT = Path(__file__).resolve().parent / "data" / "drift_hlsc8.csv"
NOISE_SD = 1.6


def main() -> None:
    rng = np.random.default_rng(SEED)
    # A library of 40 reference cases with consensus totals spread over the scale.
    library = {f"REF-{i + 1:02d}": int(round(v)) for i, v in enumerate(rng.uniform(8, 40, size=40))}
    names = list(library)
    rows: list[list[object]] = []

    def rate(day: date, site: str, rater: str, cases: list[str], kind: str, bias: float, noise: float) -> None:
        for case in cases:
            score = int(np.clip(np.rint(library[case] + bias + rng.normal(0, noise)), 0, 48))
            rows.append([day.isoformat(), site, rater, "HLSC-8", case, score, library[case], kind])

    certification_cases = names[:4]                       # the plan certifies on 4 recorded cases
    rate(date(2026, 8, 10), "S01", "R-S01-A", certification_cases, "certification", 0.0, NOISE_SD)
    rate(date(2026, 9, 5), "S02", "R-S02-A", certification_cases, "certification", 6.0, 3.5)
    rate(date(2026, 8, 24), "S03", "R-S03-A", certification_cases, "certification", 0.3, NOISE_SD)
    rate(date(2026, 9, 14), "S04", "R-S04-A", certification_cases, "certification", -0.4, NOISE_SD)

    first_round = date(2026, 10, 6)
    for number in range(12):
        day = first_round + timedelta(weeks=4 * number + number // 3)
        cases = list(rng.choice(names[4:], size=5, replace=False))
        drift = max(0, number - 5) * 0.5                # R-S01-A drifts from the 7th round on
        rate(day, "S01", "R-S01-A", cases, "monitoring", drift, NOISE_SD)
        rate(day + timedelta(days=1), "S03", "R-S03-A", cases, "monitoring", 0.3, NOISE_SD)
        rate(day + timedelta(days=2), "S04", "R-S04-A", cases, "monitoring", -0.4, NOISE_SD)
    rate(date(2027, 8, 20), "S03", "R-S03-A", names[:4], "recertification", 0.3, NOISE_SD)

    rows.sort(key=lambda row: (str(row[0]), str(row[2]), str(row[4])))
    OUT.parent.mkdir(exist_ok=True)
    with open(OUT, "w", newline="", encoding="utf-8") as handle:
        writer = csv.writer(handle, lineterminator="\n")
        writer.writerow(["date", "site", "rater", "instrument", "case", "score", "reference", "kind"])
        writer.writerows(rows)


if __name__ == "__main__":
    main()
