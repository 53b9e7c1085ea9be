"""CUSUM and EWMA charts and their run lengths against published tables, plus seeded simulation."""

from __future__ import annotations

import numpy as np
import pytest

from protolint.stats.drift import (
    cusum,
    cusum_arl,
    cusum_arl_one_sided,
    cusum_h_for_arl,
    cusum_run_lengths,
    ewma,
    ewma_arl,
    ewma_L_for_arl,
    ewma_limit,
)

# Two-sided zero-state ARLs of the tabular CUSUM with k = 0.5, as printed in Lucas & Crosier
# (1982) Table 1 and Montgomery, Introduction to Statistical Quality Control, Table 9.3
# (3 significant digits). Shift in SD units -> ARL.
CUSUM_TABLE = {
    4.0: {0.0: 168, 0.5: 26.6, 1.0: 8.38, 1.5: 4.75, 2.0: 3.34},
    5.0: {0.0: 465, 0.5: 38.0, 1.0: 10.4, 1.5: 5.75, 2.0: 4.01},
}

# Two-sided zero-state ARLs of the EWMA with fixed asymptotic limits, Lucas & Saccucci (1990)
# Table 3 (3 significant digits).
EWMA_TABLE = {
    (0.5, 3.071): {0.0: 500, 0.5: 88.8, 1.0: 17.5, 1.5: 6.53, 2.0: 3.63},
    (0.03, 2.437): {0.0: 500, 0.5: 29.3, 1.0: 12.6, 1.5: 8.07, 2.0: 5.99},
}


def _printed(value: float, digits: int = 3) -> float:
    """``value`` rounded to ``digits`` significant digits, as the tables print it."""
    return float(f"{value:.{digits}g}")


@pytest.mark.parametrize("h", sorted(CUSUM_TABLE))
def test_cusum_arl_matches_published_table_to_printed_digits(h: float) -> None:
    for shift, printed in CUSUM_TABLE[h].items():
        # Tolerance: agreement to the 3 printed significant digits.
        assert _printed(cusum_arl(0.5, h, shift)) == pytest.approx(printed), (h, shift)


@pytest.mark.parametrize("key", sorted(EWMA_TABLE))
def test_ewma_arl_matches_lucas_saccucci_table_3_to_printed_digits(key: tuple[float, float]) -> None:
    lam, L = key
    for shift, printed in EWMA_TABLE[key].items():
        assert _printed(ewma_arl(lam, L, shift)) == pytest.approx(printed), (key, shift)


def test_one_sided_in_control_arl_is_twice_the_two_sided() -> None:
    # The one-sided ARL0 at k = 0.5 is 335.4 (h = 4) and 930.9 (h = 5) (Lucas & Crosier 1982,
    # halved in their two-sided table); the combination rule gives exactly half of it at no shift.
    assert cusum_arl_one_sided(0.5, 4.0) == pytest.approx(335.37, abs=0.05)
    assert cusum_arl_one_sided(0.5, 5.0) == pytest.approx(930.89, abs=0.1)
    assert cusum_arl(0.5, 4.0) == pytest.approx(cusum_arl_one_sided(0.5, 4.0) / 2)


def test_more_markov_states_converge() -> None:
    coarse = cusum_arl(0.5, 5.0, 0.0, states=100)
    fine = cusum_arl(0.5, 5.0, 0.0, states=600)
    assert abs(fine - 465.44) < abs(coarse - 465.44) < 0.5


def test_solved_limits_reproduce_the_tables() -> None:
    # Solving for the in-control ARL inverts the tables: h = 4 and 5, L = 3.071 and 2.437.
    assert cusum_h_for_arl(0.5, 167.68) == pytest.approx(4.0, abs=0.002)
    assert cusum_h_for_arl(0.5, 465.44) == pytest.approx(5.0, abs=0.002)
    assert ewma_L_for_arl(0.5, 499.91) == pytest.approx(3.071, abs=0.002)
    assert ewma_L_for_arl(0.03, 499.86) == pytest.approx(2.437, abs=0.003)


