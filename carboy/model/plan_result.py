"""What a neutralization plan holds, and its JSON form (``Plan.to_dict``).

The plan is computed by :func:`carboy.model.planner.plan_neutralization` (see that
module for the modelling choices); front ends show it and the journal stores its
``to_dict()`` as computed then.  The JSON names are a public contract: keep them.

The metals' names (the state the dose to the target leaves):

``sludge``                 list of ``{"solid", "formula", "mol", "dry_mass_g"}``: each
                           solid present (hydroxide, oxide or salt), in the whole batch
``dissolved_metals_mg_l``  ``{"Zn+2": 0.27, ...}``: each modelled metal left dissolved
                           (free ion and hydroxo complexes), mg of the metal per litre
``metal_hydroxide_mol``    the hydroxide the metals hold (complexes, hydroxides, basic
                           salts): their share of the dose to the target, mol
``unmodelled_metals``      cations with no hydrolysis or solubility data (a warning
                           names them too; their share is not in the dose)

The solids present also appear in ``precipitates`` with ``"expected": true``.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from carboy.model.batch_heat import BatchHeat
from carboy.model.cautions import Caution
from carboy.model.mixture import Mixture
from carboy.model.plan_metals import SludgeItem, metal_lines
from carboy.model.precipitates import Precipitate, SaltLimit
from carboy.model.reagent_reach import Reach
from carboy.model.reagents import Reagent
from carboy.model.speciation import BatchSpeciation
from carboy.model.speciation_models import ph_scale_of


@dataclass(frozen=True, eq=False, repr=False)
class Dose:
    """An amount of reagent and the state it leaves (``reagent_mol`` None: unreachable)."""

    reagent_mol: float | None
    reagent_volume_l: float | None
    reagent_mass_g: float | None
    pH: float | None
    final_volume_l: float | None
    target_pH: float | None = None

    @property
    def reachable(self) -> bool:
        return self.reagent_mol is not None

    def to_dict(self) -> dict:
        d = {"reagent_mol": self.reagent_mol, "reagent_volume_l": self.reagent_volume_l,
             "reagent_mass_g": self.reagent_mass_g, "pH": self.pH,
             "final_volume_l": self.final_volume_l}
        if self.target_pH is not None:
            d = {"target_pH": self.target_pH, **d}
        return d


@dataclass(frozen=True, eq=False, repr=False)
class Stage:
    """One portion of the staged addition and the pH it leaves."""

    index: int
    add_mol: float
    cumulative_mol: float
    add_volume_l: float | None
    add_mass_g: float
    pH_after: float

    def to_dict(self) -> dict:
        return dict(self.__dict__)


@dataclass(frozen=True, eq=False, repr=False)
class EquivalencePoint:
    """An equivalence point of the titration: its dose, its pH and the steps it
    completes (``system`` and ``step``; ``label`` names every one)."""

    reagent_mol: float
    pH: float
    system: str
    step: int
    label: str

    def to_dict(self) -> dict:
        return dict(self.__dict__)


@dataclass(frozen=True, eq=False, repr=False)
class Plan:
    """A neutralization plan; see :mod:`carboy.model.planner` for the modelling choices."""

    sample: Mixture
    reagent: Reagent
    direction: str
    activity: str
    initial_pH: float
    proton_equivalents_mol: float
    breakdown: dict
    full: Dose
    to_target: Dose
    window: tuple[float, float]
    window_doses: tuple[Dose, Dose]
    bound_protons_at_target: dict
    heat_released_kj: float
    """Heat released by the dose to the target, kJ: positive when the batch warms."""
    temperature_rise_c: float
    """The adiabatic rise, K, up to boiling: where the batch would boil it stops there
    (``batch_heat.boils``; the full estimate is ``batch_heat.rise_k``)."""
    gas_l: float
    gas_mol: float
    gas_conditions: str
    vented_pH: float | None
    vent_pco2_atm: float | None
    pH_before_venting: float | None
    stages: tuple[Stage, ...]
    sensitivity_pH_per_percent: float
    curve: np.ndarray
    equivalence_points: tuple[EquivalencePoint, ...]
    precipitates: tuple[Precipitate, ...]
    cautions: tuple[Caution, ...]
    warnings: tuple[str, ...]
    hazards: frozenset[str]
    drain_plan: bool
    assumptions: tuple[str, ...] = ()
    vented_gas_l: float = 0.0
    curve_speciation: BatchSpeciation | None = field(default=None, repr=False, compare=False)
    curve_volume_l: np.ndarray | None = field(default=None, repr=False, compare=False)
    sludge: tuple[SludgeItem, ...] = ()
    """The solids present at the target, in the whole batch (mol, dry mass)."""
    dissolved_metals_mg_l: dict = field(default_factory=dict)
    """Each modelled metal left dissolved at the target (free ion and complexes), mg/L."""
    metal_hydroxide_mol: float = 0.0
    """The hydroxide the metals hold at the target (complexes, hydroxides, basic salts):
    what they take of the dose to the target, mol."""
    unmodelled_metals: tuple[str, ...] = ()
    """Cations of the sample with no hydrolysis or solubility data (not counted)."""
    batch_heat: BatchHeat | None = None
    """The heat's effect on the batch: heat capacity, boiling, stages to stay safe."""
    salt_limits: tuple[SaltLimit, ...] = ()
    """Soluble salts at the target against their solubility at the batch temperature."""
    reagent_reach: Reach | None = None
    """With a carbonate reagent: the protons it cannot take (not in the full dose)."""
    activity_model: str = ""
    """The model the plan was solved with (``activity="auto"``: ``"davies"`` or
    ``"pitzer"``; else ``activity`` itself)."""

    @property
    def ph_scale(self) -> str:
        """What the plan's pH values mean (see ``speciation_models.PH_SCALES``)."""
        return ph_scale_of(self.activity_model or self.activity)

    def metal_lines(self) -> tuple[tuple[str, str], ...]:
        """The metals at the target for a front end: (heading, text) lines
        (:func:`carboy.model.plan_metals.metal_lines`); none without metals."""
        ph = self.to_target.pH if self.to_target.reachable else self.initial_pH
        return metal_lines(self.sludge, self.dissolved_metals_mg_l, self.metal_hydroxide_mol,
                           ph)

    def to_dict(self) -> dict:
        lo, hi = self.window_doses
        return {
            "sample": {"totals_molar": dict(self.sample.totals), "volume_l": self.sample.volume_l,
                       "temperature_c": self.sample.temperature_c},
            "reagent": {"text": self.reagent.text, "understood": self.reagent.describe(),
                        "form": self.reagent.form},
            "direction": self.direction,
            "activity": self.activity,
            "activity_model": self.activity_model or self.activity,
            "ph_scale": self.ph_scale,
            "initial_pH": self.initial_pH,
            "proton_equivalents_mol": self.proton_equivalents_mol,
            "breakdown": self.breakdown,
            "full": {k: v for k, v in self.full.to_dict().items() if k != "final_volume_l"}
            | {"final_volume_l": self.full.final_volume_l}
            | ({"reagent_reach": self.reagent_reach.to_dict()} if self.reagent_reach else {}),
            "to_target": self.to_target.to_dict(),
            "window": {"low_pH": self.window[0], "high_pH": self.window[1],
                       "low": lo.to_dict(), "high": hi.to_dict(),
                       "note": "local disposal rules set the real acceptance window"},
            "bound_protons_at_target": self.bound_protons_at_target,
            "heat_released_kj": self.heat_released_kj,
            "temperature_rise_c": self.temperature_rise_c,
            "heat": self.batch_heat.to_dict() if self.batch_heat else None,
            "gas_l": self.gas_l,
            "gas_mol": self.gas_mol,
            "gas_conditions": self.gas_conditions,
            "vented_pH": self.vented_pH,
            "vent_pco2_atm": self.vent_pco2_atm,
            "pH_before_venting": self.pH_before_venting,
            "vented_gas_l": self.vented_gas_l,
            "stages": [s.to_dict() for s in self.stages],
            "sensitivity_pH_per_percent": self.sensitivity_pH_per_percent,
            "curve": self.curve.tolist(),
            "equivalence_points": [e.to_dict() for e in self.equivalence_points],
            "precipitates": [p.to_dict() for p in self.precipitates],
            "sludge": [s.to_dict() for s in self.sludge],
            "dissolved_metals_mg_l": dict(self.dissolved_metals_mg_l),
            "metal_hydroxide_mol": self.metal_hydroxide_mol,
            "unmodelled_metals": list(self.unmodelled_metals),
            "salt_solubility": [s.to_dict() for s in self.salt_limits],
            "cautions": [c.to_dict() for c in self.cautions],
            "drain_plan": self.drain_plan,
            "hazards": sorted(self.hazards),
            "warnings": list(self.warnings),
            "assumptions": list(self.assumptions),
        }
