"""What every benchmark script shares: the table's row type and how a whole process is measured.

A whole-process figure is the child's own CPU time (user + system) and peak resident memory,
as the operating system accounts them (``os.wait4``), with the wall clock beside them. The
machine is shared, so CPU time is the steadier figure; wall time is what a user waits.

The child is started by a small launcher process that reports the child's usage. A child
forked straight from a (large) benchmark process would inherit its peak memory: Linux carries
the forking process's resident high-water mark across exec into ``ru_maxrss``.
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
from dataclasses import dataclass
from pathlib import Path
from typing import Mapping, Sequence

REPO = Path(__file__).resolve().parents[1]


@dataclass(frozen=True)
class Row:
    """One line of the benchmark table."""

    measure: str
    result: str
    target: str
    met: bool
    why: str = ""
    """For a missed target: why it is missed, printed under the table."""

    def cells(self) -> tuple[str, str, str, str]:
        return (self.measure, self.result, self.target, "yes" if self.met else "NO")


@dataclass(frozen=True)
class ChildRun:
    """One whole process: CPU seconds (user + system), wall seconds, peak MB and exit code."""

    cpu: float
    wall: float
    peak_mb: float
    code: int


_LAUNCHER = """
import json, os, subprocess, sys, time
start = time.perf_counter()
process = subprocess.Popen(sys.argv[1:], stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
_, status, usage = os.wait4(process.pid, 0)
print(json.dumps([usage.ru_utime + usage.ru_stime, time.perf_counter() - start, usage.ru_maxrss,
                  os.waitstatus_to_exitcode(status)]))
"""


def bench_environment(**extra: str) -> dict[str, str]:
    """This environment with the repository first on the path (the checkout is what is measured)."""
    return {**os.environ, "PYTHONPATH": str(REPO), **extra}


def run_child(command: Sequence[str], env: Mapping[str, str] | None = None, accept: Sequence[int] | None = (0,)) -> ChildRun:
    """Measure one run of ``command`` in a fresh process; an exit code outside ``accept``
    (None: any code) stops the benchmark, since a failed run would be timed as a fast one."""
    done = subprocess.run([sys.executable, "-c", _LAUNCHER, *command], cwd=REPO, capture_output=True, text=True,
                          check=True, env=dict(env) if env is not None else bench_environment())
    cpu, wall, peak_kib, code = json.loads(done.stdout)
    if accept is not None and code not in accept:
        raise RuntimeError(f"{' '.join(map(str, command[:5]))} … exited {code}")
    return ChildRun(cpu, wall, peak_kib / 1024, code)
