"""Charts for the documents, as SVG text inlined in the HTML.

* The sample-size chart (:func:`sample_size_chart`) is plain SVG written from numbers, shared
  by the SOP binder and the review report: no numpy, no matplotlib, milliseconds to draw.
* The drift and design reports draw with matplotlib in :data:`MATPLOTLIB_STYLE` and pass the
  result through :func:`inline_svg`. Deterministic on purpose (the same input gives the same
  bytes): the Agg backend, a fixed ``svg.hashsalt`` for the element ids, no date in the SVG
  metadata. Text is drawn as paths (``svg.fonttype = path``, from matplotlib's own DejaVu
  Sans), so such a chart needs no font from the machine that renders or prints it.

The SVG is inlined in the HTML, where a ``style="fill: …"`` attribute would be read as HTML
CSS (WeasyPrint warns about every unknown property, and we treat warnings as errors) and a
``<style>`` element would apply to the whole page; both are turned into SVG presentation
attributes, which mean the same to every SVG renderer.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass
from typing import Any, Sequence

MATPLOTLIB_STYLE: dict[str, Any] = {
    "svg.hashsalt": "protolint",
    "svg.fonttype": "path",
    "font.family": ["DejaVu Sans"],
    "font.size": 9,
    "axes.spines.top": False,
    "axes.spines.right": False,
}


@dataclass(frozen=True)
class SampleSizeCurve:
    """Participants to enrol at each reliability, the plan's own point and the evidence's."""

    reliabilities: tuple[float, ...]
    n_totals: tuple[int, ...]
    plan_reliability: float
    """The reliability the plan's calculation assumes (1 when it assumes none)."""
    plan_n_total: int
    """The N the plan states (or, when it states none, the N needed at its reliability)."""
    evidence_reliability: float | None = None
    """The reliability the plan's evidence supports for the way the endpoint is rated."""
    evidence_n_total: int | None = None


# Geometry of the sample-size chart, in SVG user units. The right margin leaves room for the
# plan's marker at reliability 1.0, where most plans that ignore reliability put it.
_W, _H = 640, 300
_LEFT, _RIGHT, _TOP, _BOTTOM = 64, 40, 16, 48
_INK, _MUTED, _GRID, _CURVE, _ALERT = "#1d2733", "#55606e", "#e3e7ec", "#2f4f6f", "#8f1d1d"
_FONT = 'font-family="protolint sans, DejaVu Sans, sans-serif"'


def sample_size_chart(curve: SampleSizeCurve) -> str:
    """SVG (as text) of participants to enrol against reliability, with the plan's point (a
    square) and the point the evidence supports (a circle) joined by a dashed line.

    Plain SVG written here from numbers only (no plan text), with presentation attributes
    (understood by browsers and by WeasyPrint alike, and overridable by a page's CSS through
    the class names), and without numpy or matplotlib: the review report and the binder draw
    it in milliseconds and ``check --format html`` stays light. The same curve gives the same
    bytes.
    """
    if not curve.reliabilities or len(curve.reliabilities) != len(curve.n_totals):
        raise ValueError("the curve needs as many N as reliabilities, and at least one of each")
    low = min(curve.reliabilities)
    high = 1.0 if low < 1.0 else low + 0.1
    tops = [*curve.n_totals, curve.plan_n_total, curve.evidence_n_total or 0]
    y_max = nice_ceiling(max(tops))

    def px(x: float) -> float:
        return _LEFT + (x - low) / (high - low) * (_W - _LEFT - _RIGHT)

    def py(n: float) -> float:
        return _H - _BOTTOM - n / y_max * (_H - _TOP - _BOTTOM)

    plan_x, plan_n = curve.plan_reliability, curve.plan_n_total
    evidence = None
    if curve.evidence_reliability is not None and curve.evidence_n_total is not None:
        evidence = (curve.evidence_reliability, curve.evidence_n_total)
    summary = f"The plan: {plan_n:,} at reliability {plan_x:.2f}."
    if evidence is not None:
        summary += f" The evidence supports reliability {evidence[0]:.3f}, for which {evidence[1]:,} are needed."
    parts = [f'<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 {_W} {_H}" role="img" class="chart" {_FONT}>'
             f"<title>Participants to enrol against reliability</title><desc>{summary}</desc>",
             f'<rect x="{_LEFT}" y="{_TOP}" width="{_W - _LEFT - _RIGHT}" height="{_H - _TOP - _BOTTOM}" '
             f'class="frame" fill="none" stroke="#9aa5b1"/>']
    for i in range(6):
        n = y_max * i / 5
        parts.append(f'<line x1="{_LEFT}" x2="{_W - _RIGHT}" y1="{py(n):.1f}" y2="{py(n):.1f}" class="grid" stroke="{_GRID}"/>'
                     f'<text x="{_LEFT - 6}" y="{py(n) + 4:.1f}" class="tick" text-anchor="end" font-size="12" '
                     f'fill="{_MUTED}">{int(n):,}</text>')
    tick = math.ceil(low * 10 - 1e-9) / 10
    while tick <= high + 1e-9:
        parts.append(f'<text x="{px(tick):.1f}" y="{_H - _BOTTOM + 16}" class="tick" text-anchor="middle" '
                     f'font-size="12" fill="{_MUTED}">{tick:.1f}</text>')
        tick = round(tick + 0.1, 10)
    parts.append(f'<text x="{(_LEFT + _W - _RIGHT) / 2}" y="{_H - 10}" class="axis" text-anchor="middle" '
                 f'font-size="13" fill="{_INK}">reliability of the endpoint as rated</text>')
    middle = (_TOP + _H - _BOTTOM) / 2
    parts.append(f'<text x="14" y="{middle}" class="axis" text-anchor="middle" font-size="13" fill="{_INK}" '
                 f'transform="rotate(-90 14 {middle})">participants to enrol</text>')
    path = " ".join(f"{'M' if i == 0 else 'L'}{px(x):.1f},{py(n):.1f}"
                    for i, (x, n) in enumerate(zip(curve.reliabilities, curve.n_totals)))
    parts.append(f'<path d="{path}" class="curve" fill="none" stroke="{_CURVE}" stroke-width="2.5"/>')
    if evidence is not None:
        ex, en = evidence
        parts.append(f'<line x1="{px(plan_x):.1f}" y1="{py(plan_n):.1f}" x2="{px(ex):.1f}" y2="{py(en):.1f}" '
                     f'class="gap" stroke="{_ALERT}" stroke-width="1.5" stroke-dasharray="5 4"/>')
    parts.append(f'<rect x="{px(plan_x) - 6:.1f}" y="{py(plan_n) - 6:.1f}" width="12" height="12" class="plan-point" '
                 f'fill="#ffffff" stroke="{_INK}" stroke-width="2.5"/>')
    if evidence is not None:
        parts.append(f'<circle cx="{px(ex):.1f}" cy="{py(en):.1f}" r="7" class="evidence-point" fill="{_ALERT}"/>')
    # Labels sit on the side of the point that faces the middle of the chart, so none is cut off.
    anchor, offset = ("end", -10) if px(plan_x) > _W / 2 else ("start", 10)
    parts.append(f'<text x="{px(plan_x) + offset:.1f}" y="{py(plan_n) + 20:.1f}" class="label" text-anchor="{anchor}" '
                 f'font-size="13" font-weight="bold" fill="{_INK}">plan: {plan_n:,} at {plan_x:.2f}</text>')
    if evidence is not None:
        anchor, offset = ("end", -10) if px(ex) > _W * 0.7 else ("start", 10)
        parts.append(f'<text x="{px(ex) + offset:.1f}" y="{py(en) - 10:.1f}" class="label" text-anchor="{anchor}" '
                     f'font-size="13" font-weight="bold" fill="{_INK}">evidence: {en:,} at {ex:.2f}</text>')
    parts.append("</svg>")
    return "".join(parts)


