"""YAML text -> plain data plus a source map of every key and value.

Only safe YAML is accepted. The loader composes PyYAML's node tree (nothing is constructed by
PyYAML) and converts it itself, so that:

* scalars follow YAML 1.2 core-schema typing, not PyYAML's 1.1 defaults: ``NO`` and ``yes``
  stay strings, ``1:30`` stays a string, dates stay strings (the schema checks them), and a
  number written with a leading zero such as ``0755`` stays the text the writer typed (it is
  an identifier far more often than an octal number);
* any explicit tag other than the core ones (``!!str``, ``!!int`` …) is refused, so
  ``!!python/...`` is never constructed;
* duplicate keys are an error at the second occurrence;
* input size, nesting depth and alias expansion are bounded, so a "billion laughs" document
  is refused quickly instead of being expanded; files are read with the size limit enforced
  while reading (:func:`read_limited`), so ``/dev/zero`` or a sparse 3 GB file costs at most
  the limit;
* numbers stay numbers a plan can hold: an integer beyond ±(2**53 - 1) (the largest a JSON
  reader or a float holds exactly) and a float that overflows to infinity (``1e999``) or
  underflows to zero are refused at the place they are written.
"""

from __future__ import annotations

import hashlib
import math
import re
from dataclasses import dataclass
from typing import Any

import yaml

from protolint.bounded import read_at_most
from protolint.errors import CONTROL_CHARACTERS, LocatedError, line_column
from protolint.findings import Location

MAX_BYTES = 2 * 1024 * 1024
MAX_DEPTH = 64
MAX_NODES = 200_000
"""Nodes visited while converting, counting every expansion of an alias."""
MAX_EXPANDED_CHARS = 2 * MAX_BYTES
"""Characters of scalar text once every alias is expanded. A plan without aliases is at most
MAX_BYTES long; aliases may repeat values, but not turn a small file into one that documents
print gigabytes from (one long string aliased 150,000 times stays under MAX_NODES)."""
MAX_INTEGER = 2**53 - 1
"""The largest integer a plan may write: every JSON reader and every float holds it exactly."""
_MAX_DIGITS = 30  # longer digit strings are refused before int() is asked to convert them

_PLAIN = "tag:protolint:plain"
_CORE = "tag:yaml.org,2002:"
_ALLOWED_TAGS = {_CORE + t for t in ("str", "int", "float", "bool", "null", "seq", "map")}
_STR, _SEQ, _MAP = _CORE + "str", _CORE + "seq", _CORE + "map"

# YAML 1.2 core schema (https://yaml.org/spec/1.2.2/#1032-tag-resolution), minus the
# leading-zero integers described in the module docstring.
_NULL = re.compile(r"^(?:~|null|Null|NULL|)$")
_TRUE = re.compile(r"^(?:true|True|TRUE)$")
_FALSE = re.compile(r"^(?:false|False|FALSE)$")
_INT10 = re.compile(r"^[-+]?(?:0|[1-9][0-9]*)$")
_INT8 = re.compile(r"^0o[0-7]+$")
_INT16 = re.compile(r"^0x[0-9a-fA-F]+$")
_FLOAT = re.compile(r"^[-+]?(?:\.[0-9]+|(?:0|[1-9][0-9]*)(?:\.[0-9]*)?)(?:[eE][-+]?[0-9]+)?$")
_SPECIAL_FLOAT = re.compile(r"^(?:[-+]?\.(?:inf|Inf|INF)|\.(?:nan|NaN|NAN))$")
# The first characters any of the patterns above can start with.
_MAY_BE_TYPED = frozenset("~nNtTfF0123456789+-.")

# An anchor property (&name) follows a separator, a flow indicator, or the colon after a
# quoted key in a flow mapping ({"a":&x 1}); '&' inside words or followed by a space ("R&D",
# "Q & A") is text. A false match only costs the expansion check.
# Written to start with the '&' itself (the separator is a look-behind), so the search skips
# from one '&' to the next instead of trying the alternatives at every character of the plan.
_ANCHOR = re.compile(r"&(?<![^\s\[\]{},:]&)[^\s\[\]{},]")

