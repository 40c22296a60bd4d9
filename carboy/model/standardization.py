"""Standardizing a titrant against a weighed primary standard, in replicates.

A storeroom makes up an NaOH, KOH, HCl, HNO3 or H2SO4 solution of roughly the wanted
strength and then finds its exact molarity by titrating weighed portions of a primary
standard (KHP or sulfamic acid for a base; Na2CO3 or Tris for an acid).  Each replicate
gives one molarity; :func:`standardize` turns the set into a mean, its spread and a
decision whether to accept it.

Chemistry
---------
For one replicate::

    molar = (mass_g * purity/100 / M_std) * eq_std / eq_titrant / ((volume_ml - blank_ml) / 1000)

``M_std`` is computed from the standard's formula with molmass; ``eq_std`` is the protons
one formula unit of the standard gives or takes at the end point (Na2CO3 2, titrated
through to CO2; the others 1) and ``eq_titrant`` the protons or hydroxides per formula
unit of the titrant (H2SO4 2: both protons titrate; the others 1).  The blank is the
titre of the solvent and indicator alone, subtracted from every reading.

Acceptance (:class:`AcceptanceRule`)
------------------------------------
A standardization is accepted when all of these hold:

* at least ``min_replicates`` replicates (default 3);
* relative standard deviation (sample SD, n - 1) at most ``max_rsd_percent``
  (default 0.2 %, Ph. Eur. 4.2.2);
* no replicate flagged by the two-sided Grubbs test at ``alpha`` (default 0.05), applied
  from four replicates.

Statistics are always over every replicate entered: a flagged outlier is reported and
makes the result not accepted (repeat that titration), but it is never dropped silently.
A mean more than ``nominal_tolerance_percent`` (10 %) from the label strength gives a
warning, as does an RSD in the band between the limit and ``warn_rsd_percent``.

Outlier test
------------
Two-sided Grubbs test for one outlier (:mod:`carboy.model.titration_stats`).  It is not
applied below four replicates (``GRUBBS_MIN_N``): at three, G cannot exceed 1.1547 against
a critical 1.1543, so a tight triplicate could be rejected on a rounding digit.  The result
says so, and acceptance then rests on the RSD.

Data and lookup
---------------
The standards, titrants and rule defaults are in ``data/standards.toml``
(:mod:`carboy.model.standards_data`, validated, every number with its source and status).

Everything here is pure: no files written, nothing printed.  ``scipy.stats`` is imported
only inside the functions that need it, so importing this module stays cheap.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

from carboy.errors import InvalidInput
from carboy.model.acceptance import (
    AcceptanceRule,
    nominal_warnings,
    outlier_test_warnings,
    purity_warnings,
    reading_warnings,
    rejection_reasons,
    rsd_warnings,
)
from carboy.model.provenance import PACKAGED_STATUSES, Provenance
from carboy.model.standards_data import (
    KINDS,
    Note,
    PrimaryStandard,
    Titrant,
    primary_standard,
    primary_standards,
    resolve_pair,
    standards_data,
    titrant,
    titrants,
)
from carboy.model.titration_stats import (
    GRUBBS_METHOD,
    GRUBBS_SOURCE,
    T_SOURCE,
    finite,
    grubbs_critical,
    grubbs_max_statistic,
    grubbs_test,
    positive,
    set_statistics,
    t_critical,
)

__all__ = [
    "GRUBBS_METHOD",
    "GRUBBS_SOURCE",
    "KINDS",
    "MAX_MASS_G",
    "MAX_NOMINAL_MOLAR",
    "MAX_VOLUME_ML",
    "STATUSES",
    "T_SOURCE",
    "AcceptanceRule",
    "Note",
    "PrimaryStandard",
    "Provenance",
    "Replicate",
    "ReplicateResult",
    "Standardization",
    "Titrant",
    "grubbs_critical",
    "grubbs_max_statistic",
    "grubbs_test",
    "primary_standard",
    "primary_standards",
    "replicate_molar",
    "standard_mass_g",
    "standardize",
    "t_critical",
    "titrant",
    "titrants",
]

STATUSES = PACKAGED_STATUSES
"""Status words of ``standards.toml``: the one vocabulary of :mod:`carboy.model.provenance`."""

MAX_MASS_G = 100.0
"""A weighed portion above this is not a titration sample (a unit slip): refused."""

MAX_VOLUME_ML = 1000.0
"""A titre above this is not a burette reading (a unit slip): refused."""

MAX_NOMINAL_MOLAR = 20.0
"""A nominal (label) strength above this is not a titrant: refused."""

CI_CONFIDENCE = 0.95
"""Confidence of ``Standardization.ci95_molar`` (two-sided, Student t)."""

_data = standards_data
"""The validated ``standards.toml`` (kept under its former name)."""


# ----------------------------------------------------------------------------- records


@dataclass(frozen=True)
class Replicate:
    """One titration: ``mass_g`` of standard weighed, ``volume_ml`` of titrant read, and
    the ``blank_ml`` titre of solvent and indicator alone (subtracted)."""

    mass_g: float
    volume_ml: float
    blank_ml: float = 0.0


@dataclass(frozen=True)
class ReplicateResult:
    """One replicate as computed: ``index`` is 1-based, ``molar`` in mol/L."""

    index: int
    mass_g: float
    volume_ml: float
    blank_ml: float
    net_volume_ml: float
    molar: float
    outlier: bool = False

    def to_dict(self) -> dict[str, Any]:
        return {
            "index": self.index,
            "mass_g": self.mass_g,
            "volume_ml": self.volume_ml,
            "blank_ml": self.blank_ml,
            "net_volume_ml": self.net_volume_ml,
            "molar": self.molar,
            "outlier": self.outlier,
        }


@dataclass(frozen=True)
class Standardization:
    """The result of :func:`standardize`.

    ``mean_molar`` is the mean over every replicate; ``sd_molar`` the sample standard
    deviation (n - 1); ``rsd_percent`` = 100 sd/mean; ``ci95_molar`` the half-width of
    the 95 % confidence interval of the mean, ``t_critical * sd / sqrt(n)``.  These are
    None for a single replicate.  ``outliers`` holds 1-based indices flagged by the
    outlier test (described in ``outlier_test``).  ``reasons`` says why the result is not
    accepted (empty when accepted); ``warnings`` and ``notes`` are advice (plain sentences;
    the source of each note is on ``standard.drying``, ``standard.end_point`` and
    ``titrant.notes``).
    """

    titrant: Titrant
    standard: PrimaryStandard
    purity_percent: float
    replicates: tuple[ReplicateResult, ...]
    mean_molar: float
    sd_molar: float | None
    rsd_percent: float | None
    ci95_molar: float | None
    t_critical: float | None
    outliers: tuple[int, ...]
    outlier_test: dict
    accepted: bool
    reasons: tuple[str, ...]
    warnings: tuple[str, ...]
    notes: tuple[str, ...]
    nominal_molar: float | None
    deviation_percent: float | None
    rule: AcceptanceRule
    purity_defaulted: bool = False

    @property
    def n(self) -> int:
        """Number of replicates."""
        return len(self.replicates)

    def to_dict(self) -> dict[str, Any]:
        """A JSON-ready dictionary (plain str, int, float, bool, None, list, dict)."""
        return {
            "titrant": self.titrant.to_dict(),
            "standard": self.standard.to_dict(),
            "purity_percent": self.purity_percent,
            "purity_defaulted": self.purity_defaulted,
            "n": self.n,
            "replicates": [r.to_dict() for r in self.replicates],
            "mean_molar": self.mean_molar,
            "sd_molar": self.sd_molar,
            "rsd_percent": self.rsd_percent,
            "ci95_molar": self.ci95_molar,
            "t_critical": self.t_critical,
            "outliers": list(self.outliers),
            "outlier_test": dict(self.outlier_test),
            "accepted": self.accepted,
            "reasons": list(self.reasons),
            "warnings": list(self.warnings),
            "notes": list(self.notes),
            "nominal_molar": self.nominal_molar,
            "deviation_percent": self.deviation_percent,
            "rule": self.rule.to_dict(),
        }


# ----------------------------------------------------------------------------- checks


def _sentence(text: str) -> str:
    text = text.strip()
    return text[:1].upper() + text[1:] + ("" if text.endswith(".") else ".")


# ----------------------------------------------------------------------------- chemistry


def _check_replicate(item: object, label: str) -> Replicate:
    if isinstance(item, Replicate):
        rep = item
    elif isinstance(item, (tuple, list)) and len(item) in (2, 3):
        rep = Replicate(*item)
    else:
        raise InvalidInput(
            label, item, "must be a Replicate(mass_g, volume_ml, blank_ml) or (mass_g, volume_ml)"
        )
    mass = finite(f"{label} mass (g)", rep.mass_g)
    if mass <= 0:
        raise InvalidInput(f"{label} mass (g)", rep.mass_g, "must be greater than zero")
    if mass > MAX_MASS_G:
        raise InvalidInput(
            f"{label} mass (g)", rep.mass_g,
            f"exceeds {MAX_MASS_G:g} g, which is no titration sample; is it in mg?",
        )
    volume = finite(f"{label} volume (mL)", rep.volume_ml)
    if volume <= 0:
        raise InvalidInput(f"{label} volume (mL)", rep.volume_ml, "must be greater than zero")
    if volume > MAX_VOLUME_ML:
        raise InvalidInput(
            f"{label} volume (mL)", rep.volume_ml,
            f"exceeds {MAX_VOLUME_ML:g} mL, which is no burette reading; is it in µL?",
        )
    blank = finite(f"{label} blank (mL)", rep.blank_ml)
    if blank < 0:
        raise InvalidInput(f"{label} blank (mL)", rep.blank_ml, "must not be negative")
    if blank >= volume:
        raise InvalidInput(
            f"{label} blank (mL)", rep.blank_ml,
            f"must be less than the titre {volume:g} mL (nothing would be left to titrate)",
        )
    return Replicate(mass, volume, blank)


def _check_purity(purity_percent: object) -> float:
    high = _data().checks["max_purity_percent"]
    p = finite("purity (%)", purity_percent)
    if not 0.0 < p <= high:
        raise InvalidInput(
            "purity (%)", purity_percent,
            f"must be above 0 and at most {high:g} % (a certified value may exceed 100 % "
            "slightly, within its uncertainty)",
        )
    return p


def _molar(tit: Titrant, std: PrimaryStandard, rep: Replicate, purity: float) -> float:
    mol_std = rep.mass_g * purity / 100.0 / std.molar_mass_g_mol
    return mol_std * std.equivalents / tit.equivalents / ((rep.volume_ml - rep.blank_ml) / 1000.0)


def replicate_molar(
    titrant: str | Titrant,
    standard: str | PrimaryStandard,
    replicate: Replicate,
    purity_percent: float | None = None,
) -> float:
    """Molarity (mol/L of titrant formula units) from one titration.

    ``purity_percent`` defaults to the standard's ``assay_percent``.  Raises
    :class:`~carboy.errors.InvalidInput` for the same refusals as :func:`standardize`.
    """
    tit, std = resolve_pair(titrant, standard)
    rep = _check_replicate(replicate, "replicate")
    purity = std.assay_percent if purity_percent is None else _check_purity(purity_percent)
    return _molar(tit, std, rep, purity)


def standard_mass_g(
    titrant: str | Titrant,
    standard: str | PrimaryStandard,
    conc_molar: float,
    volume_ml: float,
    purity_percent: float | None = None,
) -> float:
    """Mass of standard, g, that ``volume_ml`` of titrant at ``conc_molar`` titrates.

    For planning a weighing: ``standard_mass_g("HCl", "Na2CO3", 1.0, 1.0)`` is the
    pharmacopoeial "1 mL of 1 M HCl is equivalent to 0.05299 g of Na2CO3".
    """
    tit, std = resolve_pair(titrant, standard)
    c = positive("concentration (mol/L)", conc_molar, upper=MAX_NOMINAL_MOLAR, unit=" M")
    v = positive("volume (mL)", volume_ml, upper=MAX_VOLUME_ML, unit=" mL")
    purity = std.assay_percent if purity_percent is None else _check_purity(purity_percent)
    mol_std = c * v / 1000.0 * tit.equivalents / std.equivalents
    return mol_std * std.molar_mass_g_mol * 100.0 / purity


# ----------------------------------------------------------------------------- standardize


def _checked_rule_and_replicates(
    rule: AcceptanceRule | None, replicates: object
) -> tuple[AcceptanceRule, list[Replicate]]:
    rule = AcceptanceRule() if rule is None else rule
    if not isinstance(rule, AcceptanceRule):
        raise InvalidInput("acceptance rule", rule, "must be an AcceptanceRule")
    if isinstance(replicates, (str, bytes)) or not isinstance(replicates, Sequence):
        raise InvalidInput("replicates", replicates, "must be a list of replicate titrations")
    if len(replicates) == 0:
        raise InvalidInput("replicates", list(replicates), "no titrations given: enter at least one")
    return rule, [_check_replicate(r, f"replicate {i + 1}") for i, r in enumerate(replicates)]


def _notes(tit: Titrant, std: PrimaryStandard) -> tuple[str, ...]:
    """Plain sentences for display; each note's source stays on the records (and in to_dict)."""
    notes = [_sentence(note.text) for note in std.drying]
    notes.append(f"End point: {std.end_point.text}.")
    notes.extend(_sentence(f"{tit.key}: {note.text}") for note in tit.notes)
    return tuple(notes)


