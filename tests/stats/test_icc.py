"""ICC: Shrout & Fleiss (1979) worked example, and pingouin on the same and seeded data."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pingouin as pg
import pytest

from protolint.stats import ICC_NAMES, icc, spearman_brown

from .conftest import random_scores

# Shrout & Fleiss (1979) Table 4, printed to 2 dp (Table 4 orders the forms as below).
SF_TABLE4 = {"ICC(1,1)": 0.17, "ICC(2,1)": 0.29, "ICC(3,1)": 0.71, "ICC(1,k)": 0.44, "ICC(2,k)": 0.62, "ICC(3,k)": 0.91}

# Full-precision values on the same data from psych::ICC() and pingouin.intraclass_corr (both agree),
# and 95 % bounds from psych::ICC() (pingouin prints its bounds rounded to 2 dp).
SF_FULL = {
    "ICC(1,1)": (0.1657418, -0.1329323, 0.7225601),
    "ICC(2,1)": (0.2897638, 0.0187865, 0.7610844),
    "ICC(3,1)": (0.7148407, 0.3424648, 0.9458583),
    "ICC(1,k)": (0.4427971, -0.8844422, 0.9124154),
    "ICC(2,k)": (0.6200505, 0.0711368, 0.9272320),
    "ICC(3,k)": (0.9093155, 0.6756747, 0.9858917),
}


def test_mean_squares_match_shrout_fleiss_table_3(shrout_fleiss: np.ndarray) -> None:
    r = icc(shrout_fleiss)
    # Shrout & Fleiss (1979) Table 3: BMS 11.24, WMS 6.26, JMS 32.49, EMS 1.02.
    assert round(r.msr, 2) == 11.24
    assert round(r.msw, 2) == 6.26
    assert round(r.msc, 2) == 32.49
    assert round(r.mse, 2) == 1.02
    # Full precision from the same ANOVA in psych::ICC().
    assert r.msr == pytest.approx(11.2416667, abs=1e-6)
    assert r.msw == pytest.approx(6.2638889, abs=1e-6)
    assert r.msc == pytest.approx(32.4861111, abs=1e-6)
    assert r.mse == pytest.approx(1.0194444, abs=1e-6)


@pytest.mark.parametrize("name", ICC_NAMES)
def test_six_forms_match_shrout_fleiss_table_4(shrout_fleiss: np.ndarray, name: str) -> None:
    form = icc(shrout_fleiss)[name]
    # Rounded from the unrounded value, as the paper did.
    assert round(form.value, 2) == SF_TABLE4[name]
    value, low, high = SF_FULL[name]
    assert form.value == pytest.approx(value, abs=1e-6)
    assert form.ci.low == pytest.approx(low, abs=1e-5)
    assert form.ci.high == pytest.approx(high, abs=1e-5)
    assert form.ci.level == 0.95


def test_f_tests_on_shrout_fleiss(shrout_fleiss: np.ndarray) -> None:
    r = icc(shrout_fleiss)
    # pingouin and psych agree: F = BMS/WMS on (5, 18) and BMS/EMS on (5, 15).
    one_way = r["ICC(1,1)"].f_test
    assert (one_way.f, one_way.df1, one_way.df2) == (pytest.approx(1.794678, abs=1e-6), 5, 18)
    assert one_way.p_value == pytest.approx(0.1647688, abs=1e-6)
    two_way = r["ICC(3,1)"].f_test
    assert (two_way.f, two_way.df1, two_way.df2) == (pytest.approx(11.027248, abs=1e-6), 5, 15)
    assert two_way.p_value == pytest.approx(0.0001345665, rel=1e-5)


def test_mcgraw_wong_labels(shrout_fleiss: np.ndarray) -> None:
    r = icc(shrout_fleiss)
    # McGraw & Wong (1996) names, as also printed by pingouin's Type column.
    assert [f.mcgraw_wong for f in r.forms] == ["ICC(1)", "ICC(A,1)", "ICC(C,1)", "ICC(k)", "ICC(A,k)", "ICC(C,k)"]
    assert r["ICC(C,1)"] is r["ICC(3,1)"]
    assert r["ICC(2,1)"].type == "absolute agreement"
    assert r["ICC(3,k)"].type == "consistency"
    assert r["ICC(1,1)"].model == "one-way random"
    assert r["ICC(3,k)"].unit == "mean of k raters"


def test_k_forms_are_spearman_brown_of_single_forms(shrout_fleiss: np.ndarray) -> None:
    # Identity noted by Shrout & Fleiss (1979): ICC(x,k) is the Spearman-Brown step-up of ICC(x,1).
    r = icc(shrout_fleiss)
    for single, average in (("ICC(1,1)", "ICC(1,k)"), ("ICC(2,1)", "ICC(2,k)"), ("ICC(3,1)", "ICC(3,k)")):
        if r[single].value >= 0:
            assert float(spearman_brown(r[single].value, 4)) == pytest.approx(r[average].value, abs=1e-12)


def _pingouin(x: np.ndarray) -> pd.DataFrame:
    n, k = x.shape
    long = pd.DataFrame({"target": np.repeat(np.arange(n), k), "rater": np.tile(np.arange(k), n), "score": x.ravel()})
    # Rows come in the order ICC1, ICC2, ICC3, ICC1k, ICC2k, ICC3k; the labels changed between
    # pingouin versions (0.6 prints the McGraw & Wong names), so match by position.
    return pg.intraclass_corr(long, targets="target", raters="rater", ratings="score").reset_index(drop=True)


@pytest.mark.parametrize("seed,n,k", [(1, 15, 3), (2, 40, 2), (3, 25, 6), (4, 8, 10)])
def test_agrees_with_pingouin_on_seeded_data(seed: int, n: int, k: int) -> None:
    x = random_scores(seed, n, k)
    ours = icc(x)
    theirs = _pingouin(x)
    for position, name in enumerate(ICC_NAMES):
        row = theirs.iloc[position]
        form = ours[name]
        assert form.value == pytest.approx(row["ICC"], abs=1e-9)
        assert form.f_test.f == pytest.approx(row["F"], rel=1e-9)
        assert form.f_test.p_value == pytest.approx(row["pval"], rel=1e-6, abs=1e-15)
        # pingouin rounds its CI95 column to 2 dp.
        low, high = row["CI95"]
        assert form.ci.low == pytest.approx(low, abs=0.005 + 1e-9)
        assert form.ci.high == pytest.approx(high, abs=0.005 + 1e-9)


def test_confidence_level_is_honoured(shrout_fleiss: np.ndarray) -> None:
    # At 90 % the ICC(C,k) bounds equal Feldt's interval for Cronbach's alpha, which pingouin
    # computes at any level (rounded to 3 dp).
    ours = icc(shrout_fleiss, confidence=0.90)["ICC(3,k)"]
    alpha, (low, high) = pg.cronbach_alpha(pd.DataFrame(shrout_fleiss), ci=0.90)
    assert ours.value == pytest.approx(alpha, abs=1e-9)
    assert ours.ci.low == pytest.approx(low, abs=0.0005 + 1e-9)
    assert ours.ci.high == pytest.approx(high, abs=0.0005 + 1e-9)
    assert ours.ci.level == 0.90
    wide = icc(shrout_fleiss, confidence=0.99)["ICC(3,k)"].ci
    assert wide.low < ours.ci.low and wide.high > ours.ci.high


def test_missing_cells_drop_subjects(shrout_fleiss: np.ndarray) -> None:
    x = shrout_fleiss.copy()
    x[0, 1] = np.nan
    x[3, 3] = np.nan
    r = icc(x)
    assert (r.n_subjects, r.n_raters, r.n_dropped) == (4, 4, 2)
    complete = icc(shrout_fleiss[[1, 2, 4, 5]])
    assert [f.value for f in r.forms] == [f.value for f in complete.forms]


def test_perfect_agreement_gives_one_without_nan() -> None:
    x = np.array([[1.0, 1.0, 1.0], [2.0, 2.0, 2.0], [5.0, 5.0, 5.0]])
    r = icc(x)
    for form in r.forms:
        assert form.value == 1.0
        assert form.ci.high == 1.0
        assert not np.isnan(form.ci.low)


@pytest.mark.parametrize(
    "data,kwargs,message",
    [
        ([1.0, 2.0, 3.0], {}, "ratings must be a 2-D array"),
        ([[1.0], [2.0]], {}, "ratings must have at least 2 columns"),
        ([[1.0, 2.0]], {}, "ratings must have at least 2 rows"),
        ([[1.0, np.nan], [np.nan, 2.0], [3.0, 3.0]], {}, "complete row"),
        ([[3.0, 3.0], [3.0, 3.0]], {}, "no variance"),
        ([[1.0, 2.0], [2.0, 3.0]], {"confidence": 1.5}, "confidence must be in (0, 1), got 1.5"),
        ([["a", "b"], ["c", "d"]], {}, "numeric 2-D array"),
    ],
)
def test_argument_errors_name_the_parameter(data: object, kwargs: dict[str, object], message: str) -> None:
    with pytest.raises((ValueError, TypeError)) as info:
        icc(data, **kwargs)  # type: ignore[arg-type]
    assert message in str(info.value)
