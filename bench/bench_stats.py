"""Benchmark of the reliability statistics against general-purpose reference libraries.

Every row is measured side by side in one run (median of several runs after a warm-up) and
printed as one table, ``measure | result | target | met``. Targets:

* each coefficient at least as fast as its reference library on the same data (ICC vs
  pingouin, where the older target of 100x stays; Krippendorff's alpha vs the
  ``krippendorff`` package; Fleiss' kappa vs statsmodels; Cohen's kappa vs scikit-learn;
  Gwet's AC1 vs irrCAC; Cronbach's alpha vs pingouin);
* each coefficient linear in the data: measured at 1x, 10x and 100x the subjects (from
  2,000); the step from 10x to 100x at most 20x (twice proportional; both sizes are out of
  cache, so cache effects do not count as growth; a quadratic method shows 100x). The
  ordinal metric on continuous scores ranks them, a sort, so its bound is scaled by the
  ratio of the logarithms (n log n);
* Krippendorff's alpha on 10,000 x 10 continuous scores, with the ICC and the
  1000-replicate bootstrap interval, within 10 s and 300 MB; 100,000 x 10 without the
  bootstrap within 10 s (each in a fresh process, so the memory is that of the job);
* ``import protolint.stats`` pulls in neither pandas nor matplotlib, and ``protolint check``
  imports no scipy.stats / scipy.optimize (nor pandas, matplotlib).

``rows()`` returns the table's rows (for a combined benchmark table); running the script
prints them. ``--strict`` exits 1 when a target is missed. The data are seeded random
matrices generated here.
"""

from __future__ import annotations

import argparse
import json
import math
import os
import statistics
import subprocess
import sys
import time
from collections.abc import Callable
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from _measure import Row  # noqa: E402  (the one row type of the benchmark tables)

# Linearity is judged on the step from 10x to 100x the subjects, where both runs are out of
# the processor's cache (from 1x the small run sits in cache and the ratio overstates the
# growth); the bound is twice proportional, for load from other jobs. A quadratic method
# would show 100x on that step.
LINEAR_STEP = 20.0


def median_time(fn: Callable[[], object], repeat: int) -> float:
    """Median wall time of ``repeat`` calls, after one warm-up call."""
    fn()
    times = []
    for _ in range(repeat):
        start = time.perf_counter()
        fn()
        times.append(time.perf_counter() - start)
    return statistics.median(times)


def _ms(seconds: float) -> str:
    return f"{seconds * 1e3:.1f} ms" if seconds < 10 else f"{seconds:.1f} s"


def categories(seed: int, n: int, k: int, q: int = 5) -> np.ndarray:
    rng = np.random.default_rng(seed)
    truth = rng.integers(1, q + 1, size=(n, 1))
    return np.clip(truth + rng.integers(-1, 2, size=(n, k)), 1, q).astype(float)


def scores(seed: int, n: int, k: int) -> np.ndarray:
    rng = np.random.default_rng(seed)
    return rng.normal(size=(n, 1)) * 2.0 + rng.normal(size=(1, k)) * 0.5 + rng.normal(size=(n, k)) + 10.0


# --- each coefficient against its reference library ---------------------------------------


def _versus(name: str, ours: Callable[[], object], theirs: Callable[[], object], agree: bool,
            repeat: int, their_repeat: int, target: float = 1.0) -> Row:
    t_ours = median_time(ours, repeat)
    t_theirs = median_time(theirs, their_repeat)
    ratio = t_theirs / t_ours
    return Row(
        name,
        f"{_ms(t_ours)} vs {_ms(t_theirs)} ({ratio:,.1f}x){'' if agree else ', VALUES DIFFER'}",
        f">= {target:g}x faster, same value",
        ratio >= target and agree,
    )


