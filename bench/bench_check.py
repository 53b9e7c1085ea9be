"""Benchmark `protolint check`: start-up against the import floor, and throughput.

Prints
* the median whole-process time of `protolint check demo_protocol/plan.yaml`,
* the median time of `python -c "import yaml, jsonschema, click"` (the import floor: the
  least any checker built on these libraries can cost) and the ratio of the two,
* the time per plan when 200 plans are checked in one call,
* heavy modules (scipy, matplotlib, weasyprint, pandas) that `check` imported, if any.

Run with `make bench`. This is a measurement, not a test: it prints and exits 0.
"""

from __future__ import annotations

import shutil
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

REPO = Path(__file__).resolve().parents[1]
DEMO = REPO / "demo_protocol" / "plan.yaml"
RUNS = 15
HEAVY = ("scipy", "matplotlib", "weasyprint", "pandas")


def median_seconds(command: list[str], runs: int = RUNS) -> float:
    times = []
    for _ in range(runs):
        started = time.perf_counter()
        subprocess.run(command, cwd=REPO, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL, check=False)
        times.append(time.perf_counter() - started)
    return statistics.median(times)


def heavy_imports() -> list[str]:
    result = subprocess.run([sys.executable, "-X", "importtime", "-m", "protolint", "check", str(DEMO), "--fail-on", "never"],
                            cwd=REPO, capture_output=True, text=True)
    modules = {line.rsplit("|", 1)[-1].strip() for line in result.stderr.splitlines() if line.startswith("import time:")}
    return sorted(m for m in modules if m.split(".")[0] in HEAVY)


def main() -> None:
    check = [sys.executable, "-m", "protolint", "check", str(DEMO), "--fail-on", "never"]
    floor = [sys.executable, "-c", "import yaml, jsonschema, click"]
    # Interleave warm-up runs so both commands see warm file caches.
    median_seconds(check, 2), median_seconds(floor, 2)
    check_s = median_seconds(check)
    floor_s = median_seconds(floor)
    print(f"check demo plan (whole process, median of {RUNS}): {check_s * 1000:7.1f} ms")
    print(f"import floor yaml+jsonschema+click (median of {RUNS}): {floor_s * 1000:7.1f} ms")
    print(f"ratio: {check_s / floor_s:.2f}x the import floor (target <= 3x)")

    with tempfile.TemporaryDirectory() as folder:
        plans = []
        for index in range(200):
            target = Path(folder) / f"plan-{index:03d}.yaml"
            shutil.copy(DEMO, target)
            plans.append(str(target))
        many = [sys.executable, "-m", "protolint", "check", *plans, "--fail-on", "never", "--format", "json"]
        many_s = median_seconds(many, runs=3)
    per_plan = (many_s - check_s) / 199
    print(f"200 plans in one call (median of 3): {many_s * 1000:7.1f} ms; "
          f"{per_plan * 1000:.2f} ms per additional plan (target < 20 ms)")

    heavy = heavy_imports()
    print("heavy modules imported by check: " + (", ".join(heavy) if heavy else "none"))


if __name__ == "__main__":
    main()
