"""The whole catalogue stays fast, and `protolint check` loads no heavy library."""

from __future__ import annotations

import os
import subprocess
import sys
import time
from pathlib import Path

from protolint.plan import load_plan
from protolint.plan.source import load_source
from protolint.rules.engine import check_loaded
from protolint.rules.registry import all_rules

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "demo_protocol" / "plan.yaml"
HEAVY = ("scipy", "numpy", "matplotlib", "pandas", "weasyprint")


def test_two_hundred_plans_under_20_ms_each() -> None:
    raw = DEMO.read_bytes()
    ids = [r.meta.id for r in all_rules()]
    check_loaded(load_plan(load_source(raw, "warm.yaml"), ids))  # warm caches (schema validator)
    start = time.perf_counter()
    for index in range(200):
        result = check_loaded(load_plan(load_source(raw, f"plan{index}.yaml"), ids))
        assert result.findings
    per_plan = (time.perf_counter() - start) / 200
    assert per_plan < 0.020, f"{per_plan * 1000:.1f} ms per plan"


def test_check_imports_no_heavy_library() -> None:
    env = dict(os.environ, PYTHONPATH=str(ROOT))
    run = subprocess.run([sys.executable, "-X", "importtime", "-m", "protolint", "check", str(DEMO)],
                         capture_output=True, text=True, cwd=ROOT, env=env)
    assert run.returncode in (0, 1), run.stderr[-2000:]
    imported = {line.split("|")[-1].strip().split(".")[0] for line in run.stderr.splitlines() if line.startswith("import time:")}
    assert not imported & set(HEAVY), sorted(imported & set(HEAVY))
