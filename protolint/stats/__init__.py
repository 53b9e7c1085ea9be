"""Pure numerical methods for rated outcomes: numpy arrays in, frozen results out.

No I/O and no knowledge of plans. scipy is imported inside the functions that need it, and
nothing here imports pandas or matplotlib, so ``import protolint.stats`` stays light.
"""

from __future__ import annotations

from protolint.stats._results import ConfidenceInterval, FTest, SolverError
from protolint.stats.bands import KOO_LI_2016, LANDIS_KOCH_1977, BandScale, koo_li_2016, landis_koch_1977
from protolint.stats.consistency import CronbachAlphaResult, ItemStatistics, cronbach_alpha, mdc95, sem
from protolint.stats.gwet import GwetResult, gwet_ac1, gwet_ac2
from protolint.stats.icc import ICC_NAMES, IccForm, IccResult, icc
from protolint.stats.kappa import CategoryKappa, CohenKappaResult, FleissKappaResult, cohen_kappa, fleiss_kappa
from protolint.stats.krippendorff import KrippendorffAlphaResult, krippendorff_alpha
from protolint.stats.power import (
    CONVENTIONS,
    CorrelationPowerResult,
    CorrelationSampleSizeResult,
    PowerResult,
    SampleSizeResult,
    attenuated_effect_size,
    power_correlation,
    power_two_group,
    reliability_of_mean,
    sample_size_correlation,
    sample_size_two_group,
)
from protolint.stats.spearman_brown import (
    RatersNeededResult,
    SpearmanBrownResult,
    raters_needed,
    single_from_average,
    spearman_brown,
)
from protolint.stats.study_size import (
    IccTestSampleSize,
    IccWidthResult,
    IccWidthSampleSize,
    icc_ci_width_bonett,
    subjects_for_icc_test_walter,
    subjects_for_icc_width_bonett,
)

__all__ = [
    "BandScale",
    "CONVENTIONS",
    "CategoryKappa",
    "CohenKappaResult",
    "ConfidenceInterval",
    "CorrelationPowerResult",
    "CorrelationSampleSizeResult",
    "CronbachAlphaResult",
    "FTest",
    "FleissKappaResult",
    "GwetResult",
    "ICC_NAMES",
    "IccForm",
    "IccResult",
    "IccTestSampleSize",
    "IccWidthResult",
    "IccWidthSampleSize",
    "ItemStatistics",
    "KOO_LI_2016",
    "KrippendorffAlphaResult",
    "LANDIS_KOCH_1977",
    "PowerResult",
    "RatersNeededResult",
    "SampleSizeResult",
    "SolverError",
    "SpearmanBrownResult",
    "attenuated_effect_size",
    "cohen_kappa",
    "cronbach_alpha",
    "fleiss_kappa",
    "gwet_ac1",
    "gwet_ac2",
    "icc",
    "icc_ci_width_bonett",
    "koo_li_2016",
    "krippendorff_alpha",
    "landis_koch_1977",
    "mdc95",
    "power_correlation",
    "power_two_group",
    "raters_needed",
    "reliability_of_mean",
    "sample_size_correlation",
    "sample_size_two_group",
    "sem",
    "single_from_average",
    "spearman_brown",
    "subjects_for_icc_test_walter",
    "subjects_for_icc_width_bonett",
]
