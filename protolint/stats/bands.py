"""Published interpretation bands for reliability coefficients.

Bands are descriptive conventions, not criteria: the authors themselves ask that they be
applied with judgement (Koo & Li recommend judging the confidence interval, not only the
point estimate).
"""

from __future__ import annotations

import math
from dataclasses import dataclass


@dataclass(frozen=True, slots=True)
class BandScale:
    """A published set of interpretation bands.

    Attributes
    ----------
    name : str
        Short citation, e.g. ``"Koo & Li 2016"``.
    reference : str
        Full reference.
    cuts : tuple of float
        Band boundaries in increasing order.
    labels : tuple of str
        One more label than cuts.
    upper_closed : bool
        True when a value equal to a cut belongs to the band below it.
    open_above : tuple of float
        Cuts where, against ``upper_closed``, a value equal to the cut belongs to the band
        above (Landis & Koch put 0 in "slight", but .20 in "slight" too).
    """

    name: str
    reference: str
    cuts: tuple[float, ...]
    labels: tuple[str, ...]
    upper_closed: bool
    open_above: tuple[float, ...] = ()

    def _below(self, value: float, cut: float) -> bool:
        if value == cut:
            return self.upper_closed and cut not in self.open_above
        return value < cut

    def classify(self, value: float) -> str:
        """The band label of ``value``; raises ValueError for NaN."""
        if isinstance(value, float) and math.isnan(value):
            raise ValueError("value must be a number, got nan")
        for cut, label in zip(self.cuts, self.labels):
            if self._below(value, cut):
                return label
        return self.labels[-1]

    def judge(self, value: float, low: float | None = None, high: float | None = None) -> str:
        """The band of a coefficient judged by its confidence interval.

        With an interval, the bands of its two ends: ``"good"`` when both ends fall in one
        band, ``"moderate to excellent"`` when the interval spans several (Koo & Li 2016 ask
        that the interval, not the estimate, be judged). Without one, the band of ``value``.
        """
        if low is None or high is None or not (math.isfinite(low) and math.isfinite(high)):
            return self.classify(value)
        lower, upper = self.classify(low), self.classify(high)
        return lower if lower == upper else f"{lower} to {upper}"

    def describe(self) -> str:
        """The bands in one line, e.g. ``"poor < 0.5 <= moderate < 0.75 <= good ..."``."""
        parts = [self.labels[0]]
        for cut, label in zip(self.cuts, self.labels[1:]):
            closed_below = self.upper_closed and cut not in self.open_above
            parts.append(f"{'<=' if closed_below else '<'} {cut:g} {'<' if closed_below else '<='} {label}")
        return " ".join(parts)


KOO_LI_2016 = BandScale(
    name="Koo & Li 2016",
    reference=(
        "Koo, T. K. & Li, M. Y. (2016). A guideline of selecting and reporting intraclass "
        "correlation coefficients for reliability research. Journal of Chiropractic Medicine, 15(2), 155-163."
    ),
    cuts=(0.5, 0.75, 0.9),
    labels=("poor", "moderate", "good", "excellent"),
    upper_closed=False,
)

LANDIS_KOCH_1977 = BandScale(
    name="Landis & Koch 1977",
    reference=(
        "Landis, J. R. & Koch, G. G. (1977). The measurement of observer agreement for "
        "categorical data. Biometrics, 33(1), 159-174."
    ),
    cuts=(0.0, 0.2, 0.4, 0.6, 0.8),
    labels=("poor", "slight", "fair", "moderate", "substantial", "almost perfect"),
    upper_closed=True,
    open_above=(0.0,),
)


def koo_li_2016(value: float) -> str:
    """Koo & Li (2016) band of an ICC: poor < .50 <= moderate < .75 <= good < .90 <= excellent."""
    return KOO_LI_2016.classify(value)


def landis_koch_1977(value: float) -> str:
    """Landis & Koch (1977) band of a kappa-type coefficient.

    < 0 poor; 0-.20 slight; .21-.40 fair; .41-.60 moderate; .61-.80 substantial;
    .81-1 almost perfect (a cut value belongs to the band below it; 0 is slight).
    """
    return LANDIS_KOCH_1977.classify(value)
