"""Statistics of replicate titrations: mean and sample SD, Student t, Grubbs' outlier test.

Grubbs' test for one outlier (F. E. Grubbs, "Procedures for detecting outlying
observations in samples", Technometrics 11, 1-21 (1969); ISO 5725-2 uses it, from memory),
two-sided: ``G = max |x_i - mean| / s`` against::

    G_crit = (n - 1)/sqrt(n) * sqrt(t**2 / (n - 2 + t**2)),  t = t_{1 - alpha/(2n), n-2}

(NIST/SEMATECH e-Handbook of Statistical Methods, Grubbs' test page; the formula is
checked against published tables in tests/reference).  The formula holds from n = 3, but
``G`` can never exceed ``(n - 1)/sqrt(n)``; at n = 3 that bound (1.1547) is barely above
the critical value (1.1543 at alpha = 0.05), so a triplicate whose two close readings agree
to the last digit is "flagged" however small its spread (RSD 0.076 % gives G = 1.1546).
The test is therefore not applied below :data:`GRUBBS_MIN_N` values: there the result says
so, and acceptance rests on the RSD.

``scipy.stats`` is imported only inside the functions that need it, so importing this
module stays cheap.
"""

from __future__ import annotations

import functools
import math
import numbers
from collections.abc import Sequence
from typing import Any, NamedTuple

from carboy.errors import InvalidInput

__all__ = [
    "GRUBBS_METHOD",
    "GRUBBS_MIN_N",
    "GRUBBS_SOURCE",
    "T_SOURCE",
    "SetStatistics",
    "finite",
    "grubbs_critical",
    "grubbs_max_statistic",
    "grubbs_test",
    "is_real",
    "mean_sd",
    "outlier_test",
    "positive",
    "set_statistics",
    "t_critical",
]

GRUBBS_METHOD = "Grubbs test for one outlier, two-sided"
GRUBBS_MIN_N = 4
"""Fewest values the outlier test is applied to: at n = 3 ``G`` cannot exceed 1.1547 against
a critical 1.1543, so the test says nothing about the spread (carboy's rule)."""
NOT_APPLIED = ("not applied below {min_n} values (at n = 3 G cannot exceed 1.1547 against a "
               "critical value of 1.1543, so it cannot judge the spread): acceptance rests on "
               "the RSD")
GRUBBS_SOURCE = (
    "F. E. Grubbs, Technometrics 11, 1-21 (1969); critical value from the t distribution, "
    "G_crit = (n-1)/sqrt(n) * sqrt(t^2/(n-2+t^2)), t = t(1-alpha/(2n), n-2), as in the "
    "NIST/SEMATECH e-Handbook of Statistical Methods; agrees with the two-sided table of "
    "Harvey, Analytical Chemistry 2.1, Appendix 7"
)
T_SOURCE = "Student t distribution, two-sided quantile t(1-(1-confidence)/2, n-1) (scipy.stats.t)"


def is_real(value: object) -> bool:
    """True for a real number that is not a bool."""
    return isinstance(value, numbers.Real) and not isinstance(value, bool)


def finite(what: str, value: object) -> float:
    """``value`` as a float; InvalidInput naming ``what`` unless it is a finite number."""
    if not is_real(value) or not math.isfinite(float(value)):
        raise InvalidInput(what, value, "must be a finite number")
    return float(value)


def positive(what: str, value: object, *, upper: float | None = None, unit: str = "") -> float:
    """``value`` as a float; InvalidInput unless finite, above 0 and at most ``upper``."""
    x = finite(what, value)
    if x <= 0:
        raise InvalidInput(what, value, "must be greater than zero")
    if upper is not None and x > upper:
        raise InvalidInput(what, value, f"must not exceed {upper:g}{unit}")
    return x


def t_critical(dof: int, confidence: float = 0.95) -> float:
    """Two-sided critical value of Student's t: ``t(1 - (1 - confidence)/2, dof)``.

    ``t_critical(2) = 4.303``, ``t_critical(9) = 2.262`` (95 %).

    Raises
    ------
    InvalidInput
        If ``dof`` is not a whole number >= 1 or ``confidence`` is not in (0, 1).
    """
    if not isinstance(dof, numbers.Integral) or isinstance(dof, bool) or dof < 1:
        raise InvalidInput("degrees of freedom", dof, "must be a whole number of at least 1")
    c = finite("confidence", confidence)
    if not 0.0 < c < 1.0:
        raise InvalidInput("confidence", confidence, "must lie between 0 and 1 (e.g. 0.95)")
    return _t_ppf(0.5 + c / 2.0, int(dof))


@functools.lru_cache(maxsize=256)
def _t_ppf(p: float, dof: int) -> float:
    from scipy import stats

    return float(stats.t.ppf(p, dof))


@functools.lru_cache(maxsize=256)
def _t_isf(p: float, dof: int) -> float:
    from scipy import stats

    return float(stats.t.isf(p, dof))


def grubbs_max_statistic(n: int) -> float:
    """The largest value Grubbs' G can take for ``n`` values: ``(n - 1)/sqrt(n)``."""
    return (n - 1) / math.sqrt(n)


