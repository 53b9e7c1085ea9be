"""G-study variance components and D-study coefficients (protolint.stats.gtheory).

Checked against Brennan (2001) synthetic data set No. 3, the Spearman-Brown formula, the
intraclass correlations of the statistics core on the same data, and the general-purpose
``generalizit`` package on seeded balanced data.
"""

from __future__ import annotations

import csv
import math
from pathlib import Path

import numpy as np
import pytest

from protolint.stats import icc, spearman_brown
from protolint.stats.gtheory import g_study

REFERENCE = Path(__file__).parents[1] / "data" / "reference"


def brennan_synthetic_3() -> np.ndarray:
    """10 persons x 4 items x 2 occasions (Brennan 2001, ch. 3, synthetic data set No. 3)."""
    x = np.full((10, 4, 2), np.nan)
    with open(REFERENCE / "A_brennan2001_synthetic3_pxixo_long.csv", newline="") as handle:
        for row in csv.DictReader(handle):
            x[int(row["Person"]) - 1, int(row["Item"]) - 1, int(row["Occasion"]) - 1] = float(row["Score"])
    assert not np.isnan(x).any()
    return x


def shrout_fleiss() -> np.ndarray:
    with open(REFERENCE / "A_shrout_fleiss_1979_6x4.csv", newline="") as handle:
        rows = list(csv.reader(handle))[1:]
    return np.array([[float(v) for v in row[1:]] for row in rows])


# Brennan (2001), ch. 3: G-study estimates for synthetic data set No. 3 (p x i x o, items read as raters).
BRENNAN_COMPONENTS = {"p": 0.5528, "r": 0.4417, "o": 0.0074, "pr": 0.5750, "po": 0.1009, "ro": 0.1565, "pro,e": 0.9352}


def test_brennan_synthetic_3_components_to_the_printed_digits() -> None:
    g = g_study(brennan_synthetic_3())
    assert g.design == "p x r x o" and (g.n_p, g.n_r, g.n_o) == (10, 4, 2)
    assert [c.effect for c in g.components] == list(BRENNAN_COMPONENTS)
    for effect, printed in BRENNAN_COMPONENTS.items():
        assert round(g.variance(effect), 4) == printed, effect
    assert not any(c.set_to_zero for c in g.components)


def test_brennan_synthetic_3_mean_squares() -> None:
    # The ANOVA table of the same data (Brennan 2001, ch. 3): MS for p, i, o, pi, po, io, pio,e.
    g = g_study(brennan_synthetic_3())
    expected = {"p": 6.9111111, "r": 12.4833333, "o": 3.2, "pr": 2.0851852, "po": 1.3388889, "ro": 2.5, "pro,e": 0.9351852}
    for effect, ms in expected.items():
        assert g.component(effect).mean_square == pytest.approx(ms, abs=5e-7), effect
    assert [c.df for c in g.components] == [9, 3, 1, 27, 9, 3, 27]


@pytest.mark.parametrize(("n_r", "n_o", "e_rho2", "phi"), [
    # Brennan (2001), ch. 4 formulas applied to the ch. 3 components of synthetic data set No. 3.
    (4, 2, 0.639871, 0.554125),
    (4, 1, 0.536027, 0.465225),
    (8, 2, 0.753550, 0.689028),
    (1, 1, 0.255456, 0.199599),
])
def test_brennan_synthetic_3_d_study(n_r: int, n_o: int, e_rho2: float, phi: float) -> None:
    d = g_study(brennan_synthetic_3()).d_study(n_r, n_o)
    assert d.e_rho2 == pytest.approx(e_rho2, abs=5e-7)
    assert d.phi == pytest.approx(phi, abs=5e-7)


def test_brennan_d_study_error_variances() -> None:
    # sigma^2(delta) = pr/4 + po/2 + pro,e/8; sigma^2(Delta) adds r/4 + o/2 + ro/8.
    d = g_study(brennan_synthetic_3()).d_study(4, 2)
    assert d.var_tau == pytest.approx(0.5527778, abs=5e-8)
    assert d.var_delta == pytest.approx(0.3111111, abs=5e-8)
    assert d.var_Delta == pytest.approx(0.4447917, abs=5e-8)


