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
* no replicate flagged by the two-sided Grubbs test at ``alpha`` (default 0.05).

Statistics are always over every replicate entered: a flagged outlier is reported and
makes the result not accepted (repeat that titration), but it is never dropped silently.
A mean more than ``nominal_tolerance_percent`` (10 %) from the label strength gives a
warning, as does an RSD in the band between the limit and ``warn_rsd_percent``.

Outlier test
------------
Grubbs' test for one outlier (F. E. Grubbs, "Procedures for detecting outlying
observations in samples", Technometrics 11, 1-21 (1969); ISO 5725-2 uses it, from memory),
two-sided: ``G = max |x_i - mean| / s`` against::

    G_crit = (n - 1)/sqrt(n) * sqrt(t**2 / (n - 2 + t**2)),  t = t_{1 - alpha/(2n), n-2}

(NIST/SEMATECH e-Handbook of Statistical Methods, Grubbs' test page; the formula is
checked against published tables in tests/reference).  It needs n >= 3.
``G`` can never exceed ``(n - 1)/sqrt(n)``; at n = 3 that bound (1.1547) is barely above
the critical value (1.1543 at alpha = 0.05), so three replicates can hardly flag anything.

Everything here is pure: no files written, nothing printed.  ``scipy.stats`` is imported
only inside the functions that need it, so importing this module stays cheap.
"""

from __future__ import annotations

import functools
import math
import numbers
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from types import MappingProxyType
from typing import Any

from carboy.errors import CatalogError, InvalidInput
from carboy.model.catalog import default_catalog, molar_mass_of, normalize_name

__all__ = [
    "AcceptanceRule",
    "Note",
    "PrimaryStandard",
    "Provenance",
    "Replicate",
    "ReplicateResult",
    "Standardization",
    "Titrant",
    "grubbs_critical",
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

STATUSES = frozenset({"FOUND", "FOUND-SRC", "MEMORY", "DERIVED", "PRACTICE", "NONE"})
"""Status words of ``standards.toml`` (see the head of that file)."""

KINDS = ("acid", "base")

MAX_MASS_G = 100.0
"""A weighed portion above this is not a titration sample (a unit slip): refused."""

MAX_VOLUME_ML = 1000.0
"""A titre above this is not a burette reading (a unit slip): refused."""

MAX_NOMINAL_MOLAR = 20.0
"""A nominal (label) strength above this is not a titrant: refused."""

CI_CONFIDENCE = 0.95
"""Confidence of ``Standardization.ci95_molar`` (two-sided, Student t)."""

GRUBBS_METHOD = "Grubbs test for one outlier, two-sided"
GRUBBS_SOURCE = (
    "F. E. Grubbs, Technometrics 11, 1-21 (1969); critical value from the t distribution, "
    "G_crit = (n-1)/sqrt(n) * sqrt(t^2/(n-2+t^2)), t = t(1-alpha/(2n), n-2), as in the "
    "NIST/SEMATECH e-Handbook of Statistical Methods; agrees with the two-sided table of "
    "Harvey, Analytical Chemistry 2.1, Appendix 7"
)
T_SOURCE = "Student t distribution, two-sided quantile t(1-(1-confidence)/2, n-1) (scipy.stats.t)"

_DATA_PACKAGE = "carboy.model.data"
_DATA_FILE = "standards.toml"


# ----------------------------------------------------------------------------- records


@dataclass(frozen=True)
class Provenance:
    """Where one number of ``standards.toml`` comes from."""

    status: str
    source: str


@dataclass(frozen=True)
class Note:
    """A handling, end-point or caution note with its source."""

    text: str
    status: str
    source: str

    def __str__(self) -> str:
        return self.text

    def cited(self) -> str:
        """The text followed by its source in parentheses."""
        return f"{self.text} ({self.source})"

    def to_dict(self) -> dict[str, str]:
        return {"text": self.text, "status": self.status, "source": self.source}


@dataclass(frozen=True)
class PrimaryStandard:
    """A primary standard for acid–base standardization.

    ``reacts_with`` is the kind of titrant it standardizes: ``"base"`` for an acid
    standard (KHP, sulfamic acid), ``"acid"`` for a basic one (Na2CO3, Tris).
    ``equivalents`` counts protons given or taken per formula unit at the end point.
    ``assay_percent`` is the purity assumed when none is entered.  ``drying`` holds the
    drying and handling notes; ``source``/``status`` document its use as a standard;
    ``provenance`` gives the source of each number.
    """

    key: str
    name: str
    formula: str
    compound_key: str
    molar_mass_g_mol: float
    reacts_with: str
    equivalents: int
    assay_percent: float
    drying: tuple[Note, ...]
    end_point: Note
    source: str
    status: str
    short: str = ""
    aliases: tuple[str, ...] = ()
    formulas: tuple[str, ...] = ()
    min_sample_g: float | None = None
    provenance: Mapping[str, Provenance] = field(
        default_factory=lambda: MappingProxyType({}), compare=False, hash=False
    )

    @property
    def label(self) -> str:
        """The name on the bench (``KHP``), falling back to the key."""
        return self.short or self.key

    @property
    def nature(self) -> str:
        """What the standard itself is: ``"acid"`` (titrates a base) or ``"base"``."""
        return "acid" if self.reacts_with == "base" else "base"

    def to_dict(self) -> dict[str, Any]:
        return {
            "key": self.key,
            "short": self.short,
            "name": self.name,
            "formula": self.formula,
            "compound_key": self.compound_key,
            "molar_mass_g_mol": self.molar_mass_g_mol,
            "reacts_with": self.reacts_with,
            "equivalents": self.equivalents,
            "assay_percent": self.assay_percent,
            "min_sample_g": self.min_sample_g,
            "drying": [n.to_dict() for n in self.drying],
            "end_point": self.end_point.to_dict(),
            "source": self.source,
            "status": self.status,
        }


@dataclass(frozen=True)
class Titrant:
    """A titrant solution to be standardized: ``kind`` ``"acid"`` or ``"base"``.

    ``equivalents`` is H+ (acid) or OH- (base) per formula unit at the end point.
    """

    key: str
    name: str
    kind: str
    equivalents: int
    aliases: tuple[str, ...] = ()
    notes: tuple[Note, ...] = ()
    provenance: Mapping[str, Provenance] = field(
        default_factory=lambda: MappingProxyType({}), compare=False, hash=False
    )

    def to_dict(self) -> dict[str, Any]:
        return {
            "key": self.key,
            "name": self.name,
            "kind": self.kind,
            "equivalents": self.equivalents,
            "notes": [n.to_dict() for n in self.notes],
        }


_RULE_DEFAULTS = {
    "max_rsd_percent": 0.2,
    "min_replicates": 3,
    "alpha": 0.05,
    "nominal_tolerance_percent": 10.0,
    "warn_rsd_percent": 0.5,
}
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

    max_rsd_percent: float = 0.2
    min_replicates: int = 3
    alpha: float = 0.05
    nominal_tolerance_percent: float = 10.0
    warn_rsd_percent: float = 0.5

    def __post_init__(self) -> None:
        _positive("max RSD percent", self.max_rsd_percent, upper=100.0)
        _positive("warning RSD percent", self.warn_rsd_percent, upper=100.0)
        _positive("nominal tolerance percent", self.nominal_tolerance_percent, upper=100.0)
        mr = self.min_replicates
        if not isinstance(mr, numbers.Integral) or isinstance(mr, bool) or not 2 <= mr <= 100:
            raise InvalidInput(
                "min replicates", mr, "must be a whole number from 2 to 100 (RSD needs two)"
            )
        a = self.alpha
        if not _is_real(a) or not math.isfinite(a) or not 0.0 < a <= 0.5:
            raise InvalidInput("alpha", a, "the outlier-test significance must be in (0, 0.5]")

    @property
    def source(self) -> str:
        """Where each number of the rule comes from (set by the user where changed)."""
        data = _data().acceptance
        parts = []
        for name, default in _RULE_DEFAULTS.items():
            value = getattr(self, name)
            text = _RULE_LABELS[name].format(value)
            if value == default:
                prov = data[name]
                parts.append(f"{text}: {prov.source} [{prov.status}]")
            else:
                parts.append(f"{text}: set by the user (packaged default {default:g})")
        return "; ".join(parts)

    def to_dict(self) -> dict[str, Any]:
        out: dict[str, Any] = {name: getattr(self, name) for name in _RULE_DEFAULTS}
        out["source"] = self.source
        return out


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


def _is_real(value: object) -> bool:
    return isinstance(value, numbers.Real) and not isinstance(value, bool)


def _finite(what: str, value: object) -> float:
    if not _is_real(value) or not math.isfinite(float(value)):
        raise InvalidInput(what, value, "must be a finite number")
    return float(value)


def _positive(what: str, value: object, *, upper: float | None = None, unit: str = "") -> float:
    x = _finite(what, value)
    if x <= 0:
        raise InvalidInput(what, value, "must be greater than zero")
    if upper is not None and x > upper:
        raise InvalidInput(what, value, f"must not exceed {upper:g}{unit}")
    return x


def _fmt(x: float) -> str:
    return f"{x:.5g}"


def _sentence(text: str) -> str:
    text = text.strip()
    return text[:1].upper() + text[1:] + ("" if text.endswith(".") else ".")


# ----------------------------------------------------------------------------- data


@dataclass(frozen=True)
class _Data:
    standards: Mapping[str, PrimaryStandard]
    titrants: Mapping[str, Titrant]
    acceptance: Mapping[str, Provenance]
    acceptance_values: Mapping[str, float]
    checks: Mapping[str, Any]
    standard_index: Mapping[str, str]
    standard_folded: Mapping[str, str]
    titrant_index: Mapping[str, str]
    titrant_folded: Mapping[str, str]


def _provenance(entry: str, what: str, rec: object) -> Provenance:
    if not isinstance(rec, Mapping):
        raise CatalogError(entry, f"{what} must be a table with value, status and source")
    status, source = rec.get("status"), rec.get("source")
    if status not in STATUSES:
        raise CatalogError(entry, f"{what} status {status!r} is not one of {sorted(STATUSES)}")
    if not isinstance(source, str) or not source.strip():
        raise CatalogError(entry, f"{what} has no source")
    if status in ("MEMORY", "FOUND-SRC") and "from memory" not in source:
        raise CatalogError(entry, f"{what} is {status} but its source does not say 'from memory'")
    return Provenance(status=status, source=source)


def _note(entry: str, what: str, rec: object) -> Note:
    prov = _provenance(entry, what, rec)
    text = rec.get("text")  # type: ignore[union-attr]
    if not isinstance(text, str) or not text.strip():
        raise CatalogError(entry, f"{what} has no text")
    return Note(text=text, status=prov.status, source=prov.source)


def _count(entry: str, what: str, rec: Mapping[str, Any]) -> tuple[int, Provenance]:
    prov = _provenance(entry, what, rec)
    value = rec.get("value")
    if not isinstance(value, int) or isinstance(value, bool) or value < 1:
        raise CatalogError(entry, f"{what} {value!r} must be a positive whole number")
    return value, prov


def _number(entry: str, what: str, rec: Mapping[str, Any]) -> tuple[float, Provenance]:
    prov = _provenance(entry, what, rec)
    value = rec.get("value")
    if not _is_real(value) or not math.isfinite(float(value)) or float(value) <= 0:
        raise CatalogError(entry, f"{what} {value!r} must be a positive finite number")
    return float(value), prov


def _index(entries: Mapping[str, Any], names_of: Any) -> tuple[dict[str, str], dict[str, str]]:
    exact: dict[str, str] = {}
    folded: dict[str, str] = {}
    for key, entry in entries.items():
        for name in names_of(entry):
            for table, label in ((exact, name), (folded, normalize_name(name))):
                other = table.get(label)
                if other is not None and other != key:
                    raise CatalogError(key, f"name {name!r} also names {other!r}")
                table[label] = key
    return exact, folded


def _parse_standard(rec: Mapping[str, Any], max_purity: float) -> PrimaryStandard:
    key = rec.get("key")
    if not isinstance(key, str) or not key.strip():
        raise CatalogError(repr(key), "a standard needs a key")
    compound = default_catalog().compounds.get(key)
    if compound is None:
        raise CatalogError(key, "standard is not a compound of compounds.toml")
    formula = rec.get("formula")
    mass = molar_mass_of(formula, entry=key)
    if not math.isclose(mass, compound.molar_mass_g_mol, rel_tol=1e-12):
        raise CatalogError(key, f"formula {formula!r} does not match the catalog's {compound.formula!r}")
    reacts_with = rec.get("reacts_with")
    if reacts_with not in KINDS:
        raise CatalogError(key, f"reacts_with {reacts_with!r} must be 'acid' or 'base'")
    equivalents, eq_prov = _count(key, "equivalents", rec.get("equivalents", {}))
    assay, assay_prov = _number(key, "assay_percent", rec.get("assay_percent", {}))
    if assay > max_purity:
        raise CatalogError(key, f"assay_percent {assay!r} exceeds {max_purity:g}")
    provenance = {"equivalents": eq_prov, "assay_percent": assay_prov}
    min_sample = None
    if "min_sample_g" in rec:
        min_sample, provenance["min_sample_g"] = _number(key, "min_sample_g", rec["min_sample_g"])
    status = _provenance(key, "standard", {"status": rec.get("status"), "source": rec.get("source")})
    handling = tuple(
        _note(key, f"handling note {i + 1}", note) for i, note in enumerate(rec.get("handling", ()))
    )
    if not handling:
        raise CatalogError(key, "a standard needs at least one drying or handling note")
    return PrimaryStandard(
        key=key,
        name=str(rec.get("name") or compound.name),
        formula=formula,
        compound_key=compound.key,
        molar_mass_g_mol=mass,
        reacts_with=reacts_with,
        equivalents=equivalents,
        assay_percent=assay,
        drying=handling,
        end_point=_note(key, "end_point", rec.get("end_point")),
        source=status.source,
        status=status.status,
        short=str(rec.get("short", "")),
        aliases=tuple(rec.get("aliases", ())),
        formulas=tuple(rec.get("formulas", ())),
        min_sample_g=min_sample,
        provenance=MappingProxyType(provenance),
    )


def _parse_titrant(rec: Mapping[str, Any]) -> Titrant:
    key = rec.get("key")
    if not isinstance(key, str) or not key.strip():
        raise CatalogError(repr(key), "a titrant needs a key")
    if key not in default_catalog().compounds:
        raise CatalogError(key, "titrant is not a compound of compounds.toml")
    kind = rec.get("kind")
    if kind not in KINDS:
        raise CatalogError(key, f"kind {kind!r} must be 'acid' or 'base'")
    equivalents, prov = _count(key, "equivalents", rec.get("equivalents", {}))
    notes = tuple(_note(key, f"note {i + 1}", n) for i, n in enumerate(rec.get("notes", ())))
    return Titrant(
        key=key,
        name=str(rec.get("name") or key),
        kind=kind,
        equivalents=equivalents,
        aliases=tuple(rec.get("aliases", ())),
        notes=notes,
        provenance=MappingProxyType({"equivalents": prov}),
    )


def _parse(raw: Mapping[str, Any]) -> _Data:
    checks_raw = raw.get("checks", {})
    checks: dict[str, Any] = {}
    for name in ("min_net_volume_ml", "min_purity_percent", "max_purity_percent"):
        checks[name] = _number("checks", name, checks_raw.get(name, {}))[0]
    band = checks_raw.get("plausible_molar", {})
    _provenance("checks", "plausible_molar", band)
    low_high = band.get("value")
    if (
        not isinstance(low_high, list)
        or len(low_high) != 2
        or not all(_is_real(v) for v in low_high)
        or not 0 < low_high[0] < low_high[1]
    ):
        raise CatalogError("checks", f"plausible_molar {low_high!r} must be [low, high]")
    checks["plausible_molar"] = (float(low_high[0]), float(low_high[1]))

    standards: dict[str, PrimaryStandard] = {}
    for rec in raw.get("standards", ()):
        std = _parse_standard(rec, checks["max_purity_percent"])
        if std.key in standards:
            raise CatalogError(std.key, "standard is defined twice")
        standards[std.key] = std
    titrant_map: dict[str, Titrant] = {}
    for rec in raw.get("titrants", ()):
        tit = _parse_titrant(rec)
        if tit.key in titrant_map:
            raise CatalogError(tit.key, "titrant is defined twice")
        titrant_map[tit.key] = tit
    for kind in KINDS:
        if not any(s.reacts_with == kind for s in standards.values()):
            raise CatalogError(_DATA_FILE, f"no standard for a titrant of kind {kind!r}")

    acc_raw = raw.get("acceptance", {})
    acceptance: dict[str, Provenance] = {}
    values: dict[str, float] = {}
    for name, default in _RULE_DEFAULTS.items():
        values[name], acceptance[name] = _number("acceptance", name, acc_raw.get(name, {}))
        if values[name] != default:
            raise CatalogError(
                "acceptance", f"{name} = {values[name]!r} differs from AcceptanceRule's {default!r}"
            )

    s_exact, s_folded = _index(
        standards,
        lambda s: (s.key, s.short, s.name, s.formula, *s.aliases, *s.formulas),
    )
    t_exact, t_folded = _index(titrant_map, lambda t: (t.key, t.name, *t.aliases))
    return _Data(
        standards=MappingProxyType(standards),
        titrants=MappingProxyType(titrant_map),
        acceptance=MappingProxyType(acceptance),
        acceptance_values=MappingProxyType(values),
        checks=MappingProxyType(checks),
        standard_index=MappingProxyType(s_exact),
        standard_folded=MappingProxyType(s_folded),
        titrant_index=MappingProxyType(t_exact),
        titrant_folded=MappingProxyType(t_folded),
    )


@functools.lru_cache(maxsize=1)
def _data() -> _Data:
    """The packaged ``standards.toml``, read and validated once per process."""
    from carboy.model.catalog import read_data_file

    return _parse(read_data_file(_DATA_FILE))


# ----------------------------------------------------------------------------- lookup


def primary_standards() -> Mapping[str, PrimaryStandard]:
    """Every packaged primary standard, by key (the catalog compound key)."""
    return _data().standards


def titrants() -> Mapping[str, Titrant]:
    """Every titrant carboy standardizes, by key (its formula)."""
    return _data().titrants


def _known(entries: Mapping[str, Any], label: Any) -> str:
    return ", ".join(label(e) for e in entries.values())


def _find(name: object, entries: Mapping[str, Any], exact: Mapping[str, str],
          folded: Mapping[str, str]) -> Any:
    """An entry by its exact spelling first, then by its forgiving (folded) one."""
    if not isinstance(name, str) or not name.strip():
        return None
    text = name.strip()
    key = exact.get(text) or folded.get(normalize_name(text))
    return entries[key] if key is not None else None


def primary_standard(name: str) -> PrimaryStandard:
    """Find a primary standard by key, short name, name, alias or formula.

    Exact spellings match first (``"KHC8H4O4"``, ``"KHP"``); then case, spacing,
    hyphens and a trailing ``" acid"`` are forgiven (``"khp"``, ``"Sodium carbonate"``,
    ``"sulfamic"``, ``"THAM"``).

    Raises
    ------
    InvalidInput
        For an unknown name, listing the known standards.
    """
    data = _data()
    if isinstance(name, PrimaryStandard):
        return name
    found = _find(name, data.standards, data.standard_index, data.standard_folded)
    if found is not None:
        return found
    known = _known(data.standards, lambda s: s.label if s.label == s.name else f"{s.label} ({s.name})")
    raise InvalidInput("primary standard", name, f"is not known; known standards: {known}")


def titrant(name: str) -> Titrant:
    """Find a titrant by formula, name or alias (``"NaOH"``, ``"naoh"``, ``"sodium hydroxide"``).

    Raises
    ------
    InvalidInput
        For an unknown name, listing the known titrants.
    """
    data = _data()
    if isinstance(name, Titrant):
        return name
    found = _find(name, data.titrants, data.titrant_index, data.titrant_folded)
    if found is not None:
        return found
    known = _known(data.titrants, lambda t: f"{t.key} ({t.name})")
    raise InvalidInput("titrant", name, f"is not known; known titrants: {known}")


def _resolve_pair(
    titrant_in: str | Titrant, standard_in: str | PrimaryStandard
) -> tuple[Titrant, PrimaryStandard]:
    tit = titrant_in if isinstance(titrant_in, Titrant) else titrant(titrant_in)
    std = standard_in if isinstance(standard_in, PrimaryStandard) else primary_standard(standard_in)
    if std.reacts_with != tit.kind:
        suited = " or ".join(
            s.label for s in primary_standards().values() if s.reacts_with == tit.kind
        )
        fits = ", ".join(t.key for t in titrants().values() if t.kind == std.reacts_with)
        article = "an" if std.nature == "acid" else "a"
        raise InvalidInput(
            "primary standard",
            std.label,
            f"is {article} {std.nature} standard: it standardizes {std.reacts_with}s "
            f"({fits}), not the {tit.kind} {tit.key}; for {tit.key} use {suited}",
        )
    return tit, std


# ----------------------------------------------------------------------------- statistics


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
    c = _finite("confidence", confidence)
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
    Two-sided is the test :func:`standardize` uses.

    Raises
    ------
    InvalidInput
        If ``n`` is not a whole number >= 3 or ``alpha`` is not in (0, 1).
    """
    if not isinstance(n, numbers.Integral) or isinstance(n, bool) or n < 3:
        raise InvalidInput("number of values", n, "Grubbs' test needs at least 3 values")
    a = _finite("alpha", alpha)
    if not 0.0 < a < 1.0:
        raise InvalidInput("alpha", alpha, "must lie between 0 and 1 (e.g. 0.05)")
    n = int(n)
    p = a / (2 * n) if two_sided else a / n
    t = _t_isf(p, n - 2)
    return grubbs_max_statistic(n) * math.sqrt(t * t / (n - 2 + t * t))


