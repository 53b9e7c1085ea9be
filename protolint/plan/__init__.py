"""Plan loading: bytes -> located tree -> schema and reference findings -> typed plan.

The derived facts of a plan live beside the loader, as pure functions of the typed model:
``timeline`` (rating dates), ``monitoring`` (monitoring rounds, recertification dates, rating
spans per pool and site), ``reliability`` (the reliability the trial can expect from its
evidence) and ``formulas`` (the closed-form formulas applied to plan numbers); ``sop_texts`` reads the SOP texts
the plan points to, confined to the plan's folder. Nothing in this
package imports the rules, the documents or the commands.
"""

from __future__ import annotations

from dataclasses import dataclass

from protolint.errors import LocatedError
from protolint.findings import Finding, Severity, finding_at
from protolint.plan.limits import size_problems
from protolint.plan.model import Plan, build_plan
from protolint.plan.references import reference_findings
from protolint.plan.schema import schema_findings
from protolint.plan.sop_texts import SopText, read_sop_texts
from protolint.plan.source import LoadedSource, load_source, read_limited

__all__ = ["LoadedPlan", "Plan", "SopText", "load_plan", "read_plan_file", "read_source"]


@dataclass(frozen=True)
class LoadedPlan:
    source: LoadedSource
    problems: tuple[Finding, ...]
    """Schema and reference findings, in the order of the file; when there are any, ``plan`` is None."""
    plan: Plan | None
    sop_texts: tuple[SopText, ...] = ()
    """The SOP texts the plan points to (``sops[].text_file``) that could be read from the plan's
    folder; kept when the plan has problems too, so a check report records the texts it read."""


def read_source(file: str) -> LoadedSource:
    """Read a plan file from disk (or ``-`` for standard input) into a located tree.

    A file that cannot be read at all, or is larger than the limit (enforced while reading), is
    reported at line 0, column 0 (the file as a whole), so every exit-2 message has the
    ``file:line:column: message`` form.
    """
    raw = read_limited(file)
    return load_source(raw, file)


def load_plan(source: LoadedSource) -> LoadedPlan:
    """Validate ``source`` and build the typed plan when nothing is wrong with it.

    Reference problems and SOP text files are looked at even when the schema finds problems,
    so one run shows every kind; the typed plan is built only from data with none, and handed on
    only when what it multiplies (monitoring rounds, sign-off rows, calendar events) stays within
    :mod:`protolint.plan.limits`.
    """
    texts, text_problems = read_sop_texts(source)
    problems = (*schema_findings(source), *reference_findings(source), *text_problems)
    if problems:
        return LoadedPlan(source, tuple(sorted(problems, key=Finding.sort_key)), None, texts)
    plan = build_plan(source.data)
    oversized = tuple(finding_at(source, problem.path, "schema/too-large", Severity.ERROR, problem.message)
                      for problem in size_problems(plan))
    if oversized:
        return LoadedPlan(source, oversized, None, texts)
    return LoadedPlan(source, (), plan, texts)


def read_plan_file(file: str) -> LoadedPlan:
    """For documents and tests: read, validate and build; raise the first problem as an error."""
    loaded = load_plan(read_source(file))
    if loaded.problems:
        first = loaded.problems[0]
        raise LocatedError(file, first.location.line, first.location.column, first.message)
    return loaded