def reference_rows() -> list[Row]:
    import krippendorff
    import pandas as pd
    import pingouin as pg
    from irrCAC.raw import CAC
    from sklearn.metrics import cohen_kappa_score
    from statsmodels.stats.inter_rater import aggregate_raters
    from statsmodels.stats.inter_rater import fleiss_kappa as sm_fleiss

    from protolint import stats

    out = []
    x = scores(2024, 2000, 20)
    long = pd.DataFrame({"target": np.repeat(np.arange(2000), 20), "rater": np.tile(np.arange(20), 2000),
                         "score": x.ravel()})
    table = pg.intraclass_corr(long, targets="target", raters="rater", ratings="score")
    agree = np.allclose([f.value for f in stats.icc(x).forms], table["ICC"].to_numpy(), atol=1e-9)
    out.append(_versus("ICC, six forms, 2000 x 20, vs pingouin", lambda: stats.icc(x),
                       lambda: pg.intraclass_corr(long, targets="target", raters="rater", ratings="score"),
                       agree, 20, 1, target=100.0))

    c = categories(2025, 1000, 10)
    c[np.random.default_rng(1).random(c.shape) < 0.1] = np.nan
    for level in ("nominal", "ordinal", "interval", "ratio"):
        ref = krippendorff.alpha(reliability_data=c.T, level_of_measurement=level)
        same = abs(stats.krippendorff_alpha(c, level, bootstrap=0).value - ref) < 1e-10
        out.append(_versus(f"Krippendorff's alpha ({level}), 1000 x 10, 5 categories, 10 % missing, vs krippendorff",
                           lambda level=level: stats.krippendorff_alpha(c, level, bootstrap=0),
                           lambda level=level: krippendorff.alpha(reliability_data=c.T, level_of_measurement=level),
                           same, 20, 10))
    # The package builds units x values x values arrays: keep continuous data small (60 x 4
    # is about 50 MB there; 200 x 10 took 18 GB and a minute).
    s = scores(2026, 60, 4)
    for level in ("interval", "ordinal"):
        ref = krippendorff.alpha(reliability_data=s.T, level_of_measurement=level)
        same = abs(stats.krippendorff_alpha(s, level, bootstrap=0).value - ref) < 1e-9
        out.append(_versus(f"Krippendorff's alpha ({level}), 60 x 4 continuous, vs krippendorff",
                           lambda level=level: stats.krippendorff_alpha(s, level, bootstrap=0),
                           lambda level=level: krippendorff.alpha(reliability_data=s.T, level_of_measurement=level),
                           same, 10, 3))

    f = categories(2027, 2000, 20)
    same = abs(stats.fleiss_kappa(f).value - sm_fleiss(aggregate_raters(f)[0])) < 1e-12
    out.append(_versus("Fleiss' kappa, 2000 x 20, 5 categories, vs statsmodels (aggregate_raters + fleiss_kappa)",
                       lambda: stats.fleiss_kappa(f), lambda: sm_fleiss(aggregate_raters(f)[0]), same, 20, 20))

    two = categories(2028, 10_000, 2)
    for weights in ("unweighted", "quadratic"):
        sk_w = None if weights == "unweighted" else weights
        same = abs(stats.cohen_kappa(two, weights=weights).value - cohen_kappa_score(two[:, 0], two[:, 1], weights=sk_w)) < 1e-12
        out.append(_versus(f"Cohen's kappa ({weights}), 10,000 x 2, vs scikit-learn",
                           lambda weights=weights: stats.cohen_kappa(two, weights=weights),
                           lambda sk_w=sk_w: cohen_kappa_score(two[:, 0], two[:, 1], weights=sk_w), same, 20, 20))

    g = categories(2029, 2000, 10)
    frame = pd.DataFrame(g)
    same = abs(stats.gwet_ac1(g).value - CAC(frame, digits=12).gwet()["est"]["coefficient_value"]) < 1e-9
    out.append(_versus("Gwet's AC1, 2000 x 10, 5 categories, vs irrCAC", lambda: stats.gwet_ac1(g),
                       lambda: CAC(frame, digits=12).gwet(), same, 20, 3))

    items = scores(2030, 2000, 20)
    item_frame = pd.DataFrame(items)
    same = abs(stats.cronbach_alpha(items).value - pg.cronbach_alpha(item_frame)[0]) < 1e-10
    out.append(_versus("Cronbach's alpha with item statistics, 2000 x 20, vs pingouin (alpha only)",
                       lambda: stats.cronbach_alpha(items), lambda: pg.cronbach_alpha(item_frame), same, 20, 20))
    return out


