"""Rule families. Importing this package registers every rule once."""

from protolint.rules import (  # noqa: F401
    blinding,
    builtin,
    documents,
    evidence_statistic,
    evidence_strength,
    evidence_transfer,
    monitoring,
    power,
    raters,
    schedule,
    sop,
    training,
)