def grubbs_critical(n: int, alpha: float = 0.05, *, two_sided: bool = True) -> float:
    """Critical value of Grubbs' test for one outlier among ``n`` values.

    ``G_crit = (n-1)/sqrt(n) * sqrt(t^2 / (n - 2 + t^2))`` with ``t`` the upper
    ``alpha/(2n)`` (two-sided) or ``alpha/n`` (one-sided) critical value of Student's t
    with ``n - 2`` degrees of freedom (Grubbs 1969; NIST/SEMATECH e-Handbook, Grubbs' test).
    Two-sided is the test the standardization uses.

    Raises
    ------
    InvalidInput
        If ``n`` is not a whole number >= 3 or ``alpha`` is not in (0, 1).
    """
    if not isinstance(n, numbers.Integral) or isinstance(n, bool) or n < 3:
        raise InvalidInput("number of values", n, "Grubbs' test needs at least 3 values")
    a = finite("alpha", alpha)
    if not 0.0 < a < 1.0:
        raise InvalidInput("alpha", alpha, "must lie between 0 and 1 (e.g. 0.05)")
    n = int(n)
    p = a / (2 * n) if two_sided else a / n
    t = _t_isf(p, n - 2)
    return grubbs_max_statistic(n) * math.sqrt(t * t / (n - 2 + t * t))


def mean_sd(values: Sequence[float]) -> tuple[float, float | None]:
    """Mean and sample standard deviation (n - 1; None for a single value)."""
    n = len(values)
    mean = math.fsum(values) / n
    if n < 2:
        return mean, None
    ss = math.fsum((x - mean) ** 2 for x in values)
    return mean, math.sqrt(ss / (n - 1))


def grubbs_test(values: Sequence[float], alpha: float = 0.05) -> tuple[int | None, float, float]:
    """Two-sided Grubbs test for one outlier.

    Returns
    -------
    (index, G, G_crit)
        ``index`` is the 0-based position of the value farthest from the mean when
        ``G > G_crit``, else None; ``G = max |x_i - mean| / s`` with the sample SD
        ``s`` (0 when all values are equal).

    Raises
    ------
    InvalidInput
        If there are fewer than 3 values, a value is not finite, or ``alpha`` is bad.
    """
    if isinstance(values, (str, bytes)) or not isinstance(values, Sequence):
        raise InvalidInput("values", values, "must be a sequence of numbers")
    xs = [finite(f"value {i + 1}", v) for i, v in enumerate(values)]
    crit = grubbs_critical(len(xs), alpha)
    mean, sd = mean_sd(xs)
    if not sd:  # all values equal: nothing stands out
        return None, 0.0, crit
    deviations = [abs(x - mean) for x in xs]
    suspect = max(range(len(xs)), key=deviations.__getitem__)
    g = deviations[suspect] / sd
    return (suspect if g > crit else None), g, crit


def outlier_test(molars: Sequence[float], alpha: float) -> dict[str, Any]:
    """The outlier test as reported with a result (``suspect`` is 1-based, or None).

    Below :data:`GRUBBS_MIN_N` values ``applicable`` is False, nothing is flagged and
    ``note`` says why; ``statistic`` and ``critical`` are still given from n = 3, for
    information only.
    """
    n = len(molars)
    applicable = n >= GRUBBS_MIN_N
    test: dict[str, Any] = {
        "method": GRUBBS_METHOD,
        "alpha": alpha,
        "n": n,
        "applicable": applicable,
        "statistic": None,
        "critical": None,
        "max_possible": None,
        "suspect": None,
        "note": "" if applicable else NOT_APPLIED.format(min_n=GRUBBS_MIN_N),
        "source": GRUBBS_SOURCE,
    }
    if n >= 3:
        suspect, g, crit = grubbs_test(molars, alpha)
        test.update(statistic=g, critical=crit, max_possible=grubbs_max_statistic(n),
                    suspect=None if suspect is None or not applicable else suspect + 1)
    return test


class SetStatistics(NamedTuple):
    """Statistics over every replicate of a set (sd, rsd, ci and t are None for one).

    ``ci`` is the half-width of the two-sided confidence interval of the mean,
    ``t_crit * sd / sqrt(n)``; ``test`` is :func:`outlier_test`; ``outliers`` holds the
    1-based index of a flagged replicate.
    """

    n: int
    mean: float
    sd: float | None
    rsd: float | None
    ci: float | None
    t_crit: float | None
    test: dict[str, Any]
    outliers: tuple[int, ...]


def set_statistics(values: Sequence[float], alpha: float, confidence: float = 0.95
                   ) -> SetStatistics:
    """Mean, SD, RSD %, confidence half-width and the outlier test of a set of values."""
    n = len(values)
    mean, sd = mean_sd(values)
    rsd = ci = t_crit = None
    if sd is not None:
        rsd = 100.0 * sd / mean
        t_crit = t_critical(n - 1, confidence)
        ci = t_crit * sd / math.sqrt(n)
    test = outlier_test(values, alpha)
    outliers = () if test["suspect"] is None else (test["suspect"],)
    return SetStatistics(n, mean, sd, rsd, ci, t_crit, test, outliers)
