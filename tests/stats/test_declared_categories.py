"""A declared category set: unused categories count in weights and chance agreement.

Checked against irrCAC (``categories``, Gwet's ``categ.labels``) and scikit-learn (``labels``).
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from irrCAC.raw import CAC
from sklearn.metrics import cohen_kappa_score

from protolint.stats import cohen_kappa, fleiss_kappa, gwet_ac1, gwet_ac2

from .conftest import random_ratings

# Ratings use 2..5 of a declared 1..7 scale (equally spaced, so irrCAC's and scikit-learn's
# index-based weights equal our value-based ones).
SCALE = [1.0, 2.0, 3.0, 4.0, 5.0, 6.0, 7.0]


def _data(seed: int, n: int, k: int, missing: float = 0.0) -> np.ndarray:
    return random_ratings(seed, n, k, 4, missing) + 1.0


@pytest.mark.parametrize("seed", [61, 62])
@pytest.mark.parametrize("weights", ["unweighted", "linear", "quadratic"])
def test_cohen_with_declared_categories(seed: int, weights: str) -> None:
    x = _data(seed, 50, 2)
    ours = cohen_kappa(x, weights=weights, categories=SCALE)
    sk = cohen_kappa_score(x[:, 0], x[:, 1], weights=None if weights == "unweighted" else weights, labels=SCALE)
    assert ours.value == pytest.approx(sk, abs=1e-12)
    theirs = CAC(pd.DataFrame(x), weights="identity" if weights == "unweighted" else weights,
                 categories=SCALE, digits=12).conger()["est"]  # Conger's kappa is Cohen's for 2 raters
    assert ours.value == pytest.approx(theirs["coefficient_value"], abs=1e-9)
    assert ours.categories == tuple(SCALE)
    assert set(ours.unused_categories) >= {1.0, 6.0, 7.0}
    # Weighted kappa is a ratio of disagreement sums, so widening the range of linear or
    # quadratic weights rescales both and leaves kappa unchanged (the weights still change).
    assert ours.value == pytest.approx(cohen_kappa(x, weights=weights).value, abs=1e-12)


@pytest.mark.parametrize("seed,missing", [(63, 0.0), (64, 0.2)])
@pytest.mark.parametrize("weights", ["unweighted", "linear", "quadratic"])
def test_gwet_with_declared_categories(seed: int, missing: float, weights: str) -> None:
    x = _data(seed, 40, 4, missing)
    ours = gwet_ac1(x, categories=SCALE) if weights == "unweighted" else gwet_ac2(x, weights=weights, categories=SCALE)
    theirs = CAC(pd.DataFrame(x), weights="identity" if weights == "unweighted" else weights,
                 categories=SCALE, digits=12).gwet()["est"]
    assert ours.value == pytest.approx(theirs["coefficient_value"], abs=1e-9)
    assert ours.se == pytest.approx(theirs["se"], abs=1e-9)
    assert ours.pe == pytest.approx(theirs["pe"], abs=1e-9)
    assert ours.n_categories == 7 and ours.categories == tuple(SCALE)
    assert set(ours.unused_categories) >= {1.0, 6.0, 7.0}
    # q enters AC1's chance agreement, so declaring unused categories changes it.
    undeclared = gwet_ac1(x) if weights == "unweighted" else gwet_ac2(x, weights=weights)
    assert ours.pe != pytest.approx(undeclared.pe, abs=1e-6)


@pytest.mark.parametrize("seed,missing", [(65, 0.0), (66, 0.3)])
def test_fleiss_with_declared_categories(seed: int, missing: float) -> None:
    x = _data(seed, 40, 5, missing)
    ours = fleiss_kappa(x, categories=SCALE)
    theirs = CAC(pd.DataFrame(x), categories=SCALE, digits=12).fleiss()["est"]
    assert ours.value == pytest.approx(theirs["coefficient_value"], abs=1e-9)
    assert ours.se == pytest.approx(theirs["se"], abs=1e-9)
    # Unused categories add nothing to Fleiss' chance agreement and have no category kappa.
    assert ours.value == pytest.approx(fleiss_kappa(x).value, abs=1e-12)
    assert [c.category for c in ours.categories] == SCALE
    assert all(np.isnan(c.value) for c in ours.categories if c.category in ours.unused_categories)
    assert set(ours.unused_categories) >= {1.0, 6.0, 7.0}


def test_values_outside_the_declared_set_are_refused() -> None:
    with pytest.raises(ValueError, match=r"a value 5 that is not in categories"):
        gwet_ac1(_data(67, 20, 3), categories=[1.0, 2.0, 3.0, 4.0])
    with pytest.raises(ValueError, match="categories must not be empty"):
        fleiss_kappa(_data(67, 20, 3), categories=[])
