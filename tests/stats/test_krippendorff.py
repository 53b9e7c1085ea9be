"""Krippendorff's alpha: Krippendorff's published example and the krippendorff package."""

from __future__ import annotations

import krippendorff
import numpy as np
import pytest

from protolint.stats import krippendorff_alpha

from .conftest import random_ratings, random_scores

# Krippendorff (2011), "Computing Krippendorff's alpha-reliability", 4 coders x 12 units with
# missing values: printed .743 / .815 / .849 / .797; full precision from the krippendorff
# package (and irrCAC for nominal and interval).
PUBLISHED = {
    "nominal": (0.743, 0.7434211),
    "ordinal": (0.815, 0.8153875),
    "interval": (0.849, 0.8491071),
    "ratio": (0.797, 0.7974028),
}


@pytest.mark.parametrize("level", list(PUBLISHED))
def test_published_example_with_missing_values(krippendorff_4x12: np.ndarray, level: str) -> None:
    r = krippendorff_alpha(krippendorff_4x12, level=level)
    printed, full = PUBLISHED[level]
    assert round(r.value, 3) == printed
    assert r.value == pytest.approx(full, abs=1e-6)
    # Unit 12 has a single value and is not pairable: 11 units, 40 pairable values.
    assert (r.n_units, r.n_values) == (11, 40)
    assert r.value == pytest.approx(1 - r.observed_disagreement / r.expected_disagreement, abs=1e-12)


def test_nominal_alpha_on_fleiss_data(fleiss_1971: np.ndarray) -> None:
    # Fleiss (1971) diagnoses data: krippendorff 0.9.0 `alpha(level_of_measurement="nominal")` and
    # irrCAC 0.4.4 `krippendorff()` agree on 0.4334098.
    assert krippendorff_alpha(fleiss_1971, "nominal").value == pytest.approx(0.4334098, abs=1e-6)
    # Gwet's irrCAC documentation, first 15 patients: 0.4204384.
    assert krippendorff_alpha(fleiss_1971[:15], "nominal").value == pytest.approx(0.4204384, abs=1e-6)


@pytest.mark.parametrize("level", ["nominal", "ordinal", "interval", "ratio"])
@pytest.mark.parametrize("seed,n,k,missing", [(41, 40, 3, 0.1), (42, 100, 6, 0.3), (43, 15, 2, 0.0)])
def test_agrees_with_krippendorff_package_on_categories(level: str, seed: int, n: int, k: int, missing: float) -> None:
    x = random_ratings(seed, n, k, 5, missing)
    expected = krippendorff.alpha(reliability_data=x.T, level_of_measurement=level)  # package: coders x units
    assert krippendorff_alpha(x, level, n_boot=0).value == pytest.approx(expected, abs=1e-10)


@pytest.mark.parametrize("level", ["interval", "ratio", "ordinal"])
def test_agrees_with_krippendorff_package_on_continuous_scores(level: str) -> None:
    x = random_scores(44, 30, 4) + 10.0  # positive, as the ratio metric needs
    x[3, 1] = np.nan
    expected = krippendorff.alpha(reliability_data=x.T, level_of_measurement=level)
    assert krippendorff_alpha(x, level, n_boot=0).value == pytest.approx(expected, abs=1e-10)


def test_bootstrap_interval_is_reproducible_and_brackets_the_estimate(krippendorff_4x12: np.ndarray) -> None:
    a = krippendorff_alpha(krippendorff_4x12, "interval", seed=7)
    b = krippendorff_alpha(krippendorff_4x12, "interval", seed=7)
    c = krippendorff_alpha(krippendorff_4x12, "interval", seed=8)
    assert a.ci == b.ci
    assert a.ci != c.ci
    assert a.ci is not None and a.ci.low < a.value <= a.ci.high <= 1.0
    assert a.n_boot == 1000
    assert krippendorff_alpha(krippendorff_4x12, n_boot=0).ci is None


def test_bootstrap_interval_narrows_with_more_units() -> None:
    small = krippendorff_alpha(random_ratings(45, 30, 3, 5), "ordinal")
    large = krippendorff_alpha(random_ratings(45, 600, 3, 5), "ordinal")
    assert small.ci is not None and large.ci is not None
    assert (large.ci.high - large.ci.low) < (small.ci.high - small.ci.low) / 2


@pytest.mark.parametrize(
    "data,kwargs,message",
    [
        (np.eye(3), {"level": "cardinal"}, "level must be one of"),
        (np.array([[1.0, np.nan], [np.nan, 2.0]]), {}, "two or more values"),
        (np.full((3, 2), 4.0), {}, "no variation"),
        (np.array([[-1.0, 2.0], [3.0, 4.0]]), {"level": "ratio"}, "negative"),
        (np.eye(3), {"n_boot": -5}, "n_boot must be an integer >= 0"),
    ],
)
def test_errors(data: np.ndarray, kwargs: dict[str, object], message: str) -> None:
    with pytest.raises(ValueError, match=message):
        krippendorff_alpha(data, **kwargs)  # type: ignore[arg-type]


