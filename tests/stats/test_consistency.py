"""Cronbach's alpha, Feldt interval, item statistics, SEM and MDC: published data and pingouin."""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pingouin as pg
import pytest
from scipy import stats as sps

from protolint.stats import cronbach_alpha, icc, mdc95, sem

from .conftest import random_scores


def test_alpha_and_feldt_interval_on_shrout_fleiss(shrout_fleiss: np.ndarray) -> None:
    r = cronbach_alpha(shrout_fleiss)
    # Judges as items: alpha = ICC(3,4) = 0.9093155 (pingouin cronbach_alpha and psych alpha agree),
    # Feldt 95 % interval 0.6756747 / 0.9858917 (psych "95% confidence boundaries (Feldt)").
    assert r.value == pytest.approx(0.9093155, abs=1e-6)
    assert r.ci.low == pytest.approx(0.6756747, abs=1e-5)
    assert r.ci.high == pytest.approx(0.9858917, abs=1e-5)
    assert r.value == pytest.approx(icc(shrout_fleiss)["ICC(3,k)"].value, abs=1e-12)
    assert (r.n_respondents, r.n_items, r.n_dropped) == (6, 4, 0)


@pytest.mark.parametrize("seed,n,k,level", [(51, 30, 5, 0.95), (52, 100, 8, 0.90), (53, 12, 3, 0.99)])
def test_agrees_with_pingouin(seed: int, n: int, k: int, level: float) -> None:
    x = random_scores(seed, n, k)
    ours = cronbach_alpha(x, confidence=level)
    frame = pd.DataFrame(x)
    alpha, (low, high) = pg.cronbach_alpha(frame, ci=level)
    assert ours.value == pytest.approx(alpha, abs=1e-10)
    # pingouin rounds its interval to 3 dp.
    assert ours.ci.low == pytest.approx(low, abs=5e-4 + 1e-9)
    assert ours.ci.high == pytest.approx(high, abs=5e-4 + 1e-9)
    for item in ours.items:
        rest = frame.drop(columns=item.index)
        assert item.alpha_if_deleted == pytest.approx(pg.cronbach_alpha(rest)[0], abs=1e-10)
        # Corrected item-total correlation: Pearson r of the item with the sum of the others.
        expected_r = sps.pearsonr(x[:, item.index], rest.sum(axis=1)).statistic
        assert item.corrected_item_total_r == pytest.approx(expected_r, abs=1e-10)
        assert item.mean == pytest.approx(frame[item.index].mean())
        assert item.sd == pytest.approx(frame[item.index].std())


def test_sem_and_mdc_formulas() -> None:
    # Shrout & Fleiss (1979) Table 2 data, formula values worked from the Table 3 mean squares
    # and Table 4 ICCs: SD of all 24 ratings
    # 2.7103532 with ICC(2,1) gives SEM 2.2841641, with ICC(3,1) 1.4473369; SEM = sqrt(EMS)
    # = 1.0096754 gives MDC95 = 1.96 sqrt(2) SEM = 2.7986775.
    assert sem(2.7103532, 0.2897638) == pytest.approx(2.2841641, abs=1e-6)
    assert sem(2.7103532, 0.7148407) == pytest.approx(1.4473369, abs=1e-6)
    assert mdc95(1.0096754) == pytest.approx(2.7986775, abs=1e-6)


def test_result_sem_refers_to_the_total_score(shrout_fleiss: np.ndarray) -> None:
    r = cronbach_alpha(shrout_fleiss)
    total_sd = float(np.std(shrout_fleiss.sum(axis=1), ddof=1))
    assert r.sd_total == pytest.approx(total_sd)
    assert r.sem == pytest.approx(total_sd * math.sqrt(1 - r.value))
    assert r.mdc95 == pytest.approx(1.96 * math.sqrt(2) * r.sem)


def test_missing_items_drop_respondents(shrout_fleiss: np.ndarray) -> None:
    x = shrout_fleiss.copy()
    x[2, 0] = np.nan
    r = cronbach_alpha(x)
    assert (r.n_respondents, r.n_dropped) == (5, 1)
    assert r.value == pytest.approx(pg.cronbach_alpha(pd.DataFrame(np.delete(shrout_fleiss, 2, axis=0)))[0])


def test_two_items_have_no_alpha_if_deleted() -> None:
    r = cronbach_alpha(random_scores(54, 20, 2))
    assert all(item.alpha_if_deleted is None for item in r.items)


def test_errors() -> None:
    with pytest.raises(ValueError, match="constant total score"):
        cronbach_alpha(np.array([[1.0, 2.0], [2.0, 1.0], [3.0, 0.0]]))
    with pytest.raises(ValueError, match=r"reliability must be in \[0, 1\], got 1.2"):
        sem(2.0, 1.2)
    with pytest.raises(ValueError, match="sd must be >= 0"):
        sem(-1.0, 0.5)
    with pytest.raises(ValueError, match="sem_value must be >= 0"):
        mdc95(-0.1)


def test_ceiling_item_is_computed_with_a_warning() -> None:
    # An item everybody scores at its maximum: alpha is defined (pingouin computes it too);
    # the item has no item-total correlation, and alpha without it is the alpha of the rest.
    x = random_scores(55, 40, 5)
    x[:, 3] = 4.0
    r = cronbach_alpha(x)
    frame = pd.DataFrame(x)
    assert r.value == pytest.approx(pg.cronbach_alpha(frame)[0], abs=1e-10)
    assert r.items[3].corrected_item_total_r is None
    assert r.items[3].alpha_if_deleted == pytest.approx(pg.cronbach_alpha(frame.drop(columns=3))[0], abs=1e-10)
    for item in r.items:
        if item.index != 3:
            assert item.alpha_if_deleted == pytest.approx(pg.cronbach_alpha(frame.drop(columns=item.index))[0], abs=1e-10)
    assert r.warnings == (
        "item 4 has the same score (4) for every respondent: it adds nothing to the total's variance "
        "and has no item-total correlation; alpha is computed with it",
    )


@pytest.mark.parametrize("seed,n,k", [(56, 200, 12), (57, 50, 3)])
def test_item_statistics_from_the_covariance_matrix_match_deletion(seed: int, n: int, k: int) -> None:
    # Offset data (large mean, small spread) guards the covariance shortcut against cancellation.
    x = random_scores(seed, n, k) + 1000.0
    r = cronbach_alpha(x)
    for item in r.items:
        rest = np.delete(x, item.index, axis=1)
        expected_r = sps.pearsonr(x[:, item.index], rest.sum(axis=1)).statistic
        assert item.corrected_item_total_r == pytest.approx(expected_r, abs=1e-9)
        assert item.alpha_if_deleted == pytest.approx(pg.cronbach_alpha(pd.DataFrame(rest))[0], abs=1e-9)
    assert any("rests on" in w for w in cronbach_alpha(x[:6]).warnings)