_BOMS = {
    b"\xff\xfe\x00\x00": "UTF-32",
    b"\x00\x00\xfe\xff": "UTF-32",
    b"\xff\xfe": "UTF-16",
    b"\xfe\xff": "UTF-16",
}
_LONE_CR = re.compile(r"\r(?!\n)")
_ODD_LINE_BREAKS = {"\u2028": "LINE SEPARATOR", "\u2029": "PARAGRAPH SEPARATOR", "\u0085": "NEXT LINE"}

Path = tuple[str | int, ...]


@dataclass(frozen=True)
class Span:
    """1-based start of a key and of its value (for list items both are the item's start)."""

    key_line: int
    key_column: int
    value_line: int
    value_column: int
    end_line: int
    end_column: int


class SourceMap:
    """Where each data path of a plan was written.

    The composed YAML node tree is kept, and a path is looked up in it only when something is
    reported there: most plans a CI job checks have no finding, and a span made for every node
    of every plan was a third of the time ``check`` spent loading. A path is found by walking
    the nodes it names (a mapping's keys are indexed the first time the mapping is walked), so
    a lookup costs the depth of the path. Compared by identity.
    """

    __slots__ = ("file", "_root", "_keys", "_spans")

    def __init__(self, file: str, root: yaml.Node | None) -> None:
        self.file = file
        self._root = root
        self._keys: dict[int, dict[str, tuple[yaml.Node, yaml.Node]]] = {}
        self._spans: dict[Path, Span] | None = None

    def span(self, path: Path) -> Span:
        """The span of ``path``, or of its nearest ancestor that was written in the file."""
        written = self._written(path)
        return _span_of(*written) if written else Span(1, 1, 1, 1, 1, 1)

    def locate(self, path: Path, *, at_key: bool = False) -> Location:
        """Where a finding at ``path`` is reported: its value (with the value's end), or its key
        (``at_key``: an unknown or missing key is a problem of the key, not of its value)."""
        span = self.span(path)
        if at_key:
            return Location(span.key_line, span.key_column)
        return Location(span.value_line, span.value_column, span.end_line, span.end_column)

    @property
    def spans(self) -> dict[Path, Span]:
        """The span of every data path written in the file (made on first use, for tools and tests)."""
        if self._spans is None:
            spans: dict[Path, Span] = {}
            if self._root is not None:
                _all_spans(self._root, (), spans)
            self._spans = spans
        return self._spans

    def _written(self, path: Path) -> tuple[yaml.Node | None, yaml.Node] | None:
        """(key node or None for a list item, value node) of the deepest written prefix of ``path``."""
        node = self._root
        found: tuple[yaml.Node | None, yaml.Node] | None = None
        for part in path:
            if isinstance(node, yaml.MappingNode) and isinstance(part, str):
                pair = self._keys_of(node).get(part)
                if pair is None:
                    break
                found = pair
            elif isinstance(node, yaml.SequenceNode) and isinstance(part, int) and 0 <= part < len(node.value):
                found = (None, node.value[part])
            else:
                break
            node = found[1]
        return found

    def _keys_of(self, node: yaml.MappingNode) -> dict[str, tuple[yaml.Node, yaml.Node]]:
        keys = self._keys.get(id(node))  # nodes are kept alive by the tree, so their ids are stable
        if keys is None:
            keys = self._keys[id(node)] = {key.value: (key, value) for key, value in node.value}
        return keys


def _span_of(key: yaml.Node | None, value: yaml.Node) -> Span:
    key = key or value
    # A block mapping or list starts on the line after its key; a finding about the whole
    # section belongs on the key's line, not on its first entry.
    block = isinstance(value, yaml.CollectionNode) and not value.flow_style
    start = key.start_mark if block else value.start_mark
    return Span(key.start_mark.line + 1, key.start_mark.column + 1, start.line + 1, start.column + 1,
                value.end_mark.line + 1, value.end_mark.column + 1)


def _all_spans(node: yaml.Node, path: Path, spans: dict[Path, Span]) -> None:
    if isinstance(node, yaml.SequenceNode):
        for index, child in enumerate(node.value):
            spans[path + (index,)] = _span_of(None, child)
            _all_spans(child, path + (index,), spans)
    elif isinstance(node, yaml.MappingNode):
        for key, child in node.value:
            spans[path + (key.value,)] = _span_of(key, child)
            _all_spans(child, path + (key.value,), spans)


