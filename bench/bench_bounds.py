"""Time and peak memory of the analyses on hostile and limit-sized inputs (whole process).

Invented data, for measurement only. Each run is a fresh ``python -m protolint``; its CPU time
(user + system) and peak resident memory come from ``os.wait4``. ``rows()`` gives the rows of
``make bench``'s table; asserts nothing. Targets (ours): every run within 20 s of CPU and
1 GB; the refusals (endless input, too many cells, a bound of ``size``) within 5 s.

Run: python bench/bench_bounds.py (or through bench/run_all.py)
"""

from __future__ import annotations

import os
import subprocess
import sys
import tempfile
from pathlib import Path

import numpy as np

REPO = Path(__file__).resolve().parents[1]


# The command is started by a small launcher process that reports the command's own usage. A
# child forked straight from this (large) benchmark process would inherit its peak memory: Linux
# carries the forking process's resident high-water mark across exec into ru_maxrss.
_LAUNCHER = """
import os, subprocess, sys
process = subprocess.Popen(sys.argv[1:], stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
_, status, usage = os.wait4(process.pid, 0)
print(usage.ru_utime + usage.ru_stime, usage.ru_maxrss, os.waitstatus_to_exitcode(status))
"""


def measure(args: list[str]) -> tuple[float, float, int]:
    """CPU seconds, peak MB and exit code of one whole-process run."""
    done = subprocess.run([sys.executable, "-c", _LAUNCHER, sys.executable, "-m", "protolint", *args], cwd=REPO,
                          capture_output=True, text=True, check=True, env={**os.environ, "PYTHONPATH": str(REPO)})
    cpu, peak_kib, code = done.stdout.split()
    return float(cpu), int(peak_kib) / 1024, int(code)


def write(path: Path, header: str, rows: np.ndarray, fmt: str = "{}") -> Path:
    with open(path, "w", encoding="utf-8") as stream:
        stream.write(header + "\n")
        for i, row in enumerate(rows):
            stream.write(f"S{i}," + ",".join(fmt.format(v) for v in row) + "\n")
    return path


def rows(quick: bool = False) -> list[tuple[str, str, str, bool]]:
    rng = np.random.default_rng(15)
    subjects = 20_000 if quick else 200_000
    out: list[tuple[str, str, str, bool]] = []
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
            out.append((name, f"exit {code}, {seconds:.2f} s CPU, {peak:.0f} MB",
                        f"exit {expected}, <= {seconds_target:g} s, <= 1024 MB", met))
    return out


def main() -> None:
    for measure_name, result, target, met in rows(quick="--quick" in sys.argv):
        print(f"{measure_name:<56} {result:<32} {target:<28} {'yes' if met else 'NO'}")


if __name__ == "__main__":
    main()