def _mean_sd(values: Sequence[float]) -> tuple[float, float | None]:
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
    xs = [_finite(f"value {i + 1}", v) for i, v in enumerate(values)]
    crit = grubbs_critical(len(xs), alpha)
    mean, sd = _mean_sd(xs)
    if not sd:  # all values equal: nothing stands out
        return None, 0.0, crit
    deviations = [abs(x - mean) for x in xs]
    suspect = max(range(len(xs)), key=deviations.__getitem__)
    g = deviations[suspect] / sd
    return (suspect if g > crit else None), g, crit


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
    mass = _finite(f"{label} mass (g)", rep.mass_g)
    if mass <= 0:
        raise InvalidInput(f"{label} mass (g)", rep.mass_g, "must be greater than zero")
    if mass > MAX_MASS_G:
        raise InvalidInput(
            f"{label} mass (g)", rep.mass_g,
            f"exceeds {MAX_MASS_G:g} g, which is no titration sample; is it in mg?",
        )
    volume = _finite(f"{label} volume (mL)", rep.volume_ml)
    if volume <= 0:
        raise InvalidInput(f"{label} volume (mL)", rep.volume_ml, "must be greater than zero")
    if volume > MAX_VOLUME_ML:
        raise InvalidInput(
            f"{label} volume (mL)", rep.volume_ml,
            f"exceeds {MAX_VOLUME_ML:g} mL, which is no burette reading; is it in µL?",
        )
    blank = _finite(f"{label} blank (mL)", rep.blank_ml)
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
    p = _finite("purity (%)", purity_percent)
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
    tit, std = _resolve_pair(titrant, standard)
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
    tit, std = _resolve_pair(titrant, standard)
    c = _positive("concentration (mol/L)", conc_molar, upper=MAX_NOMINAL_MOLAR, unit=" M")
    v = _positive("volume (mL)", volume_ml, upper=MAX_VOLUME_ML, unit=" mL")
    purity = std.assay_percent if purity_percent is None else _check_purity(purity_percent)
    mol_std = c * v / 1000.0 * tit.equivalents / std.equivalents
    return mol_std * std.molar_mass_g_mol * 100.0 / purity


