"""Benchmark of the reliability statistics against general-purpose reference libraries.

Targets (issue 3):
  * all six ICC forms on a 2000 x 20 matrix at least 100x faster than pingouin.intraclass_corr;
  * Krippendorff's alpha on 1000 units x 10 raters no slower than the ``krippendorff`` package;
  * ``import protolint.stats`` pulls in neither pandas nor matplotlib;
  * ``protolint check`` imports no scipy.stats / scipy.optimize (nor pandas, matplotlib).

Prints the figures and exits 0 (``--strict``: exit 1 when a target is missed). The data are
seeded random matrices, generated here.
"""

from __future__ import annotations

import argparse
import json
import statistics
import subprocess
import sys
import time
from collections.abc import Callable
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))


def best_time(fn: Callable[[], object], repeat: int) -> float:
    """Median wall time of ``repeat`` calls, after one warm-up call."""
    fn()
    times = []
    for _ in range(repeat):
        start = time.perf_counter()
        fn()
        times.append(time.perf_counter() - start)
    return statistics.median(times)


def bench_icc() -> bool:
    import pandas as pd
    import pingouin as pg

    from protolint.stats import icc

    rng = np.random.default_rng(2024)
    n, k = 2000, 20
    x = rng.normal(size=(n, 1)) * 2.0 + rng.normal(size=(1, k)) * 0.5 + rng.normal(size=(n, k))
    long = pd.DataFrame({"target": np.repeat(np.arange(n), k), "rater": np.tile(np.arange(k), n), "score": x.ravel()})
    ours = best_time(lambda: icc(x), repeat=20)
    start = time.perf_counter()
    theirs_table = pg.intraclass_corr(long, targets="target", raters="rater", ratings="score")
    theirs = time.perf_counter() - start  # one run: pingouin takes seconds on this size
    agree = np.allclose([f.value for f in icc(x).forms], theirs_table["ICC"].to_numpy(), atol=1e-9)
    speedup = theirs / ours
    ok = speedup >= 100 and agree
    print(f"ICC, six forms, {n} x {k}: protolint {ours * 1e3:.2f} ms, pingouin {theirs * 1e3:.0f} ms, "
          f"speed-up {speedup:,.0f}x (target >= 100x), values agree: {agree} -> {'OK' if ok else 'MISSED'}")
    return ok


def bench_krippendorff() -> bool:
    import krippendorff

    from protolint.stats import krippendorff_alpha

    rng = np.random.default_rng(2025)
    units, raters = 1000, 10
    truth = rng.integers(1, 6, size=(units, 1))
    x = np.clip(truth + rng.integers(-1, 2, size=(units, raters)), 1, 5).astype(float)
    x[rng.random(x.shape) < 0.1] = np.nan
    all_ok = True
    for level in ("nominal", "ordinal", "interval", "ratio"):
        ours = best_time(lambda: krippendorff_alpha(x, level, n_boot=0), repeat=50)
        theirs = best_time(lambda: krippendorff.alpha(reliability_data=x.T, level_of_measurement=level), repeat=50)
        with_ci = best_time(lambda: krippendorff_alpha(x, level), repeat=5)
        same = abs(krippendorff_alpha(x, level, n_boot=0).value
                   - krippendorff.alpha(reliability_data=x.T, level_of_measurement=level)) < 1e-10
        ok = ours <= theirs and same
        all_ok &= ok
        print(f"Krippendorff's alpha ({level}), {units} x {raters}, 10% missing: protolint {ours * 1e3:.2f} ms, "
              f"krippendorff package {theirs * 1e3:.2f} ms (ratio {theirs / ours:.1f}x), values agree: {same} "
              f"-> {'OK' if ok else 'MISSED'}; with the 1000-replicate bootstrap interval {with_ci * 1e3:.0f} ms")
    return all_ok


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


def bench_imports() -> bool:
    stats = probe("import protolint.stats")
    stats_ok = not any(m.startswith(("pandas", "matplotlib")) for m in stats["heavy"])  # type: ignore[union-attr]
    print(f"import protolint.stats: {stats['seconds'] * 1e3:.0f} ms, heavy modules: {stats['heavy'] or 'none'} "
          f"-> {'OK' if stats_ok else 'MISSED'}")
    plan = ROOT / "demo_protocol" / "plan.yaml"
    if not plan.exists():
        print("protolint check: skipped (no demo_protocol/plan.yaml)")
        return stats_ok
    check = probe(
        "from click.testing import CliRunner\nfrom protolint.cli import main\n"
        f"CliRunner().invoke(main, ['check', {str(plan)!r}])"
    )
    unneeded = [m for m in check["heavy"] if m.startswith(("pandas", "matplotlib", "scipy.stats", "scipy.optimize"))]  # type: ignore[union-attr]
    check_ok = not unneeded
    print(f"protolint check demo_protocol/plan.yaml: {check['seconds'] * 1e3:.0f} ms, heavy modules: "
          f"{check['heavy'] or 'none'} -> {'OK' if check_ok else 'MISSED: ' + ', '.join(unneeded)}")
    return stats_ok and check_ok


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--strict", action="store_true", help="exit 1 when a target is missed")
    args = parser.parse_args()
    results = [bench_imports(), bench_krippendorff(), bench_icc()]
    met = all(results)
    print("all targets met" if met else "some targets missed")
    return 1 if args.strict and not met else 0


if __name__ == "__main__":
    sys.exit(main())