def test_negative_and_offset_whole_numbers_match_package() -> None:
    # Whole-number ratings take a coding shortcut; check it on negative and large-offset values.
    for shift in (-3.0, 1_000_000.0):
        x = random_ratings(46, 50, 4, 7, 0.2) + shift
        for level in ("nominal", "ordinal", "interval"):
            expected = krippendorff.alpha(reliability_data=x.T, level_of_measurement=level)
            assert krippendorff_alpha(x, level, n_boot=0).value == pytest.approx(expected, abs=1e-9)


@pytest.mark.parametrize("level", ["nominal", "ordinal", "interval", "ratio"])
def test_continuous_scores_with_many_distinct_values_match_package(level: str) -> None:
    # Every value distinct (the case that needed a units x values table before): 40 units x 4
    # (the package itself builds that table, so the data stay small).
    rng = np.random.default_rng(47)
    x = rng.normal(size=(40, 1)) * 2.0 + rng.normal(size=(40, 4)) + 20.0
    x[rng.random(x.shape) < 0.15] = np.nan
    x[5, :] = x[5, 0]  # one unit in full agreement
    expected = krippendorff.alpha(reliability_data=x.T, level_of_measurement=level)
    assert krippendorff_alpha(x, level, bootstrap=0).value == pytest.approx(expected, abs=1e-10)


def test_bootstrap_keyword_and_its_former_name(krippendorff_4x12: np.ndarray) -> None:
    a = krippendorff_alpha(krippendorff_4x12, "ordinal", bootstrap=200, seed=3)
    b = krippendorff_alpha(krippendorff_4x12, "ordinal", n_boot=200, seed=3)
    assert a.ci == b.ci and a.n_boot == 200
    none = krippendorff_alpha(krippendorff_4x12, "ordinal", bootstrap=0)
    assert none.ci is None and none.n_boot == 0
    assert krippendorff_alpha(krippendorff_4x12).n_boot == 1000  # the default
    with pytest.raises(ValueError, match="bootstrap must be an integer >= 0"):
        krippendorff_alpha(krippendorff_4x12, bootstrap=-1)


@pytest.mark.parametrize("few_values", [32, 0])
@pytest.mark.parametrize("level", ["nominal", "ordinal", "interval", "ratio"])
def test_chunked_bootstrap_equals_one_block(monkeypatch: pytest.MonkeyPatch, level: str, few_values: int) -> None:
    # The chunk size bounds memory; it must not change the interval. Force tiny chunks and
    # compare with the same replicates drawn at once and evaluated one by one by the package.
    # ``few_values`` 0 forces the route taken by continuous scores (no units x values counts).
    from protolint.stats import krippendorff as module

    monkeypatch.setattr(module, "_FEW_VALUES", few_values)
    x = random_ratings(48, 60, 3, 5, 0.2) + (0.0 if level != "ratio" else 1.0)
    whole = krippendorff_alpha(x, level, bootstrap=150, seed=9)
    monkeypatch.setattr(module, "_CHUNK_CELLS", 1)
    monkeypatch.setattr(module, "_DELTA_BLOCK", 1)
    chunked = krippendorff_alpha(x, level, bootstrap=150, seed=9)
    assert chunked.ci is not None and whole.ci is not None
    assert chunked.ci.low == pytest.approx(whole.ci.low, abs=1e-12)
    assert chunked.ci.high == pytest.approx(whole.ci.high, abs=1e-12)
    # Replicate by replicate: alpha of the resampled units, computed by the package.
    rng = np.random.default_rng(9)
    present = ~np.isnan(x)
    pairable = x[present.sum(axis=1) >= 2]
    draws = rng.integers(0, pairable.shape[0], size=(150, pairable.shape[0]))
    reps = [krippendorff.alpha(reliability_data=pairable[d].T, level_of_measurement=level) for d in draws[:20]]
    ours = module._bootstrap(module._units(x, level), level, 20, 9)
    assert ours == pytest.approx(np.array(reps), abs=1e-10)


def test_few_units_are_warned_and_one_unit_has_no_interval() -> None:
    small = krippendorff_alpha(np.array([[1.0, 2.0], [3.0, 3.0], [2.0, 2.0]]), "interval")
    assert any("rests on 3 units" in w for w in small.warnings)
    single = krippendorff_alpha(np.array([[1.0, 2.0], [3.0, np.nan]]), "interval")
    assert single.ci is None and any("no bootstrap interval" in w for w in single.warnings)