# ----------------------------------------------------------------------------- standardize


def _outlier_test(molars: Sequence[float], alpha: float) -> dict[str, Any]:
    n = len(molars)
    test: dict[str, Any] = {
        "method": GRUBBS_METHOD,
        "alpha": alpha,
        "n": n,
        "applicable": n >= 3,
        "statistic": None,
        "critical": None,
        "max_possible": None,
        "suspect": None,
        "source": GRUBBS_SOURCE,
    }
    if n >= 3:
        suspect, g, crit = grubbs_test(molars, alpha)
        test.update(
            statistic=g,
            critical=crit,
            max_possible=grubbs_max_statistic(n),
            suspect=None if suspect is None else suspect + 1,
        )
    return test


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
        two-sided Grubbs test at ``rule.alpha``.

    Raises
    ------
    InvalidInput
        Naming the bad value: an unknown or unsuitable titrant or standard, no
        replicates, a non-finite or out-of-range mass, volume, blank, purity or nominal.
    """
    tit, std = _resolve_pair(titrant, standard)
    rule = AcceptanceRule() if rule is None else rule
    if not isinstance(rule, AcceptanceRule):
        raise InvalidInput("acceptance rule", rule, "must be an AcceptanceRule")
    if isinstance(replicates, (str, bytes)) or not isinstance(replicates, Sequence):
        raise InvalidInput("replicates", replicates, "must be a list of replicate titrations")
    if len(replicates) == 0:
        raise InvalidInput("replicates", list(replicates), "no titrations given: enter at least one")
    reps = [_check_replicate(r, f"replicate {i + 1}") for i, r in enumerate(replicates)]
    defaulted = purity_percent is None
    purity = std.assay_percent if defaulted else _check_purity(purity_percent)
    nominal = None
    if nominal_molar is not None:
        nominal = _positive(
            "nominal concentration (mol/L)", nominal_molar, upper=MAX_NOMINAL_MOLAR, unit=" M"
        )

    checks = _data().checks
    molars = [_molar(tit, std, r, purity) for r in reps]
    n = len(molars)
    mean, sd = _mean_sd(molars)
    rsd = ci = t_crit = None
    if sd is not None:
        rsd = 100.0 * sd / mean
        t_crit = t_critical(n - 1, CI_CONFIDENCE)
        ci = t_crit * sd / math.sqrt(n)
    test = _outlier_test(molars, rule.alpha)
    outliers = () if test["suspect"] is None else (test["suspect"],)

    results = tuple(
        ReplicateResult(
            index=i + 1,
            mass_g=r.mass_g,
            volume_ml=r.volume_ml,
            blank_ml=r.blank_ml,
            net_volume_ml=r.volume_ml - r.blank_ml,
            molar=m,
            outlier=(i + 1) in outliers,
        )
        for i, (r, m) in enumerate(zip(reps, molars))
    )

    reasons: list[str] = []
    warnings: list[str] = []
    if n < rule.min_replicates:
        reasons.append(
            f"Only {n} replicate{'s' if n != 1 else ''} titrated; the rule needs at least "
            f"{rule.min_replicates} (min replicates)."
        )
    if rsd is not None and rsd > rule.max_rsd_percent:
        reasons.append(
            f"RSD {rsd:.3f} % exceeds the limit of {rule.max_rsd_percent:g} % (max RSD)."
        )
        if rsd <= rule.warn_rsd_percent:
            warnings.append(
                f"RSD {rsd:.3f} % is only just above the {rule.max_rsd_percent:g} % limit "
                f"(warning band up to {rule.warn_rsd_percent:g} %): look for one poor "
                "titration, repeat it or add replicates."
            )
    for index in outliers:
        bad = results[index - 1]
        reasons.append(
            f"Replicate {index} ({_fmt(bad.molar)} M) is an outlier by Grubbs' test "
            f"(G = {test['statistic']:.3f} > {test['critical']:.3f} at alpha = "
            f"{rule.alpha:g}, n = {n}): repeat that titration."
        )
    if rsd is not None and rsd <= rule.max_rsd_percent:
        reference = _RULE_DEFAULTS["max_rsd_percent"]
        if rsd > reference:
            warnings.append(
                f"RSD {rsd:.3f} % meets the configured {rule.max_rsd_percent:g} % but not the "
                f"{reference:g} % of Ph. Eur. 4.2.2."
            )

    if n == 3:
        warnings.append(
            f"With 3 replicates Grubbs' test can hardly flag anything: G cannot exceed "
            f"(n-1)/sqrt(n) = {test['max_possible']:.4f} and the critical value is "
            f"{test['critical']:.4f}; titrate 5 or more to test for outliers."
        )
    elif n < 3:
        warnings.append(
            f"With {n} replicate{'s' if n != 1 else ''} no outlier test is possible "
            "(Grubbs' test needs at least 3)."
        )

    if defaulted:
        warnings.append(
            f"Purity not entered: {purity:g} % assumed for {std.label}; enter the value on "
            "the certificate of the lot in use."
        )
    elif purity < checks["min_purity_percent"]:
        warnings.append(
            f"Purity {purity:g} % is low for a primary standard (usually certified near "
            "100 %): check the value and the material."
        )

    deviation = None
    if nominal is not None:
        deviation = 100.0 * (mean - nominal) / nominal
        if abs(deviation) > rule.nominal_tolerance_percent:
            warnings.append(
                f"Mean {_fmt(mean)} M is {deviation:+.1f} % from the nominal {_fmt(nominal)} M, "
                f"outside ±{rule.nominal_tolerance_percent:g} % (Ph. Eur. 4.2.2 expects a "
                "volumetric solution within ±10 % of nominal): adjust it and standardize again."
            )

    small = [r.index for r in results if r.net_volume_ml < checks["min_net_volume_ml"]]
    if small:
        warnings.append(
            f"Replicate{'s' if len(small) > 1 else ''} {', '.join(map(str, small))}: titre "
            f"below {checks['min_net_volume_ml']:g} mL, where the burette reading alone costs "
            "0.2 % or more; weigh more standard."
        )
    if std.min_sample_g is not None:
        light = [r.index for r in results if r.mass_g < std.min_sample_g]
        if light:
            warnings.append(
                f"Replicate{'s' if len(light) > 1 else ''} {', '.join(map(str, light))}: less "
                f"than the {std.min_sample_g * 1000:g} mg minimum sample of {std.label} "
                f"({std.provenance['min_sample_g'].source})."
            )
    low, high = checks["plausible_molar"]
    if not low <= mean <= high:
        warnings.append(
            f"Mean {_fmt(mean)} M is outside the usual {low:g}-{high:g} M of titrants: check "
            "the units of mass (g) and titre (mL)."
        )

    # Plain sentences for display; each note's source stays on the records (and in to_dict).
    notes = [_sentence(note.text) for note in std.drying]
    notes.append(f"End point: {std.end_point.text}.")
    notes.extend(_sentence(f"{tit.key}: {note.text}") for note in tit.notes)

    return Standardization(
        titrant=tit,
        standard=std,
        purity_percent=purity,
        replicates=results,
        mean_molar=mean,
        sd_molar=sd,
        rsd_percent=rsd,
        ci95_molar=ci,
        t_critical=t_crit,
        outliers=outliers,
        outlier_test=test,
        accepted=not reasons,
        reasons=tuple(reasons),
        warnings=tuple(warnings),
        notes=tuple(notes),
        nominal_molar=nominal,
        deviation_percent=deviation,
        rule=rule,
        purity_defaulted=defaulted,
    )
