"""Benchmark `protolint check`: start-up, many plans in one call, and one very large plan.

Every row is measured side by side in one run, each process timed by its CPU time (user +
system, from the operating system's accounting of the child): on a shared machine the wall
clock also counts the time other jobs held the processor, the CPU time only this job's work.
Targets (issue 16):

* one plan: `protolint check demo_protocol/plan.yaml`, whole process, at most 2x the import
  floor `python -c "import yaml, jsonschema, click"` (the least any checker built on these
  libraries can cost);
* 500 distinct, schema-valid plans in one call (the demo with its titles, ids and dates
  varied, so no two are the same file): at most 8 ms a plan, and at most 0.4x a naive script
  that loads each plan with PyYAML's C loader and validates it with jsonschema (format
  checker on), both whole processes; the same with the SARIF report a CI job uploads;
* one plan with 5,000 endpoints within 10 s (generated: the demo plus 5,000 exploratory
  endpoints on the demo's instruments);
* `check` imports none of scipy, matplotlib, weasyprint, pandas, numpy.

``rows()`` returns ``(measure, result, target, met)`` rows for the combined table
(``bench/run_all.py``); running the script prints them. ``--quick`` runs fewer repetitions.
"""

from __future__ import annotations

import argparse
import re
import statistics
import subprocess
import sys
import tempfile
from pathlib import Path

REPO = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(REPO / "bench"))

from _measure import Row, bench_environment, run_child  # noqa: E402  (after the path is set)

DEMO = REPO / "demo_protocol" / "plan.yaml"
SCHEMA = REPO / "schemas" / "plan.schema.json"
HEAVY = ("scipy", "matplotlib", "weasyprint", "pandas", "numpy")
MANY = 500
ENDPOINTS = 5000
ENV = bench_environment()

NAIVE = """\
import json, sys
import jsonschema, yaml
schema = json.load(open(sys.argv[1], encoding="utf-8"))
validator = jsonschema.Draft202012Validator(schema, format_checker=jsonschema.Draft202012Validator.FORMAT_CHECKER)
for path in sys.argv[2:]:
    with open(path, "rb") as file:
        data = yaml.load(file, Loader=yaml.CSafeLoader)
    print(path, len(list(validator.iter_errors(data))))
"""

def cpu_seconds(command: list[str]) -> float:
    """CPU time (user + system) of one run of ``command`` in a fresh process (exit 1: findings
    at or above --fail-on, a normal outcome here)."""
    return run_child(command, ENV, accept=(0, 1)).cpu


def side_by_side(commands: dict[str, list[str]], runs: int) -> dict[str, float]:
    """Median CPU seconds of each command, the commands interleaved run by run (after a warm-up
    of each), so both see the same machine."""
    for command in commands.values():
        cpu_seconds(command)
    times: dict[str, list[float]] = {name: [] for name in commands}
    for _ in range(runs):
        for name, command in commands.items():
            times[name].append(cpu_seconds(command))
    return {name: statistics.median(values) for name, values in times.items()}


def varied_plans(folder: Path, count: int) -> list[str]:
    """``count`` distinct schema-valid plans: the demo with its study id, title and dates varied."""
    text = DEMO.read_text(encoding="utf-8")
    paths = []
    for index in range(count):
        day = 1 + index % 28
        varied = re.sub(r"^plan_date: \d{4}-\d{2}-\d{2}", f"plan_date: 2026-07-{day:02d}", text, count=1, flags=re.M)
        varied = varied.replace("title: ", f"title: Variant {index} of ", 1)
        target = folder / f"plan-{index:04d}.yaml"
        target.write_text(varied, encoding="utf-8")
        paths.append(str(target))
    return paths