# --- linear in the data -----------------------------------------------------------------


def linearity_rows(base: int = 2000) -> list[Row]:
    from protolint import stats

    # (name, data maker, call, n log n): ranking continuous scores needs a sort, so the ordinal
    # metric on them is n log n; its target is scaled by log(10n)/log(n) and log(100n)/log(n).
    cases: list[tuple[str, Callable[[int], np.ndarray], Callable[[np.ndarray], object], bool]] = [
        ("ICC, six forms, n x 10", lambda n: scores(1, n, 10), stats.icc, False),
        ("Krippendorff's alpha (interval), n x 10 continuous", lambda n: scores(2, n, 10),
         lambda x: stats.krippendorff_alpha(x, "interval", bootstrap=0), False),
        ("Krippendorff's alpha (ordinal), n x 10 continuous", lambda n: scores(3, n, 10),
         lambda x: stats.krippendorff_alpha(x, "ordinal", bootstrap=0), True),
        ("Krippendorff's alpha (nominal), n x 10, 5 categories", lambda n: categories(4, n, 10),
         lambda x: stats.krippendorff_alpha(x, "nominal", bootstrap=0), False),
        ("Krippendorff's alpha (interval) with 1000-replicate bootstrap, n/10 x 10", lambda n: scores(5, n // 10, 10),
         lambda x: stats.krippendorff_alpha(x, "interval"), False),
        ("Fleiss' kappa, n x 10", lambda n: categories(6, n, 10), stats.fleiss_kappa, False),
        ("Cohen's kappa (quadratic), n x 2", lambda n: categories(7, n, 2),
         lambda x: stats.cohen_kappa(x, weights="quadratic"), False),
        ("Gwet's AC1, n x 10", lambda n: categories(8, n, 10), stats.gwet_ac1, False),
        ("Cronbach's alpha, n x 10", lambda n: scores(9, n, 10), stats.cronbach_alpha, False),
    ]
    out = []
    for name, make, fn, n_log_n in cases:
        times = []
        for factor, repeat in ((1, 9), (10, 5), (100, 3)):
            data = make(base * factor)
            times.append(median_time(lambda data=data: fn(data), repeat))
        r10, r100 = times[1] / times[0], times[2] / times[0]
        step = times[2] / times[1]
        cells = base * 100  # the 10x size, in cells
        bound = LINEAR_STEP * (math.log(10 * cells) / math.log(cells) if n_log_n else 1.0)
        out.append(Row(
            f"{name}: n = {base:,} / {10 * base:,} / {100 * base:,}",
            f"{_ms(times[0])} / {_ms(times[1])} / {_ms(times[2])} (1x to 10x {r10:.0f}x, to 100x {r100:.0f}x; "
            f"10x to 100x {step:.1f}x)",
            f"10x to 100x <= {bound:.0f}x" + (" (n log n: a sort)" if n_log_n else ""),
            step <= bound,
        ))
    return out


# --- the large agreement cases, each in a fresh process -----------------------------------

_LARGE = """
import json, sys, time
import numpy as np
from protolint import stats
n, boot = {n}, {boot}
rng = np.random.default_rng(2031)
x = rng.normal(size=(n, 1)) * 2.0 + rng.normal(size=(1, 10)) * 0.5 + rng.normal(size=(n, 10)) + 10.0
start = time.perf_counter()
stats.icc(x)
r = stats.krippendorff_alpha(x, "interval", bootstrap=boot)
elapsed = time.perf_counter() - start
# VmHWM is this process's own peak (ru_maxrss would include the parent's at fork time).
peak = next(int(line.split()[1]) for line in open("/proc/self/status") if line.startswith("VmHWM:"))
print(json.dumps({{"seconds": elapsed, "max_rss_mb": peak / 1024, "ci": r.ci is not None}}))
"""


def _large(n: int, boot: int) -> dict[str, float]:
    done = subprocess.run([sys.executable, "-c", _LARGE.format(n=n, boot=boot)], capture_output=True, text=True,
                          cwd=ROOT, env={**os.environ, "PYTHONPATH": str(ROOT)}, check=True)
    return json.loads(done.stdout.strip().splitlines()[-1])


def large_rows(repeat: int = 3) -> list[Row]:
    out = []
    for n, boot, seconds, megabytes in ((10_000, 1000, 10.0, 300.0), (100_000, 0, 10.0, None)):
        runs = [_large(n, boot) for _ in range(repeat)]
        t = statistics.median(r["seconds"] for r in runs)
        mb = max(r["max_rss_mb"] for r in runs)
        what = f"ICC + Krippendorff's alpha (interval), {n:,} x 10 continuous, " + (
            f"{boot}-replicate bootstrap" if boot else "no bootstrap")
        target = f"<= {seconds:g} s" + (f", <= {megabytes:g} MB" if megabytes else "")
        met = t <= seconds and (megabytes is None or mb <= megabytes)
        out.append(Row(what, f"{t:.2f} s, peak {mb:.0f} MB (whole process)", target, met))
    return out


# --- import weight ----------------------------------------------------------------------

_PROBE = """
import json, sys, time
start = time.perf_counter()
{body}
elapsed = time.perf_counter() - start
heavy = sorted({{m.split('.')[0] + ('.' + m.split('.')[1] if m.startswith('scipy.') and m.count('.') >= 1 else '')
                for m in sys.modules if m.split('.')[0] in ('pandas', 'matplotlib', 'scipy')}})
print(json.dumps({{"seconds": elapsed, "heavy": heavy}}))
"""


def probe(body: str) -> dict[str, object]:
    done = subprocess.run(
        [sys.executable, "-c", _PROBE.format(body=body)], capture_output=True, text=True, cwd=ROOT,
        env={"PYTHONPATH": str(ROOT), "PATH": ""}, check=True,
    )
    return json.loads(done.stdout.strip().splitlines()[-1])


def import_rows() -> list[Row]:
    stats = probe("import protolint.stats")
    heavy = list(stats["heavy"])  # type: ignore[call-overload]
    out = [Row("import protolint.stats", f"{float(stats['seconds']) * 1e3:.0f} ms, heavy modules: {heavy or 'none'}",
               "no pandas, no matplotlib", not any(m.startswith(("pandas", "matplotlib")) for m in heavy))]
    plan = ROOT / "demo_protocol" / "plan.yaml"
    if plan.exists():
        check = probe("from click.testing import CliRunner\nfrom protolint.cli import main\n"
                      f"CliRunner().invoke(main, ['check', {str(plan)!r}])")
        heavy = list(check["heavy"])  # type: ignore[call-overload]
        unneeded = [m for m in heavy if m.startswith(("pandas", "matplotlib", "scipy.stats", "scipy.optimize"))]
        out.append(Row("protolint check demo_protocol/plan.yaml, modules loaded",
                       f"{float(check['seconds']) * 1e3:.0f} ms, heavy modules: {heavy or 'none'}",
                       "no scipy.stats / scipy.optimize, pandas, matplotlib", not unneeded))
    return out


def rows(quick: bool = False) -> list[Row]:
    """Every row of the statistics benchmark (``quick``: skip the large fresh-process runs)."""
    out = import_rows() + reference_rows() + linearity_rows()
    if not quick:
        out += large_rows()
    return out


def format_table(table: list[Row]) -> str:
    sys.path.insert(0, str(Path(__file__).resolve().parent))
    from _table import format_table as layout

    return layout([r.cells() for r in table])


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--strict", action="store_true", help="exit 1 when a target is missed")
    parser.add_argument("--quick", action="store_true", help="skip the large fresh-process runs")
    args = parser.parse_args()
    table = rows(quick=args.quick)
    from _table import print_table

    return print_table("statistics benchmark", [r.cells() for r in table], all(r.met for r in table), args.strict)


if __name__ == "__main__":
    sys.exit(main())
