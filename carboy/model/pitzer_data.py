"""The packaged specific-interaction (Pitzer) parameter set: loading, checks, arrays at T.

``data/pitzer.toml`` holds every parameter with its source and status; this module
validates it once (:func:`load_pitzer_data`) and lays the parameters out as numpy arrays
for an ordered list of species at one temperature (:func:`parameter_arrays`), the form
the vectorized equations in ``pitzer.py`` consume.

Temperature dependence follows the form PHREEQC's pitzer.dat uses::

    P(T) = a0 + a1 (1/T - 1/Tr) + a2 ln(T/Tr) + a3 (T - Tr) + a4 (T² - Tr²) + a5 (1/T² - 1/Tr²)

with Tr = 298.15 K.  A parameter given by a0 alone is a 25 °C value held constant.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from functools import lru_cache
from types import MappingProxyType
from typing import Any

import numpy as np

from carboy.errors import CatalogError
from carboy.model.datafiles import read_data_file
from carboy.model.provenance import ACTIVITY_DATA_STATUSES, check_provenance

DATA_FILE = "pitzer.toml"
TR_K = 298.15
STATUSES = ACTIVITY_DATA_STATUSES
BINARY_KINDS = ("beta0", "beta1", "beta2", "cphi")
MAX_COEFFICIENTS = 6

ALPHA1_DEFAULT = 2.0
"""alpha1 for every pair with a univalent ion (Pitzer 1973; HMW 1984)."""
ALPHA1_TWO_TWO = 1.4
"""alpha1 for 2-2 pairs (HMW 1984)."""
ALPHA2 = 12.0
"""alpha2 wherever beta2 is used (HMW 1984)."""


def temperature_value(coefficients: Sequence[float], temperature_k: float) -> float:
    """A parameter at ``temperature_k`` from its [a0 … a5] coefficients (form above)."""
    t, tr = float(temperature_k), TR_K
    basis = (1.0, 1.0 / t - 1.0 / tr, math.log(t / tr), t - tr, t * t - tr * tr,
             1.0 / (t * t) - 1.0 / (tr * tr))
    return float(sum(c * f for c, f in zip(coefficients, basis)))


@dataclass(frozen=True, eq=False, repr=False)
class Parameter:
    """One interaction parameter with its provenance."""

    kind: str
    """``beta0``, ``beta1``, ``beta2``, ``cphi``, ``theta``, ``psi``, ``lambda`` or ``zeta``."""
    species: tuple[str, ...]
    coefficients: tuple[float, ...]
    source: str
    status: str
    seen_in: tuple[str, ...] = ()
    note: str = ""

    @property
    def has_temperature_terms(self) -> bool:
        return any(c != 0.0 for c in self.coefficients[1:])

    def at(self, temperature_k: float) -> float:
        return temperature_value(self.coefficients, temperature_k)


@dataclass(frozen=True, eq=False, repr=False)
class PitzerData:
    """The validated contents of ``pitzer.toml``."""

    charges: Mapping[str, int]
    parameters: tuple[Parameter, ...]
    b: float
    reference_electrolyte: tuple[str, str]
    constants: tuple[Mapping[str, Any], ...]
    missing_pairs: frozenset[frozenset[str]]
    sources: Mapping[str, str] = field(default_factory=dict)
    _index: Mapping[tuple, Parameter] = field(init=False, repr=False, compare=False)

    def __post_init__(self) -> None:
        object.__setattr__(self, "_index", {_key(p.kind, p.species): p for p in self.parameters})

    def lookup(self, kind: str, *species: str) -> Parameter | None:
        """The parameter of ``kind`` between ``species`` (order-free), or None."""
        return self._index.get(_key(kind, species))


def _key(kind: str, species: Sequence[str]) -> tuple:
    return (kind, tuple(sorted(species)))


# ----------------------------------------------------------------------------- loading


def _fail(entry: str, reason: str) -> CatalogError:
    return CatalogError(f"pitzer.toml {entry}", reason)


def _coefficients(entry: str, value: Any) -> tuple[float, ...]:
    if not isinstance(value, list) or not 1 <= len(value) <= MAX_COEFFICIENTS:
        raise _fail(entry, f"expected a list of 1 to {MAX_COEFFICIENTS} numbers, got {value!r}")
    out = []
    for v in value:
        if isinstance(v, bool) or not isinstance(v, int | float) or not math.isfinite(v):
            raise _fail(entry, f"coefficient {v!r} is not a finite number")
        out.append(float(v))
    return tuple(out)


def _provenance(entry: str, rec: Mapping[str, Any], sources: Mapping[str, str]) -> dict:
    source, status = rec.get("source", ""), rec.get("status", "")
    try:
        check_provenance(entry, "", status, source, allowed=STATUSES)
    except CatalogError as exc:
        raise _fail(entry, exc.reason) from None
    seen_in = tuple(rec.get("seen_in", ()))
    for s in seen_in:
        if s not in sources:
            raise _fail(entry, f"seen_in {s!r} is not listed under [sources]")
    if status == "FOUND" and not seen_in:
        raise _fail(entry, "status FOUND but seen_in names no copy")
    return {"source": source, "status": status, "seen_in": seen_in, "note": rec.get("note", "")}


def _charge_signs(entry: str, ions: Sequence[str], charges: Mapping[str, int]) -> list[int]:
    for ion in ions:
        if ion not in charges:
            raise _fail(entry, f"species {ion!r} is not declared under [[species]]")
    return [int(np.sign(charges[ion])) for ion in ions]


def _binary(rec, charges, sources) -> list[Parameter]:
    ions = tuple(rec.get("ions", ()))
    entry = f"binary {ions}"
    if len(ions) != 2 or sorted(_charge_signs(entry, ions, charges)) != [-1, 1]:
        raise _fail(entry, "needs one cation and one anion")
    prov = _provenance(entry, rec, sources)
    kinds = [k for k in BINARY_KINDS if k in rec]
    if not kinds:
        raise _fail(entry, "gives none of beta0, beta1, beta2, cphi")
    return [Parameter(k, ions, _coefficients(f"{entry} {k}", rec[k]), **prov) for k in kinds]


def _mixing(kind, rec, charges, sources) -> Parameter:
    names = tuple(rec.get("ions" if kind in ("theta", "psi") else "species", ()))
    entry = f"{kind} {names}"
    signs = _charge_signs(entry, names, charges)
    if kind == "theta" and (len(names) != 2 or signs[0] != signs[1] or 0 in signs):
        raise _fail(entry, "needs two distinct ions of the same sign")
    if kind == "psi" and (len(names) != 3 or sorted(signs) not in ([-1, -1, 1], [-1, 1, 1])):
        raise _fail(entry, "needs two like-charged ions and one of the opposite sign")
    if kind == "lambda" and (len(names) != 2 or signs[0] != 0):
        raise _fail(entry, "needs a neutral species first, then any species")
    if kind == "zeta" and (len(names) != 3 or signs != [0, 1, -1]):
        raise _fail(entry, "needs a neutral species, a cation and an anion, in that order")
    if len(set(names)) != len(names) and kind != "lambda":
        raise _fail(entry, "names a species twice")
    return Parameter(kind, names, _coefficients(entry, rec.get("value")),
                     **_provenance(entry, rec, sources))


def parse_pitzer_data(raw: Mapping[str, Any]) -> PitzerData:
    """Validate the parsed ``pitzer.toml`` and build :class:`PitzerData`."""
    sources = dict(raw.get("sources", {}))
    charges: dict[str, int] = {}
    for rec in raw.get("species", ()):
        label, z = rec.get("label"), rec.get("charge")
        if not isinstance(label, str) or not isinstance(z, int) or label in charges:
            raise _fail(f"species {label!r}", "needs a unique label and an integer charge")
        charges[label] = z
    params: list[Parameter] = []
    for rec in raw.get("binary", ()):
        params.extend(_binary(rec, charges, sources))
    for kind in ("theta", "psi", "lambda", "zeta"):
        params.extend(_mixing(kind, rec, charges, sources) for rec in raw.get(kind, ()))
    seen: set = set()
    for p in params:
        key = _key(p.kind, p.species)
        if key in seen:
            raise _fail(f"{p.kind} {p.species}", "is given twice")
        seen.add(key)
    model = raw.get("model", {})
    ref = tuple(model.get("reference_electrolyte", ("K+", "Cl-")))
    if len(ref) != 2 or any(r not in charges for r in ref):
        raise _fail("model", f"reference electrolyte {ref!r} is not a declared pair")
    missing = frozenset(frozenset(rec["ions"]) for rec in raw.get("missing", ()))
    return PitzerData(
        charges=MappingProxyType(charges), parameters=tuple(params),
        b=float(model.get("b", 1.2)), reference_electrolyte=(ref[0], ref[1]),
        constants=tuple(MappingProxyType(dict(c)) for c in raw.get("constants", ())),
        missing_pairs=missing, sources=MappingProxyType(sources))


@lru_cache(maxsize=1)
def load_pitzer_data() -> PitzerData:
    """The packaged parameter set, validated (cached)."""
    return parse_pitzer_data(read_data_file(DATA_FILE))


# ----------------------------------------------------------------------------- arrays


@dataclass(frozen=True, eq=False, repr=False)
class ParameterArrays:
    """Parameters for one ordered species list at one temperature.

    ``cat``, ``ani``, ``neu`` index the species list; matrices are laid out over those
    sub-lists (``b0[i, j]`` is cation ``cat[i]`` with anion ``ani[j]``).  Species outside
    the parameter set take part with all their interaction parameters zero.
    """

    cat: np.ndarray
    ani: np.ndarray
    neu: np.ndarray
    b0: np.ndarray
    b1: np.ndarray
    b2: np.ndarray
    c: np.ndarray
    alpha1: np.ndarray
    alpha2: np.ndarray
    theta_c: np.ndarray
    theta_a: np.ndarray
    psi_c: np.ndarray
    psi_a: np.ndarray
    lam_c: np.ndarray
    lam_a: np.ndarray
    lam_n: np.ndarray
    zeta: np.ndarray
    held_at_25: tuple[str, ...]
    """Parameters used here that have no temperature terms (names, for warnings)."""
    missing: tuple[tuple[int, int], ...]
    """Index pairs (into the species list) of cation–anion pairs known to lack parameters."""


def _blank(*shape: int) -> np.ndarray:
    return np.zeros(shape)


def parameter_arrays(data: PitzerData, species: Sequence[str], charges: Sequence[int],
                     temperature_k: float) -> ParameterArrays:
    """Lay out ``data`` for ``species`` (with ``charges``) at ``temperature_k``."""
    z = np.asarray(charges, dtype=int)
    cat, ani, neu = (np.flatnonzero(z > 0), np.flatnonzero(z < 0), np.flatnonzero(z == 0))
    nc, na, nn = len(cat), len(ani), len(neu)
    pos = {name: i for i, name in enumerate(species)}
    ci = {int(s): k for k, s in enumerate(cat)}
    ai = {int(s): k for k, s in enumerate(ani)}
    ni = {int(s): k for k, s in enumerate(neu)}
    out = {k: _blank(nc, na) for k in BINARY_KINDS}
    theta_c, theta_a = _blank(nc, nc), _blank(na, na)
    psi_c, psi_a = _blank(nc, nc, na), _blank(na, na, nc)
    lam_c, lam_a, lam_n, zeta = _blank(nn, nc), _blank(nn, na), _blank(nn, nn), _blank(nn, nc, na)
    held: list[str] = []
    for p in data.parameters:
        if any(s not in pos for s in p.species):
            continue
        v = p.at(temperature_k)
        if not p.has_temperature_terms and v != 0.0:
            held.append(f"{p.kind}({', '.join(p.species)})")
        idx = [pos[s] for s in p.species]
        if p.kind in BINARY_KINDS:
            c_, a_ = (idx if z[idx[0]] > 0 else idx[::-1])
            out[p.kind][ci[c_], ai[a_]] = v
        elif p.kind == "theta":
            tab, m = (theta_c, ci) if z[idx[0]] > 0 else (theta_a, ai)
            tab[m[idx[0]], m[idx[1]]] = tab[m[idx[1]], m[idx[0]]] = v
        elif p.kind == "psi":
            signs = np.sign(z[idx])
            odd = [k for k in idx if np.sign(z[k]) != np.median(signs)][0]
            i, j = [k for k in idx if k != odd]
            if z[i] > 0:
                psi_c[ci[i], ci[j], ai[odd]] = psi_c[ci[j], ci[i], ai[odd]] = v
            else:
                psi_a[ai[i], ai[j], ci[odd]] = psi_a[ai[j], ai[i], ci[odd]] = v
        elif p.kind == "lambda":
            n, other = idx
            if z[other] > 0:
                lam_c[ni[n], ci[other]] = v
            elif z[other] < 0:
                lam_a[ni[n], ai[other]] = v
            else:
                lam_n[ni[n], ni[other]] = lam_n[ni[other], ni[n]] = v
        else:  # zeta
            n, c_, a_ = idx
            zeta[ni[n], ci[c_], ai[a_]] = v
    zc, za = np.abs(z[cat])[:, None], np.abs(z[ani])[None, :]
    two_two = (zc == 2) & (za == 2)
    missing = tuple(
        (pos[a], pos[b]) if z[pos[a]] > 0 else (pos[b], pos[a])
        for a, b in (sorted(pair) for pair in data.missing_pairs)
        if a in pos and b in pos)
    return ParameterArrays(
        cat=cat, ani=ani, neu=neu, b0=out["beta0"], b1=out["beta1"], b2=out["beta2"],
        c=out["cphi"] / (2.0 * np.sqrt(zc * za)),
        alpha1=np.where(two_two, ALPHA1_TWO_TWO, ALPHA1_DEFAULT),
        alpha2=np.full((nc, na), ALPHA2), theta_c=theta_c, theta_a=theta_a,
        psi_c=psi_c, psi_a=psi_a, lam_c=lam_c, lam_a=lam_a, lam_n=lam_n, zeta=zeta,
        held_at_25=tuple(held), missing=missing)
