"""One table of every speed target: what `make bench` prints.

Imports every ``bench/bench_*.py`` that has a ``rows()`` function and prints their rows as one
table, ``measure | result | target | met``, headed by the machine's core count, load and
Python version. Every row is a ``_measure.Row``, and every whole-process figure comes from
``_measure.run_child`` (the child's own CPU time and peak memory, with the wall clock). Each module measures side by side within its own rows (a
ratio's two sides in the same run, medians of several runs); a module that fails to import or
to measure gets one row saying so, and the others still run. Scripts without ``rows()`` are
listed under the table: run them on their own.

Usage: ``python bench/run_all.py [--quick] [--only check,stats] [--strict]`` (``--strict``
exits 1 when a target is missed; without it the benchmark is a measurement and exits 0).
"""

from __future__ import annotations

import argparse
import importlib.util
import inspect
import os
import platform
import sys
import time
import traceback
from pathlib import Path
from types import ModuleType
from typing import Any, Iterable

BENCH = Path(__file__).resolve().parent
sys.path.insert(0, str(BENCH.parent))
sys.path.insert(0, str(BENCH))

from _table import format_table  # noqa: E402  (after the path is set)

# The order: check, then the statistics, the analyses, then the documents; any other
# module with rows() follows in name order.
ORDER = ("check", "stats", "design", "drift", "binder", "checklist", "render")

Cells = tuple[str, str, str, str]


def modules(only: set[str] | None = None) -> list[Path]:
    def rank(path: Path) -> tuple[int, str]:
        name = path.stem[len("bench_"):]
        # "checklist" is not "check": a prefix counts only as a whole word of the name.
        first = next((i for i, prefix in enumerate(ORDER) if name == prefix or name.startswith(prefix + "_")), len(ORDER))
        return first, name

    found = sorted(BENCH.glob("bench_*.py"), key=rank)
    return [p for p in found if only is None or p.stem[len("bench_"):] in only]


def load(path: Path) -> ModuleType:
    spec = importlib.util.spec_from_file_location(path.stem, path)
    assert spec is not None and spec.loader is not None
    module = importlib.util.module_from_spec(spec)
    sys.modules[path.stem] = module
    spec.loader.exec_module(module)
    return module


def cells(row: Any) -> Cells:
    return row.cells()


def collect(paths: Iterable[Path], quick: bool) -> tuple[list[Cells], list[str], list[tuple[str, str]]]:
    """The table's cells, the scripts without ``rows()``, and (measure, why) of each missed
    target whose row says why."""
    table: list[Cells] = []
    without: list[str] = []
    reasons: list[tuple[str, str]] = []
    for path in paths:
        started = time.perf_counter()
        try:
            module = load(path)
            function = getattr(module, "rows", None)
            if function is None:
                without.append(path.name)
                continue
            takes_quick = "quick" in inspect.signature(function).parameters
            rows = function(quick=quick) if takes_quick else function()
            table += [cells(row) for row in rows]
            reasons += [(row.measure, row.why) for row in rows if not row.met and row.why]
        except Exception as error:  # one broken benchmark must not hide the others' rows
            last = traceback.format_exception_only(type(error), error)[-1].strip()
            table.append((f"{path.name}: could not measure", last[:120], "-", "NO"))
        print(f"  {path.name}: {time.perf_counter() - started:.0f} s", file=sys.stderr, flush=True)
    return table, without, reasons


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--quick", action="store_true", help="fewer repetitions, skip the largest runs")
    parser.add_argument("--only", help="comma-separated module names without bench_ (e.g. check,stats)")
    parser.add_argument("--strict", action="store_true", help="exit 1 when a target is missed")
    args = parser.parse_args()
    only = set(args.only.split(",")) if args.only else None
    print(f"collecting benchmarks ({os.cpu_count()} cores) ...", file=sys.stderr, flush=True)
    table, without, reasons = collect(modules(only), args.quick)
    load_average = os.getloadavg()[0]
    print(f"protolint benchmark table: {os.cpu_count()} cores, load average {load_average:.1f} at the end, "
          f"Python {platform.python_version()}, {time.strftime('%Y-%m-%d %H:%M %Z')}")
    print(format_table(table))
    missed = [row for row in table if row[3] != "yes"]
    print(f"{len(table) - len(missed)} of {len(table)} targets met" + (f"; missed: {len(missed)}" if missed else ""))
    for measure, why in reasons:
        print(f"why missed: {measure.strip()}: {why}")
    if without:
        print("not in the table (no rows(); run on their own): " + ", ".join(without))
    return 1 if args.strict and missed else 0


if __name__ == "__main__":
    sys.exit(main())