@dataclass(frozen=True)
class LoadedSource:
    file: str
    data: Any
    source_map: SourceMap
    sha256: str
    text: str


def _plain_tag_loader() -> type:
    base = getattr(yaml, "CSafeLoader", yaml.SafeLoader)
    scalar_node = yaml.ScalarNode
    default_tags = {yaml.ScalarNode: _STR, yaml.SequenceNode: _SEQ, yaml.MappingNode: _MAP}

    class PlainTaggingLoader(base):  # type: ignore[misc, valid-type]
        """Tags every plain scalar with a private tag so that we, not PyYAML, type it."""

        def resolve(self, kind, value, implicit):  # noqa: ANN001 - PyYAML's signature
            # Called for every node without an explicit tag. What PyYAML's own resolver would
            # answer for anything but a plain scalar (it has no path resolvers here), without
            # its lookups: a quarter of the time spent composing went to them.
            if kind is scalar_node and implicit[0]:
                return _PLAIN
            return default_tags[kind]

    return PlainTaggingLoader


_LOADER = _plain_tag_loader()


def read_limited(file: str, what: str = "plan", limit: int = MAX_BYTES) -> bytes:
    """The bytes of ``file`` (``-``: standard input), refusing more than ``limit`` while reading.

    At most ``limit + 1`` bytes are ever read, so an endless device or a huge sparse file costs
    no more memory than a plan at the limit. Errors are located at the whole file (line 0).
    """
    import sys

    try:
        if file == "-":
            raw = read_at_most(sys.stdin.buffer.read, limit)
        else:
            with open(file, "rb") as stream:
                raw = read_at_most(stream.read, limit)
    except FileNotFoundError:
        # A plan is the obvious input; another kind of file is named, so the reader knows which.
        raise LocatedError(file, 0, 0, "no such file" if what == "plan" else f"cannot read the {what} file: no such file") from None
    except IsADirectoryError:
        raise LocatedError(file, 0, 0, f"is a folder, not a {what} file") from None
    except OSError as error:
        raise LocatedError(file, 0, 0, f"cannot read the {what} file: {error.strerror or error}") from None
    if len(raw) > limit:
        raise _too_large(file, what, limit)
    return raw


def _too_large(file: str, what: str, limit: int) -> LocatedError:
    return LocatedError(file, 0, 0, f"the file is larger than {_size_words(limit)}, the limit for a {what} file")


def _size_words(size: int) -> str:
    return f"{size // (1024 * 1024)} MiB" if size % (1024 * 1024) == 0 else f"{size} bytes"


def load_source(raw: bytes, file: str) -> LoadedSource:
    """Parse plan bytes. Raises :class:`LocatedError` for anything that is not a safe YAML mapping."""
    if len(raw) > MAX_BYTES:  # bytes given directly (check_text), not read by read_limited
        raise _too_large(file, "plan", MAX_BYTES)
    text = _decode(raw, file)
    try:
        root = yaml.compose(text, Loader=_LOADER)
    except yaml.MarkedYAMLError as error:
        raise _yaml_error(error, text, file) from None
    except yaml.reader.ReaderError as error:  # a character YAML does not allow; carries its position
        line, column = line_column(text[: error.position])
        char = error.character if isinstance(error.character, str) else chr(error.character)
        raise LocatedError(file, line, column, f"the control character U+{ord(char):04X} is not allowed in a plan; "
                                               "remove it (YAML allows tabs and line breaks only)") from None
    except yaml.YAMLError as error:
        raise LocatedError(file, 1, 1, f"not valid YAML: {error}") from None
    except RecursionError:
        raise LocatedError(file, 1, 1, f"nesting is deeper than {MAX_DEPTH} levels") from None
    if root is None:  # nothing but comments and blank lines: a problem of the file as a whole
        raise LocatedError(file, 0, 0, "the file is empty; a plan is a YAML mapping of keys to values")
    if _ANCHOR.search(text):  # aliases need an anchor; without one no node can be shared
        _check_expansion(root, file)
    data = _to_data(root, file)
    if not isinstance(data, dict):
        raise LocatedError(file, root.start_mark.line + 1, root.start_mark.column + 1,
                           "a plan must be a YAML mapping (key: value pairs) at the top level")
    return LoadedSource(
        file=file,
        data=data,
        source_map=SourceMap(file, root),
        sha256=hashlib.sha256(raw).hexdigest(),
        text=text,
    )


