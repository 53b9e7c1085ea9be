"""Benchmark of ``protolint design`` on a trial-sized pilot.

Target (issue 12): a 200 subjects x 10 raters x 4 occasions pilot (8,000 ratings) read,
balanced, analysed (G-study, D-study) and optimised over k <= 10 raters and m <= 10 occasions
(100 designs, one exact sample-size solve each) within 2 s, in-process and as a whole
``protolint design`` process (interpreter start and imports included).

Prints the figures and exits 0 (``--strict``: exit 1 when a target is missed). The pilot is a
seeded random file written to a temporary folder.
"""

from __future__ import annotations

import argparse
import csv
import statistics
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path[:0] = [str(ROOT), str(ROOT / "bench")]

from _measure import Row, run_child  # noqa: E402  (after the path is set)

TARGET_SECONDS = 2.0
OPTIONS = ["--effect-size", "0.4", "--power", "0.9", "--dropout", "0.1", "--cost-participant", "3000",
           "--cost-rating", "120", "--cost-occasion", "250", "--max-raters", "10", "--max-occasions", "10"]


def write_pilot(path: Path, n_p: int = 200, n_r: int = 10, n_o: int = 4) -> None:
    rng = np.random.default_rng(12)
    x = (rng.normal(20, 5, (n_p, 1, 1)) + rng.normal(0, 1.5, (1, n_r, 1)) + rng.normal(0, 0.5, (1, 1, n_o))
         + rng.normal(0, 1.5, (n_p, n_r, 1)) + rng.normal(0, 1.2, (n_p, 1, n_o)) + rng.normal(0, 2, (n_p, n_r, n_o)))
    with open(path, "w", newline="", encoding="utf-8") as handle:
        writer = csv.writer(handle)
        writer.writerow(["subject", "rater", "occasion", "score"])
        for index in np.ndindex(x.shape):
            writer.writerow([f"P{index[0]:03d}", f"R{index[1]:02d}", f"V{index[2]}", f"{x[index]:.1f}"])


def in_process(path: Path) -> float:
    from protolint.analysis import design

    start = time.perf_counter()
    pilot = design.read_pilot(str(path))
    report = design.analyse(pilot, comparison=design.Comparison(0.4, power=0.9, dropout=0.1),
                            costs=design.Costs(3000, 120, 250), max_raters=10, max_occasions=10,
                            sha256=design.file_sha256(str(path)))
    report.to_json()
    elapsed = time.perf_counter() - start
    assert report.optimisation is not None and len(report.optimisation.frontier) == 100
    return elapsed


def whole_process(path: Path) -> float:
    """Wall seconds of one whole ``design`` process."""
    return run_child([sys.executable, "-m", "protolint", "design", str(path), *OPTIONS, "--format", "json"]).wall


def measure(repeat: int) -> tuple[float, float]:
    """Median seconds of the analysis in-process and of the whole ``design`` process."""
    with tempfile.TemporaryDirectory() as folder:
        path = Path(folder) / "pilot.csv"
        write_pilot(path)
        in_process(path)  # warm-up: imports
        library = statistics.median(in_process(path) for _ in range(repeat))
        process = statistics.median(whole_process(path) for _ in range(repeat))
    return library, process


def rows(quick: bool = False) -> list[Row]:
    """The rows for the combined table (bench/run_all.py)."""
    library, process = measure(3 if quick else 5)
    what = "design, 200 x 10 x 4 pilot, k <= 10, m <= 10 (100 designs)"
    target = f"<= {TARGET_SECONDS:g} s"
    return [Row(f"{what}, in-process (median)", f"{library:.2f} s", target, library <= TARGET_SECONDS),
            Row(f"{what}, whole process (median, wall)", f"{process:.2f} s", target, process <= TARGET_SECONDS)]


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__)
    parser.add_argument("--strict", action="store_true", help="exit 1 when the target is missed")
    parser.add_argument("--repeat", type=int, default=5)
    args = parser.parse_args()
    library, process = measure(args.repeat)
    ok = library <= TARGET_SECONDS and process <= TARGET_SECONDS
    print(f"design 200 x 10 x 4 pilot, search k <= 10, m <= 10 (100 designs): "
          f"in-process {library:.3f} s, whole process {process:.3f} s (target {TARGET_SECONDS:.0f} s) "
          f"{'ok' if ok else 'MISSED'}")
    return 1 if args.strict and not ok else 0


if __name__ == "__main__":
    sys.exit(main())
