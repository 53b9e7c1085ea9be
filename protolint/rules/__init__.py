"""Rule families. Importing this package registers every rule once."""

from protolint.rules import builtin  # noqa: F401
