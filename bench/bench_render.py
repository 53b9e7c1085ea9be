"""Benchmark `protolint render`: the demo binder, and a stress plan.

Prints
* the time to render the demo SOP binder as PDF (in-process, after imports; best of 3) and
  the whole-process time of `protolint render binder demo_protocol/plan.yaml`;
* for a generated stress plan — 30 sites, 10 raters each on the roster, weekly monitoring for
  two years of rating — the time, page count and size of the checklist and the binder PDFs.
  The plan comes from `stress_plan.py` (invented, labelled as such), never from the repository.

Targets (from the issue): demo binder PDF within 3 s; stress plan within 30 s.
Run with `make bench`. A measurement, not a test: it prints and exits 0.
"""

from __future__ import annotations

import io
import os
import subprocess
import sys
import tempfile
import time
from pathlib import Path

REPO = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(REPO))
DEMO = REPO / "demo_protocol" / "plan.yaml"

sys.path.insert(0, str(Path(__file__).resolve().parent))
from stress_plan import stress_plan_text  # noqa: E402 - after the path is set


def timed(function, *args):
    start = time.perf_counter()
    result = function(*args)
    return time.perf_counter() - start, result


def pages(pdf: bytes) -> int:
    import pypdf

    return len(pypdf.PdfReader(io.BytesIO(pdf)).pages)


def main() -> None:
    os.environ.pop("SOURCE_DATE_EPOCH", None)
    from protolint.plan import read_plan_file
    from protolint.render import render

    demo = read_plan_file(str(DEMO))
    render("binder", "pdf", demo)  # warm-up: imports, font loading
    best = min(timed(render, "binder", "pdf", demo)[0] for _ in range(3))
    print(f"demo binder PDF, in-process (best of 3): {best:.2f} s  (target 3 s)")
    with tempfile.TemporaryDirectory() as folder:
        start = time.perf_counter()
        subprocess.run([sys.executable, "-m", "protolint", "render", "binder", str(DEMO), "--output",
                        str(Path(folder) / "b.pdf")], check=True, cwd=REPO, env={**os.environ, "PYTHONPATH": str(REPO)})
        print(f"demo binder PDF, whole process: {time.perf_counter() - start:.2f} s")

        plan_file = Path(folder) / "stress.yaml"
        plan_file.write_text(stress_plan_text(), encoding="utf-8")
        stress = read_plan_file(str(plan_file))
        from protolint.render.checklist import checklist_context

        rounds = checklist_context(stress).round_count
        print(f"stress plan: 30 sites x 10 raters, weekly monitoring, {rounds} monitoring rounds")
        for kind in ("checklist", "binder", "manual"):
            seconds, pdf = timed(render, kind, "pdf", stress)
            print(f"  {kind:9s} PDF: {seconds:6.2f} s, {pages(pdf):4d} pages, {len(pdf) / 1024:7.0f} KiB  (target 30 s)")
        seconds, _ = timed(render, "checklist", "html", stress)
        print(f"  checklist HTML: {seconds:.2f} s")
        seconds, pdf = timed(render, "checklist", "pdf", stress, "a4", None, "S01")
        print(f"  checklist PDF for one site (--site S01): {seconds:.2f} s, {pages(pdf)} pages")


if __name__ == "__main__":
    main()
