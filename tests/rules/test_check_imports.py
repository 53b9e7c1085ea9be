"""`protolint check` loads no heavy library (timings are measured by bench/bench_check.py, not by tests)."""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path


ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "demo_protocol" / "plan.yaml"
HEAVY = ("scipy", "numpy", "matplotlib", "pandas", "weasyprint")


def test_check_imports_no_heavy_library() -> None:
    env = dict(os.environ, PYTHONPATH=str(ROOT))
    run = subprocess.run([sys.executable, "-X", "importtime", "-m", "protolint", "check", str(DEMO)],
                         capture_output=True, text=True, cwd=ROOT, env=env)
    assert run.returncode in (0, 1), run.stderr[-2000:]
    imported = {line.split("|")[-1].strip().split(".")[0] for line in run.stderr.splitlines() if line.startswith("import time:")}
    assert not imported & set(HEAVY), sorted(imported & set(HEAVY))
