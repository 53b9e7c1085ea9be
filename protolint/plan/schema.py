"""Validate plan data against the JSON Schema and turn each violation into a located finding.

Messages are written for a protocol writer: they name the key, the value and what was
expected, never the validator's internals.

Two validators, one answer. Most plans a CI job checks are valid, so every plan is first
screened by ``jsonschema_rs`` (compiled, draft 2020-12), which only says valid or not; a plan it
passes has no schema findings. Only a plan it rejects goes through ``jsonschema``, whose errors
carry the instance paths our located messages are made from, so every message is the one the
located path has always given. The screen may be stricter than ``jsonschema``, never
looser: every ``format`` the schema uses is checked by the same rule as ``jsonschema``'s format
checker (``date`` here, the others by asking that checker itself), every ``pattern`` by the
same regular expressions as the located path (:func:`pattern_regex`), and data the screen cannot
take goes the located way. ``tests/plan/test_schema_screen.py`` holds
both validators to the same verdict.
"""

from __future__ import annotations

import re
from functools import lru_cache
from typing import Any, Callable

from protolint.dates import parse_date
from protolint.findings import Finding, Severity, finding_at
from protolint.plan.source import LoadedSource, Path
from protolint.resources import load_schema
from protolint.suggest import did_you_mean

PLAN_SCHEMA = "plan.schema.json"

_TYPE_WORDS = {
    "string": "text",
    "integer": "a whole number",
    "number": "a number",
    "boolean": "true or false",
    "array": "a list",
    "object": "a mapping of keys to values",
    "null": "empty",
}


@lru_cache(maxsize=None)
def validator_for(schema_name: str):  # noqa: ANN201 - jsonschema's validator class
    from jsonschema import Draft202012Validator, validators

    schema = _inline_local_refs(load_schema(schema_name))
    # JSON Schema patterns are ECMA-262 regular expressions, which editors run as written; the
    # Python engine differs where it matters to us, so `pattern` is checked the ECMA way.
    validator_class = validators.extend(Draft202012Validator, {"pattern": _ecma_pattern})
    # Formats are only annotations in draft 2020-12 unless a checker is passed explicitly.
    return validator_class(schema, format_checker=Draft202012Validator.FORMAT_CHECKER)


def _ecma_pattern(validator: Any, pattern: str, instance: Any, schema: dict[str, Any]) -> Any:
    from jsonschema.exceptions import ValidationError

    if isinstance(instance, str) and not pattern_regex(pattern).search(instance):
        yield ValidationError(f"{instance!r} does not match {pattern!r}")


@lru_cache(maxsize=None)
def ecma_regex(pattern: str) -> re.Pattern[str]:
    r"""Compile a JSON Schema (ECMA-262) pattern so that Python matches what an editor matches.

    Two differences matter: Python's ``$`` also matches before a final line break, so
    ``"S01\n"`` would pass ``^[A-Z0-9]+$`` and be a second id beside ``S01`` (in ECMA-262 ``$``
    is the end of the text); and Python's ``\d`` and ``\w`` match non-ASCII digits and letters.
    Each ``$`` outside a character class becomes ``\Z``, and the pattern is ASCII-only.
    """
    out: list[str] = []
    in_class = False
    index = 0
    while index < len(pattern):
        char = pattern[index]
        if char == "\\" and index + 1 < len(pattern):
            out.append(pattern[index:index + 2])
            index += 2
            continue
        if char == "[" and not in_class:
            in_class = True
        elif char == "]" and in_class:
            in_class = False
        elif char == "$" and not in_class:
            char = r"\Z"
        out.append(char)
        index += 1
    return re.compile("".join(out), re.ASCII)


def _inline_local_refs(schema: dict[str, Any]) -> dict[str, Any]:
    """Replace each ``{"$ref": "#/$defs/x", ...}`` by the definition merged with its siblings.

    Resolving references costs a third of validation time in jsonschema, and ``check`` runs in
    pre-commit hooks. Our schemas' definitions are not recursive, so inlining is exact: the
    instance paths of errors (what findings are located by) do not change.
    """
    definitions = schema.get("$defs", {})

    def inline(node: Any, depth: int = 0) -> Any:
        if depth > 50:
            raise ValueError("schema definitions are recursive; they cannot be inlined")
        if isinstance(node, dict):
            ref = node.get("$ref")
            if isinstance(ref, str) and ref.startswith("#/$defs/"):
                merged = dict(inline(definitions[ref[len("#/$defs/"):]], depth + 1))
                merged.update({k: inline(v, depth + 1) for k, v in node.items() if k != "$ref"})
                return merged
            return {k: inline(v, depth + 1) for k, v in node.items() if k != "$defs"}
        if isinstance(node, list):
            return [inline(item, depth + 1) for item in node]
        return node

    return inline(schema)


