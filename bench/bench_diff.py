"""Benchmark `protolint diff` and `check --format html`, and the import cost of their libraries.

Prints
* the median import time of deepdiff (with protolint's numpy/pandas guard, and bare, which
  pulls in numpy and pandas when they are installed) and of jsonpatch, each in a fresh process;
* the median whole-process time of `protolint diff` on the demo plan and an amended copy, beside
  `protolint check` on the demo plan (text) and `check --format html`;
* `diff` of the demo plan and a copy whose SOP-IMG-002 text is rewritten at the size limit for an
  SOP text (every line different: the largest unified diff of one text), and the same texts
  compared in process (``compare.texts.bounded_diff``, median of RUNS).

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
        shutil.copytree(DEMO.parent / "sops", Path(folder) / "sops")  # the plan's SOP texts, read beside it
        rewritten = Path(folder) / "rewritten" / "plan.yaml"
        shutil.copytree(DEMO.parent / "sops", rewritten.parent / "sops")
        shutil.copy(DEMO, rewritten)
        old_text, new_text = rewrite_text(DEMO.parent / "sops" / "SOP-IMG-002.md", rewritten.parent / "sops" / "SOP-IMG-002.md")
        python = [sys.executable, "-m", "protolint"]
        commands = {
            "check demo (text)": python + ["check", str(DEMO), "--fail-on", "never"],
            "check demo --format html": python + ["check", str(DEMO), "--fail-on", "never", "--format", "html"],
            "diff demo amended (text)": python + ["diff", str(DEMO), str(amended)],
            "diff demo amended --format json": python + ["diff", str(DEMO), str(amended), "--format", "json"],
            "diff demo, SOP text rewritten (text)": python + ["diff", str(DEMO), str(rewritten)],
        }
        for command in commands.values():
            median_seconds(command, 2)
        for name, command in commands.items():
            print(f"{name:<38} (whole process, median of {RUNS}): {median_seconds(command) * 1000:7.1f} ms")
        print(f"bounded_diff of the rewritten text ({len(new_text) // 1024} KB, in process):   {diff_ms(old_text, new_text):7.1f} ms")


def rewrite_text(original: Path, copy: Path) -> tuple[str, str]:
    """Write ``copy`` as ``original`` followed by distinct invented lines up to the SOP text size limit."""
    from protolint.plan.sop_texts import MAX_TEXT_BYTES

    old = original.read_text(encoding="utf-8")
    lines, size, number = [], 0, 0
    while size + 40 < MAX_TEXT_BYTES:
        line = f"Invented benchmark line {number:06d}.\n"
        lines.append(line)
        size += len(line)
        number += 1
    new = "".join(lines)
    copy.write_text(new, encoding="utf-8")
    return old, new


def diff_ms(old: str, new: str) -> float:
    from protolint.compare.texts import bounded_diff

    values = []
    for _ in range(RUNS):
        started = time.perf_counter()
        bounded_diff(old, new, "old", "new")
        values.append((time.perf_counter() - started) * 1000)
    return statistics.median(values)


if __name__ == "__main__":
    main()
