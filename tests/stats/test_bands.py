"""Interpretation bands: cut-points of Koo & Li (2016) and Landis & Koch (1977)."""

from __future__ import annotations

import pytest

from protolint.stats import KOO_LI_2016, LANDIS_KOCH_1977, koo_li_2016, landis_koch_1977


@pytest.mark.parametrize(
    "value,band",
    [
        # Koo & Li (2016): < .50 poor, .50-.75 moderate, .75-.90 good, > .90 excellent.
        (-0.2, "poor"), (0.3, "poor"), (0.62, "moderate"), (0.8, "good"), (0.95, "excellent"),
        # Boundaries left-closed, as in the effectsize package's interpret_icc.
        (0.5, "moderate"), (0.75, "good"), (0.9, "excellent"),
    ],
)
def test_koo_li(value: float, band: str) -> None:
    assert koo_li_2016(value) == band


@pytest.mark.parametrize(
    "value,band",
    [
        # Landis & Koch (1977): < 0 poor; 0-.20 slight; .21-.40 fair; .41-.60 moderate;
        # .61-.80 substantial; .81-1 almost perfect. Sources differ on who owns a boundary, so
        # values strictly inside the bands are the published check; the boundaries below are
        # our documented choice (a boundary belongs to the band it closes, as printed).
        (-0.1, "poor"), (0.1, "slight"), (0.3, "fair"), (0.5, "moderate"), (0.7, "substantial"), (0.9, "almost perfect"),
        (0.0, "slight"), (0.2, "slight"), (0.4, "fair"), (0.8, "substantial"), (1.0, "almost perfect"),
    ],
)
def test_landis_koch(value: float, band: str) -> None:
    assert landis_koch_1977(value) == band


def test_scales_name_their_source() -> None:
    assert KOO_LI_2016.name == "Koo & Li 2016" and "Journal of Chiropractic Medicine" in KOO_LI_2016.reference
    assert LANDIS_KOCH_1977.name == "Landis & Koch 1977" and "Biometrics" in LANDIS_KOCH_1977.reference
    with pytest.raises(ValueError, match="nan"):
        koo_li_2016(float("nan"))


@pytest.mark.parametrize(
    "low,high,label",
    [
        # Koo & Li (2016), J Chiropr Med 15:155-163, judged on the 95 % interval of the estimate:
        # below .50 poor, .50-.75 moderate, .75-.90 good, above .90 excellent.
        (0.76, 0.89, "good"),
        (0.80, 0.95, "good to excellent"),
        (0.40, 0.95, "poor to excellent"),
        (0.50, 0.7499, "moderate"),
    ],
)
def test_koo_li_judges_the_interval(low: float, high: float, label: str) -> None:
    assert KOO_LI_2016.judge((low + high) / 2, low, high) == label


def test_landis_koch_judges_the_interval_and_puts_zero_in_slight() -> None:
    # Landis & Koch (1977), Biometrics 33:159-174, their benchmarks: < 0 poor, 0-.20 slight, .21-.40 fair,
    # .41-.60 moderate, .61-.80 substantial, .81-1 almost perfect.
    assert LANDIS_KOCH_1977.judge(0.5, 0.35, 0.65) == "fair to substantial"
    assert LANDIS_KOCH_1977.judge(0.1, 0.0, 0.2) == "slight"
    assert LANDIS_KOCH_1977.judge(0.7) == "substantial"  # no interval: the estimate alone
    assert LANDIS_KOCH_1977.classify(0.0) == "slight" and LANDIS_KOCH_1977.classify(-0.01) == "poor"
    assert LANDIS_KOCH_1977.describe().startswith("poor < 0 <= slight <= 0.2 < fair")
    assert KOO_LI_2016.describe() == "poor < 0.5 <= moderate < 0.75 <= good < 0.9 <= excellent"
