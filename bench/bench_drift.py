"""Benchmark ``protolint drift``: 500 raters x 40 monitoring rounds x 5 cases (plus 5
certification cases each), text and JSON, whole process. Target: within 5 s each.

Generates simulated data into a temporary folder (seeded); prints figures, asserts nothing.
Run: python bench/bench_drift.py [--raters N] [--rounds N]
"""

from __future__ import annotations

import argparse
import csv
import os
import sys
import tempfile
from datetime import date, timedelta
from pathlib import Path

import numpy as np

REPO = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(REPO / "bench"))

from _measure import Row, run_child  # noqa: E402  (after the path is set)


def write_data(path: Path, raters: int, rounds: int, cases: int) -> int:
    rng = np.random.default_rng(500)
    start = date(2026, 1, 5)
    reference = rng.integers(5, 45, size=60)
    rows = 0
    with open(path, "w", newline="", encoding="utf-8") as handle:
        writer = csv.writer(handle)
        writer.writerow(["date", "site", "rater", "case", "score", "reference", "kind"])
        for r in range(raters):
            site = f"S{r % 25:02d}"
            bias = rng.normal(0, 0.3)
            drift = 0.05 if r % 20 == 0 else 0.0
            for c in range(cases):
                writer.writerow([start.isoformat(), site, f"R{r:04d}", f"C{c:02d}",
                                 int(reference[c] + round(rng.normal(bias, 1.5))), reference[c], "certification"])
                rows += 1
            for k in range(rounds):
                day = (start + timedelta(weeks=4 * (k + 1))).isoformat()
                for c in rng.choice(np.arange(5, 60), size=cases, replace=False):
                    score = int(reference[c] + round(rng.normal(bias + drift * k, 1.5)))
                    writer.writerow([day, site, f"R{r:04d}", f"C{c:02d}", score, reference[c], "monitoring"])
                    rows += 1
    return rows


def run(args: list[str]) -> tuple[float, float]:
    """Wall-clock and CPU seconds (user + system) of one whole ``protolint drift`` process.

    CPU time is printed beside the wall clock because the benchmark machine is shared: under
    load the wall clock measures the neighbours as much as the command.
    """
    child = run_child([sys.executable, "-m", "protolint", "drift", *args, "--fail-on", "never"])
    return child.wall, child.cpu


TARGET_SECONDS = 5.0


def rows(quick: bool = False) -> list[Row]:
    """``(measure, result, target, met)`` rows for the combined table (bench/run_all.py): each
    format's whole process at 500 raters x 40 rounds x 5 cases, median CPU time of 3 runs."""
    out = []
    with tempfile.TemporaryDirectory() as folder:
        data = Path(folder) / "ratings.csv"
        count = write_data(data, 500, 40, 5)
        for fmt in ("text", "json"):
            runs = [run([str(data), "--format", fmt, "--output", str(Path(folder) / f"out.{fmt}")])
                    for _ in range(1 if quick else 3)]
            cpu = sorted(r[1] for r in runs)[len(runs) // 2]
            wall = sorted(r[0] for r in runs)[len(runs) // 2]
            out.append(Row(f"drift, 500 raters x 40 rounds x 5 cases ({count:,} rows), --format {fmt}, whole process",
                        f"{cpu:.2f} s CPU ({wall:.2f} s wall)", f"<= {TARGET_SECONDS:g} s", cpu <= TARGET_SECONDS))
    return out


def main() -> None:
    parser = argparse.ArgumentParser()
    parser.add_argument("--raters", type=int, default=500)
    parser.add_argument("--rounds", type=int, default=40)
    parser.add_argument("--cases", type=int, default=5)
    ns = parser.parse_args()
    with tempfile.TemporaryDirectory() as folder:
        data = Path(folder) / "ratings.csv"
        rows = write_data(data, ns.raters, ns.rounds, ns.cases)
        print(f"drift: {ns.raters} raters x {ns.rounds} rounds x {ns.cases} cases = {rows} rows")
        for fmt in ("text", "json"):
            wall, cpu = min(run([str(data), "--format", fmt, "--output", str(Path(folder) / f"out.{fmt}")]) for _ in range(3))
            print(f"  --format {fmt:<5} wall {wall:6.2f} s, CPU {cpu:6.2f} s  (target 5 s)")
        wall, cpu = min(run(["--help"]) for _ in range(3))
        print(f"  import floor (drift --help) wall {wall:.2f} s, CPU {cpu:.2f} s")
        print(f"  load average at the end: {os.getloadavg()[0]:.1f}")


if __name__ == "__main__":
    main()