def _decode(raw: bytes, file: str) -> str:
    for bom, name in _BOMS.items():
        if raw.startswith(bom):
            raise LocatedError(file, 0, 0, f"file is {name} encoded; save it as UTF-8")
    if raw.startswith(b"\xef\xbb\xbf"):
        raw = raw[3:]
    nul = raw.find(b"\x00")
    if nul >= 0:
        line, column = line_column(raw[:nul].decode("utf-8", errors="replace"))
        raise LocatedError(file, line, column, "file contains NUL bytes (UTF-16 or binary?); save it as UTF-8 text")
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError as error:
        line, column = line_column(raw[: error.start].decode("utf-8", errors="replace"))
        raise LocatedError(file, line, column, f"byte 0x{raw[error.start]:02x} is not valid UTF-8; save the file as UTF-8") from None
    lone_cr = _LONE_CR.search(text)
    if lone_cr:
        line, column = line_column(text[: lone_cr.start()])
        # PyYAML ends a line at a carriage return that is not followed by a line feed; editors
        # and GitHub do not, so every line number after it would be wrong.
        raise LocatedError(file, line, column, "a carriage return without a line feed (old Mac line ending); "
                                               "save the file with LF or CRLF line endings")
    for char, name in _ODD_LINE_BREAKS.items():
        index = text.find(char)
        if index >= 0:
            line, column = line_column(text[:index])
            # PyYAML counts these as line breaks while editors do not, which would shift every
            # reported line after them.
            raise LocatedError(file, line, column, f"the character U+{ord(char):04X} {name} is not allowed; use a plain line break")
    return text


def _yaml_error(error: yaml.MarkedYAMLError, text: str, file: str) -> LocatedError:
    mark = error.problem_mark or error.context_mark
    line = mark.line + 1 if mark else 1
    column = mark.column + 1 if mark else 1
    problem = error.problem or "not valid YAML"
    lines = text.splitlines()
    offending = lines[mark.line] if mark and mark.line < len(lines) else ""
    if "\t" in problem or (mark and mark.column < len(offending) and offending[mark.column:mark.column + 1] == "\t"):
        return LocatedError(file, line, column, "a tab character is used for indentation; YAML needs spaces")
    if "maximum nesting depth" in problem:
        return LocatedError(file, line, column, f"nesting is deeper than {MAX_DEPTH} levels")
    message = problem
    if error.context:
        message = f"{error.context}: {problem}"
        started = error.context_mark
        if started is not None and mark is not None and started.line != mark.line:
            message += f" (the structure began at line {started.line + 1}, column {started.column + 1})"
    return LocatedError(file, line, column, f"not valid YAML: {message}")


def _check_expansion(root: yaml.Node, file: str) -> None:
    """Refuse documents whose aliases would expand past MAX_NODES values or MAX_EXPANDED_CHARS
    characters of text, before expanding anything.

    Sizes are memoised per node, so this costs one visit per distinct node even for a
    "billion laughs" document.
    """
    sizes: dict[int, tuple[int, int]] = {}
    in_progress: set[int] = set()

    def size(node: yaml.Node, depth: int) -> tuple[int, int]:
        known = sizes.get(id(node))
        if known is not None:
            return known
        if id(node) in in_progress:
            raise LocatedError(file, node.start_mark.line + 1, node.start_mark.column + 1,
                               "an alias refers to a node that contains it (a cycle)")
        if depth > MAX_DEPTH:
            raise LocatedError(file, node.start_mark.line + 1, node.start_mark.column + 1,
                               f"nesting is deeper than {MAX_DEPTH} levels")
        in_progress.add(id(node))
        nodes, chars = 1, 0
        if isinstance(node, yaml.ScalarNode):
            chars = len(node.value)
        else:
            children = node.value if isinstance(node, yaml.SequenceNode) else [n for pair in node.value for n in pair]
            for child in children:
                child_nodes, child_chars = size(child, depth + 1)
                nodes += child_nodes
                chars += child_chars
        in_progress.discard(id(node))
        where = (file, node.start_mark.line + 1, node.start_mark.column + 1)
        if nodes > MAX_NODES:
            raise LocatedError(*where, f"the document expands to more than {MAX_NODES} values (an alias repeated too often?)")
        if chars > MAX_EXPANDED_CHARS:
            raise LocatedError(*where, f"the document expands to more than {MAX_EXPANDED_CHARS} characters of text "
                                       "(an alias of a long value repeated too often?)")
        sizes[id(node)] = (nodes, chars)
        return nodes, chars

    size(root, 0)


