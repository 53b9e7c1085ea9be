"""Rule families. Importing this package registers every rule once."""

from protolint.rules import blinding, builtin, documents, monitoring, raters, sop  # noqa: F401
