"""When a standardization is accepted: the rule, and the reasons and warnings it gives.

A set of replicate titrations is accepted when all of these hold (:class:`AcceptanceRule`,
defaults in ``data/standards.toml``):

* at least ``min_replicates`` replicates (default 3);
* relative standard deviation (sample SD, n - 1) at most ``max_rsd_percent``
  (default 0.2 %, Ph. Eur. 4.2.2);
* no replicate flagged by the two-sided Grubbs test at ``alpha`` (default 0.05), which is
  applied from four replicates (below that acceptance rests on the RSD).

:func:`rejection_reasons` says why a set is not accepted; the ``*_warnings`` functions
give advice that does not block acceptance: an RSD in the band between the limit and
``warn_rsd_percent``, an outlier test too weak to flag anything, a defaulted or low purity,
a mean far from the nominal strength, small titres, light samples, an implausible mean.
"""

from __future__ import annotations

import math
import numbers
from collections.abc import Sequence
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

from carboy.errors import InvalidInput
from carboy.model.standards_data import RULE_DEFAULTS, PrimaryStandard, standards_data
from carboy.model.titration_stats import GRUBBS_MIN_N, SetStatistics, is_real, positive

if TYPE_CHECKING:  # the records of a result; standardization imports this module
    from carboy.model.standardization import ReplicateResult

__all__ = [
    "AcceptanceRule",
    "nominal_warnings",
    "outlier_test_warnings",
    "purity_warnings",
    "reading_warnings",
    "rejection_reasons",
    "rsd_warnings",
]


_RULE_LABELS = {
    "max_rsd_percent": "max RSD {:g} %",
    "min_replicates": "min replicates {:g}",
    "alpha": "outlier-test alpha {:g}",
    "nominal_tolerance_percent": "nominal tolerance ±{:g} %",
    "warn_rsd_percent": "RSD warning band up to {:g} %",
}


@dataclass(frozen=True)
class AcceptanceRule:
    """When a set of replicate titrations is accepted.

    Parameters
    ----------
    max_rsd_percent
        Largest relative standard deviation accepted, % (default 0.2, Ph. Eur. 4.2.2).
    min_replicates
        Fewest replicates accepted (default 3, triplicate as in pharma QC SOPs); >= 2.
    alpha
        Significance level of the two-sided Grubbs test (default 0.05), in (0, 0.5].
    nominal_tolerance_percent
        Deviation of the mean from the nominal strength beyond which a warning is given,
        % (default 10, Ph. Eur. 4.2.2).
    warn_rsd_percent
        Upper end of the "marginal" band above ``max_rsd_percent``: an RSD in
        (max_rsd_percent, warn_rsd_percent] adds a warning that one or two titrations
        may be at fault (default 0.5 %, a judgement).

    The defaults are those of ``standards.toml``; :attr:`source` cites them.
    """

    max_rsd_percent: float = RULE_DEFAULTS["max_rsd_percent"]
    min_replicates: int = RULE_DEFAULTS["min_replicates"]
    alpha: float = RULE_DEFAULTS["alpha"]
    nominal_tolerance_percent: float = RULE_DEFAULTS["nominal_tolerance_percent"]
    warn_rsd_percent: float = RULE_DEFAULTS["warn_rsd_percent"]

    def __post_init__(self) -> None:
        positive("max RSD percent", self.max_rsd_percent, upper=100.0)
        positive("warning RSD percent", self.warn_rsd_percent, upper=100.0)
        positive("nominal tolerance percent", self.nominal_tolerance_percent, upper=100.0)
        mr = self.min_replicates
        if not isinstance(mr, numbers.Integral) or isinstance(mr, bool) or not 2 <= mr <= 100:
            raise InvalidInput(
                "min replicates", mr, "must be a whole number from 2 to 100 (RSD needs two)"
            )
        a = self.alpha
        if not is_real(a) or not math.isfinite(a) or not 0.0 < a <= 0.5:
            raise InvalidInput("alpha", a, "the outlier-test significance must be in (0, 0.5]")

    @property
    def source(self) -> str:
        """Where each number of the rule comes from (set by the user where changed)."""
        data = standards_data().acceptance
        parts = []
        for name, default in RULE_DEFAULTS.items():
            value = getattr(self, name)
            text = _RULE_LABELS[name].format(value)
            if value == default:
                prov = data[name]
                parts.append(f"{text}: {prov.source} [{prov.status}]")
            else:
                parts.append(f"{text}: set by the user (packaged default {default:g})")
        return "; ".join(parts)

    def to_dict(self) -> dict[str, Any]:
        out: dict[str, Any] = {name: getattr(self, name) for name in RULE_DEFAULTS}
        out["source"] = self.source
        return out


def _fmt(x: float) -> str:
    return f"{x:.5g}"


def _plural(n: int) -> str:
    return "s" if n != 1 else ""


