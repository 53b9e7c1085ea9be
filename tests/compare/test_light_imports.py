"""``check --format html`` and ``diff`` stay light: no numpy, scipy, matplotlib, pandas or weasyprint.

deepdiff imports numpy and pandas by itself when they are installed; protolint.compare keeps
it from doing so. Timings are measured by bench/bench_diff.py, not here.
"""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "demo_protocol" / "plan.yaml"
HEAVY = {"scipy", "numpy", "matplotlib", "pandas", "weasyprint", "polars"}


# Run the command in a fresh interpreter, then list what sys.modules holds. (``-X importtime``
# would also list the guarded names: it logs the blocked attempt that deepdiff catches.)
PROBE = """
import sys
from protolint.cli import main
try:
    main(sys.argv[1:], standalone_mode=False)
finally:
    loaded = sorted({name.split(".")[0] for name, module in sys.modules.items() if module is not None})
    sys.stdout.flush()
    print("\\nLOADED " + " ".join(loaded), file=sys.stderr)
"""


def loaded_by(*args: str) -> set[str]:
    env = dict(os.environ, PYTHONPATH=str(ROOT))
    run = subprocess.run([sys.executable, "-c", PROBE, *args], capture_output=True, text=True, cwd=ROOT, env=env, timeout=120)
    line = next(line for line in run.stderr.splitlines() if line.startswith("LOADED "))
    return set(line.split()[1:])


@pytest.mark.parametrize("args", [
    ("check", str(DEMO), "--format", "html"),
    ("diff", str(DEMO), str(DEMO), "--format", "json"),
    ("diff", str(DEMO), str(DEMO), "--format", "html"),
])
def test_light_commands_import_no_heavy_library(args):
    names = loaded_by(*args)
    assert "jinja2" in names or args[-1] == "json"
    assert "deepdiff" in names or args[0] == "check"   # the guard is exercised, not bypassed
    assert not names & HEAVY, sorted(names & HEAVY)


def test_numpy_still_imports_after_the_guard():
    # The guard blocks numpy only while deepdiff is first imported.
    code = ("from protolint.compare import _deepdiff; _deepdiff(); import numpy, pandas; "
            "print(numpy.__name__, pandas.__name__)")
    run = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, cwd=ROOT,
                         env=dict(os.environ, PYTHONPATH=str(ROOT)), timeout=120)
    assert run.returncode == 0 and run.stdout.split() == ["numpy", "pandas"], run.stderr
