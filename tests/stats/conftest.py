"""Shared fixtures for the statistics tests: published reference data and seeded matrices."""

from __future__ import annotations

from collections.abc import Callable
from pathlib import Path

import numpy as np
import pytest

REFERENCE = Path(__file__).parents[1] / "data" / "reference"


def read_reference(name: str) -> np.ndarray:
    """A wide reference CSV (first column the subject id) as a float matrix, NaN = missing."""
    return np.genfromtxt(REFERENCE / name, delimiter=",", skip_header=1)[:, 1:]


@pytest.fixture
def reference() -> Callable[[str], np.ndarray]:
    return read_reference


@pytest.fixture
def shrout_fleiss() -> np.ndarray:
    """Shrout & Fleiss (1979) Table 2: 6 targets x 4 judges."""
    return read_reference("A_shrout_fleiss_1979_6x4.csv")


@pytest.fixture
def fleiss_1971() -> np.ndarray:
    """Fleiss (1971): 30 patients x 6 diagnoses, codes 1-5."""
    return read_reference("A_fleiss1971_diagnoses_30x6.csv")


@pytest.fixture
def krippendorff_4x12() -> np.ndarray:
    """Krippendorff (2011): 12 units x 4 coders with missing values."""
    return read_reference("A_krippendorff_4x12.csv")


@pytest.fixture
def skin() -> np.ndarray:
    """SAS PROC FREQ agreement study: 88 patients x 2 dermatologists, 4 ordered categories."""
    return read_reference("A_sas_skin_condition_long.csv")


def random_ratings(seed: int, n: int, k: int, categories: int, missing: float = 0.0) -> np.ndarray:
    """Seeded subjects x raters matrix of category codes 1..categories with related raters."""
    rng = np.random.default_rng(seed)
    truth = rng.integers(1, categories + 1, size=(n, 1))
    noise = rng.integers(-1, 2, size=(n, k)) * (rng.random((n, k)) < 0.4)
    x = np.clip(truth + noise, 1, categories).astype(float)
    if missing:
        x[rng.random(x.shape) < missing] = np.nan
    return x


def random_scores(seed: int, n: int, k: int) -> np.ndarray:
    """Seeded continuous subjects x raters matrix with a subject effect and rater biases."""
    rng = np.random.default_rng(seed)
    return rng.normal(size=(n, 1)) * 2.0 + rng.normal(size=(1, k)) * 0.5 + rng.normal(size=(n, k))
