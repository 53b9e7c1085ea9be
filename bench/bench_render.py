"""Benchmark `protolint render`: the demo binder, and a stress plan.

Prints
* the time to render the demo SOP binder as PDF (in-process, after imports; best of 3) and
  the whole-process time of `protolint render binder demo_protocol/plan.yaml`;
* for a generated stress plan — 30 sites, 10 raters each on the roster, weekly monitoring for
  two years of rating — the time, page count and size of the checklist and the binder PDFs.
  The plan is generated here (invented, labelled as such) and never written to the repository.

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


def stress_plan_text(sites: int = 30, raters_per_site: int = 10) -> str:
    """An invented plan: one site pool rated live, weekly monitoring, about two years of rating.

    Enrolment 78 weeks plus 26 weeks of treatment = 104 weeks = two years of rating.
    """
    lines = [
        "# INVENTED stress plan for benchmarking protolint render; not a real trial.",
        "format_version: 1",
        "plan_date: 2026-01-05",
        "study:",
        "  id: STRESS-1",
        "  title: Invented stress-test trial (benchmark only)",
        "  design: parallel-group",
        "  arms: [{id: a, ratio: 1}, {id: b, ratio: 1}]",
        "  first_assessment: 2026-02-02",
        "  enrolment_weeks: 78",
        "  treatment_weeks: 26",
        "  sites:",
    ]
    lines += [f"    - {{id: S{i:02d}, name: Invented site {i:02d}}}" for i in range(1, sites + 1)]
    lines += [
        "instruments:",
        "  - id: SCORE",
        "    name: Invented rating scale",
        "    version: '1.0'",
        "    kind: clinician-rated",
        "    scale: {type: interval, min: 0, max: 40, items: 10}",
        "    conventions: Rate what you see at the visit; **never** look at earlier scores.",
        "endpoints:",
        "  - {id: EP, instrument: SCORE, role: primary, analysis: two-group-difference, visits: [v1, v2, v3],",
        "     rater_pool: RATERS, raters_per_assessment: 1, rating_mode: live, same_rater_across_visits: true,",
        "     blinded_to: [treatment, prior-scores]}",
        "schedule:",
        "  visits: [{id: v1, day: 1}, {id: v2, day: 85}, {id: v3, day: 182}]",
        "rater_pools:",
        "  - id: RATERS",
        "    name: Site raters",
        "    instruments: [SCORE]",
        "    location: site",
        f"    raters_per_site: {raters_per_site}",
        "    training: {hours: 4, days_before_first_rating: 14}",
        "    certification: {method: recorded-cases, cases: 6, criterion: {coefficient: 'ICC(2,1)', minimum: 0.8}}",
        "    recertification: {interval_months: 6, triggers: [amendment]}",
        "    monitoring: {interval_weeks: 1, method: [data-surveillance], drift_threshold: {max_deviation: 3},",
        "                 remediation: Retrain and recertify.}",
        "roster:",
    ]
    for i in range(1, sites + 1):
        for r in range(1, raters_per_site + 1):
            lines.append(f"  - {{id: R-S{i:02d}-{r:02d}, pool: RATERS, site: S{i:02d}, "
                         f"certifications: [{{instrument: SCORE, date: 2026-01-15}}]}}")
    lines += [
        "sample_size: {endpoint: EP, effect_size: 0.4, alpha: 0.05, sides: 2, power: 0.9, dropout: 0.1,",
        "              assumed_reliability: 0.8, stated_n_total: 400}",
        "sops:",
        "  - {id: SOP-1, title: Rating the invented scale, version: '1.0', effective: 2026-01-01, review_due: 2027-01-01,",
        "     covers: {instruments: [SCORE]}}",
        "  - {id: SOP-2, title: Monitoring, version: '1.0', effective: 2026-01-01, review_due: 2027-01-01,",
        "     covers: {procedures: [monitoring]}}",
    ]
    return "\n".join(lines) + "\n"


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