def _to_data(root: yaml.Node, file: str) -> Any:
    """The plain data of a composed document, typed the YAML 1.2 way (module docstring).

    One pass over the nodes, written as a closure because it runs for every node of every plan:
    the common cases (a plain scalar that is text, a mapping or list without a tag) take the
    fewest steps, everything else goes to the helpers below, which also raise the errors.
    Cycles and alias expansion were refused before (:func:`_check_expansion`); the count of
    nodes visited is a second bound that holds even if an anchor was missed, and a cycle would
    end at the depth limit.
    """
    visited = 0
    scalar_node, sequence_node, mapping_node = yaml.ScalarNode, yaml.SequenceNode, yaml.MappingNode
    may_be_typed = _MAY_BE_TYPED

    def value_of(node: Any, depth: int) -> Any:  # a yaml.Node; its class is tested by identity below
        nonlocal visited
        visited += 1
        if visited > MAX_NODES:
            raise _fail(file, node, f"the document holds more than {MAX_NODES} values (counting every use of an alias)")
        if depth > MAX_DEPTH:
            raise _fail(file, node, f"nesting is deeper than {MAX_DEPTH} levels")
        kind = node.__class__
        tag = node.tag
        if kind is scalar_node:
            if tag == _PLAIN:
                text = node.value
                if text and text[0] not in may_be_typed:
                    return text  # no typing pattern can match: most plan values are text
                return _typed_plain(file, node, text)
            return _tagged_scalar(file, node)
        inner = depth + 1
        if kind is mapping_node and tag == _MAP:
            mapping: dict[str, Any] = {}
            for key_node, value_node in node.value:
                if key_node.__class__ is not scalar_node:
                    raise _fail(file, key_node, "a key must be a plain word, not a list or mapping")
                key = key_node.value
                if key_node.style == '"' or key in mapping or (key == "<<" and key_node.tag == _PLAIN):
                    _check_key(file, node, key_node, key in mapping)
                mapping[key] = value_of(value_node, inner)
            return mapping
        if kind is sequence_node and tag == _SEQ:
            return [value_of(child, inner) for child in node.value]
        raise _wrong_collection_tag(file, node)

    return value_of(root, 0)


def _fail(file: str, node: yaml.Node, message: str) -> LocatedError:
    return LocatedError(file, node.start_mark.line + 1, node.start_mark.column + 1, message)


def _check_key(file: str, mapping: yaml.MappingNode, key_node: yaml.ScalarNode, repeated: bool) -> None:
    """Refuse a key that holds an escaped control character, a merge key and a repeated key."""
    key = key_node.value
    control = CONTROL_CHARACTERS.search(key) if key_node.style == '"' else None
    if control:
        raise _fail(file, key_node, f"the key contains the control character U+{ord(control.group(0)):04X} "
                                    "(written as an escape); remove it")
    if key == "<<" and key_node.tag == _PLAIN:
        raise _fail(file, key_node, "merge keys ('<<') are not supported; write the keys out")
    if repeated:
        first = next(other for other, _ in mapping.value if other.__class__ is yaml.ScalarNode and other.value == key).start_mark
        raise _fail(file, key_node, f"duplicate key {key!r} (first written at line {first.line + 1}, column {first.column + 1})")