@pytest.mark.parametrize("k", [1, 2, 3, 4, 7])
def test_one_facet_d_study_is_spearman_brown_on_the_single_rating(k: int) -> None:
    g = g_study(shrout_fleiss())
    one = g.d_study(1)
    d = g.d_study(k)
    assert d.e_rho2 == pytest.approx(spearman_brown(one.e_rho2, k).reliability, abs=1e-12)
    assert d.phi == pytest.approx(spearman_brown(one.phi, k).reliability, abs=1e-12)


def test_one_facet_d_study_equals_the_icc_forms_of_the_core() -> None:
    # Shrout & Fleiss (1979) data: no negative component, so the identities hold exactly:
    # E rho^2 <-> ICC(3,.) (consistency) and Phi <-> ICC(2,.) (absolute agreement); r:p <-> ICC(1,.).
    x = shrout_fleiss()
    forms = icc(x)
    g = g_study(x)
    assert not any(c.set_to_zero for c in g.components)
    k = x.shape[1]
    assert g.d_study(1).e_rho2 == pytest.approx(forms["ICC(3,1)"].value, abs=1e-12)
    assert g.d_study(k).e_rho2 == pytest.approx(forms["ICC(3,k)"].value, abs=1e-12)
    assert g.d_study(1).phi == pytest.approx(forms["ICC(2,1)"].value, abs=1e-12)
    assert g.d_study(k).phi == pytest.approx(forms["ICC(2,k)"].value, abs=1e-12)
    nested = g_study(x, "r:p")
    assert nested.d_study(1).phi == pytest.approx(forms["ICC(1,1)"].value, abs=1e-12)
    assert nested.d_study(k).phi == pytest.approx(forms["ICC(1,k)"].value, abs=1e-12)
    assert nested.d_study(k).e_rho2 == nested.d_study(k).phi


def test_icc_identities_on_seeded_random_data() -> None:
    rng = np.random.default_rng(7)
    x = rng.normal(0, 2, (40, 1)) + rng.normal(0, 0.7, (1, 5)) + rng.normal(0, 1, (40, 5))
    g = g_study(x)
    forms = icc(x)
    assert not any(c.set_to_zero for c in g.components)
    assert g.d_study(5).e_rho2 == pytest.approx(forms["ICC(3,k)"].value, abs=1e-12)
    assert g.d_study(5).phi == pytest.approx(forms["ICC(2,k)"].value, abs=1e-12)


def test_negative_estimate_is_set_to_zero_flagged_and_used_as_zero() -> None:
    # Both raters have the same mean, so MS(r) = 0 < MS(pr,e): the ANOVA estimate of
    # sigma^2(r) is negative (Brennan 2001, §3.4: set to zero).
    x = np.array([[1.0, 2.0], [2.0, 1.0], [3.0, 5.0], [5.0, 3.0], [4.0, 4.0]])
    g = g_study(x)
    rater = g.component("r")
    assert rater.estimate < 0 and rater.set_to_zero and rater.variance == 0.0
    assert rater.estimate == pytest.approx(-g.component("pr,e").mean_square / 5)
    d = g.d_study(2)
    # With sigma^2(r) = 0 the absolute and relative errors coincide.
    assert d.var_Delta == d.var_delta and d.phi == d.e_rho2
    assert g.share("r") == 0.0
    assert sum(g.share(c.effect) for c in g.components) == pytest.approx(1.0)


def test_no_true_differences_give_zero_and_constant_data_undefined() -> None:
    # Identical subject means: sigma^2(p) negative -> 0, so both coefficients are 0.
    x = np.array([[1.0, 3.0], [3.0, 1.0], [2.0, 2.0]])
    d = g_study(x).d_study(3)
    assert d.e_rho2 == 0.0 and d.phi == 0.0
    constant = g_study(np.full((4, 3), 5.0)).d_study(2)
    assert math.isnan(constant.e_rho2) and math.isnan(constant.phi)