def rejection_reasons(stats: SetStatistics, rule: AcceptanceRule,
                      results: Sequence[ReplicateResult]) -> list[str]:
    """Why the result is not accepted (empty when it is)."""
    reasons: list[str] = []
    n, rsd = stats.n, stats.rsd
    if n < rule.min_replicates:
        reasons.append(
            f"Only {n} replicate{_plural(n)} titrated; the rule needs at least "
            f"{rule.min_replicates} (min replicates)."
        )
    if rsd is not None and rsd > rule.max_rsd_percent:
        reasons.append(
            f"RSD {rsd:.3f} % exceeds the limit of {rule.max_rsd_percent:g} % (max RSD)."
        )
    for index in stats.outliers:
        bad = results[index - 1]
        reasons.append(
            f"Replicate {index} ({_fmt(bad.molar)} M) is an outlier by Grubbs' test "
            f"(G = {stats.test['statistic']:.3f} > {stats.test['critical']:.3f} at alpha = "
            f"{rule.alpha:g}, n = {n}): repeat that titration."
        )
    return reasons


def rsd_warnings(stats: SetStatistics, rule: AcceptanceRule) -> list[str]:
    """An RSD just above the limit, or within a user's laxer limit but above Ph. Eur.'s."""
    rsd = stats.rsd
    if rsd is None:
        return []
    if rsd > rule.max_rsd_percent:
        if rsd > rule.warn_rsd_percent:
            return []
        return [
            f"RSD {rsd:.3f} % is only just above the {rule.max_rsd_percent:g} % limit "
            f"(warning band up to {rule.warn_rsd_percent:g} %): look for one poor "
            "titration, repeat it or add replicates."
        ]
    reference = RULE_DEFAULTS["max_rsd_percent"]
    if rsd > reference:
        return [
            f"RSD {rsd:.3f} % meets the configured {rule.max_rsd_percent:g} % but not the "
            f"{reference:g} % of Ph. Eur. 4.2.2."
        ]
    return []


def outlier_test_warnings(stats: SetStatistics) -> list[str]:
    """Too few replicates for Grubbs' test: it is not applied, and acceptance rests on RSD."""
    n = stats.n
    if n >= GRUBBS_MIN_N:
        return []
    if n == 3:
        return [
            f"Grubbs' test is not applied to 3 replicates: G cannot exceed (n-1)/sqrt(n) = "
            f"{stats.test['max_possible']:.4f} against a critical value of "
            f"{stats.test['critical']:.4f} (here G = {stats.test['statistic']:.4f}), so it "
            f"cannot judge the spread; acceptance rests on the RSD. Titrate {GRUBBS_MIN_N} "
            "or more to test for an outlier."
        ]
    return [
        f"With {n} replicate{_plural(n)} no outlier test is possible (Grubbs' test is "
        f"applied from {GRUBBS_MIN_N}); acceptance rests on the RSD."
    ]


def purity_warnings(std: PrimaryStandard, purity: float, defaulted: bool) -> list[str]:
    """A purity not entered (the standard's assay assumed) or low for a primary standard."""
    if defaulted:
        return [
            f"Purity not entered: {purity:g} % assumed for {std.label}; enter the value on "
            "the certificate of the lot in use."
        ]
    if purity < standards_data().checks["min_purity_percent"]:
        return [
            f"Purity {purity:g} % is low for a primary standard (usually certified near "
            "100 %): check the value and the material."
        ]
    return []


def nominal_warnings(mean: float, nominal: float | None, deviation: float | None,
                     rule: AcceptanceRule) -> list[str]:
    """A mean farther than the rule's tolerance from the nominal strength."""
    if nominal is None or deviation is None or abs(deviation) <= rule.nominal_tolerance_percent:
        return []
    return [
        f"Mean {_fmt(mean)} M is {deviation:+.1f} % from the nominal {_fmt(nominal)} M, "
        f"outside ±{rule.nominal_tolerance_percent:g} % (Ph. Eur. 4.2.2 expects a "
        "volumetric solution within ±10 % of nominal): adjust it and standardize again."
    ]


def reading_warnings(std: PrimaryStandard, results: Sequence[ReplicateResult],
                     mean: float) -> list[str]:
    """Small titres, samples below the certificate's minimum, an implausible mean."""
    checks = standards_data().checks
    warnings = []
    small = [r.index for r in results if r.net_volume_ml < checks["min_net_volume_ml"]]
    if small:
        warnings.append(
            f"Replicate{_plural(len(small))} {', '.join(map(str, small))}: titre "
            f"below {checks['min_net_volume_ml']:g} mL, where the burette reading alone costs "
            "0.2 % or more; weigh more standard."
        )
    if std.min_sample_g is not None:
        light = [r.index for r in results if r.mass_g < std.min_sample_g]
        if light:
            warnings.append(
                f"Replicate{_plural(len(light))} {', '.join(map(str, light))}: less "
                f"than the {std.min_sample_g * 1000:g} mg minimum sample of {std.label} "
                f"({std.provenance['min_sample_g'].source})."
            )
    low, high = checks["plausible_molar"]
    if not low <= mean <= high:
        warnings.append(
            f"Mean {_fmt(mean)} M is outside the usual {low:g}-{high:g} M of titrants: check "
            "the units of mass (g) and titre (mL)."
        )
    return warnings


