"""Benchmark `protolint diff` and `check --format html`, and the import cost of their libraries.

Prints
* the median import time of deepdiff (with protolint's numpy/pandas guard, and bare, which
  pulls in numpy and pandas when they are installed) and of jsonpatch, each in a fresh process;
* the median whole-process time of `protolint diff` on the demo plan and an amended copy, beside
  `protolint check` on the demo plan (text) and `check --format html`.

Run with `make bench`. This is a measurement, not a test: it prints and exits 0.
"""

from __future__ import annotations

import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

REPO = Path(__file__).resolve().parents[1]
DEMO = REPO / "demo_protocol" / "plan.yaml"
RUNS = 11


def median_seconds(command: list[str], runs: int = RUNS) -> float:
    times = []
    for _ in range(runs):
        started = time.perf_counter()
        subprocess.run(command, cwd=REPO, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL, check=False)
        times.append(time.perf_counter() - started)
    return statistics.median(times)


def import_ms(statement: str) -> float:
    code = f"import time; t = time.perf_counter(); {statement}; print(time.perf_counter() - t)"
    values = []
    for _ in range(RUNS):
        run = subprocess.run([sys.executable, "-c", code], cwd=REPO, capture_output=True, text=True, check=True)
        values.append(float(run.stdout.strip()) * 1000)
    return statistics.median(values)


def main() -> None:
    print(f"import deepdiff, guarded (protolint.compare._deepdiff): {import_ms('from protolint.compare import _deepdiff; _deepdiff()'):7.1f} ms")
    print(f"import deepdiff, bare (loads numpy/pandas if present):   {import_ms('import deepdiff'):7.1f} ms")
    print(f"import jsonpatch:                                         {import_ms('import jsonpatch'):7.1f} ms")
    with tempfile.TemporaryDirectory() as folder:
        amended = Path(folder) / "amended.yaml"
        amended.write_text(DEMO.read_text(encoding="utf-8").replace("interval_weeks: 52", "interval_weeks: 26"), encoding="utf-8")
        python = [sys.executable, "-m", "protolint"]
        commands = {
            "check demo (text)": python + ["check", str(DEMO), "--fail-on", "never"],
            "check demo --format html": python + ["check", str(DEMO), "--fail-on", "never", "--format", "html"],
            "diff demo amended (text)": python + ["diff", str(DEMO), str(amended)],
            "diff demo amended --format json": python + ["diff", str(DEMO), str(amended), "--format", "json"],
        }
        for command in commands.values():
            median_seconds(command, 2)
        for name, command in commands.items():
            print(f"{name:<34} (whole process, median of {RUNS}): {median_seconds(command) * 1000:7.1f} ms")


if __name__ == "__main__":
    main()
