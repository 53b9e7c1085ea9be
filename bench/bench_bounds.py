"""Time and peak memory of the analyses on hostile and limit-sized inputs (whole process).

Invented data, for measurement only. Each run is a fresh ``python -m protolint``; its CPU time
(user + system) and peak resident memory come from ``os.wait4``. ``rows()`` gives the rows of
``make bench``'s table; asserts nothing. Targets (ours): every run within 20 s of CPU and
1 GB; the refusals (endless input, too many cells, a bound of ``size``) within 5 s.

Run: python bench/bench_bounds.py (or through bench/run_all.py)
"""

from __future__ import annotations

import sys
import tempfile
from pathlib import Path

import numpy as np

REPO = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(REPO / "bench"))

from _measure import Row, run_child  # noqa: E402  (after the path is set)


def measure(args: list[str]) -> tuple[float, float, int]:
    """CPU seconds, peak MB and exit code of one whole-process run."""
    run = run_child([sys.executable, "-m", "protolint", *args], accept=None)
    return run.cpu, run.peak_mb, run.code


def write(path: Path, header: str, rows: np.ndarray, fmt: str = "{}") -> Path:
    with open(path, "w", encoding="utf-8") as stream:
        stream.write(header + "\n")
        for i, row in enumerate(rows):
            stream.write(f"S{i}," + ",".join(fmt.format(v) for v in row) + "\n")
    return path


def rows(quick: bool = False) -> list[Row]:
    rng = np.random.default_rng(15)
    subjects = 20_000 if quick else 200_000
    out: list[Row] = []
    with tempfile.TemporaryDirectory() as folder:
        base = Path(folder)
        true = rng.normal(size=(subjects, 1))
        wide = write(base / "wide.csv", "subject,a,b,c", true + rng.normal(size=(subjects, 3)), "{:.4f}")
        distinct = write(base / "distinct.csv", "subject,a,b", rng.permutation(40_000).reshape(20_000, 2))
        labels = write(base / "labels.csv", "subject,a,b", rng.integers(0, 5_000, size=(10_000, 2)), "L{}")
        cells = write(base / "cells.csv", "subject," + ",".join(f"r{i}" for i in range(99)),
                      np.ones((61_000, 99), dtype=int))
        endless = base / "endless.csv"
        endless.symlink_to("/dev/zero")
        runs = [
            (f"agreement {subjects:,} x 3 interval, no bootstrap", ["agreement", str(wide), "--bootstrap", "0"], 0, 20.0),
            (f"agreement {subjects:,} x 3 interval, 1000 replicates", ["agreement", str(wide)], 0, 20.0),
            ("agreement 20,000 x 2 ordinal, 40,000 distinct values", ["agreement", str(distinct), "--scale", "ordinal"], 0, 20.0),
            ("agreement 10,000 x 2 nominal, 5,000 labels", ["agreement", str(labels), "--scale", "nominal"], 0, 20.0),
            ("agreement on /dev/zero: refused", ["agreement", str(endless)], 2, 5.0),
            ("agreement, 6 million cells + 1 row: refused", ["agreement", str(cells)], 2, 5.0),
            ("size --effect-size 1e-300: refused", ["size", "--effect-size", "1e-300"], 2, 5.0),
        ]
        for name, args, expected, seconds_target in runs:
            seconds, peak, code = measure(args)
            met = code == expected and seconds <= seconds_target and peak <= 1024
            out.append(Row(name, f"exit {code}, {seconds:.2f} s CPU, {peak:.0f} MB",
                        f"exit {expected}, <= {seconds_target:g} s, <= 1024 MB", met))
    return out


def main() -> int:
    from _table import print_table

    table = rows(quick="--quick" in sys.argv)
    return print_table("analysis bounds benchmark", [r.cells() for r in table], all(r.met for r in table), strict=False)


if __name__ == "__main__":
    sys.exit(main())
