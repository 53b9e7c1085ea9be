"""Benchmark of the monitoring checklist at trial scale.

The stress plan (``stress_plan.py``: INVENTED, 30 sites x 10 rostered raters, weekly
monitoring for two years: 3,120 rounds, 31,200 rater rows) is rendered in-process after a
warm-up render of the demo checklist (imports, fonts). Each measure is the median of
``--runs`` runs (default 3), wall and CPU time; the machine is shared, so CPU time is the
steadier figure and the one judged. Rows (``rows()``, ``_measure.Row``; measured in-process):

* the whole-study checklist PDF: target 30 s, with its pages and the time per page. The target
  was set when the checklist had one row per round (about 150 pages); with a row for every
  rostered rater it is some 1,050 pages, which no layout of three rounds to an A4 page can make
  shorter, and WeasyPrint's own cost of a page of ruled text lines (about 70 ms on 2 cores:
  margin boxes, one Pango line per row, drawing) puts it beyond 30 s (see the closing notes of
  the speed issue for what was measured);
* one site's copy (``--site S01``): reported, with its pages;
* the HTML alone (the template and context): reported;
* refusing ``raters_per_site: 1e18``: target under 1 s, i.e. refused before any row exists.

A measurement, not a test: it prints and exits 0 (``--strict``: 1 when a target is missed).
"""

from __future__ import annotations

import argparse
import io
import os
import statistics
import sys
import tempfile
import time
from pathlib import Path
from typing import Callable

BENCH = Path(__file__).resolve().parent
REPO = BENCH.parent
sys.path[:0] = [str(REPO), str(BENCH)]

from _measure import Row  # noqa: E402 - after the path is set
from stress_plan import stress_plan_text  # noqa: E402

TARGET_SECONDS = 30.0
TARGET_SET_FOR_PAGES = 150
"""The stress checklist's length when the issue set its target: one row per round, not per rater."""


def measure(fn: Callable[[], object], runs: int) -> tuple[float, float, object]:
    """Median wall and CPU seconds of ``runs`` calls, and the last result."""
    walls, cpus = [], []
    result: object = None
    for _ in range(runs):
        wall, cpu = time.perf_counter(), time.process_time()
        result = fn()
        walls.append(time.perf_counter() - wall)
        cpus.append(time.process_time() - cpu)
    return statistics.median(walls), statistics.median(cpus), result


def pages(pdf: bytes) -> int:
    import pypdf

    return len(pypdf.PdfReader(io.BytesIO(pdf)).pages)


def rows(runs: int = 3) -> list[Row]:
    os.environ.pop("SOURCE_DATE_EPOCH", None)
    from protolint.errors import InputErrors, LocatedError
    from protolint.plan import read_plan_file
    from protolint.render import render

    render("checklist", "pdf", read_plan_file(str(REPO / "demo_protocol" / "plan.yaml")))  # warm-up
    out = []
    with tempfile.TemporaryDirectory() as folder:
        plan_file = Path(folder) / "stress.yaml"
        plan_file.write_text(stress_plan_text(), encoding="utf-8")
        stress = read_plan_file(str(plan_file))

        wall, cpu, pdf = measure(lambda: render("checklist", "pdf", stress), runs)
        count = pages(pdf)  # type: ignore[arg-type]
        out.append(Row(f"checklist PDF, stress plan (30 sites x 10 raters, weekly, 2 years), median of {runs}",
                       f"{cpu:.1f} s CPU ({wall:.1f} s wall), {count} pages",
                       f"{TARGET_SECONDS:.0f} s", cpu <= TARGET_SECONDS,
                       why=f"the target was set for about {TARGET_SET_FOR_PAGES} pages, one row per round; with a row "
                           f"for every rostered rater the checklist is {count:,} pages (three rounds to an A4 page), "
                           f"and WeasyPrint spends {cpu / count * 1e3:.0f} ms on each (margin boxes, a text line per "
                           f"row, drawing); one site's copy, what a site prints, is the next row"))
        out.append(Row(f"  the same, per page (the {TARGET_SECONDS:.0f} s target was set for about {TARGET_SET_FOR_PAGES} "
                       "pages, before a row per rater)",
                       f"{cpu / count * 1e3:.0f} ms a page",
                       f"for information: {TARGET_SECONDS / TARGET_SET_FOR_PAGES * 1e3:.0f} ms a page then", True))
        wall, cpu, pdf = measure(lambda: render("checklist", "pdf", stress, site="S01"), runs)
        out.append(Row("checklist PDF, one site's copy (--site S01)",
                       f"{cpu:.1f} s CPU ({wall:.1f} s wall), {pages(pdf)} pages",  # type: ignore[arg-type]
                       "reported", True))
        wall, cpu, html = measure(lambda: render("checklist", "html", stress), runs)
        out.append(Row("checklist HTML, stress plan", f"{cpu:.2f} s CPU, {len(html) / 2**20:.1f} MiB",  # type: ignore[arg-type]
                       "reported", True))

        absurd = Path(folder) / "absurd.yaml"
        absurd.write_text(stress_plan_text(raters_per_site=10**18, roster=False), encoding="utf-8")

        def refuse() -> str:
            # Refused wherever the first guard stands: the loader (a number beyond what a plan
            # holds), the schema (raters_per_site's bound) or the checklist's own row limit.
            try:
                absurd_plan = read_plan_file(str(absurd))
                render("checklist", "markdown", absurd_plan)
            except (LocatedError, InputErrors) as error:
                return "refused: " + str(error).splitlines()[0]
            return "not refused"

        wall, cpu, reason = measure(refuse, runs)
        refused = str(reason).startswith("refused: ")
        out.append(Row("checklist of raters_per_site: 1e18 without a roster, refused",
                       f"{wall * 1e3:.0f} ms, {'refused' if refused else reason}", "under 1 s, refused",
                       refused and wall < 1.0))
    return out


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--runs", type=int, default=3, help="runs per measure (the median is shown)")
    parser.add_argument("--strict", action="store_true", help="exit 1 when a target is missed")
    args = parser.parse_args()
    table = rows(args.runs)
    from _table import print_table

    return print_table("checklist benchmark", [r.cells() for r in table], all(r.met for r in table), args.strict)


if __name__ == "__main__":
    sys.exit(main())
