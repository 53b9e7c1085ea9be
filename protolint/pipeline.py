"""The one check pipeline: read -> validate -> resolve references -> build -> rules -> policy and waivers.

``protolint check``, the binder's check appendix and the rule-case tests all call these
functions, so a plan gets the same findings whichever way it is checked:

* :func:`check_files` checks plan files (``-`` for standard input) and returns the
  :class:`~protolint.findings.CheckResult` every report is made from;
* :func:`check_source` checks one plan already read into a located tree (a document that has
  its plan in memory);
* :func:`check_text` checks plan text (tests, editors, other tools);
* :func:`check_plan` checks a plan already loaded (``render`` and ``calendar``, which load
  the plan once for the document and its check);
* :func:`failure_of` describes a run that could not check its plans (exit 2), for the
  machine-readable formats, which then say so instead of reporting nothing.

Every result records the policy it was checked under (:func:`policy_record`) and the as-of
date, so a report or a document filed years later says how it was checked.

Nothing here imports numpy, scipy, matplotlib or weasyprint: ``check`` runs in pre-commit hooks.
"""

from __future__ import annotations

import gc
import os
from contextlib import contextmanager
from dataclasses import dataclass
from datetime import date
from typing import TYPE_CHECKING, Iterable, Iterator, Union

from protolint.findings import CheckResult, PlanResult, PolicyRecord

if TYPE_CHECKING:
    from protolint.errors import ProtolintError
    from protolint.plan import LoadedPlan
    from protolint.plan.source import LoadedSource
    from protolint.rules.policy import Policy
    from protolint.rules.registry import RuleMeta

PolicyArg = Union["Policy", str, "os.PathLike[str]", None]
"""A policy: the object, the path of a policy file, or None for the default policy."""


def check_files(paths: Iterable[str | os.PathLike[str]], policy: PolicyArg = None,
                as_of: date | None = None) -> CheckResult:
    """Check every plan file in ``paths``.

    Every file is read before any rule runs. Files that cannot be read, or are not YAML, and a
    policy file with a problem raise :class:`~protolint.errors.InputErrors` with one located
    error per file, the policy's first (the command prints those lines, a failure report in the
    formats tools read, and exits 2). ``as_of`` defaults to each plan's own date.
    """
    from protolint.errors import InputErrors, LocatedError
    from protolint.plan import read_source

    sources, unreadable = [], []
    try:
        chosen = resolve_policy(policy)
    except LocatedError as error:  # still read the plans, so one run names every bad input
        unreadable.append(error)
    with collector_paused():
        for path in paths:
            try:
                sources.append(read_source(os.fspath(path)))
            except LocatedError as error:
                unreadable.append(error)
        if unreadable:
            raise InputErrors(unreadable)
        result = result_of((check_source(source, chosen, as_of) for source in sources), chosen, as_of)
        # Freed now, by reference counting: otherwise the collector's first pass once it is back
        # on would scan every plan's tree (0.4 ms a plan).
        sources.clear()
    return result


@contextmanager
def collector_paused() -> Iterator[None]:
    """Pause Python's cyclic garbage collector while plans are loaded and checked.

    Loading and checking make many small objects (YAML nodes, source spans, model objects) and
    no reference cycles, so reference counting frees everything and the collector only re-scans
    what is alive: its passes grow with the plans already read and made loading a large plan
    superlinear (3x at 1.4 MB). The collector is switched back on (if it was on) when the block
    ends, however it ends.
    """
    was_enabled = gc.isenabled()
    gc.disable()
    try:
        yield
    finally:
        if was_enabled:
            gc.enable()


def check_source(source: LoadedSource, policy: PolicyArg = None, as_of: date | None = None) -> PlanResult:
    """Check one plan read into a located tree: validate, build, run the rules, apply policy and waivers."""
    from protolint.plan import load_plan
    from protolint.rules.engine import check_loaded

    with collector_paused():
        return check_loaded(load_plan(source), resolve_policy(policy), as_of)


def check_plan(loaded: LoadedPlan, policy: PolicyArg = None, as_of: date | None = None) -> PlanResult:
    """Check a plan already loaded (validated and built): the rules, the policy and the waivers."""
    from protolint.rules.engine import check_loaded

    return check_loaded(loaded, resolve_policy(policy), as_of)