@pytest.mark.parametrize(("scores", "design", "message"), [
    (np.ones((3, 2, 2)), "p x r", "2-D"),
    (np.ones((3, 2)), "p x r x o", "3-D"),
    (np.ones((1, 3)), None, "at least 2 levels"),
    (np.array([[1.0, np.nan], [2.0, 3.0]]), None, "complete"),
    (np.ones((3, 3)), "pxr", "design"),
    (np.ones(4), None, "2-D"),
])
def test_bad_arguments_name_the_problem(scores: np.ndarray, design: str | None, message: str) -> None:
    with pytest.raises(ValueError, match=message):
        g_study(scores, design)


def test_occasions_cannot_be_projected_without_an_occasion_facet() -> None:
    with pytest.raises(ValueError, match="n_o must be 1"):
        g_study(shrout_fleiss()).d_study(2, 2)
    with pytest.raises(ValueError, match="n_r"):
        g_study(shrout_fleiss()).d_study(0)


# --------------------------------------------------------------------------- generalizit

def _generalizit_variances(frame, design: str) -> dict[str, float]:
    generalizit = pytest.importorskip("generalizit")
    gt = generalizit.GeneralizIT(frame, design, "Score")
    gt.calculate_anova()
    table = gt.design.anova_table
    return {str(index): float(value) for index, value in table["Variance"].items() if index != "mean"}


def _long(x: np.ndarray, nested: bool = False):
    pd = pytest.importorskip("pandas")
    rows = []
    for index in np.ndindex(x.shape):
        p, r = index[0], index[1]
        rater = f"{p}_{r}" if nested else str(r)
        rows.append((str(p), rater, *(str(i) for i in index[2:]), x[index]))
    columns = ["p", "r", "o"][: x.ndim] + ["Score"]
    return pd.DataFrame(rows, columns=columns)


# generalizit names effects "p x r" etc. and rounds its variance table to 4 decimals.
_NAMES = {"p": "p", "r": "r", "o": "o", "pr": "p x r", "po": "p x o", "ro": "r x o", "pro,e": "p x r x o",
          "pr,e": "p x r", "r:p": "r:p"}


@pytest.mark.parametrize("seed", [1, 2, 3])
def test_crossed_three_facet_components_agree_with_generalizit(seed: int) -> None:
    rng = np.random.default_rng(seed)
    shape = (15, 4, 3)
    x = (rng.normal(0, 2, (15, 1, 1)) + rng.normal(0, 1, (1, 4, 1)) + rng.normal(0, 0.5, (1, 1, 3))
         + rng.normal(0, 1, (15, 4, 1)) + rng.normal(0, 0.8, (15, 1, 3)) + rng.normal(0, 0.4, (1, 4, 3))
         + rng.normal(0, 1, shape))
    reference = _generalizit_variances(_long(x), "p x r x o")
    g = g_study(x)
    for c in g.components:
        if not c.set_to_zero:
            assert c.estimate == pytest.approx(reference[_NAMES[c.effect]], abs=5.1e-5), c.effect


def test_crossed_two_facet_and_nested_components_agree_with_generalizit() -> None:
    rng = np.random.default_rng(11)
    x = rng.normal(0, 1.5, (20, 1)) + rng.normal(0, 0.8, (1, 4)) + rng.normal(0, 1, (20, 4))
    reference = _generalizit_variances(_long(x), "p x r")
    g = g_study(x)
    for c in g.components:
        assert c.variance == pytest.approx(reference[_NAMES[c.effect]], abs=5.1e-5), c.effect
    nested_reference = _generalizit_variances(_long(x, nested=True), "r:p")
    nested = g_study(x, "r:p")
    for c in nested.components:
        assert c.variance == pytest.approx(nested_reference[_NAMES[c.effect]], abs=5.1e-5), c.effect


def test_brennan_synthetic_3_agrees_with_generalizit() -> None:
    reference = _generalizit_variances(_long(brennan_synthetic_3()), "p x r x o")
    g = g_study(brennan_synthetic_3())
    for c in g.components:
        assert c.variance == pytest.approx(reference[_NAMES[c.effect]], abs=5.1e-5)
