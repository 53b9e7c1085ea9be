"""Generalizability theory: G-study variance components and D-study coefficients.

Three balanced designs, in Brennan's notation with ``p`` the persons (here: trial
participants), ``r`` the raters and ``o`` the occasions:

``"p x r"``
    Every participant rated once by every rater. Effects p, r and pr,e (the interaction
    confounded with residual error).
``"p x r x o"``
    Every participant rated by every rater on every occasion. Effects p, r, o, pr, po, ro and
    pro,e.
``"r:p"``
    Raters nested within participants: each participant rated by ``n_r`` raters of their own.
    Effects p and r:p (rater, participant-by-rater and residual variance, confounded).

Variance components are the ANOVA (expected-mean-squares) estimators of Brennan (2001, ch. 3),
written in mean squares only, so a negative estimate never enters another component's
estimate. A negative estimate is set to zero, flagged, and the zero is what the D-study uses
(Brennan 2001, §3.4). All facets are random and the universe of generalization is infinite.

D-study for ``n'_r`` raters and ``n'_o`` occasions (Brennan 2001, ch. 4):

* universe-score variance σ²(τ) = σ²(p);
* relative error σ²(δ): the interactions of p with the facets, each divided by the numbers of
  conditions averaged;
* absolute error σ²(Δ) = σ²(δ) plus the facet main effects and their interactions, likewise;
* generalizability coefficient Eρ² = σ²(τ) / (σ²(τ) + σ²(δ)) (comparing participants rated by
  the same raters) and dependability coefficient Φ = σ²(τ) / (σ²(τ) + σ²(Δ)) (raters differ
  between participants, or scores are compared with a fixed cut-off).

References
----------
Brennan, R. L. (2001). Generalizability Theory. New York: Springer. Chapter 3 (G-study
variance components for the p x i, p x i x o and i:p designs; §3.4 negative estimates) and
chapter 4 (D-study error variances and coefficients).
Cronbach, L. J., Gleser, G. C., Nanda, H. & Rajaratnam, N. (1972). The Dependability of
Behavioral Measurements. New York: Wiley.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike, NDArray

from protolint.stats import _checks

DESIGNS: tuple[str, ...] = ("p x r", "p x r x o", "r:p")

# Effects of each design in Brennan's order (main effects first, residual last).
EFFECTS: dict[str, tuple[str, ...]] = {
    "p x r": ("p", "r", "pr,e"),
    "p x r x o": ("p", "r", "o", "pr", "po", "ro", "pro,e"),
    "r:p": ("p", "r:p"),
}


@dataclass(frozen=True, slots=True)
class VarianceComponent:
    """One G-study variance component.

    Attributes
    ----------
    effect : str
        Brennan's notation: ``"p"``, ``"r"``, ``"o"``, ``"pr"``, ``"po"``, ``"ro"``,
        ``"pro,e"``, ``"pr,e"`` or ``"r:p"``.
    df : int
        Degrees of freedom of the effect.
    mean_square : float
    estimate : float
        The ANOVA estimate as computed (may be negative).
    variance : float
        The estimate used: ``max(estimate, 0)``.
    set_to_zero : bool
        True when a negative estimate was replaced by zero.
    """

    effect: str
    df: int
    mean_square: float
    estimate: float
    variance: float
    set_to_zero: bool


@dataclass(frozen=True, slots=True)
class DStudy:
    """D-study for ``n_r`` raters and ``n_o`` occasions (``n'_r``, ``n'_o`` in Brennan).

    Attributes
    ----------
    n_r, n_o : int
        Raters and occasions averaged per participant.
    var_tau : float
        Universe-score variance σ²(τ).
    var_delta : float
        Relative error variance σ²(δ).
    var_Delta : float
        Absolute error variance σ²(Δ).
    e_rho2 : float
        Generalizability coefficient Eρ² (NaN when σ²(τ) + σ²(δ) = 0).
    phi : float
        Dependability coefficient Φ (NaN when σ²(τ) + σ²(Δ) = 0).
    """

    n_r: int
    n_o: int
    var_tau: float
    var_delta: float
    var_Delta: float  # noqa: N815 - Brennan's capital Delta (absolute error) beside delta
    e_rho2: float
    phi: float


def _ratio(numerator: float, denominator: float) -> float:
    return numerator / denominator if denominator > 0.0 else math.nan


@dataclass(frozen=True, slots=True)
class GStudy:
    """G-study of one balanced design.

    Attributes
    ----------
    design : str
        One of :data:`DESIGNS`.
    n_p, n_r, n_o : int
        Participants, raters (per participant for ``"r:p"``) and occasions (1 when the design
        has no occasion facet).
    grand_mean : float
    components : tuple of VarianceComponent
        In the order of ``EFFECTS[design]``.
    method : str
    """

    design: str
    n_p: int
    n_r: int
    n_o: int
    grand_mean: float
    components: tuple[VarianceComponent, ...]
    method: str = "ANOVA expected-mean-squares estimators, Brennan (2001) ch. 3; negative estimates set to zero (§3.4)"

    def component(self, effect: str) -> VarianceComponent:
        """The component of ``effect`` (Brennan's notation)."""
        for item in self.components:
            if item.effect == effect:
                return item
        raise KeyError(f"design {self.design!r} has no effect {effect!r}; it has {', '.join(EFFECTS[self.design])}")

    def variance(self, effect: str) -> float:
        """σ²(effect) as used by the D-study (negative estimates zeroed)."""
        return self.component(effect).variance

    @property
    def total(self) -> float:
        """Sum of the (zeroed) components: the variance of a single rating."""
        return sum(item.variance for item in self.components)

    def share(self, effect: str) -> float:
        """σ²(effect) as a proportion of the total (NaN when the total is zero)."""
        return _ratio(self.variance(effect), self.total)

    @property
    def has_occasions(self) -> bool:
        return self.design == "p x r x o"

    def d_study(self, n_r: int, n_o: int = 1) -> DStudy:
        """Error variances and coefficients for the mean over ``n_r`` raters and ``n_o`` occasions.

        Raises
        ------
        ValueError
            If ``n_r`` or ``n_o`` is not a whole number >= 1, or ``n_o > 1`` for a design
            without an occasion facet (the pilot says nothing about occasions).
        """
        k = _checks.integer("n_r", n_r, 1)
        m = _checks.integer("n_o", n_o, 1)
        if m > 1 and not self.has_occasions:
            raise ValueError(f"n_o must be 1 for design {self.design!r} (the pilot has no occasion facet), got {n_o!r}")
        var = self.variance
        var_tau = var("p")
        if self.design == "p x r":
            var_delta = var("pr,e") / k
            var_Delta = var_delta + var("r") / k  # noqa: N806 - Brennan's notation
        elif self.design == "r:p":
            # Nested raters: the rater effect is part of sigma^2(r:p), so relative and absolute error coincide.
            var_delta = var_Delta = var("r:p") / k  # noqa: N806
        else:
            var_delta = var("pr") / k + var("po") / m + var("pro,e") / (k * m)
            var_Delta = var_delta + var("r") / k + var("o") / m + var("ro") / (k * m)  # noqa: N806
        return DStudy(
            n_r=k,
            n_o=m,
            var_tau=var_tau,
            var_delta=var_delta,
            var_Delta=var_Delta,
            e_rho2=_ratio(var_tau, var_tau + var_delta),
            phi=_ratio(var_tau, var_tau + var_Delta),
        )


def _component(effect: str, ss: float, df: int, estimate: float) -> VarianceComponent:
    ms = ss / df
    # Round-off can leave a true zero as -1e-17; that is not a negative estimate worth flagging.
    scale = max(abs(ms), 1.0)
    if abs(estimate) < 1e-12 * scale:
        estimate = 0.0
    return VarianceComponent(effect, df, ms, estimate, max(estimate, 0.0), estimate < 0.0)


def _crossed_two(x: NDArray[np.float64]) -> tuple[float, tuple[VarianceComponent, ...]]:
    n_p, n_r = x.shape
    m = float(x.mean())
    mp = x.mean(axis=1)
    mr = x.mean(axis=0)
    ss_p = n_r * float(((mp - m) ** 2).sum())
    ss_r = n_p * float(((mr - m) ** 2).sum())
    ss_pr = float(((x - mp[:, None] - mr[None, :] + m) ** 2).sum())
    df_p, df_r = n_p - 1, n_r - 1
    df_pr = df_p * df_r
    ms_p, ms_r, ms_pr = ss_p / df_p, ss_r / df_r, ss_pr / df_pr
    return m, (
        _component("p", ss_p, df_p, (ms_p - ms_pr) / n_r),
        _component("r", ss_r, df_r, (ms_r - ms_pr) / n_p),
        _component("pr,e", ss_pr, df_pr, ms_pr),
    )


def _crossed_three(x: NDArray[np.float64]) -> tuple[float, tuple[VarianceComponent, ...]]:
    n_p, n_r, n_o = x.shape
    m = float(x.mean())
    mp, mr, mo = x.mean(axis=(1, 2)), x.mean(axis=(0, 2)), x.mean(axis=(0, 1))
    mpr, mpo, mro = x.mean(axis=2), x.mean(axis=1), x.mean(axis=0)
    ss_p = n_r * n_o * float(((mp - m) ** 2).sum())
    ss_r = n_p * n_o * float(((mr - m) ** 2).sum())
    ss_o = n_p * n_r * float(((mo - m) ** 2).sum())
    ss_pr = n_o * float(((mpr - mp[:, None] - mr[None, :] + m) ** 2).sum())
    ss_po = n_r * float(((mpo - mp[:, None] - mo[None, :] + m) ** 2).sum())
    ss_ro = n_p * float(((mro - mr[:, None] - mo[None, :] + m) ** 2).sum())
    residual = (x - mpr[:, :, None] - mpo[:, None, :] - mro[None, :, :]
                + mp[:, None, None] + mr[None, :, None] + mo[None, None, :] - m)
    ss_pro = float((residual ** 2).sum())
    df_p, df_r, df_o = n_p - 1, n_r - 1, n_o - 1
    df_pr, df_po, df_ro = df_p * df_r, df_p * df_o, df_r * df_o
    df_pro = df_p * df_r * df_o
    ms = {
        "p": ss_p / df_p, "r": ss_r / df_r, "o": ss_o / df_o,
        "pr": ss_pr / df_pr, "po": ss_po / df_po, "ro": ss_ro / df_ro, "pro": ss_pro / df_pro,
    }
    # Expected mean squares of the random p x i x o design (Brennan 2001, ch. 3), solved.
    return m, (
        _component("p", ss_p, df_p, (ms["p"] - ms["pr"] - ms["po"] + ms["pro"]) / (n_r * n_o)),
        _component("r", ss_r, df_r, (ms["r"] - ms["pr"] - ms["ro"] + ms["pro"]) / (n_p * n_o)),
        _component("o", ss_o, df_o, (ms["o"] - ms["po"] - ms["ro"] + ms["pro"]) / (n_p * n_r)),
        _component("pr", ss_pr, df_pr, (ms["pr"] - ms["pro"]) / n_o),
        _component("po", ss_po, df_po, (ms["po"] - ms["pro"]) / n_r),
        _component("ro", ss_ro, df_ro, (ms["ro"] - ms["pro"]) / n_p),
        _component("pro,e", ss_pro, df_pro, ms["pro"]),
    )


def _nested(x: NDArray[np.float64]) -> tuple[float, tuple[VarianceComponent, ...]]:
    n_p, n_r = x.shape
    m = float(x.mean())
    mp = x.mean(axis=1)
    ss_p = n_r * float(((mp - m) ** 2).sum())
    ss_rp = float(((x - mp[:, None]) ** 2).sum())
    df_p, df_rp = n_p - 1, n_p * (n_r - 1)
    ms_p, ms_rp = ss_p / df_p, ss_rp / df_rp
    return m, (
        _component("p", ss_p, df_p, (ms_p - ms_rp) / n_r),
        _component("r:p", ss_rp, df_rp, ms_rp),
    )


def g_study(scores: ArrayLike, design: str | None = None) -> GStudy:
    """Variance components of a balanced G-study.

    Parameters
    ----------
    scores : array_like
        Shape (n_p, n_r) for ``"p x r"`` and ``"r:p"`` (for ``"r:p"`` column j is simply the
        j-th rating of each participant, by a rater of their own), or (n_p, n_r, n_o) for
        ``"p x r x o"``. Complete: no missing value (drop or impute first). Each dimension
        needs at least 2 levels.
    design : {"p x r", "p x r x o", "r:p"}, optional
        Defaults to ``"p x r"`` for a 2-D and ``"p x r x o"`` for a 3-D array; ``"r:p"`` must be
        asked for.

    Returns
    -------
    GStudy

    Raises
    ------
    ValueError
        For a shape that does not fit the design, a dimension with fewer than 2 levels, or a
        missing or non-finite value.

    References
    ----------
    Brennan, R. L. (2001). Generalizability Theory. Springer, ch. 3.
    """
    x = np.asarray(scores, dtype=np.float64)
    if design is None:
        if x.ndim not in (2, 3):
            raise ValueError(f"scores must be 2-D (participants x raters) or 3-D (x occasions), got {x.ndim}-D")
        design = "p x r" if x.ndim == 2 else "p x r x o"
    _checks.choice("design", design, DESIGNS)
    wanted = 3 if design == "p x r x o" else 2
    if x.ndim != wanted:
        raise ValueError(f"scores must be {wanted}-D for design {design!r}, got shape {x.shape}")
    if min(x.shape) < 2:
        raise ValueError(f"scores needs at least 2 levels in every dimension, got shape {x.shape}")
    if not np.isfinite(x).all():
        raise ValueError("scores must be complete and finite (no NaN or infinity); drop incomplete participants first")
    if design == "p x r":
        mean, components = _crossed_two(x)
    elif design == "r:p":
        mean, components = _nested(x)
    else:
        mean, components = _crossed_three(x)
    n_o = x.shape[2] if x.ndim == 3 else 1
    return GStudy(design, x.shape[0], x.shape[1], n_o, mean, components)
