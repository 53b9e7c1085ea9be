"""Charts for the documents: matplotlib, drawn to SVG text that is inlined in the HTML.

Deterministic on purpose (the same plan gives the same bytes): the Agg backend, a fixed
``svg.hashsalt`` for the element ids, no date in the SVG metadata. Text is drawn as paths
(``svg.fonttype = path``, from matplotlib's own DejaVu Sans), so the chart needs no font from
the machine that renders or prints it.

The SVG is inlined in the HTML, where a ``style="fill: …"`` attribute would be read as HTML
CSS (WeasyPrint warns about every unknown property, and we treat warnings as errors) and a
``<style>`` element would apply to the whole page; both are turned into SVG presentation
attributes, which mean the same to every SVG renderer.
"""

from __future__ import annotations

import io
import re
from dataclasses import dataclass
from typing import Any, Sequence

_STYLE: dict[str, Any] = {
    "svg.hashsalt": "protolint",
    "svg.fonttype": "path",
    "font.family": ["DejaVu Sans"],
    "font.size": 9,
    "axes.spines.top": False,
    "axes.spines.right": False,
}


@dataclass(frozen=True)
class SampleSizeCurve:
    """Total N to enrol at each reliability, and the plan's own point."""

    reliabilities: tuple[float, ...]
    n_totals: tuple[int, ...]
    plan_reliability: float
    plan_n_total: int
    stated_n_total: int | None
    evidence_reliability: float | None = None
    """The reliability the plan's evidence supports for the way the endpoint is rated."""
    evidence_n_total: int | None = None


def sample_size_chart(curve: SampleSizeCurve) -> str:
    """SVG (as text, without XML prologue) of required N against reliability."""
    import matplotlib

    matplotlib.use("Agg", force=True)
    import matplotlib.pyplot as plt

    with matplotlib.rc_context(_STYLE):  # type: ignore[arg-type]  # matplotlib types keys as a Literal
        figure, axes = plt.subplots(figsize=(6.2, 2.6))
        try:
            axes.plot(curve.reliabilities, curve.n_totals, color="#1f4e79", linewidth=1.6,
                      label="N to enrol (both groups)")
            axes.plot([curve.plan_reliability], [curve.plan_n_total], marker="o", markersize=7,
                      color="#b03a2e", linestyle="none",
                      label=f"this plan: reliability {curve.plan_reliability:.2f}, N = {curve.plan_n_total}")
            axes.annotate(f"N = {curve.plan_n_total}", (curve.plan_reliability, curve.plan_n_total),
                          textcoords="offset points", xytext=(8, 8), color="#b03a2e")
            if curve.evidence_reliability is not None and curve.evidence_n_total is not None:
                axes.plot([curve.evidence_reliability], [curve.evidence_n_total], marker="D", markersize=6,
                          color="#7a5c00", linestyle="none",
                          label=f"evidence supports: reliability {curve.evidence_reliability:.2f}, N = {curve.evidence_n_total}")
                axes.annotate(f"N = {curve.evidence_n_total}", (curve.evidence_reliability, curve.evidence_n_total),
                              textcoords="offset points", xytext=(8, 8), color="#7a5c00")
            if curve.stated_n_total is not None:
                axes.axhline(curve.stated_n_total, color="#555555", linestyle="--", linewidth=1,
                             label=f"N the plan states ({curve.stated_n_total})")
            axes.set_xlabel("reliability of the analysed score")
            axes.set_ylabel("N to enrol")
            axes.set_xlim(min(curve.reliabilities), 1.0)
            axes.set_ylim(bottom=0)
            axes.grid(True, color="#dddddd", linewidth=0.6)
            # Below the axes, so the legend never hides the curve whatever its shape.
            axes.legend(frameon=False, loc="upper center", bbox_to_anchor=(0.5, -0.2), ncol=2, fontsize=8)
            buffer = io.StringIO()
            figure.savefig(buffer, format="svg", bbox_inches="tight", metadata={"Date": None})
        finally:
            plt.close(figure)
    return _inline_svg(buffer.getvalue())


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


def _inline_svg(svg: str) -> str:
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