def many_endpoints(folder: Path, count: int) -> str:
    """The demo plan plus ``count`` exploratory endpoints (one YAML block each)."""
    text = DEMO.read_text(encoding="utf-8")
    blocks = "".join(
        f"  - id: EP-EXTRA-{index:05d}\n"
        f"    name: Weekly mean itch score, sensitivity analysis {index}\n"
        "    instrument: ITCH-NRS\n"
        "    role: exploratory\n"
        "    analysis: change-from-baseline\n"
        "    visits: [baseline, week-4, week-12, week-26]\n"
        "    rater_pool: SITE-DERM\n"
        "    raters_per_assessment: 1\n"
        "    rating_mode: live\n"
        for index in range(count))
    at = text.index("\nschedule:")
    target = folder / f"plan-{count}-endpoints.yaml"
    target.write_text(text[:at] + "\n" + blocks + text[at:], encoding="utf-8")
    return str(target)


def heavy_imports() -> list[str]:
    result = subprocess.run([sys.executable, "-X", "importtime", "-m", "protolint", "check", str(DEMO), "--fail-on", "never"],
                            cwd=REPO, env=ENV, capture_output=True, text=True)
    modules = {line.rsplit("|", 1)[-1].strip() for line in result.stderr.splitlines() if line.startswith("import time:")}
    return sorted({m.split(".")[0] for m in modules if m.split(".")[0] in HEAVY})


def _ms(seconds: float) -> str:
    return f"{seconds * 1000:.1f} ms" if seconds < 10 else f"{seconds:.1f} s"


def rows(quick: bool = False) -> list[Row]:
    runs = 3 if quick else 7
    check = [sys.executable, "-m", "protolint", "check", "--fail-on", "never"]
    out: list[Row] = []

    single = side_by_side({"check": [*check, str(DEMO)],
                           "floor": [sys.executable, "-c", "import yaml, jsonschema, click"]}, runs * 2)
    ratio = single["check"] / single["floor"]
    out.append(Row("check, one plan (demo), whole process vs import floor (yaml, jsonschema, click)",
                f"{_ms(single['check'])} vs {_ms(single['floor'])} ({ratio:.2f}x)", "<= 2x the floor", ratio <= 2.0))

    with tempfile.TemporaryDirectory() as folder:
        plans = varied_plans(Path(folder), MANY)
        naive = [sys.executable, "-c", NAIVE, str(SCHEMA), *plans]
        many = side_by_side({"text": [*check, *plans], "sarif": [*check, "--format", "sarif", *plans], "naive": naive},
                            max(3, runs // 2))
        naive_per_plan = many["naive"] / MANY
        for name, label in (("text", "text report"), ("sarif", "SARIF report")):
            per_plan = many[name] / MANY
            ratio = many[name] / many["naive"]
            what = f"check, {MANY} distinct valid plans in one call, {label}"
            out.append(Row(f"{what}, time a plan", _ms(per_plan), "<= 8 ms a plan", per_plan <= 0.008))
            out.append(Row(f"{what}, vs naive script (PyYAML C loader + jsonschema)",
                        f"{_ms(per_plan)} vs {_ms(naive_per_plan)} a plan ({ratio:.2f}x)", "<= 0.4x naive", ratio <= 0.4))

        large = many_endpoints(Path(folder), ENDPOINTS)
        seconds = side_by_side({"large": [*check, large]}, 1 if quick else 3)["large"]
        out.append(Row(f"check, one plan with {ENDPOINTS:,} endpoints (1.4 MB), whole process",
                    _ms(seconds), "<= 10 s", seconds <= 10.0))

    heavy = heavy_imports()
    out.append(Row("check, heavy modules imported", ", ".join(heavy) if heavy else "none",
                "none of " + ", ".join(HEAVY), not heavy))
    return out


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--quick", action="store_true", help="fewer repetitions")
    args = parser.parse_args()
    table = rows(quick=args.quick)
    from _table import print_table

    return print_table("check benchmark, CPU time of each process (median)", [r.cells() for r in table],
                       all(r.met for r in table), strict=False)


if __name__ == "__main__":
    sys.exit(main())
