"""protolint: check measurement plans for rated clinical-trial outcomes.

The package is organised the way data flows through it:

* ``protolint.plan``     YAML text -> located tree -> schema findings -> typed plan, and the
                         plan's derived facts (rating dates, monitoring rounds, reliability)
* ``protolint.rules``    typed plan + policy -> findings
* ``protolint.pipeline`` the one check pipeline: :func:`check_files` (also exported here)
* ``protolint.report``   findings -> text, JSON, SARIF, JUnit, Markdown
* ``protolint.stats``    pure numerical methods (no I/O, no knowledge of plans)
* ``protolint.render``   typed plan -> controlled documents (HTML, PDF, Markdown, iCalendar)
* ``protolint.commands`` thin command-line layer, one module per command
"""

from __future__ import annotations

import os
from datetime import date
from typing import TYPE_CHECKING, Iterable

if TYPE_CHECKING:
    from protolint.findings import CheckResult
    from protolint.pipeline import PolicyArg

__version__ = "0.1.0"

CAUTION = (
    "protolint checks a measurement plan against common reliability practice and published "
    "methods. It does not replace the trial statistician, the sponsor's SOPs, ethics-board "
    "review, applicable regulations or licensed clinical practice; its numbers are planning "
    "aids to be confirmed by a qualified person."
)


def check_files(paths: Iterable[str | os.PathLike[str]], policy: PolicyArg = None,
                as_of: date | None = None) -> CheckResult:
    """Check plan files: see :func:`protolint.pipeline.check_files` (imported on first call,
    so ``import protolint`` stays light)."""
    from protolint.pipeline import check_files as run

    return run(paths, policy, as_of)


__all__ = ["CAUTION", "__version__", "check_files"]
