"""Rule families. Importing this package registers every rule once."""

from protolint.rules import (  # noqa: F401
    blinding,
    builtin,
    documents,
    evidence,
    monitoring,
    power,
    raters,
    schedule,
    sop,
    training,
)
