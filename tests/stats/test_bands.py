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