def standardize(
    titrant: str | Titrant,
    standard: str | PrimaryStandard,
    replicates: Sequence[Replicate],
    *,
    purity_percent: float | None = None,
    rule: AcceptanceRule | None = None,
    nominal_molar: float | None = None,
) -> Standardization:
    """Standardize ``titrant`` against weighed portions of ``standard``.

    Parameters
    ----------
    titrant, standard
        Names (forgiving lookup, see :func:`titrant`, :func:`primary_standard`) or records.
        The standard must suit the titrant: an acid standard for a base and vice versa.
    replicates
        One :class:`Replicate` (or ``(mass_g, volume_ml[, blank_ml])``) per titration:
        mass 0-100 g, titre 0-1000 mL, blank 0 <= blank < titre.
    purity_percent
        Assay of the standard from its certificate, in (0, 100.1] %.  Default: the
        standard's ``assay_percent`` (100 %), with a warning to enter the real value.
    rule
        Acceptance rule; default :class:`AcceptanceRule` ().
    nominal_molar
        Label strength (e.g. 0.1), for the deviation check; optional.

    Returns
    -------
    Standardization
        ``accepted`` is True exactly when ``n >= rule.min_replicates``,
        ``rsd_percent <= rule.max_rsd_percent`` and no replicate is flagged by the
        two-sided Grubbs test at ``rule.alpha`` (applied from four replicates).

    Raises
    ------
    InvalidInput
        Naming the bad value: an unknown or unsuitable titrant or standard, no
        replicates, a non-finite or out-of-range mass, volume, blank, purity or nominal.
    """
    tit, std = resolve_pair(titrant, standard)
    rule, reps = _checked_rule_and_replicates(rule, replicates)
    defaulted = purity_percent is None
    purity = std.assay_percent if defaulted else _check_purity(purity_percent)
    nominal = None
    if nominal_molar is not None:
        nominal = positive(
            "nominal concentration (mol/L)", nominal_molar, upper=MAX_NOMINAL_MOLAR, unit=" M"
        )
    molars = [_molar(tit, std, r, purity) for r in reps]
    stats = set_statistics(molars, rule.alpha, CI_CONFIDENCE)
    results = tuple(
        ReplicateResult(index=i + 1, mass_g=r.mass_g, volume_ml=r.volume_ml,
                        blank_ml=r.blank_ml, net_volume_ml=r.volume_ml - r.blank_ml, molar=m,
                        outlier=(i + 1) in stats.outliers)
        for i, (r, m) in enumerate(zip(reps, molars))
    )
    deviation = None if nominal is None else 100.0 * (stats.mean - nominal) / nominal
    warnings = [
        *rsd_warnings(stats, rule),
        *outlier_test_warnings(stats),
        *purity_warnings(std, purity, defaulted),
        *nominal_warnings(stats.mean, nominal, deviation, rule),
        *reading_warnings(std, results, stats.mean),
    ]
    reasons = rejection_reasons(stats, rule, results)
    return Standardization(
        titrant=tit, standard=std, purity_percent=purity, replicates=results,
        mean_molar=stats.mean, sd_molar=stats.sd, rsd_percent=stats.rsd, ci95_molar=stats.ci,
        t_critical=stats.t_crit, outliers=stats.outliers, outlier_test=stats.test,
        accepted=not reasons, reasons=tuple(reasons), warnings=tuple(warnings),
        notes=_notes(tit, std), nominal_molar=nominal, deviation_percent=deviation,
        rule=rule, purity_defaulted=defaulted,
    )