def test_run_lengths_object_reports_each_shift() -> None:
    rl = cusum_run_lengths(0.5, 4.0)
    assert rl.at(1.0) == pytest.approx(8.38, abs=0.005)
    assert "Lucas & Crosier" in rl.method
    with pytest.raises(KeyError):
        rl.at(3.0)


def test_cusum_path_by_hand() -> None:
    r = cusum([1.0, 1.0, -3.0, 0.0], k=0.5, h=2.0)
    assert r.upper == (0.5, 1.0, 0.0, 0.0)
    assert r.lower == (0.0, 0.0, 2.5, 2.0)
    assert (r.signal.index, r.signal.direction) == (2, "low")


def test_ewma_path_by_hand() -> None:
    r = ewma([1.0, 1.0, 1.0], lam=0.5, L=3.0)
    assert r.statistic == (0.5, 0.75, 0.875)
    assert r.limit == pytest.approx(3.0 * np.sqrt(0.5 / 1.5))
    assert r.signal.index is None
    assert ewma([4.0], lam=0.5, L=3.0).signal.direction == "high"


def test_bad_arguments_name_the_parameter() -> None:
    with pytest.raises(ValueError, match="h must"):
        cusum([0.0], h=0)
    with pytest.raises(ValueError, match="lam must"):
        ewma_limit(1.5, 3.0)
    with pytest.raises(ValueError, match="NaN"):
        cusum([0.0, float("nan")])
    with pytest.raises(ValueError, match="odd"):
        ewma_arl(0.2, 3.0, states=100)


def _run_lengths(rng: np.random.Generator, chart, shift: float, runs: int, cap: int) -> np.ndarray:
    lengths = []
    for _ in range(runs):
        z = rng.normal(shift, 1.0, size=cap)
        index = chart(z).signal.index
        lengths.append(cap if index is None else index + 1)
    return np.asarray(lengths, dtype=float)


def test_simulated_one_sd_shift_is_caught_within_the_promised_run_length() -> None:
    # Seeded: 400 runs with a 1-SD shift from the start. The mean run length must match the
    # Markov-chain ARL within 4 standard errors of the simulated mean (run lengths of a shifted
    # CUSUM have SD about ARL/2 here, so this is roughly ±10 %).
    rng = np.random.default_rng(9001)
    lengths = _run_lengths(rng, lambda z: cusum(z, 0.5, 4.0), 1.0, 400, 200)
    promised = cusum_arl(0.5, 4.0, 1.0)
    assert abs(lengths.mean() - promised) < 4 * lengths.std(ddof=1) / np.sqrt(lengths.size)
    lengths = _run_lengths(rng, lambda z: ewma(z, 0.5, 3.071), 1.0, 400, 300)
    promised = ewma_arl(0.5, 3.071, 1.0)
    assert abs(lengths.mean() - promised) < 4 * lengths.std(ddof=1) / np.sqrt(lengths.size)


def test_simulated_stable_raters_false_alarm_rate_is_no_more_than_promised() -> None:
    # Seeded: 2000 stable raters × 40 rounds. With ARL0 = 168 the chance of a false signal
    # within 40 rounds is about 1 − (1 − 1/168)^40 ≈ 0.21 (geometric approximation). Tolerance:
    # the observed share may exceed that by at most 3 binomial standard errors (≈ 0.027).
    rng = np.random.default_rng(4242)
    z = rng.normal(0.0, 1.0, size=(2000, 40))
    flagged = np.mean([cusum(row, 0.5, 4.0).signal.index is not None for row in z])
    promised = 1.0 - (1.0 - 1.0 / cusum_arl(0.5, 4.0)) ** 40
    assert flagged <= promised + 3 * np.sqrt(promised * (1 - promised) / 2000)
    assert flagged > promised / 2  # the chart is not silent either
