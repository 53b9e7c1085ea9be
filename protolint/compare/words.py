"""A change to a plan in a sentence a reviewer understands.

``("rater_pools", 1, "monitoring", "interval_weeks")`` changed from 8 to 30 reads
"monitoring interval of rater pool VIDEO-READ: 8 → 30 weeks": the nearest entry with an id
names the subject, the keys below it name the field, and a unit suffix (``_weeks``,
``_days``…) becomes the unit.
"""

from __future__ import annotations

from typing import Any

# Collection key -> the noun for one of its entries. Others: the key in words, less a final "s".
ENTITY_WORDS = {
    "rater_pools": "rater pool", "sops": "SOP", "instruments": "instrument", "endpoints": "endpoint",
    "visits": "visit", "sites": "site", "evidence": "evidence record", "amendments": "amendment",
    "roster": "rater", "arms": "arm", "deviations": "deviation", "waivers": "waiver", "items": "item",
}
# Keys whose words alone would be unclear.
FIELD_WORDS = {
    "stated_n_total": "stated number of participants",
    "n_subjects": "number of subjects",
    "raters_per_assessment": "raters per assessment",
    "same_rater_across_visits": "same rater across visits",
    "ci": "confidence interval",
    "sd": "standard deviation",
    "id": "id",
}
UNITS = {"days": "days", "weeks": "weeks", "months": "months", "years": "years", "hours": "hours"}
_LONG = 70


def describe_change(kind: str, data: Any, path: tuple[str | int, ...], old: Any, new: Any) -> str:
    """One sentence for a change at ``path`` (a real data path into ``data``, the version that has it)."""
    subject, field_keys = _subject(data, path)
    in_list = bool(field_keys) and field_keys[-1].startswith("entry ") and kind != "changed"
    if in_list:
        field_keys = field_keys[:-1]   # "added prior-scores", not "added entry 2: prior-scores"
    field, unit = _field(field_keys)
    if not field:  # the entry itself was added or removed
        value = new if kind == "added" else old
        return f"{kind} {subject}{_entry_title(value)}" if subject else f"{kind} {_value(value)}"
    if in_list:
        where = f"{subject}, {field}" if subject else field
    else:
        where = f"{field} {'in' if subject.startswith('the ') else 'of'} {subject}" if subject else field
    if kind == "changed":
        return f"{where}: {_value(old, unit, bare=True)} → {_value(new, unit)}"
    if kind == "added":
        return f"{where}: added {_value(new, unit)}"
    return f"{where}: removed (was {_value(old, unit)})"


def _subject(data: Any, path: tuple[str | int, ...]) -> tuple[str, list[str]]:
    """The nearest named entry (or top-level section) on ``path`` and the keys below it."""
    node, subject = data, ""
    below: list[str] = []
    parent_key = ""
    for step in path:
        if isinstance(node, list) and isinstance(step, int) and 0 <= step < len(node):
            item = node[step]
            if isinstance(item, dict) and isinstance(item.get("id"), (str, int)):
                noun = ENTITY_WORDS.get(parent_key, _words(parent_key).removesuffix("s"))
                subject, below = f"{noun} {item['id']}", []
            else:
                below.append(f"entry {step + 1}")
            node = item
            continue
        below.append(str(step))
        parent_key = str(step)
        node = node.get(step) if isinstance(node, dict) else None
    if not subject and len(below) > 1:
        subject, below = f"the {_words(below[0])}", below[1:]
    return subject, below


def _field(keys: list[str]) -> tuple[str, str]:
    if not keys:
        return "", ""
    words = [FIELD_WORDS.get(key, _words(key)) for key in keys]
    unit = ""
    last = keys[-1].split("_")
    if len(last) > 1 and last[-1] in UNITS and keys[-1] not in FIELD_WORDS:
        unit = UNITS[last[-1]]
        words[-1] = " ".join(last[:-1])
    # "monitoring interval", not "monitoring, interval"; list positions read "entry 2 of".
    return " ".join(words), unit


def _words(key: str) -> str:
    return key.replace("_", " ").strip()


def _entry_title(value: Any) -> str:
    if isinstance(value, dict):
        for key in ("title", "name", "summary"):
            if isinstance(value.get(key), str):
                return f" ({_short(value[key])})"
    return ""


def _value(value: Any, unit: str = "", *, bare: bool = False) -> str:
    if isinstance(value, bool):
        text = "yes" if value else "no"
    elif value is None:
        text = "nothing"
    elif isinstance(value, (int, float, str)):
        text = _short(str(value))
        if unit and not bare:
            text += f" {unit[:-1] if unit.endswith('s') and value == 1 else unit}"
        return text
    elif isinstance(value, list):
        text = _short(", ".join(_value(item, bare=True) for item in value)) or "an empty list"
    elif isinstance(value, dict):
        ident = value.get("id")
        text = str(ident) if isinstance(ident, (str, int)) else _short(
            "; ".join(f"{_words(str(k))}: {_value(v, bare=True)}" for k, v in value.items()))
    else:
        text = _short(str(value))
    return text


def _short(text: str) -> str:
    text = " ".join(text.split())
    return text if len(text) <= _LONG else text[: _LONG - 1].rstrip() + "…"
