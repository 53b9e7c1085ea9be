"""Pure numerical methods for rated outcomes: numpy arrays in, frozen results out.

No I/O and no knowledge of plans. scipy is imported inside the functions that need it, and
nothing here imports pandas or matplotlib. Names are loaded on first use (PEP 562), so
``from protolint.stats.spearman_brown import spearman_brown`` and the other closed-form
modules (``study_size``, ``measurement_error``) load neither numpy nor scipy: the rules of
``protolint check`` rely on that.
"""

from __future__ import annotations

import importlib
from typing import TYPE_CHECKING, Any

# The closed-form modules need neither numpy nor scipy, so they are imported eagerly; this also
# binds the package names ``spearman_brown`` etc. to the functions rather than the submodules.
from protolint.stats._results import ConfidenceInterval, FTest, SolverError
from protolint.stats.measurement_error import mdc95, sem
from protolint.stats.spearman_brown import RatersNeededResult, SpearmanBrownResult, raters_needed, single_from_average, spearman_brown
from protolint.stats.study_size import (
    IccTestSampleSize,
    IccWidthResult,
    IccWidthSampleSize,
    icc_ci_width_bonett,
    subjects_for_icc_test_walter,
    subjects_for_icc_width_bonett,
)

# public name -> module that defines it (loaded on first use unless imported above)
_EXPORTS: dict[str, str] = {
    "BandScale": "protolint.stats.bands",
    "CONVENTIONS": "protolint.stats.power",
    "CONVENTION_ALIASES": "protolint.stats.power",
    "convention_name": "protolint.stats.power",
    "reliability_for_power": "protolint.stats.power",
    "true_effect_size": "protolint.stats.power",
    "reliability_for_power_correlation": "protolint.stats.power",
    "CategoryKappa": "protolint.stats.kappa",
    "CohenKappaResult": "protolint.stats.kappa",
    "ConfidenceInterval": "protolint.stats._results",
    "CorrelationPowerResult": "protolint.stats.power",
    "CorrelationSampleSizeResult": "protolint.stats.power",
    "CronbachAlphaResult": "protolint.stats.consistency",
    "FTest": "protolint.stats._results",
    "FleissKappaResult": "protolint.stats.kappa",
    "GwetResult": "protolint.stats.gwet",
    "ICC_NAMES": "protolint.stats.icc",
    "IccForm": "protolint.stats.icc",
    "IccResult": "protolint.stats.icc",
    "IccTestSampleSize": "protolint.stats.study_size",
    "IccWidthResult": "protolint.stats.study_size",
    "IccWidthSampleSize": "protolint.stats.study_size",
    "ItemStatistics": "protolint.stats.consistency",
    "KOO_LI_2016": "protolint.stats.bands",
    "KrippendorffAlphaResult": "protolint.stats.krippendorff",
    "LANDIS_KOCH_1977": "protolint.stats.bands",
    "PowerResult": "protolint.stats.power",
    "RatersNeededResult": "protolint.stats.spearman_brown",
    "SampleSizeResult": "protolint.stats.power",
    "SolverError": "protolint.stats._results",
    "SpearmanBrownResult": "protolint.stats.spearman_brown",
    "attenuated_effect_size": "protolint.stats.power",
    "cohen_kappa": "protolint.stats.kappa",
    "cronbach_alpha": "protolint.stats.consistency",
    "fleiss_kappa": "protolint.stats.kappa",
    "gwet_ac1": "protolint.stats.gwet",
    "gwet_ac2": "protolint.stats.gwet",
    "icc": "protolint.stats.icc",
    "icc_ci_width_bonett": "protolint.stats.study_size",
    "koo_li_2016": "protolint.stats.bands",
    "krippendorff_alpha": "protolint.stats.krippendorff",
    "landis_koch_1977": "protolint.stats.bands",
    "mdc95": "protolint.stats.measurement_error",
    "power_correlation": "protolint.stats.power",
    "power_two_group": "protolint.stats.power",
    "raters_needed": "protolint.stats.spearman_brown",
    "reliability_of_mean": "protolint.stats.power",
    "sample_size_correlation": "protolint.stats.power",
    "sample_size_two_group": "protolint.stats.power",
    "sem": "protolint.stats.measurement_error",
    "single_from_average": "protolint.stats.spearman_brown",
    "spearman_brown": "protolint.stats.spearman_brown",
    "subjects_for_icc_test_walter": "protolint.stats.study_size",
    "subjects_for_icc_width_bonett": "protolint.stats.study_size",
}

__all__ = sorted(_EXPORTS)


def __getattr__(name: str) -> Any:
    module = _EXPORTS.get(name)
    if module is None:
        raise AttributeError(f"module 'protolint.stats' has no attribute {name!r}")
    loaded = importlib.import_module(module)
    # Importing a submodule binds its name in this package (``protolint.stats.icc`` the
    # module), which would then shadow the function of the same name; every name the module
    # exports is bound here at once, so ``stats.icc`` is the function whichever name came first.
    for exported, source in _EXPORTS.items():
        if source == module:
            globals()[exported] = getattr(loaded, exported)
    return globals()[name]


def __dir__() -> list[str]:
    return sorted(set(globals()) | set(_EXPORTS))


if TYPE_CHECKING:  # let type checkers and editors see the eager names
    from protolint.stats._results import ConfidenceInterval, FTest, SolverError  # noqa: F401
    from protolint.stats.bands import BandScale, KOO_LI_2016, LANDIS_KOCH_1977, koo_li_2016, landis_koch_1977  # noqa: F401
    from protolint.stats.consistency import CronbachAlphaResult, ItemStatistics, cronbach_alpha  # noqa: F401
    from protolint.stats.gwet import GwetResult, gwet_ac1, gwet_ac2  # noqa: F401
    from protolint.stats.icc import ICC_NAMES, IccForm, IccResult, icc  # noqa: F401
    from protolint.stats.kappa import CategoryKappa, CohenKappaResult, FleissKappaResult, cohen_kappa, fleiss_kappa  # noqa: F401
    from protolint.stats.krippendorff import KrippendorffAlphaResult, krippendorff_alpha  # noqa: F401
    from protolint.stats.measurement_error import mdc95, sem  # noqa: F401
    from protolint.stats.power import CONVENTION_ALIASES, CONVENTIONS, convention_name, reliability_for_power, reliability_for_power_correlation, true_effect_size, CorrelationPowerResult, CorrelationSampleSizeResult, PowerResult, SampleSizeResult, attenuated_effect_size, power_correlation, power_two_group, reliability_of_mean, sample_size_correlation, sample_size_two_group  # noqa: F401
    from protolint.stats.spearman_brown import RatersNeededResult, SpearmanBrownResult, raters_needed, single_from_average, spearman_brown  # noqa: F401
    from protolint.stats.study_size import IccTestSampleSize, IccWidthResult, IccWidthSampleSize, icc_ci_width_bonett, subjects_for_icc_test_walter, subjects_for_icc_width_bonett  # noqa: F401
