"""Spearman-Brown prophecy and its inverses, on the ICCs of Shrout & Fleiss (1979) Table 4 (formula values)."""

from __future__ import annotations

import numpy as np
import pytest

from protolint.stats import icc, raters_needed, single_from_average, spearman_brown


@pytest.mark.parametrize("single,k,expected", [(0.5, 2, 0.6666667), (0.6, 3, 0.8181818), (0.7, 0.5, 0.5384615)])
def test_forward(single: float, k: float, expected: float) -> None:
    r = spearman_brown(single, k)
    assert float(r) == pytest.approx(expected, abs=1e-7)
    assert r.reliability == float(r) and r.k == k


def test_forward_reproduces_shrout_fleiss_k_forms(shrout_fleiss: np.ndarray) -> None:
    # Spearman-Brown with m = 4 of ICC(1,1), ICC(2,1), ICC(3,1) gives Shrout & Fleiss's (1979)
    # Table 4 k-forms .44, .62, .91 (full precision 0.4427971, 0.6200505, 0.9093155).
    for single, expected in ((0.1657418, 0.4427971), (0.2897638, 0.6200505), (0.7148407, 0.9093155)):
        assert float(spearman_brown(single, 4)) == pytest.approx(expected, abs=1e-6)
    assert float(spearman_brown(icc(shrout_fleiss)["ICC(2,1)"].value, 4)) == pytest.approx(0.6200505, abs=1e-6)


@pytest.mark.parametrize(
    "single,target,k_exact,k",
    [
        (0.2897638, 0.80, 9.8043478, 10),  # raters for ICC(2,.) >= .80 on the S&F data
        (0.2897638, 0.90, 22.0597826, 23),
        (0.6, 0.9, 6.0, 6),  # exact whole numbers must not round up to 7 / 5
        (0.5, 0.8, 4.0, 4),
        (0.9, 0.8, 0.4444444, 1),  # already above target
    ],
)
def test_raters_needed(single: float, target: float, k_exact: float, k: int) -> None:
    r = raters_needed(single, target)
    # The S&F rows start from ICC(2,1) rounded to 7 digits, hence the looser tolerance.
    assert r.k_exact == pytest.approx(k_exact, abs=1e-5)
    assert r.k == k and isinstance(r.k, int)
    assert r.achieved == pytest.approx(float(spearman_brown(single, k)))
    assert r.achieved >= target - 1e-12
    if k > 1:
        assert float(spearman_brown(single, k - 1)) < target


def test_single_from_average_inverts_forward() -> None:
    # ICC(3,4) 0.9093155 -> ICC(3,1) 0.7148407 on the S&F data.
    assert single_from_average(0.9093155, 4) == pytest.approx(0.7148407, abs=1e-6)
    for single in (0.1, 0.45, 0.8):
        assert single_from_average(float(spearman_brown(single, 3)), 3) == pytest.approx(single)


@pytest.mark.parametrize(
    "call,message",
    [
        (lambda: spearman_brown(1.2, 2), r"single must be in \[0, 1\], got 1.2"),
        (lambda: spearman_brown(0.5, 0), "k must be greater than 0, got 0"),
        (lambda: raters_needed(0.0, 0.8), r"single must be in \(0, 1\)"),
        (lambda: raters_needed(0.5, 1.0), r"target must be in \(0, 1\), got 1.0"),
        (lambda: single_from_average(0.8, -1), "k must be greater than 0"),
    ],
)
def test_errors(call: object, message: str) -> None:
    with pytest.raises(ValueError, match=message):
        call()  # type: ignore[operator]


def test_type_errors_name_the_parameter() -> None:
    with pytest.raises(TypeError, match="single must be a real number, got '0.5'"):
        spearman_brown("0.5", 2)  # type: ignore[arg-type]