def schema_findings(source: LoadedSource, schema_name: str = PLAN_SCHEMA) -> list[Finding]:
    """One located finding per schema violation (in the validator's order; results sort them)."""
    if passes_screen(source.data, schema_name):
        return []
    return [_finding(error, source) for error in validator_for(schema_name).iter_errors(source.data)
            if not _date_reported_twice(error)]


def _date_reported_twice(error: Any) -> bool:
    # A date with both a wrong form and an implausible year ("9999-99-99") fails `format` and
    # `pattern`; the format finding says what is wrong, the range one would repeat it.
    if error.validator != "pattern" or error.schema.get("format") != "date":
        return False
    return not (isinstance(error.instance, str) and is_calendar_date(error.instance))


def passes_screen(data: Any, schema_name: str = PLAN_SCHEMA) -> bool:
    """True when the compiled validator finds ``data`` valid (then ``jsonschema`` does too)."""
    try:
        return bool(_screen_for(schema_name).is_valid(data))
    except (ValueError, TypeError, OverflowError):  # data it cannot convert: the located path decides
        return False


@lru_cache(maxsize=None)
def _screen_for(schema_name: str):  # noqa: ANN202 - jsonschema_rs's validator class
    import jsonschema_rs

    schema = load_schema(schema_name)
    checks = {name: _FORMAT_CHECKS.get(name) or _library_format_check(name) for name in _formats_in(schema)}
    return jsonschema_rs.Draft202012Validator(schema, validate_formats=True, formats=checks,
                                              keywords={"pattern": _ScreenPattern})


def pattern_regex(pattern: str) -> re.Pattern[str]:
    """How a schema ``pattern`` is matched (``search``), by the screen and the located path
    alike: with ECMA-262 semantics (:func:`ecma_regex`)."""
    return ecma_regex(pattern)


class _ScreenPattern:
    """The screen's ``pattern`` keyword: the located path's regular expression semantics, not
    the compiled engine's, so the two never disagree about an id or a code."""

    def __init__(self, parent_schema: dict[str, Any], value: str, schema_path: list[Any]) -> None:
        self.regex = pattern_regex(value)

    def validate(self, instance: Any) -> None:
        if isinstance(instance, str) and not self.regex.search(instance):
            raise ValueError("does not match the pattern")


# jsonschema's "date" check (jsonschema/_format.py, is_date): four, two and two ASCII digits
# that make a real date, which is protolint.dates.parse_date's reading. Written without
# jsonschema so that a valid plan is screened without importing it; the screen's test compares
# it with jsonschema's own.
def is_calendar_date(text: str) -> bool:
    """A date written YYYY-MM-DD that exists in the calendar (``format: date`` of the schemas)."""
    try:
        parse_date(text)
    except ValueError:
        return False
    return True


_FORMAT_CHECKS: dict[str, Callable[[str], bool]] = {"date": is_calendar_date}


def _library_format_check(name: str) -> Callable[[str], bool]:
    """Any other format is asked of jsonschema's checker, so the screen never judges it differently."""
    def conforms(text: str) -> bool:
        from jsonschema import Draft202012Validator

        return bool(Draft202012Validator.FORMAT_CHECKER.conforms(text, name))

    return conforms


def _formats_in(node: Any) -> set[str]:
    if isinstance(node, dict):
        found = {node["format"]} if isinstance(node.get("format"), str) else set()
        for key, value in node.items():
            if key not in ("properties", "$defs", "patternProperties"):
                found |= _formats_in(value)
            elif isinstance(value, dict):
                for child in value.values():
                    found |= _formats_in(child)
        return found
    if isinstance(node, list):
        return set().union(*(_formats_in(item) for item in node)) if node else set()
    return set()


def _finding(error: Any, source: LoadedSource) -> Finding:
    path: Path = tuple(error.absolute_path)
    rule, message, where, at_key = _describe(error, path)
    return finding_at(source, where, rule, Severity.ERROR, message, at_key=at_key)


def _name(path: Path) -> str:
    """How to speak of a place in the plan: 'endpoints[1].visits' style."""
    if not path:
        return "the plan"
    text = ""
    for part in path:
        text += f"[{part}]" if isinstance(part, int) else (f".{part}" if text else str(part))
    return text