def check_text(text: str | bytes, name: str = "plan.yaml", policy: PolicyArg = None,
               as_of: date | None = None) -> PlanResult:
    """Check plan text as if it were the file ``name`` (``LocatedError`` if it is not YAML)."""
    from protolint.plan.source import load_source

    raw = text.encode("utf-8") if isinstance(text, str) else text
    with collector_paused():
        return check_source(load_source(raw, name), policy, as_of)


def result_of(plans: Iterable[PlanResult], policy: PolicyArg = None, as_of: date | None = None) -> CheckResult:
    """The :class:`CheckResult` of some checked plans, stamped with this version of the tool,
    the policy they were checked under and the ``as_of`` date given (None: each plan's own)."""
    from protolint import __version__

    return CheckResult(plans=tuple(plans), tool_version=__version__, policy=policy_record(policy),
                       as_of=as_of.isoformat() if as_of else None)


def policy_record(policy: PolicyArg) -> PolicyRecord:
    """What a report records of ``policy``: its file and SHA-256 (or "default"), the rules it
    switched off, and the severities and thresholds it changed from the rules' defaults."""
    chosen = resolve_policy(policy)
    return chosen.record({meta.id: meta for meta in rule_metas()})


def resolve_policy(policy: PolicyArg) -> Policy:
    from protolint.rules.policy import DEFAULT_POLICY, Policy, read_policy

    if policy is None:
        return DEFAULT_POLICY
    if isinstance(policy, Policy):
        return policy
    return read_policy(os.fspath(policy), {meta.id: meta for meta in rule_metas()})


def rule_metas(ids: Iterable[str] | None = None) -> list[RuleMeta]:
    """Metadata of the rules with ``ids`` (every registered rule when None), sorted by id:
    what SARIF lists as rule descriptors and JUnit as test cases."""
    from protolint.rules.registry import all_rules

    metas = {registered.meta.id: registered.meta for registered in all_rules()}
    return [metas[i] for i in sorted(metas if ids is None else set(ids))]


def rules_run(result: CheckResult) -> list[RuleMeta]:
    """Metadata of every rule that ran on at least one plan of ``result``."""
    return rule_metas({rule_id for plan in result.plans for rule_id in plan.rules_run})


@dataclass(frozen=True)
class InputProblem:
    """Why one input (a plan or the policy) could not be read: ``file:line:column: message``,
    line 0 for the file as a whole."""

    file: str
    line: int
    column: int
    message: str

    def text(self) -> str:
        return f"{self.file}:{self.line}:{self.column}: {self.message}"


@dataclass(frozen=True)
class CheckFailure:
    """A check that could not be done (exit 2): which plans were asked for and what stopped it.

    No rule ran on any plan: every plan is read before any rule runs, and one unreadable input
    stops the run. Reports made from this say the run failed (SARIF ``executionSuccessful:
    false``, a JSON ``error`` per plan, a JUnit ``<error>``), so no upload shows a plan as clean.
    """

    plans: tuple[str, ...]
    problems: tuple[InputProblem, ...]
    tool_version: str

    def problem_of(self, file: str) -> InputProblem | None:
        return next((problem for problem in self.problems if problem.file == file), None)

    @property
    def other_problems(self) -> tuple[InputProblem, ...]:
        """Problems of inputs that are not plans (the policy file, the environment)."""
        return tuple(problem for problem in self.problems if problem.file not in self.plans)


NOT_CHECKED = "not checked: another input of the same run could not be read"


def failure_of(paths: Iterable[str | os.PathLike[str]], error: ProtolintError) -> CheckFailure:
    """The :class:`CheckFailure` of a run of ``check_files(paths, ...)`` that raised ``error``."""
    from protolint import __version__
    from protolint.errors import InputErrors, LocatedError

    located = error.errors if isinstance(error, InputErrors) else (error,)
    problems = tuple(
        InputProblem(item.file, item.line, item.column, item.reason) if isinstance(item, LocatedError)
        else InputProblem("", 0, 0, item.format_message())
        for item in located
    )
    return CheckFailure(tuple(os.fspath(path) for path in paths), problems, __version__)
