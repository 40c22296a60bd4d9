"""What is in a solution: totals of each acid–base system and spectator ion.

A :class:`Mixture` is the input of the solver: analytical totals in mol/L, keyed
by catalog system or ion key, plus a volume (needed only for amounts and mixing)
and a temperature.  A :class:`MixtureBatch` is many mixtures that share their keys
and temperature, solved in one vectorized call (a titration curve, say).

Concentrations are treated as molar (mol/L); at the dilutions where the activity
model holds, the difference from molal is below the model's own uncertainty.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Mapping
from dataclasses import dataclass
from types import MappingProxyType

import numpy as np

from carboy.errors import InvalidInput
from carboy.model.entities import Compound


def _check_amount(what: str, value: float) -> float:
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise InvalidInput(what, value, "must be a number") from None
    if not math.isfinite(v):
        raise InvalidInput(what, value, "must be finite")
    if v < 0:
        raise InvalidInput(what, value, "must not be negative")
    return v


def _check_temperature(value: float) -> float:
    try:
        t = float(value)
    except (TypeError, ValueError):
        raise InvalidInput("temperature", value, "must be a number of °C") from None
    if not math.isfinite(t):
        raise InvalidInput("temperature", value, "must be finite")
    return t


@dataclass(frozen=True, eq=False, repr=False)
class Mixture:
    """Analytical composition of one solution.

    Parameters
    ----------
    totals : system or ion key -> total concentration, mol/L (finite, >= 0).
    volume_l : volume in litres, or ``None`` where only concentrations matter.
    temperature_c : temperature in °C.
    """

    totals: Mapping[str, float]
    volume_l: float | None = None
    temperature_c: float = 25.0

    def __post_init__(self) -> None:
        clean = {}
        for key, c in self.totals.items():
            c = _check_amount(f"total of {key} (mol/L)", c)
            if c > 0:
                clean[key] = clean.get(key, 0.0) + c
        object.__setattr__(self, "totals", MappingProxyType(clean))
        if self.volume_l is not None:
            v = _check_amount("volume (L)", self.volume_l)
            if v == 0:
                raise InvalidInput("volume (L)", self.volume_l, "must be greater than zero")
            object.__setattr__(self, "volume_l", v)
        object.__setattr__(self, "temperature_c", _check_temperature(self.temperature_c))

    @classmethod
    def from_compounds(
        cls,
        components: Iterable[tuple[Compound, float]],
        *,
        volume_l: float | None = None,
        temperature_c: float = 25.0,
    ) -> Mixture:
        """Build a mixture from (compound, concentration in mol/L) pairs."""
        totals: dict[str, float] = {}
        for compound, conc in components:
            c = _check_amount(f"concentration of {compound.key} (mol/L)", conc)
            for key, count in compound.composition.items():
                totals[key] = totals.get(key, 0.0) + count * c
        return cls(totals, volume_l=volume_l, temperature_c=temperature_c)

    @classmethod
    def from_moles(
        cls, moles: Mapping[str, float], volume_l: float, *, temperature_c: float = 25.0
    ) -> Mixture:
        """Build a mixture from amounts (mol) of each key in ``volume_l`` litres."""
        v = _check_amount("volume (L)", volume_l)
        if v == 0:
            raise InvalidInput("volume (L)", volume_l, "must be greater than zero")
        totals = {k: _check_amount(f"amount of {k} (mol)", n) / v for k, n in moles.items()}
        return cls(totals, volume_l=v, temperature_c=temperature_c)

    def moles(self) -> dict[str, float]:
        """Amount of each key in mol (needs a volume)."""
        if self.volume_l is None:
            raise InvalidInput("volume", None, "this mixture has no volume")
        return {k: c * self.volume_l for k, c in self.totals.items()}

    def combine(self, other: Mixture) -> Mixture:
        """Mix two solutions; volumes add, temperature is the volume-weighted mean."""
        if self.volume_l is None or other.volume_l is None:
            raise InvalidInput("volume", None, "both mixtures need a volume to be combined")
        moles = self.moles()
        for k, n in other.moles().items():
            moles[k] = moles.get(k, 0.0) + n
        v = self.volume_l + other.volume_l
        t = (self.temperature_c * self.volume_l + other.temperature_c * other.volume_l) / v
        return Mixture.from_moles(moles, v, temperature_c=t)

    def with_temperature(self, temperature_c: float) -> Mixture:
        return Mixture(self.totals, volume_l=self.volume_l, temperature_c=temperature_c)


@dataclass(frozen=True, eq=False, repr=False)
class MixtureBatch:
    """Many mixtures with the same keys and temperature: ``totals[n, k]`` in mol/L."""

    keys: tuple[str, ...]
    totals: np.ndarray
    temperature_c: float = 25.0

    def __post_init__(self) -> None:
        arr = np.asarray(self.totals, dtype=float)
        if arr.ndim == 1:
            arr = arr.reshape(1, -1)
        if arr.ndim != 2 or arr.shape[1] != len(self.keys):
            raise InvalidInput("totals", arr.shape, f"expected shape (N, {len(self.keys)})")
        if len(set(self.keys)) != len(self.keys):
            raise InvalidInput("keys", self.keys, "must be unique")
        if not np.all(np.isfinite(arr)):
            bad = arr[~np.isfinite(arr)][0]
            raise InvalidInput("total concentration", float(bad), "must be finite")
        if np.any(arr < 0):
            raise InvalidInput("total concentration", float(arr[arr < 0][0]),
                               "must not be negative")
        object.__setattr__(self, "totals", arr)
        object.__setattr__(self, "temperature_c", _check_temperature(self.temperature_c))

    def __len__(self) -> int:
        return self.totals.shape[0]

    @classmethod
    def of(cls, mixtures: Iterable[Mixture]) -> MixtureBatch:
        """Stack single mixtures (they must share one temperature)."""
        mixtures = list(mixtures)
        if not mixtures:
            raise InvalidInput("mixtures", [], "need at least one")
        temps = {m.temperature_c for m in mixtures}
        if len(temps) > 1:
            raise InvalidInput("temperatures", sorted(temps), "a batch shares one temperature")
        keys = tuple(sorted({k for m in mixtures for k in m.totals}))
        arr = np.array([[m.totals.get(k, 0.0) for k in keys] for m in mixtures], dtype=float)
        return cls(keys, arr.reshape(len(mixtures), len(keys)), mixtures[0].temperature_c)

    def mixture(self, n: int) -> Mixture:
        return Mixture(dict(zip(self.keys, self.totals[n])), temperature_c=self.temperature_c)


def titration_batch(
    sample: Mixture,
    reagent: Mapping[str, float],
    reagent_mol: np.ndarray,
    reagent_l_per_mol: float = 0.0,
) -> tuple[MixtureBatch, np.ndarray]:
    """The sample after each amount of a reagent has been added.

    Parameters
    ----------
    sample : the starting solution; needs ``volume_l``.
    reagent : key -> mol of that key per mol of reagent (its composition).
    reagent_mol : amounts of reagent added, mol (array, each >= 0).
    reagent_l_per_mol : litres of reagent solution per mol (0 for a solid; volumes add).

    Returns
    -------
    (batch, volume_l) : the mixtures and their total volumes in litres.
    """
    if sample.volume_l is None:
        raise InvalidInput("sample volume", None, "a titration needs the sample's volume")
    n = np.asarray(reagent_mol, dtype=float).reshape(-1)
    if not np.all(np.isfinite(n)) or np.any(n < 0):
        raise InvalidInput("reagent amount (mol)", n[(~np.isfinite(n)) | (n < 0)][0],
                           "must be finite and >= 0")
    lpm = _check_amount("reagent litres per mol", reagent_l_per_mol)
    keys = tuple(sorted(set(sample.totals) | {k for k, v in reagent.items() if v}))
    v0 = sample.volume_l
    vol = v0 + n * lpm
    base = np.array([sample.totals.get(k, 0.0) * v0 for k in keys])
    per = np.array([float(reagent.get(k, 0.0)) for k in keys])
    totals = (base[None, :] + n[:, None] * per[None, :]) / vol[:, None]
    return MixtureBatch(keys, totals, sample.temperature_c), vol