def _show(value: Any) -> str:
    text = repr(value) if isinstance(value, str) else str(value).lower() if isinstance(value, bool) else str(value)
    return text if len(text) <= 60 else text[:57] + "..."


def _describe(error: Any, path: Path) -> tuple[str, str, Path, bool]:
    """(rule id, message, path to point at, point at the key rather than the value)."""
    kind = error.validator
    schema = error.schema
    instance = error.instance
    if "propertyNames" in error.absolute_schema_path and isinstance(instance, str):
        # A key that is not of the allowed form: the error is the mapping's, the problem the key's.
        hint = f" {schema['description']}" if schema.get("description") else ""
        return ("schema/invalid-form", f"the key {_show(instance)} in {_name(path)} is not of the expected form.{hint}",
                path + (instance,), True)
    if kind == "required":
        missing = _quoted_key(error.message)
        return "schema/missing-key", f"{_name(path)} is missing the required key {missing!r}", path, True
    if kind == "additionalProperties":
        allowed = sorted(schema.get("properties", {}))
        extras = sorted(set(instance) - set(allowed)) if isinstance(instance, dict) else []
        key = extras[0] if extras else ""
        hint = did_you_mean(key, allowed)
        where = f" in {_name(path)}" if path else " at the top level"
        message = f"unknown key {key!r}{where}{hint}"
        if len(extras) > 1:
            message += f" (also unknown: {', '.join(repr(e) for e in extras[1:])})"
        return "schema/unknown-key", message, path + (key,), True
    if kind == "type":
        expected = schema["type"]
        expected = [expected] if isinstance(expected, str) else expected
        words = " or ".join(_TYPE_WORDS.get(t, t) for t in expected)
        return "schema/wrong-type", f"{_name(path)} should be {words}, not {_show(instance)}", path, False
    if kind == "enum":
        options = [str(o) for o in schema["enum"]]
        hint = did_you_mean(str(instance), options)
        listing = ", ".join(options) if len(options) <= 12 else ", ".join(options[:12]) + ", …"
        return "schema/value-not-allowed", f"{_name(path)} is {_show(instance)}; expected one of: {listing}{hint}", path, False
    if kind == "const":
        return "schema/value-not-allowed", f"{_name(path)} must be {_show(schema['const'])}, not {_show(instance)}", path, False
    if kind == "format":
        if schema.get("format") == "date":
            return "schema/invalid-date", f"{_name(path)} is {_show(instance)}, which is not a real calendar date written YYYY-MM-DD", path, False
        return "schema/invalid-form", f"{_name(path)} is not a valid {schema.get('format')}", path, False
    if kind in ("minimum", "exclusiveMinimum", "maximum", "exclusiveMaximum"):
        bound = schema[kind]
        relation = {
            "minimum": f"at least {bound}",
            "exclusiveMinimum": f"greater than {bound}",
            "maximum": f"at most {bound}",
            "exclusiveMaximum": f"less than {bound}",
        }[kind]
        return "schema/out-of-range", f"{_name(path)} is {_show(instance)}; it must be {relation}", path, False
    if kind == "minItems":
        count = schema["minItems"]
        return "schema/out-of-range", f"{_name(path)} needs at least {count} entr{'y' if count == 1 else 'ies'}", path, False
    if kind == "maxItems":
        return "schema/out-of-range", f"{_name(path)} has more than {schema['maxItems']} entries", path, False
    if kind == "minLength":
        return "schema/out-of-range", f"{_name(path)} must not be empty", path, False
    if kind == "maxLength":
        return "schema/out-of-range", f"{_name(path)} is longer than {schema['maxLength']} characters", path, False
    if kind == "uniqueItems":
        return "schema/value-not-allowed", f"{_name(path)} lists the same entry more than once", path, False
    if kind == "pattern" and schema.get("format") == "date":
        return ("schema/invalid-date", f"{_name(path)} is {_show(instance)}; plan dates lie between 1900-01-01 "
                "and 2199-12-31", path, False)
    if kind == "pattern":
        purpose = schema.get("description", "")
        return "schema/invalid-form", f"{_name(path)} is {_show(instance)}, which is not of the expected form. {purpose}".strip(), path, False
    return "schema/invalid-form", f"{_name(path)}: {error.message}", path, False


def _quoted_key(message: str) -> str:
    # jsonschema: "'name' is a required property"
    if message.startswith("'") and "'" in message[1:]:
        return message[1 : message.index("'", 1)]
    return message
