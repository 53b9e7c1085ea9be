"""Control charts for drift of standardised deviations: tabular CUSUM and EWMA, with run lengths.

The charts watch a sequence ``z_1, z_2, …`` that has mean 0 and SD 1 while the process is in
control (a rater's mean deviation from the reference scores per monitoring round, standardised).

* **Tabular CUSUM** (Page 1954, "Continuous inspection schemes", Biometrika 41:100–115), two
  one-sided sums from a zero start: ``C⁺ₜ = max(0, C⁺ₜ₋₁ + zₜ − k)`` and
  ``C⁻ₜ = max(0, C⁻ₜ₋₁ − zₜ − k)``; a signal when either exceeds ``h``.
* **EWMA** (Roberts 1959, "Control chart tests based on geometric moving averages",
  Technometrics 1:239–250) ``Eₜ = λ zₜ + (1 − λ) Eₜ₋₁`` from ``E₀ = 0``, with the fixed asymptotic
  limits ``± L √(λ / (2 − λ))`` used by Lucas & Saccucci (1990, "Exponentially weighted moving
  average control schemes", Technometrics 32:1–12).

Average run lengths (ARL, in observations) come from the Markov-chain approximation of Brook &
Evans (1972, "An approach to the probability distribution of CUSUM run length", Biometrika
59:539–549): the in-control region is cut into ``states`` cells, the chart's position is
rounded to the cell's representative value, and the ARL is ``(I − R)⁻¹ 1`` at the start cell.

**Two-sided CUSUM ARL.** We combine the two one-sided chains as
``1/ARL = 1/ARL⁺ + 1/ARL⁻`` (Lucas & Crosier 1982, "Fast initial response for CUSUM
quality-control schemes", Technometrics 24:199–205). This is the form behind the published
two-sided tables (Montgomery's Table 9.3 halves the one-sided in-control ARL); it treats the two
sides as renewing independently, which is very close to the exact two-dimensional chain for
``k`` ≥ 0.5 and zero start. The EWMA chain is one-dimensional and two-sided by construction.

Observations are assumed independent and normal; the ARLs are for a shift present from the
first observation (zero-state ARL).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from functools import lru_cache
from typing import Callable

import numpy as np
from numpy.typing import ArrayLike, NDArray

from protolint.stats import _checks
from protolint.stats._results import SolverError

CUSUM_STATES = 300
"""Markov-chain cells for the one-sided CUSUM; the two-sided ARL0 at k = 0.5, h = 5 is then
within 0.03 of the limit (465.44) as the number of cells grows."""

EWMA_STATES = 401
"""Markov-chain cells (odd, so one cell is centred on 0) for the EWMA; small λ needs many."""


@dataclass(frozen=True, slots=True)
class ChartSignal:
    """Where a chart first leaves its in-control region.

    Attributes
    ----------
    index : int or None
        0-based position of the first observation at which the chart signals; None if never.
    direction : str or None
        ``"high"`` (scores above the reference) or ``"low"``.
    """

    index: int | None
    direction: str | None


@dataclass(frozen=True, slots=True)
class CusumResult:
    """A two-sided tabular CUSUM path.

    Attributes
    ----------
    upper, lower : tuple of float
        ``C⁺`` and ``C⁻`` after each observation (both ≥ 0).
    k, h : float
        Reference value and decision interval, in SD units.
    signal : ChartSignal
        The first observation with ``C⁺ > h`` or ``C⁻ > h``.
    method : str
    """

    upper: tuple[float, ...]
    lower: tuple[float, ...]
    k: float
    h: float
    signal: ChartSignal
    method: str = "Two-sided tabular CUSUM (Page 1954), zero start"


@dataclass(frozen=True, slots=True)
class EwmaResult:
    """An EWMA path with fixed asymptotic limits.

    Attributes
    ----------
    statistic : tuple of float
        ``Eₜ`` after each observation.
    lam, L : float
        Smoothing constant λ and limit width L.
    limit : float
        The fixed limit ``L √(λ / (2 − λ))``; the chart signals when ``|Eₜ| > limit``.
    signal : ChartSignal
    method : str
    """

    statistic: tuple[float, ...]
    lam: float
    L: float
    limit: float
    signal: ChartSignal
    method: str = "EWMA with fixed asymptotic limits (Roberts 1959; Lucas & Saccucci 1990), zero start"


@dataclass(frozen=True, slots=True)
class RunLengths:
    """Two-sided zero-state average run lengths of one chart, in observations.

    Attributes
    ----------
    in_control : float
        ARL with no shift: the mean number of observations between false signals.
    shifted : tuple of (float, float)
        ``(shift in SD, ARL)`` pairs: the mean number of observations until a shift present
        from the start is signalled.
    method : str
        How the ARLs were computed.
    """

    in_control: float
    shifted: tuple[tuple[float, float], ...]
    method: str

    def at(self, shift: float) -> float:
        for size, arl in self.shifted:
            if math.isclose(size, shift):
                return arl
        raise KeyError(f"no run length computed for a shift of {shift}")


def _series(z: ArrayLike) -> NDArray[np.float64]:
    arr = np.asarray(z, dtype=float)
    if arr.ndim != 1:
        raise ValueError(f"z must be a one-dimensional sequence, got shape {arr.shape}")
    if not np.all(np.isfinite(arr)):
        raise ValueError("z must not contain NaN or infinite values")
    return arr


def _cusum_parameters(k: float, h: float) -> tuple[float, float]:
    k = _checks.real("k", k)
    if k < 0:
        raise ValueError(f"k must be zero or positive, got {k}")
    return k, _checks.positive("h", h)


def _ewma_parameters(lam: float, L: float) -> tuple[float, float]:
    lam = _checks.real("lam", lam)
    if not 0.0 < lam <= 1.0:
        raise ValueError(f"lam must be in (0, 1], got {lam}")
    return lam, _checks.positive("L", L)


def cusum(z: ArrayLike, k: float = 0.5, h: float = 4.0) -> CusumResult:
    """Two-sided tabular CUSUM of standardised observations ``z`` (Page 1954).

    >>> cusum([0.2, 1.9, 2.4, 1.7], k=0.5, h=4.0).signal.index
    3
    """
    k, h = _cusum_parameters(k, h)
    arr = _series(z)
    upper = np.empty_like(arr)
    lower = np.empty_like(arr)
    hi = lo = 0.0
    first: int | None = None
    direction: str | None = None
    for t, value in enumerate(arr):
        hi = max(0.0, hi + value - k)
        lo = max(0.0, lo - value - k)
        upper[t], lower[t] = hi, lo
        if first is None and (hi > h or lo > h):
            first, direction = t, ("high" if hi > h else "low")
    return CusumResult(tuple(upper.tolist()), tuple(lower.tolist()), k, h, ChartSignal(first, direction))


def ewma_limit(lam: float, L: float) -> float:
    """The fixed asymptotic EWMA limit ``L √(λ / (2 − λ))`` for unit-variance observations."""
    lam, L = _ewma_parameters(lam, L)
    return L * math.sqrt(lam / (2.0 - lam))


def ewma(z: ArrayLike, lam: float = 0.2, L: float = 2.86) -> EwmaResult:
    """EWMA chart of standardised observations ``z`` with fixed limits (Roberts 1959)."""
    lam, L = _ewma_parameters(lam, L)
    arr = _series(z)
    limit = ewma_limit(lam, L)
    stat = np.empty_like(arr)
    value = 0.0
    first: int | None = None
    direction: str | None = None
    for t, x in enumerate(arr):
        value = lam * x + (1.0 - lam) * value
        stat[t] = value
        if first is None and abs(value) > limit:
            first, direction = t, ("high" if value > 0 else "low")
    return EwmaResult(tuple(stat.tolist()), lam, L, limit, ChartSignal(first, direction))


# ---------------------------------------------------------------- run lengths (Brook & Evans)


def _normal_cdf(x: NDArray[np.float64]) -> NDArray[np.float64]:
    from scipy.special import ndtr

    return np.asarray(ndtr(x), dtype=float)


def _solve_arl(transitions: NDArray[np.float64], start: int) -> float:
    size = transitions.shape[0]
    arl = np.linalg.solve(np.eye(size) - transitions, np.ones(size))
    return float(arl[start])


@lru_cache(maxsize=4096)
def cusum_arl_one_sided(k: float, h: float, shift: float = 0.0, states: int = CUSUM_STATES) -> float:
    """Zero-start ARL of the upper one-sided CUSUM when the mean has moved by ``shift`` SD.

    Brook & Evans (1972): cells of width ``w = 2h / (2·states − 1)`` centred on ``0, w, 2w, …``;
    cell 0 also holds the atom at ``C = 0``. (The lower chart at ``shift`` is the upper chart at
    ``−shift``.)
    """
    k, h = _cusum_parameters(k, h)
    states = _checks.integer("states", states, 2)
    width = 2.0 * h / (2 * states - 1)
    centres = np.arange(states) * width
    upper_edges = centres + width / 2.0
    # P(C_new < upper edge of cell j | C_old = centre i) = Φ(edge_j − centre_i + k − shift)
    below = _normal_cdf(upper_edges[None, :] - centres[:, None] + k - shift)
    transitions = np.diff(below, axis=1, prepend=0.0)
    return _solve_arl(transitions, 0)


def cusum_arl(k: float, h: float, shift: float = 0.0, states: int = CUSUM_STATES) -> float:
    """Two-sided zero-start CUSUM ARL: ``1/ARL = 1/ARL⁺ + 1/ARL⁻`` (Lucas & Crosier 1982).

    >>> round(cusum_arl(0.5, 4.0), 1)  # Lucas & Crosier (1982) Table 1: 168
    167.7
    """
    upper = cusum_arl_one_sided(float(k), float(h), float(shift), states)
    lower = cusum_arl_one_sided(float(k), float(h), -float(shift), states)
    return 1.0 / (1.0 / upper + 1.0 / lower)


@lru_cache(maxsize=4096)
def ewma_arl(lam: float, L: float, shift: float = 0.0, states: int = EWMA_STATES) -> float:
    """Two-sided zero-start ARL of the EWMA chart with fixed limits (Brook & Evans chain).

    The interval ``(−c, c)``, ``c = L √(λ / (2 − λ))``, is cut into ``states`` equal cells
    (odd, so that the start value 0 is a cell centre); from centre ``sᵢ`` the next value
    ``(1 − λ)sᵢ + λz`` falls in cell j with probability
    ``Φ((bⱼ − (1 − λ)sᵢ)/λ − shift) − Φ((aⱼ − (1 − λ)sᵢ)/λ − shift)``.
    """
    lam, L = _ewma_parameters(lam, L)
    states = _checks.integer("states", states, 3)
    if states % 2 == 0:
        raise ValueError(f"states must be odd so that 0 is a cell centre, got {states}")
    c = ewma_limit(lam, L)
    width = 2.0 * c / states
    edges = -c + np.arange(states + 1) * width
    centres = (edges[:-1] + edges[1:]) / 2.0
    below = _normal_cdf((edges[None, :] - (1.0 - lam) * centres[:, None]) / lam - shift)
    transitions = np.diff(below, axis=1)
    return _solve_arl(transitions, states // 2)


def _solve_width(arl_of: Callable[[float], float], target: float, low: float, high: float) -> float:
    """The width whose ARL is ``target``: log ARL rises smoothly and nearly linearly with the
    width, so regula falsi (Illinois variant) converges in a handful of chain solutions."""
    target = _checks.real("arl0", target)
    if target <= 1.0:
        raise ValueError(f"arl0 must be greater than 1 observation, got {target}")
    goal = math.log(target)
    f_low, f_high = math.log(arl_of(low)) - goal, math.log(arl_of(high)) - goal
    if f_low > 0 or f_high < 0:
        raise ValueError(f"no limit between {low} and {high} gives an in-control ARL of {target}")
    side = 0
    for _ in range(200):
        width = high - f_high * (high - low) / (f_high - f_low)
        value = math.log(arl_of(width)) - goal
        if abs(value) < 1e-10 or high - low < 1e-9:
            return width
        if value > 0:
            high, f_high = width, value
            if side == 1:
                f_low /= 2.0
            side = 1
        else:
            low, f_low = width, value
            if side == -1:
                f_high /= 2.0
            side = -1
    raise SolverError(f"no convergence solving for an in-control ARL of {target}")


def cusum_h_for_arl(k: float, arl0: float, states: int = CUSUM_STATES) -> float:
    """The decision interval ``h`` whose two-sided in-control ARL equals ``arl0`` (solved).

    >>> round(cusum_h_for_arl(0.5, 465.44), 2)
    5.0
    """
    k = _checks.real("k", k)
    return _solve_width(lambda h: cusum_arl(k, round(h, 9), 0.0, states), arl0, 0.05, 30.0)


def ewma_L_for_arl(lam: float, arl0: float, states: int = EWMA_STATES) -> float:
    """The limit width ``L`` whose two-sided in-control ARL equals ``arl0`` (solved)."""
    lam = _checks.real("lam", lam)
    return _solve_width(lambda L: ewma_arl(lam, round(L, 9), 0.0, states), arl0, 0.1, 8.0)


def cusum_run_lengths(k: float, h: float, shifts: tuple[float, ...] = (0.5, 1.0, 2.0),
                      states: int = CUSUM_STATES) -> RunLengths:
    """In-control and shifted two-sided ARLs of the tabular CUSUM."""
    return RunLengths(
        cusum_arl(k, h, 0.0, states),
        tuple((float(s), cusum_arl(k, h, float(s), states)) for s in shifts),
        f"Brook & Evans (1972) Markov chain, {states} cells per side; two sides combined as "
        "1/ARL = 1/ARL+ + 1/ARL- (Lucas & Crosier 1982)",
    )


def ewma_run_lengths(lam: float, L: float, shifts: tuple[float, ...] = (0.5, 1.0, 2.0),
                     states: int = EWMA_STATES) -> RunLengths:
    """In-control and shifted two-sided ARLs of the EWMA chart with fixed limits."""
    return RunLengths(
        ewma_arl(lam, L, 0.0, states),
        tuple((float(s), ewma_arl(lam, L, float(s), states)) for s in shifts),
        f"Brook & Evans (1972) Markov chain, {states} cells across the two-sided limits",
    )