def nice_ceiling(value: float) -> float:
    """The smallest of 1, 2, 2.5, 5 or 10 times a power of ten that is at least ``value``."""
    magnitude = 10 ** math.floor(math.log10(max(value, 1)))
    for step in (1, 2, 2.5, 5, 10):
        if value <= step * magnitude:
            return step * magnitude
    return 10 * magnitude


_PROLOGUE = re.compile(r"^\s*<\?xml[^>]*\?>\s*(<!DOCTYPE[^>]*>\s*)?", re.DOTALL)


_STYLE_ATTRIBUTE = re.compile(r'style="([^"]*)"')
_STYLE_ELEMENT = re.compile(r"<style[^>]*>(.*?)</style>\s*", re.DOTALL)
_METADATA = re.compile(r"<metadata>.*?</metadata>\s*", re.DOTALL)
_DECLARATION = re.compile(r"^[a-z-]+$")
_PATH_WITHOUT_OUTLINE = re.compile(r"<path(?![^>]*\sd=)((?:\s[^>]*)?/?>)")


def _as_attributes(style: str) -> str:
    pairs = []
    for declaration in style.split(";"):
        name, _, value = declaration.partition(":")
        name, value = name.strip(), value.strip()
        if name and _DECLARATION.match(name) and value:
            pairs.append(f'{name}="{value}"')
    return " ".join(pairs)


def inline_svg(svg: str) -> str:
    """SVG text ready to sit inside HTML: no prologue, no metadata, no CSS, scalable."""
    svg = _PROLOGUE.sub("", svg)
    svg = _METADATA.sub("", svg)
    # matplotlib's sheet is "*{stroke-linejoin: round; stroke-linecap: butt}": inherited
    # presentation attributes on the root give the same result.
    root_style = ""
    sheet = _STYLE_ELEMENT.search(svg)
    if sheet:
        body = re.search(r"\{([^}]*)\}", sheet.group(1))
        root_style = _as_attributes(body.group(1)) if body else ""
        svg = _STYLE_ELEMENT.sub("", svg)
    svg = _STYLE_ATTRIBUTE.sub(lambda m: _as_attributes(m.group(1)), svg)
    svg = re.sub(r'<svg([^>]*?) width="[^"]*" height="[^"]*"', rf'<svg\1 class="chart" {root_style}', svg, count=1)
    # matplotlib writes the space glyph as a <path> with no outline; HTML validators require
    # the d attribute, and an empty one draws the same nothing.
    svg = _PATH_WITHOUT_OUTLINE.sub(r'<path d=""\1', svg)
    return svg


def reliability_grid(low: float = 0.3, high: float = 1.0, step: float = 0.02) -> Sequence[float]:
    """Reliabilities at which the curve is computed (inclusive of both ends)."""
    count = int(round((high - low) / step))
    return tuple(round(low + k * step, 4) for k in range(count + 1))
