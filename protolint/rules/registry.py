"""The rule registry: each rule is a function with its metadata declared beside it.

A rule module defines functions decorated with :func:`rule`. The decorator records a frozen
:class:`RuleMeta`; the function's docstring is the rule's documentation (first line: the
summary; the rest: Markdown with the rationale and a passing and a failing example), which is
what ``protolint rules ID`` prints.
"""

from __future__ import annotations

import inspect
import re
from dataclasses import dataclass, field
from datetime import date
from typing import Any, Callable, Iterable, Iterator, Mapping

from protolint.findings import Severity

RULE_ID = re.compile(r"^[a-z]+/[a-z0-9]+(?:-[a-z0-9]+)*$")


@dataclass(frozen=True)
class Threshold:
    """A number a rule compares against; the policy file may change it."""

    name: str
    default: float | int
    description: str
    minimum: float | None = None
    maximum: float | None = None


@dataclass(frozen=True)
class Hit:
    """What a rule reports: where (a data path into the plan), what, and the numbers behind it."""

    path: tuple[str | int, ...]
    message: str
    facts: Mapping[str, Any] = field(default_factory=dict)
    severity: Severity | None = None
    """Overrides the rule's severity for this hit only (e.g. a computed rule that escalates)."""


@dataclass(frozen=True)
class RuleContext:
    """What a rule may read besides the plan: its thresholds and the reference date."""

    thresholds: Mapping[str, float | int]
    as_of: date


RuleFunction = Callable[[Any, RuleContext], Iterable[Hit]]


@dataclass(frozen=True)
class RuleMeta:
    id: str
    severity: Severity
    summary: str
    documentation: str
    """Markdown body: rationale, then a passing and a failing example."""
    source: str
    """Published source (author, year, section or table) or 'common practice'."""
    thresholds: tuple[Threshold, ...] = ()
    waivable: bool = True
    computed: bool = False

    @property
    def family(self) -> str:
        return self.id.split("/", 1)[0]

    @property
    def name(self) -> str:
        return self.id.split("/", 1)[1]

    def threshold(self, name: str) -> Threshold:
        for threshold in self.thresholds:
            if threshold.name == name:
                return threshold
        raise KeyError(f"rule {self.id} has no threshold named {name!r}")


@dataclass(frozen=True)
class Rule:
    meta: RuleMeta
    check: RuleFunction | None
    """None for checks the loader or the engine itself performs (schema, waivers)."""


_REGISTRY: dict[str, Rule] = {}


def rule(
    id: str,
    severity: str,
    source: str,
    thresholds: Iterable[Threshold] = (),
    *,
    waivable: bool = True,
    computed: bool = False,
) -> Callable[[RuleFunction], RuleFunction]:
    """Register a rule. The decorated function's docstring is its documentation."""

    def register(function: RuleFunction) -> RuleFunction:
        if not RULE_ID.match(id):
            raise ValueError(f"rule id {id!r} is not of the form family/name-in-words")
        if id in _REGISTRY:
            raise ValueError(f"rule id {id!r} is registered twice")
        doc = inspect.cleandoc(function.__doc__ or "")
        summary, _, body = doc.partition("\n")
        if not summary.strip():
            raise ValueError(f"rule {id!r} has no docstring summary")
        meta = RuleMeta(
            id=id,
            severity=Severity.parse(severity),
            summary=summary.strip(),
            documentation=body.strip(),
            source=source,
            thresholds=tuple(thresholds),
            waivable=waivable,
            computed=computed,
        )
        _REGISTRY[id] = Rule(meta=meta, check=function)
        return function

    return register


def register_builtin(id: str, severity: str, source: str, summary: str, documentation: str) -> None:
    """Register a check that the loader or the engine performs itself, so that it is listed,
    documented and appears in SARIF and JUnit like any other rule. Built-in checks cannot be
    waived: a plan that does not load cannot be trusted to carry its own exceptions."""
    if id in _REGISTRY:
        raise ValueError(f"rule id {id!r} is registered twice")
    meta = RuleMeta(id=id, severity=Severity.parse(severity), summary=summary,
                    documentation=inspect.cleandoc(documentation), source=source, waivable=False)
    _REGISTRY[id] = Rule(meta=meta, check=None)


def all_rules() -> tuple[Rule, ...]:
    """Every registered rule, sorted by id. Importing ``protolint.rules`` registers them."""
    import protolint.rules  # noqa: F401  (registers the families)

    return tuple(_REGISTRY[key] for key in sorted(_REGISTRY))


def get_rule(rule_id: str) -> Rule:
    import protolint.rules  # noqa: F401

    try:
        return _REGISTRY[rule_id]
    except KeyError:
        raise KeyError(rule_id) from None


def similar_rule_ids(rule_id: str, known: Iterable[str] | None = None, n: int = 3) -> list[str]:
    """Registered ids close to ``rule_id``: on the full id, or on the name alone (people often
    omit the family), best first."""
    from protolint.suggest import closest

    ids = list(known) if known is not None else [registered.meta.id for registered in all_rules()]
    close = closest(rule_id, ids, n=n)
    by_name = {rid.split("/", 1)[-1]: rid for rid in ids}
    for name in closest(rule_id.rsplit("/", 1)[-1], by_name, n=n, cutoff=0.75):
        if by_name[name] not in close:
            close.append(by_name[name])
    return close[:n]


def iter_metas() -> Iterator[RuleMeta]:
    for registered in all_rules():
        yield registered.meta
