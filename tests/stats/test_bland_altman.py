"""Bland–Altman bias and limits of agreement on the published peak-flow data."""

from __future__ import annotations

import numpy as np
import pytest

from protolint.stats.bland_altman import bland_altman

# Bland & Altman (1986), Lancet i:307-310, Table 1: peak expiratory flow (l/min) of 17
# subjects, first reading with the large Wright meter and first with the mini Wright meter.
WRIGHT = [494, 395, 516, 434, 476, 557, 413, 442, 650, 433, 417, 656, 267, 478, 178, 423, 427]
MINI_WRIGHT = [512, 430, 520, 428, 500, 600, 364, 380, 658, 445, 432, 626, 260, 477, 259, 350, 451]


@pytest.fixture(scope="module")
def pef():
    return bland_altman(WRIGHT, MINI_WRIGHT, z=1.96)


def test_bias_and_sd(pef) -> None:
    # Bland & Altman (1986): mean difference -2.1, SD of differences 38.8 l/min.
    assert pef.n == 17
    assert pef.bias == pytest.approx(-2.12, abs=0.005)
    assert pef.sd == pytest.approx(38.77, abs=0.005)
    assert (pef.bias_ci.low, pef.bias_ci.high) == pytest.approx((-22.05, 17.81), abs=0.01)


def test_limits_at_two_sd_as_printed_in_1986() -> None:
    # Bland & Altman (1986) print the limits at 2 SD: -79.7 and 75.5 l/min.
    r = bland_altman(WRIGHT, MINI_WRIGHT, z=2.0)
    # The paper computes them from d̄ and s rounded to 0.1 (-2.1 ∓ 2 × 38.8); unrounded they are
    # -79.65 and 75.41, so the printed values are met within 0.1.
    assert (r.lower.value, r.upper.value) == pytest.approx((-79.65, 75.41), abs=0.005)
    assert (r.lower.value, r.upper.value) == pytest.approx((-79.7, 75.5), abs=0.1)


def test_limits_at_196(pef) -> None:
    assert (pef.lower.value, pef.upper.value) == pytest.approx((-78.10, 73.86), abs=0.01)


def test_approximate_intervals_of_the_limits(pef) -> None:
    # 1986 form: SE = sqrt(3 s^2 / n) = 16.28; 1999 form: SE = s sqrt(1/n + 1.96^2 / (2(n-1))) = 16.40;
    # both with t(16) (Bland & Altman 1986; 1999, Stat Methods Med Res 8:135-160).
    assert [pef.lower.ci_1986.low, pef.lower.ci_1986.high] == pytest.approx([-112.62, -43.58], abs=0.01)
    assert [pef.upper.ci_1986.low, pef.upper.ci_1986.high] == pytest.approx([39.34, 108.38], abs=0.01)
    assert [pef.lower.ci_1999.low, pef.lower.ci_1999.high] == pytest.approx([-112.85, -43.34], abs=0.01)
    assert [pef.upper.ci_1999.low, pef.upper.ci_1999.high] == pytest.approx([39.11, 108.62], abs=0.01)


def test_exact_intervals_of_the_limits_carkeet_2015(pef) -> None:
    # Carkeet (2015), Optom Vis Sci 92: exact interval by the noncentral t; for n = 17 the
    # factors on s are 1.3151 and 3.1483, giving (-124.16, -53.10) and (48.86, 119.93) here.
    assert [pef.lower.ci.low, pef.lower.ci.high] == pytest.approx([-124.16, -53.10], abs=0.01)
    assert [pef.upper.ci.low, pef.upper.ci.high] == pytest.approx([48.86, 119.93], abs=0.01)
    assert (pef.upper.ci.low - pef.bias) / pef.sd == pytest.approx(1.3151, abs=1e-4)
    assert (pef.upper.ci.high - pef.bias) / pef.sd == pytest.approx(3.1483, abs=1e-4)


def test_exact_interval_covers_the_true_limit_at_its_level() -> None:
    # Seeded simulation, 2000 samples of n = 10 from N(1, 2^2): the true upper limit 1 + 1.96·2
    # is inside the exact 95 % interval in 95 % of samples, within 3 binomial SEs (±0.015).
    rng = np.random.default_rng(15)
    true_upper = 1 + 1.959964 * 2
    hits = 0
    for _ in range(2000):
        d = rng.normal(1.0, 2.0, size=10)
        r = bland_altman(d, np.zeros(10))
        hits += r.upper.ci.low <= true_upper <= r.upper.ci.high
    assert abs(hits / 2000 - 0.95) < 3 * np.sqrt(0.95 * 0.05 / 2000)


def test_bad_input() -> None:
    with pytest.raises(ValueError, match="same length"):
        bland_altman([1, 2, 3], [1, 2])
    with pytest.raises(ValueError, match="at least 3"):
        bland_altman([1, 2, np.nan], [1, 2, 3])