def _wrong_collection_tag(file: str, node: yaml.CollectionNode) -> LocatedError:
    if node.tag not in _ALLOWED_TAGS and node.tag != _PLAIN:
        return _fail(file, node, f"the tag {_short_tag(node.tag)!r} is not allowed; plans use plain YAML values only")
    what = "a list" if isinstance(node, yaml.SequenceNode) else "a mapping"
    return _fail(file, node, f"the tag {_short_tag(node.tag)!r} does not fit {what}")


def _tagged_scalar(file: str, node: yaml.ScalarNode) -> Any:
    """A scalar that is quoted, a block of text, or written with an explicit tag."""
    value = node.value
    tag = node.tag
    if tag not in _ALLOWED_TAGS:
        raise _fail(file, node, f"the tag {_short_tag(tag)!r} is not allowed; plans use plain YAML values only")
    if tag in (_SEQ, _MAP):
        kind = "a list" if tag == _SEQ else "a mapping"
        raise _fail(file, node, f"the tag {_short_tag(tag)!r} asks for {kind}, but a single value is written here")
    # Only a double-quoted scalar can hold an escape; the reader refuses raw control characters.
    control = CONTROL_CHARACTERS.search(value) if node.style == '"' else None
    if control:
        # Written as an escape in a quoted value ("\e[31m", "\x07"): the raw character is
        # refused by the reader, and the escaped one would reach documents and terminals.
        raise _fail(file, node, f"the value contains the control character U+{ord(control.group(0)):04X} "
                                "(written as an escape); remove it")
    if tag == _STR:
        return value
    # An explicit core tag: the text must fit it.
    typed: Any = _typed_plain(file, node, value)
    expected: dict[str, tuple[type, ...]] = {"int": (int,), "float": (int, float), "bool": (bool,), "null": (type(None),)}
    kinds = expected[tag[len(_CORE):]]
    fits = isinstance(typed, kinds) and not (isinstance(typed, bool) and bool not in kinds)
    if not fits:
        raise _fail(file, node, f"{_shown(value)} is not a valid {tag[len(_CORE):]}")
    return float(typed) if tag.endswith("float") else typed


def _typed_plain(file: str, node: yaml.ScalarNode, value: str) -> Any:
    if value and value[0] not in _MAY_BE_TYPED:
        return value
    if _NULL.match(value):
        return None
    if _TRUE.match(value):
        return True
    if _FALSE.match(value):
        return False
    for pattern, start, base in ((_INT10, 0, 10), (_INT8, 2, 8), (_INT16, 2, 16)):
        if pattern.match(value):
            return _integer(file, node, value, start, base)
    if _FLOAT.match(value):
        return _real(file, node, value)
    if _SPECIAL_FLOAT.match(value):
        raise _fail(file, node, f"{value!r} (infinity or not-a-number) is not allowed in a plan")
    return value


def _integer(file: str, node: yaml.ScalarNode, value: str, start: int, base: int) -> int:
    # Checked on the digits first: int() refuses more than 4,300 decimal digits, and a
    # huge hexadecimal number would only overflow later, deep inside a rule.
    digits = value[start:].lstrip("+-").lstrip("0")
    number = int(value[start:], base) if len(digits) <= _MAX_DIGITS else None
    if number is None or abs(number) > MAX_INTEGER:
        raise _fail(file, node, f"the number {_shown(value)} is too large; plans hold whole numbers "
                                f"up to {MAX_INTEGER:,}")
    return number


def _real(file: str, node: yaml.ScalarNode, value: str) -> float:
    number = float(value)
    if math.isinf(number):
        raise _fail(file, node, f"the number {_shown(value)} is too large to be held (it would be infinity)")
    if number == 0 and any(ch in "123456789" for ch in value.split("e")[0].split("E")[0]):
        raise _fail(file, node, f"the number {_shown(value)} is too small to be held (it would be 0)")
    return number


def _short_tag(tag: str) -> str:
    return "!!" + tag[len(_CORE):] if tag.startswith(_CORE) else tag


def _shown(value: str) -> str:
    """A written value quoted for a message, shortened when long (a 5,000-digit number)."""
    return repr(value if len(value) <= 40 else value[:20] + "…" + value[-8:])
