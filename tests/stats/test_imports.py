"""Import weight: ``import protolint.stats`` and ``protolint check`` stay light."""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).parents[2]

_PROBE = """
import json, sys
{body}
print(json.dumps(sorted(m for m in sys.modules if m.split('.')[0] in ('pandas', 'matplotlib', 'scipy'))))
"""


def _heavy_modules(body: str) -> list[str]:
    out = subprocess.run(
        [sys.executable, "-c", _PROBE.format(body=body)], cwd=ROOT, capture_output=True, text=True, check=True,
        env={"PYTHONPATH": str(ROOT), "PATH": ""},
    )
    return json.loads(out.stdout.strip().splitlines()[-1])


def test_import_stats_pulls_in_no_pandas_matplotlib_or_scipy() -> None:
    assert _heavy_modules("import protolint.stats") == []


def test_computing_uses_scipy_special_only() -> None:
    body = """
import numpy as np, protolint.stats as s
x = np.arange(24.0).reshape(6, 4) % 7
s.icc(x); s.krippendorff_alpha(x, 'interval'); s.cronbach_alpha(x); s.gwet_ac1(x)
s.sample_size_two_group(0.5, reliability=0.8); s.subjects_for_icc_test_walter(0.5, 0.75, 3)
"""
    heavy = _heavy_modules(body)
    assert not [m for m in heavy if m.startswith(("pandas", "matplotlib", "scipy.stats", "scipy.optimize"))]


def test_check_imports_no_scipy_stats() -> None:
    plan = ROOT / "demo_protocol" / "plan.yaml"
    if not plan.exists():
        pytest.skip("no demo plan in this checkout")
    body = f"""
from click.testing import CliRunner
from protolint.cli import main
CliRunner().invoke(main, ['check', {str(plan)!r}])
"""
    heavy = _heavy_modules(body)
    assert not [m for m in heavy if m.startswith(("pandas", "matplotlib", "scipy.stats", "scipy.optimize"))]
