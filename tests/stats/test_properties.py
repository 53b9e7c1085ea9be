"""Property-based checks (hypothesis) of the statistics' invariants on random data.

Each property is a fact of the method, true for every data set, so no published value is
needed: coefficients stay within their ranges; Spearman–Brown rises with k; the required N
does not rise with reliability; the ICC forms keep the order theory gives them (Shrout &
Fleiss 1979; McGraw & Wong 1996): an average-measure ICC is at least its single-measure ICC
when that is positive, and the absolute-agreement form is at most the consistency form when
the rater mean square is at least the error mean square (the rater variance estimate is then
non-negative); Krippendorff's alpha and Cronbach's alpha do not depend on the order of raters,
items or units. Example counts are small so ``make test`` stays fast.
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import HealthCheck, assume, example, given, settings
from hypothesis import strategies as st

from protolint import stats

FAST = settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow])
EPS = 1e-9


@st.composite
def score_tables(draw: st.DrawFn, min_subjects: int = 3, max_subjects: int = 15, max_raters: int = 5,
                 levels: int = 7) -> np.ndarray:
    n = draw(st.integers(min_subjects, max_subjects))
    k = draw(st.integers(2, max_raters))
    cells = draw(st.lists(st.integers(0, levels - 1), min_size=n * k, max_size=n * k))
    return np.asarray(cells, dtype=float).reshape(n, k)


def _mean_squares(x: np.ndarray) -> tuple[float, float]:
    # Two-way ANOVA without replication: rater (column) and error mean squares.
    n, k = x.shape
    grand = x.mean()
    ss_cols = n * ((x.mean(axis=0) - grand) ** 2).sum()
    ss_rows = k * ((x.mean(axis=1) - grand) ** 2).sum()
    ss_error = ((x - grand) ** 2).sum() - ss_rows - ss_cols
    return ss_cols / (k - 1), ss_error / ((n - 1) * (k - 1))


@FAST
@given(st.floats(0.01, 0.99), st.integers(1, 50))
def test_spearman_brown_rises_with_k_and_stays_in_range(single: float, k: int) -> None:
    this, more = float(stats.spearman_brown(single, k)), float(stats.spearman_brown(single, k + 1))
    assert 0.0 <= this <= more <= 1.0
    assert this >= single - EPS


@settings(max_examples=25, deadline=None)
@given(st.floats(0.3, 1.2), st.floats(0.3, 0.95), st.floats(0.01, 0.05))
def test_required_n_does_not_rise_with_reliability(effect: float, low: float, step: float) -> None:
    high = min(1.0, low + step)
    at_low = stats.sample_size_two_group(effect, reliability=low).n_total
    at_high = stats.sample_size_two_group(effect, reliability=high).n_total
    assert at_low >= at_high


def _icc_values(x: np.ndarray) -> dict[str, float] | None:
    try:
        result = stats.icc(x)
    except ValueError:
        return None  # undefined on this table (e.g. no variance at all)
    return {form.name: form.value for form in result.forms}


@FAST
@given(score_tables())
# Found by this test: the agreement forms' denominator is 0 (ICC(A,k) was 1.2e16) or negative
# (ICC(A,k) was 4); both are now undefined (NaN).
@example(np.array([[0.0, 1.0], [1.0, 0.0], [0.0, 2.0]]))
@example(np.array([[0.0, 1.0], [2.0, 0.0], [0.0, 1.0]]))
def test_icc_forms_stay_in_range_and_keep_their_order(x: np.ndarray) -> None:
    values = _icc_values(x)
    assume(values is not None and all(np.isfinite(list(values.values()))))
    k = x.shape[1]
    for value in values.values():
        assert value <= 1.0 + EPS
    # Single-measure one-way and consistency forms are bounded below by -1/(k-1).
    assert values["ICC(1,1)"] >= -1.0 / (k - 1) - EPS
    assert values["ICC(3,1)"] >= -1.0 / (k - 1) - EPS
    for model in ("1", "2", "3"):
        if values[f"ICC({model},1)"] > 0:
            assert values[f"ICC({model},k)"] >= values[f"ICC({model},1)"] - EPS
    ms_raters, ms_error = _mean_squares(x)
    if values["ICC(3,1)"] > 0 and ms_raters >= ms_error:
        assert values["ICC(2,1)"] <= values["ICC(3,1)"] + EPS


@FAST
@given(score_tables(), st.randoms(use_true_random=False), st.floats(0.1, 100.0), st.floats(-50.0, 50.0))
def test_icc_does_not_depend_on_order_or_units(x: np.ndarray, rnd, scale: float, shift: float) -> None:
    values = _icc_values(x)
    assume(values is not None)
    rows, cols = list(range(x.shape[0])), list(range(x.shape[1]))
    rnd.shuffle(rows)
    rnd.shuffle(cols)
    other = _icc_values(x[rows][:, cols] * scale + shift)
    assert other is not None
    for name, value in values.items():
        assert other[name] == pytest.approx(value, abs=1e-7, nan_ok=True)


@FAST
@given(score_tables(max_raters=4), st.sampled_from(("nominal", "ordinal", "interval")), st.randoms(use_true_random=False))
def test_krippendorff_alpha_ignores_rater_and_unit_order(x: np.ndarray, level: str, rnd) -> None:
    x = x.copy()
    x[0, 0] = np.nan  # one missing rating: alpha handles it, and order must not matter then either
    try:
        first = stats.krippendorff_alpha(x, level=level, bootstrap=0).value
    except ValueError:
        assume(False)  # undefined on this table; hypothesis fails the test if that is every table
    rows, cols = list(range(x.shape[0])), list(range(x.shape[1]))
    rnd.shuffle(rows)
    rnd.shuffle(cols)
    again = stats.krippendorff_alpha(x[rows][:, cols], level=level, bootstrap=0).value
    assert again == pytest.approx(first, abs=1e-9, nan_ok=True)
    if np.isfinite(first):
        assert first <= 1.0 + EPS


@pytest.mark.parametrize("compute", [stats.fleiss_kappa, stats.gwet_ac1, lambda x: stats.cohen_kappa(x[:, :2])],
                         ids=["fleiss", "gwet-ac1", "cohen"])
@FAST
@given(score_tables(min_subjects=5, levels=4))
def test_kappa_type_coefficients_stay_within_minus_one_and_one(compute, x: np.ndarray) -> None:
    try:
        value = compute(x).value
    except ValueError:
        assume(False)
    assume(np.isfinite(value))
    assert -1.0 - EPS <= value <= 1.0 + EPS


@FAST
@given(score_tables(min_subjects=4, max_raters=6), st.randoms(use_true_random=False))
def test_cronbach_alpha_is_at_most_one_and_ignores_item_order(x: np.ndarray, rnd) -> None:
    try:
        first = stats.cronbach_alpha(x).value
    except ValueError:
        assume(False)
    cols = list(range(x.shape[1]))
    rnd.shuffle(cols)
    assert stats.cronbach_alpha(x[:, cols]).value == pytest.approx(first, abs=1e-9, nan_ok=True)
    if np.isfinite(first):
        assert first <= 1.0 + EPS
