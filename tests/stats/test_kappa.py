"""Cohen's and Fleiss' kappa: published examples, statsmodels, scikit-learn and irrCAC."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from irrCAC.raw import CAC
from sklearn.metrics import cohen_kappa_score
from statsmodels.stats.inter_rater import aggregate_raters, cohens_kappa
from statsmodels.stats.inter_rater import fleiss_kappa as sm_fleiss_kappa

from protolint.stats import cohen_kappa, fleiss_kappa

from .conftest import random_ratings

# --- Cohen's kappa: SAS/STAT PROC FREQ "Agreement Study" (2 dermatologists, 88 patients) ---


def test_unweighted_kappa_matches_sas_agreement_study(skin: np.ndarray) -> None:
    r = cohen_kappa(skin)
    # SAS/STAT User's Guide, PROC FREQ, Getting Started, "Agreement Study" (values recalled, not
    # re-read; statsmodels cohen_kappa, scikit-learn cohen_kappa_score and irrCAC give 0.3448753):
    # kappa 0.3449, ASE 0.0724, 95 % CI (0.2030, 0.4868).
    assert round(r.value, 4) == 0.3449
    assert round(r.se, 4) == 0.0724
    assert (round(r.ci.low, 4), round(r.ci.high, 4)) == (0.2030, 0.4868)
    # Full precision: statsmodels cohens_kappa / scikit-learn / psych / irrCAC all give these.
    assert r.value == pytest.approx(0.3448753, abs=1e-6)
    assert r.se == pytest.approx(0.0723967, abs=1e-6)
    assert r.po == pytest.approx(0.5113636, abs=1e-6)
    assert r.pe == pytest.approx(0.2541322, abs=1e-6)
    # Null-hypothesis ASE and z (Fleiss, Cohen & Everitt 1969), statsmodels std_kappa0.
    assert r.se0 == pytest.approx(0.0611847, abs=1e-6)
    assert r.z == pytest.approx(5.6366, abs=1e-4)
    assert (r.n_subjects, r.n_dropped) == (88, 0)


@pytest.mark.parametrize(
    "weights,value,se,se0",
    [
        # statsmodels cohens_kappa(wt=...) and an independent FCE-1969 implementation agree;
        # psych::cohen.kappa uses another variance for weighted kappa (0.0700 / 0.0687) and is
        # deliberately not used as a reference here.
        ("linear", 0.5081601, 0.0655084, 0.0738967),
        ("quadratic", 0.6607229, 0.0616428, 0.1064952),
    ],
)
def test_weighted_kappa_on_agreement_study(skin: np.ndarray, weights: str, value: float, se: float, se0: float) -> None:
    r = cohen_kappa(skin, weights=weights)
    assert r.value == pytest.approx(value, abs=1e-6)
    assert r.se == pytest.approx(se, abs=1e-6)
    assert r.se0 == pytest.approx(se0, abs=1e-6)


def _table(x: np.ndarray) -> np.ndarray:
    cats = np.unique(x)
    idx = np.searchsorted(cats, x).astype(int)
    t = np.zeros((cats.size, cats.size))
    np.add.at(t, (idx[:, 0], idx[:, 1]), 1)
    return t


@pytest.mark.parametrize("seed", [11, 12, 13])
@pytest.mark.parametrize("weights", ["unweighted", "linear", "quadratic"])
def test_cohen_agrees_with_statsmodels_and_sklearn(seed: int, weights: str) -> None:
    x = random_ratings(seed, 60, 2, 5)
    ours = cohen_kappa(x, weights=weights)
    sk = cohen_kappa_score(x[:, 0], x[:, 1], weights=None if weights == "unweighted" else weights)
    # Codes 1..5 are equally spaced and every code occurs, so value-based weights (ours, SAS,
    # irrCAC) equal the index-based weights of scikit-learn and statsmodels.
    assert ours.value == pytest.approx(sk, abs=1e-12)
    sm = cohens_kappa(_table(x), wt=None if weights == "unweighted" else weights)
    assert ours.value == pytest.approx(sm.kappa, abs=1e-12)
    assert ours.se == pytest.approx(sm.std_kappa, abs=1e-12)
    assert ours.se0 == pytest.approx(sm.std_kappa0, abs=1e-12)
    assert ours.ci.low == pytest.approx(max(sm.kappa_low, -1.0), abs=1e-9)
    assert ours.ci.high == pytest.approx(min(sm.kappa_upp, 1.0), abs=1e-9)


def test_cohen_drops_incomplete_pairs(skin: np.ndarray) -> None:
    x = skin.copy()
    x[:5, 1] = np.nan
    r = cohen_kappa(x)
    assert (r.n_subjects, r.n_dropped) == (83, 5)
    assert r.value == pytest.approx(cohen_kappa_score(skin[5:, 0], skin[5:, 1]), abs=1e-12)


def test_cohen_confidence_level(skin: np.ndarray) -> None:
    r90 = cohen_kappa(skin, confidence=0.90)
    # 1.6448536 is the 95th normal percentile.
    assert r90.ci.low == pytest.approx(r90.value - 1.6448536 * r90.se, abs=1e-6)


@pytest.mark.parametrize(
    "data,kwargs,message",
    [
        (np.ones((5, 3)), {}, "exactly 2 columns"),
        ([[1.0, 2.0], [2.0, 1.0]], {"weights": "cubic"}, "weights must be one of"),
        ([[1.0, 1.0], [1.0, 1.0]], {}, "kappa is undefined"),
        ([[1.0, 2.0], [2.0, 1.0]], {"categories": [1.0]}, "not in categories"),
    ],
)
def test_cohen_errors(data: object, kwargs: dict[str, object], message: str) -> None:
    with pytest.raises(ValueError, match=message):
        cohen_kappa(data, **kwargs)  # type: ignore[arg-type]


# --- Fleiss' kappa: Fleiss (1971), 30 patients x 6 diagnoses ---


def test_fleiss_1971_example(fleiss_1971: np.ndarray) -> None:
    r = fleiss_kappa(fleiss_1971)
    # Fleiss (1971) prints kappa = .430 (recalled); R irr::kappam.fleiss 0.4302445 (as recorded
    # in statsmodels' test suite); statsmodels and irrCAC agree.
    assert round(r.value, 3) == 0.430
    assert r.value == pytest.approx(0.4302445, abs=1e-6)
    assert r.p_bar == pytest.approx(0.5555556, abs=1e-6)
    assert r.p_bar_e == pytest.approx(0.2199383, abs=1e-6)
    # Null SE of Fleiss, Nee & Landis (1979) and z as printed by R irr (statsmodels test suite).
    assert r.se0 == pytest.approx(0.02437393, abs=1e-7)
    assert r.z == pytest.approx(17.65183, abs=1e-4)
    # Category proportions: 26, 26, 30, 55, 43 of 180 ratings (column sums asserted by statsmodels).
    assert [round(c.proportion * 180) for c in r.categories] == [26, 26, 30, 55, 43]
    # Per-category null SE sqrt(2 / (N m (m - 1))) (Fleiss, Nee & Landis 1979): formula value.
    assert all(c.se0 == pytest.approx(0.04714045, abs=1e-8) for c in r.categories)


def test_fleiss_category_kappas_equal_kappa_of_collapsed_tables(fleiss_1971: np.ndarray) -> None:
    # Fleiss (1971): kappa_j is Fleiss' kappa of the two-category table "j vs. the rest", and
    # the overall kappa is the p_j q_j weighted mean of the kappa_j. The per-category values
    # printed in Fleiss (1971) could not be confirmed, so statsmodels on the collapsed tables
    # is the reference.
    r = fleiss_kappa(fleiss_1971)
    counts, _ = aggregate_raters(fleiss_1971.astype(int))
    for j, category in enumerate(r.categories):
        collapsed = np.column_stack([counts[:, j], counts.sum(axis=1) - counts[:, j]])
        assert category.value == pytest.approx(sm_fleiss_kappa(collapsed), abs=1e-12)
    pq = np.array([c.proportion * (1 - c.proportion) for c in r.categories])
    weighted = float((pq * np.array([c.value for c in r.categories])).sum() / pq.sum())
    assert weighted == pytest.approx(r.value, abs=1e-12)


def test_fleiss_first_15_patients_match_gwet(fleiss_1971: np.ndarray) -> None:
    r = fleiss_kappa(fleiss_1971[:15])
    # Gwet's irrCAC documentation (distrib.6raters): 0.4139265, SE 0.08119291, 95 % CI (0.240, 0.588).
    assert r.value == pytest.approx(0.4139265, abs=1e-6)
    assert r.se == pytest.approx(0.08119291, abs=1e-7)
    assert (round(r.ci.low, 3), round(r.ci.high, 3)) == (0.240, 0.588)


@pytest.mark.parametrize("seed,n,k,q", [(21, 40, 3, 3), (22, 25, 5, 4), (23, 60, 4, 2)])
def test_fleiss_agrees_with_statsmodels_and_irrcac(seed: int, n: int, k: int, q: int) -> None:
    x = random_ratings(seed, n, k, q)
    ours = fleiss_kappa(x)
    counts, _ = aggregate_raters(x.astype(int))
    assert ours.value == pytest.approx(sm_fleiss_kappa(counts), abs=1e-12)
    theirs = CAC(pd.DataFrame(x), digits=12).fleiss()["est"]
    assert ours.value == pytest.approx(theirs["coefficient_value"], abs=1e-9)
    assert ours.se == pytest.approx(theirs["se"], abs=1e-9)
    assert ours.ci.low == pytest.approx(theirs["confidence_interval"][0], abs=1e-9)


def test_fleiss_drops_subjects_with_missing_ratings(fleiss_1971: np.ndarray) -> None:
    # Listwise deletion is now asked for explicitly; the default uses every rating (below).
    x = fleiss_1971.copy()
    x[2, 4] = np.nan
    r = fleiss_kappa(x, missing="complete")
    assert (r.n_subjects, r.n_raters, r.n_dropped) == (29, 6, 1)
    assert r.value == pytest.approx(fleiss_kappa(np.delete(fleiss_1971, 2, axis=0)).value, abs=1e-15)


def test_fleiss_errors() -> None:
    with pytest.raises(ValueError, match="one category"):
        fleiss_kappa(np.ones((4, 3)))
    with pytest.raises(ValueError, match="confidence must be in"):
        fleiss_kappa(np.eye(3), confidence=0.0)


# --- Fleiss' kappa with missing ratings: Gwet's (2014) generalisation ---


def test_fleiss_with_missing_ratings_matches_gwet(krippendorff_4x12: np.ndarray) -> None:
    # Gwet's irrCAC documentation (cac.raw4raters, the same data as Krippendorff 2011's
    # 4 coders x 12 units): Fleiss' kappa 0.7611693, SE 0.1530192, pe 0.2387153.
    r = fleiss_kappa(krippendorff_4x12)
    assert r.value == pytest.approx(0.7611693, abs=1e-6)
    assert r.se == pytest.approx(0.1530192, abs=1e-6)
    assert r.p_bar_e == pytest.approx(0.2387153, abs=1e-6)
    assert r.p_bar == pytest.approx(0.8181818, abs=1e-6)  # percent agreement, same README
    # 12 subjects with a rating, 41 ratings, 11 subjects rated at least twice; nothing dropped.
    assert (r.n_subjects, r.n_ratings, r.n_pairable, r.n_dropped, r.n_raters) == (12, 41, 11, 0, 4)
    # The null test needs a constant number of ratings per subject: not given, and said so.
    assert np.isnan(r.se0) and np.isnan(r.z) and np.isnan(r.p_value)
    assert any("varies between subjects" in w for w in r.warnings)
    assert "Gwet 2014" in r.method
    # Listwise deletion keeps 8 of the 12 subjects and gives another value (statsmodels on them).
    complete = fleiss_kappa(krippendorff_4x12, missing="complete")
    kept = krippendorff_4x12[~np.isnan(krippendorff_4x12).any(axis=1)]
    assert (complete.n_subjects, complete.n_dropped) == (8, 4)
    assert complete.value == pytest.approx(sm_fleiss_kappa(aggregate_raters(kept.astype(int))[0]), abs=1e-12)
    assert complete.value == pytest.approx(0.6414566, abs=1e-6)


@pytest.mark.parametrize("seed,n,k,q,missing", [(24, 40, 4, 3, 0.25), (25, 60, 6, 5, 0.4), (26, 30, 3, 2, 0.2)])
def test_fleiss_with_missing_ratings_agrees_with_irrcac(seed: int, n: int, k: int, q: int, missing: float) -> None:
    x = random_ratings(seed, n, k, q, missing)
    ours = fleiss_kappa(x)
    theirs = CAC(pd.DataFrame(x), digits=12).fleiss()["est"]
    assert ours.value == pytest.approx(theirs["coefficient_value"], abs=1e-9)
    assert ours.se == pytest.approx(theirs["se"], abs=1e-9)
    assert ours.p_bar == pytest.approx(theirs["pa"], abs=1e-9)
    assert ours.p_bar_e == pytest.approx(theirs["pe"], abs=1e-9)
    low, high = theirs["confidence_interval"]
    assert (ours.ci.low, ours.ci.high) == (pytest.approx(low, abs=1e-9), pytest.approx(high, abs=1e-9))
    assert ours.n_ratings == int((~np.isnan(x)).sum())
    # Each category kappa is the same coefficient on the table "category against the rest".
    for c in ours.categories:
        binary = np.where(np.isnan(x), np.nan, (x == c.category).astype(float))
        expected = CAC(pd.DataFrame(binary), categories=[0.0, 1.0], digits=12).fleiss()["est"]["coefficient_value"]
        assert c.value == pytest.approx(expected, abs=1e-9)


def test_fleiss_complete_data_is_unchanged_by_the_missing_option(fleiss_1971: np.ndarray) -> None:
    a, b = fleiss_kappa(fleiss_1971), fleiss_kappa(fleiss_1971, missing="complete")
    assert a.value == pytest.approx(b.value, abs=1e-15) and a.se0 == pytest.approx(b.se0, abs=1e-15)
    assert (a.n_subjects, a.n_ratings, a.n_pairable, a.warnings) == (30, 180, 30, ())
    with pytest.raises(ValueError, match="missing must be one of"):
        fleiss_kappa(fleiss_1971, missing="pairwise")


# --- constant raters and too few subjects ---


def test_cohen_with_one_constant_rater_is_zero_with_a_warning() -> None:
    x = np.column_stack([np.full(12, 2.0), random_ratings(27, 12, 1, 4)[:, 0]])
    for weights in ("unweighted", "linear", "quadratic"):
        r = cohen_kappa(x, weights=weights)
        expected = cohen_kappa_score(x[:, 0], x[:, 1], weights=None if weights == "unweighted" else weights)
        assert r.value == pytest.approx(expected, abs=1e-12)
        assert r.value == pytest.approx(0.0, abs=1e-12)
        assert any("rater 1 gave the same rating (2)" in w for w in r.warnings)
        # Kappa is 0 whatever the other rater does: no spread, so no interval and no test.
        assert r.se == 0.0 and np.isnan(r.ci.low) and np.isnan(r.ci.high)
        assert np.isnan(r.z) and np.isnan(r.p_value)
        assert any("no interval" in w for w in r.warnings)


def test_fleiss_with_a_constant_rater_is_computed_with_a_warning() -> None:
    x = random_ratings(28, 30, 4, 3)
    x[:, 2] = 1.0
    r = fleiss_kappa(x)
    counts, _ = aggregate_raters(x.astype(int))
    assert r.value == pytest.approx(sm_fleiss_kappa(counts), abs=1e-12)
    assert r.warnings == ("rater 3 gave the same rating (1) every time",)


def test_too_few_subjects_give_no_interval() -> None:
    # Two subjects in perfect agreement: SE 0, and formerly a CI of [1, 1] with no warning.
    r = cohen_kappa([[1.0, 1.0], [2.0, 2.0]])
    assert r.value == 1.0 and r.se == 0.0
    assert np.isnan(r.ci.low) and np.isnan(r.ci.high)
    assert any("no interval" in w for w in r.warnings)
    assert any("rests on 2 subjects" in w for w in r.warnings)
    f = fleiss_kappa([[1.0, 1.0, 1.0], [2.0, 2.0, 2.0]])
    assert f.value == 1.0 and np.isnan(f.ci.low) and any("no interval" in w for w in f.warnings)
    # Enough subjects: no such warning.
    assert not any("rests on" in w for w in cohen_kappa(random_ratings(29, 40, 2, 4)).warnings)


def test_fleiss_on_gwets_five_observers_with_missing_ratings() -> None:
    # Gwet (2014) / irrCAC's raw_5observers: 5 observers, 15 units on a 0-3 scale, only
    # observer 3 rated every unit, so listwise deletion keeps a single subject and fails.
    from irrCAC.datasets import raw_5observers

    x = raw_5observers().to_numpy(dtype=float)
    r = fleiss_kappa(x)
    theirs = CAC(pd.DataFrame(x), digits=12).fleiss()["est"]
    assert r.value == pytest.approx(theirs["coefficient_value"], abs=1e-9)
    assert r.value == pytest.approx(0.45762, abs=5e-6)  # as irrCAC prints it (5 digits)
    assert r.se == pytest.approx(theirs["se"], abs=1e-9)
    assert (r.n_subjects, r.n_ratings, r.n_pairable) == (15, int((~np.isnan(x)).sum()), 15)
    with pytest.raises(ValueError, match="1 complete row"):
        fleiss_kappa(x, missing="complete")
