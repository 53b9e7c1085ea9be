"""Rule families. Importing this package registers every rule once."""

from protolint.rules import (  # noqa: F401
    blinding,
    builtin,
    documents,
    evidence_statistic,
    evidence_strength,
    evidence_transfer,
    monitoring,
    monitoring_limits,
    power,
    raters,
    schedule,
    sop,
    training,
)
