"""Gwet's AC1 and AC2: Gwet's published examples and the irrCAC package."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from irrCAC.raw import CAC

from protolint.stats import gwet_ac1, gwet_ac2

from .conftest import random_ratings


def test_ac1_with_missing_values_matches_gwet(krippendorff_4x12: np.ndarray) -> None:
    r = gwet_ac1(krippendorff_4x12)
    # Gwet's irrCAC documentation (cac.raw4raters): AC1 0.77544, SE 0.14295, pa 0.8181818, pe 0.1903212.
    assert r.value == pytest.approx(0.7754441, abs=1e-6)
    assert r.se == pytest.approx(0.1429500, abs=1e-6)
    assert r.pa == pytest.approx(0.8181818, abs=1e-6)
    assert r.pe == pytest.approx(0.1903212, abs=1e-6)
    assert r.n_subjects == 12 and r.n_categories == 5


def test_ac1_on_fleiss_first_15_matches_gwet(fleiss_1971: np.ndarray) -> None:
    r = gwet_ac1(fleiss_1971[:15])
    # Gwet's irrCAC documentation (distrib.6raters): 0.4448007, SE 0.08418757, pa 0.5511111, pe 0.1914815.
    assert r.value == pytest.approx(0.4448007, abs=1e-6)
    assert r.se == pytest.approx(0.08418757, abs=1e-7)
    assert r.pa == pytest.approx(0.5511111, abs=1e-6)
    assert r.pe == pytest.approx(0.1914815, abs=1e-6)


def test_ac1_on_full_fleiss_and_skin_data(fleiss_1971: np.ndarray, skin: np.ndarray) -> None:
    # irrCAC 0.4.4 `CAC.gwet()` on the same data (Fleiss 1971 diagnoses; SAS agreement-study table).
    r = gwet_ac1(fleiss_1971)
    assert r.value == pytest.approx(0.4478845, abs=1e-6)
    assert r.se == pytest.approx(0.0556621, abs=1e-6)
    assert gwet_ac1(skin).value == pytest.approx(0.3510733, abs=1e-6)


@pytest.mark.parametrize("weights,value", [("quadratic", 0.9140007), ("linear", 0.8587391)])
def test_ac2_on_krippendorff_data(krippendorff_4x12: np.ndarray, weights: str, value: float) -> None:
    # irrCAC-Py; its own test suite asserts 0.914 / 0.859 for this data.
    assert gwet_ac2(krippendorff_4x12, weights=weights).value == pytest.approx(value, abs=1e-6)


@pytest.mark.parametrize("seed,n,k,q,missing", [(31, 30, 3, 4, 0.0), (32, 50, 5, 5, 0.15), (33, 20, 2, 3, 0.1)])
@pytest.mark.parametrize("weights", ["unweighted", "linear", "quadratic"])
def test_agrees_with_irrcac_on_seeded_data(seed: int, n: int, k: int, q: int, missing: float, weights: str) -> None:
    x = random_ratings(seed, n, k, q, missing)
    ours = gwet_ac1(x) if weights == "unweighted" else gwet_ac2(x, weights=weights)
    theirs = CAC(pd.DataFrame(x), weights="identity" if weights == "unweighted" else weights, digits=12).gwet()["est"]
    assert ours.value == pytest.approx(theirs["coefficient_value"], abs=1e-9)
    assert ours.se == pytest.approx(theirs["se"], abs=1e-9)
    assert ours.pa == pytest.approx(theirs["pa"], abs=1e-9)
    assert ours.pe == pytest.approx(theirs["pe"], abs=1e-9)
    # irrCAC builds the interval with a t quantile on n - 1 df and caps the upper bound at 1.
    low, high = theirs["confidence_interval"]
    assert ours.ci.low == pytest.approx(low, abs=1e-9)
    assert ours.ci.high == pytest.approx(high, abs=1e-9)


def test_errors() -> None:
    with pytest.raises(ValueError, match="weights must be one of"):
        gwet_ac2(np.eye(3), weights="cosine")
    with pytest.raises(ValueError, match="two or more raters"):
        gwet_ac1(np.array([[1.0, np.nan], [np.nan, 2.0]]))
    with pytest.raises(ValueError, match="must have at least 2 columns"):
        gwet_ac1(np.ones((4, 1)))
