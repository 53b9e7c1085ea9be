"""The YAML loader: positions, YAML 1.2 typing, safety limits, encodings."""

from __future__ import annotations

import time

import pytest

from protolint.errors import LocatedError
from protolint.plan.source import MAX_BYTES, MAX_NODES, load_source


def load(text: str | bytes):
    raw = text.encode("utf-8") if isinstance(text, str) else text
    return load_source(raw, "plan.yaml")


def error_of(text: str | bytes) -> LocatedError:
    with pytest.raises(LocatedError) as caught:
        load(text)
    return caught.value


def test_positions_of_keys_values_and_list_items():
    source = load("study:\n  id: X-1\nvisits:\n  - id: v1\n    day: 14\n  - id: v2\n    day:   28\n")
    spans = source.source_map.spans
    assert (spans[("study", "id")].key_line, spans[("study", "id")].key_column) == (2, 3)
    assert (spans[("study", "id")].value_line, spans[("study", "id")].value_column) == (2, 7)
    assert (spans[("visits", 1)].value_line, spans[("visits", 1)].value_column) == (6, 5)
    assert (spans[("visits", 1, "day")].value_line, spans[("visits", 1, "day")].value_column) == (7, 12)


def test_span_falls_back_to_nearest_written_ancestor():
    source = load("study:\n  id: X-1\n")
    span = source.source_map.span(("study", "title"))
    assert (span.key_line, span.key_column) == (1, 1)


def test_columns_count_code_points_not_bytes():
    source = load("title: \"Ærø – café\"\nnext: 1\nsame: [ø, 2]\n")
    assert source.source_map.spans[("same", 1)].value_column == 11


@pytest.mark.parametrize("text, expected", [
    ("country: NO", "NO"),          # YAML 1.1 would make this False
    ("answer: yes", "yes"),
    ("switch: off", "off"),
    ("time: 1:30", "1:30"),         # 1.1 sexagesimal would give 90
    ("id: 0755", "0755"),           # leading zero: kept as typed, never octal
    ("id: 012", "012"),
    ("date: 2026-01-15", "2026-01-15"),  # dates stay strings; the schema checks them
    ("big: 1_000", "1_000"),
    ("quoted: '12'", "12"),
])
def test_yaml_1_2_typing_keeps_what_the_writer_typed(text, expected):
    assert list(load(text).data.values()) == [expected]


@pytest.mark.parametrize("text, expected", [
    ("n: 12", 12), ("n: -3", -3), ("n: 0", 0), ("n: 0x1F", 31), ("n: 0o17", 15),
    ("n: 1.5", 1.5), ("n: 1e3", 1000.0), ("n: .5", 0.5), ("n: true", True), ("n: False", False),
    ("n: ~", None), ("n: null", None), ("n:", None), ("n: !!str 12", "12"), ("n: !!float 2", 2.0),
])
def test_yaml_1_2_core_scalars(text, expected):
    value = load(text).data["n"]
    assert value == expected and type(value) is type(expected)


def test_duplicate_key_is_an_error_at_the_second_occurrence():
    error = error_of("visits:\n  - id: v1\n    day: 14\n    day: 15\n")
    assert (error.line, error.column) == (4, 5)
    assert "duplicate key 'day'" in error.reason and "line 3" in error.reason


