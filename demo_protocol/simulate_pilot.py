"""Write the SIMULATED pilot ratings of the demo trial into demo_protocol/pilot/.

Everything this script writes is simulated from a fixed seed for demonstrating
``protolint design``. It is not data from any study and is never used as a check value.

pilot_hlsc8_simulated.csv: 30 invented pilot participants, each rated on the invented 0-48
lesion composite by the same 3 site dermatologists at two visits a week apart (subjects x
raters x occasions), in long form: subject, rater, occasion, score. The variance components
behind the simulation (true-score SD 6, a lenient rater, some participant-by-rater and
participant-by-occasion variation) are chosen to show each source of error.

Run: python demo_protocol/simulate_pilot.py  (the file is committed; re-running rewrites it
byte for byte).
"""

from __future__ import annotations

import csv
from pathlib import Path

import numpy as np

SEED = 20260716
OUT = Path(__file__).resolve().parent / "pilot"
NOTE = "SIMULATED demo data (invented trial NDS-HD-301); not from any study"

SUBJECTS, RATERS, OCCASIONS = 30, 3, 2
# Standard deviations of the simulated effects (points on the 0-48 composite).
SD = {"p": 6.0, "r": 2.0, "o": 0.8, "pr": 2.2, "po": 1.8, "ro": 0.6, "pro": 2.5}


def main() -> None:
    rng = np.random.default_rng(SEED)
    p = rng.normal(26.0, SD["p"], SUBJECTS)
    r = rng.normal(0.0, SD["r"], RATERS)
    o = rng.normal(0.0, SD["o"], OCCASIONS)
    pr = rng.normal(0.0, SD["pr"], (SUBJECTS, RATERS))
    po = rng.normal(0.0, SD["po"], (SUBJECTS, OCCASIONS))
    ro = rng.normal(0.0, SD["ro"], (RATERS, OCCASIONS))
    e = rng.normal(0.0, SD["pro"], (SUBJECTS, RATERS, OCCASIONS))
    score = (p[:, None, None] + r[None, :, None] + o[None, None, :] + pr[:, :, None]
             + po[:, None, :] + ro[None, :, :] + e)
    score = np.clip(np.rint(score), 0, 48).astype(int)
    OUT.mkdir(exist_ok=True)
    with open(OUT / "pilot_hlsc8_simulated.csv", "w", newline="", encoding="utf-8") as handle:
        writer = csv.writer(handle, lineterminator="\n")
        writer.writerow(["subject", "rater", "occasion", "score"])
        for i in range(SUBJECTS):
            for j in range(RATERS):
                for k in range(OCCASIONS):
                    writer.writerow([f"PP{i + 1:02d}", f"DERM-{'ABC'[j]}", f"visit-{k + 1}", score[i, j, k]])
    (OUT / "README.md").write_text(
        f"# {NOTE}\n\nWritten by `demo_protocol/simulate_pilot.py` (seed {SEED}): {SUBJECTS} invented pilot "
        f"participants x {RATERS} site dermatologists x {OCCASIONS} visits on the HLSC-8 total. "
        "Used by `make demo` to show `protolint design`.\n",
        encoding="utf-8")


if __name__ == "__main__":
    main()