@pytest.mark.parametrize("text", [
    "a: !!python/object/apply:os.system ['echo hacked']\n",
    "a: !!python/name:os.system\n",
    "a: !custom thing\n",
    "a: !!binary aGVsbG8=\n",
    "a: !!set {x, y}\n",
    "a: !!timestamp 2024-01-01\n",
])
def test_unsafe_and_unknown_tags_are_refused_never_constructed(text, tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    error = error_of(text)
    assert error.line == 1 and "tag" in error.reason
    assert not (tmp_path / "hacked").exists()


def _laughs(anchor: str, separator: str, end: str) -> str:
    """Nine levels of nine aliases to the level below: 9^9 values once expanded."""
    lines = [anchor.format(name="a") + '["lol","lol","lol","lol","lol","lol","lol","lol","lol"]' + separator]
    previous = "a"
    for name in "bcdefghij":
        lines.append(anchor.format(name=name) + "[" + ",".join([f"*{previous}"] * 9) + "]" + separator)
        previous = name
    return "\n".join(lines) + end


@pytest.mark.parametrize("text", [
    _laughs("{name}: &{name} ", "", "\n"),
    # {"a":&x ...}: in a flow mapping the value may follow a quoted key's colon with no space.
    "{" + _laughs('"{name}":&{name} ', ",", '\n"end": 1}\n'),
], ids=["block", "flow-after-quoted-key"])
def test_billion_laughs_is_refused_before_expansion(text: str) -> None:
    # The expansion is counted on the node tree before any value is built: the message says so.
    assert "expands to more than" in error_of(text).reason


def test_a_document_of_too_many_values_is_refused_without_any_alias() -> None:
    # 200,001 one-digit values in a flow list: under the 2 MiB limit, over the value bound.
    error = error_of("values: [" + ",".join(["1"] * (MAX_NODES + 1)) + "]\n")
    assert f"the document holds more than {MAX_NODES} values" in error.reason
    assert load("values: [" + ",".join(["1"] * (MAX_NODES - 2)) + "]\n").data["values"][-1] == 1


def test_an_alias_inside_its_own_anchor_is_a_cycle() -> None:
    assert "cycle" in error_of('{"a":&x [1, *x]}\n').reason


def test_small_aliases_are_allowed():
    assert load("base: &b {x: 1}\ncopy: *b\n").data == {"base": {"x": 1}, "copy": {"x": 1}}


def test_recursive_alias_is_refused():
    assert "cycle" in error_of("a: &x [1, *x]\n").reason


def test_merge_keys_are_refused_with_a_hint():
    assert "merge keys" in error_of("base: &b {x: 1}\nother:\n  <<: *b\n").reason


def test_nesting_depth_is_bounded():
    error = error_of("a: " + "[" * 80 + "]" * 80 + "\n")
    assert "deeper than" in error.reason


def test_size_is_bounded():
    error = error_of(b"a: " + b"x" * (MAX_BYTES + 1))
    assert "larger than 2 MiB" in error.reason and (error.line, error.column) == (0, 0)


def test_utf8_bom_is_accepted():
    assert load(b"\xef\xbb\xbfa: 1\n").data == {"a": 1}


@pytest.mark.parametrize("raw, words", [
    ("a: 1\n".encode("utf-16"), "UTF-16"),
    ("a: 1\n".encode("utf-32"), "UTF-32"),
    ("a: 1\n".encode("utf-16-le"), "NUL"),
])
def test_other_encodings_are_a_clear_error(raw, words):
    assert words in error_of(raw).reason


def test_invalid_utf8_is_located():
    error = error_of("a: 1\nname: caf\xe9\n".encode("latin-1"))
    assert (error.line, error.column) == (2, 10)
    assert "not valid UTF-8" in error.reason


def test_unicode_line_separators_are_refused_so_lines_stay_right():
    error = error_of("a: 1\nb: x\u2028y\n")
    assert (error.line, error.column) == (2, 5)


def test_tab_indentation_is_a_clear_located_error():
    error = error_of("study:\n\tid: X\n")
    assert error.line == 2 and "tab" in error.reason


def test_unparsable_yaml_is_located():
    error = error_of("a: [1, 2\nb: 3\n")
    assert error.line == 2 and error.reason.startswith("not valid YAML")
    assert str(error.format_message()).startswith("plan.yaml:2:")


@pytest.mark.parametrize("text, words", [("", "empty"), ("# only a comment\n", "empty"), ("- 1\n- 2\n", "mapping"),
                                         ("just text\n", "mapping")])
def test_a_plan_must_be_a_mapping(text, words):
    assert words in error_of(text).reason


def test_not_a_number_and_infinity_are_refused():
    assert "not allowed" in error_of("a: .nan\n").reason
    assert "not allowed" in error_of("a: -.inf\n").reason


def test_non_scalar_keys_are_refused():
    assert "key" in error_of("? [a, b]\n: 1\n").reason


def test_sha256_is_of_the_raw_bytes():
    import hashlib

    raw = b"\xef\xbb\xbfa: 1\n"
    assert load(raw).sha256 == hashlib.sha256(raw).hexdigest()


def test_windows_line_endings_keep_line_numbers():
    source = load(b"a: 1\r\nb: 2\r\n")
    assert source.data == {"a": 1, "b": 2}
    assert source.source_map.spans[("b",)].key_line == 2


def test_a_lone_carriage_return_is_refused_so_lines_stay_right():
    error = error_of(b"a: 1\nb: 2\rc: 3\n")
    assert (error.line, error.column) == (2, 5) and "carriage return" in error.reason


# ---------------------------------------------------------------- hardening (numbers, tags, size)

@pytest.mark.parametrize("text, words", [
    ("n: " + "9" * 5000, "is too large; plans hold whole numbers up to 9,007,199,254,740,991"),
    ("n: 0x" + "f" * 400, "is too large"),
    ("n: 9007199254740992", "is too large"),
    ("n: -9007199254740992", "is too large"),
    ("n: 1e999", "too large to be held (it would be infinity)"),
    ("n: -1e999", "too large to be held"),
    ("n: !!float 1e400", "too large to be held"),
    ("n: 1e-400", "too small to be held (it would be 0)"),
    ("n: !!seq 0.5", "the tag '!!seq' asks for a list, but a single value is written here"),
    ("n: !!map text", "the tag '!!map' asks for a mapping"),
    ('n: "a\\e[31mb"', "control character U+001B (written as an escape)"),
    ('"k\\x07": 1', "the key contains the control character U+0007"),
])
def test_values_a_plan_cannot_hold_are_located_errors(text, words):
    error = error_of(text + "\n")
    assert words in error.reason and (error.line, error.column) == (1, 1 if text.startswith('"') else 4)


@pytest.mark.parametrize("text, expected", [
    ("n: 9007199254740991", 2**53 - 1),
    ("n: 0.0e-5", 0.0),
    ("n: 1_00", "1_00"),            # YAML 1.2 core: underscores make text, not 100
    ("n: １２", "１２"),             # full-width digits are text
    ("n: ١٢", "١٢"),                # so are other scripts' digits
    ('n: "tab\\there"', "tab\there"),
])
def test_numbers_follow_the_core_schema_exactly(text, expected):
    value = load(text + "\n").data["n"]
    assert value == expected and type(value) is type(expected)


def test_alias_expansion_is_bounded_by_the_text_it_makes():
    # 150,000 aliases stay under the node limit, but would make 45 GB of text for the documents.
    text = "long: &s " + "x" * 300_000 + "\nmany: [" + ", ".join(["*s"] * 150_000) + "]\n"
    started = time.perf_counter()
    error = error_of(text)
    assert "characters of text" in error.reason and time.perf_counter() - started < 10


def test_small_aliases_are_still_fine():
    assert load("a: &x [1, 2]\nb: *x\nc: *x\n").data == {"a": [1, 2], "b": [1, 2], "c": [1, 2]}


def test_reading_stops_at_the_limit(tmp_path):
    from protolint.plan.source import read_limited

    sparse = tmp_path / "sparse.yaml"
    with open(sparse, "wb") as stream:
        stream.truncate(3 * 1024**3)
    for path, what in ((sparse, "plan"), ("/dev/zero", "policy")):
        with pytest.raises(LocatedError) as caught:
            read_limited(str(path), what)
        assert (caught.value.line, caught.value.column) == (0, 0)
        assert f"larger than 2 MiB, the limit for a {what} file" in caught.value.reason
    exact = tmp_path / "exact.yaml"
    exact.write_bytes(b"a" * MAX_BYTES)
    assert len(read_limited(str(exact))) == MAX_BYTES
