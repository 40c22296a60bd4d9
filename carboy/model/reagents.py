"""Neutralizing reagents as typed: ``NaOH=2M``, ``NaOH=50%``, ``NaHCO3``, ``NaOH@97%``.

A :class:`Reagent` knows how strong it is and turns an amount in mol into what is
measured out: a volume of solution, a mass of solution, or a mass of solid (with its
assay).  It also knows its proton capacity, i.e. which way it moves the pH:

* base capacity  ``β = Σ ions z·n + Σ systems n·top_charge``: protons one formula unit
  takes up on the way to the fully protonated form of its systems (NaOH 1, Ca(OH)2 2,
  Na2CO3 2 with CO2 leaving, NaHCO3 1, NH3 1);
* acid capacity  ``α = −(Σ ions z·n + Σ systems n·bottom_charge)``: protons it gives up
  on the way to the fully deprotonated form (HCl 1, H2SO4 2, citric acid 3).
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass

from carboy.errors import InvalidInput
from carboy.model import quantities
from carboy.model.entities import Compound

FORMS = ("solution", "concentrate", "solid")

_ASSAY = re.compile(r"^(?P<name>.+?)@(?P<assay>[^@]+)$")

WATER_DENSITY_ASSUMED_G_ML = 1.0
"""Density assumed for a molar solution with no usable density table (stated in describe)."""


@dataclass(frozen=True, repr=False)
class Reagent:
    """A neutralizing reagent of known strength.

    ``conc_molar`` for solutions and concentrates (mol/L); ``mass_percent`` and
    ``density_g_ml`` for concentrates (density from the catalog table); ``assay_percent``
    for solids (mass fraction of the named compound, default 100).
    """

    compound: Compound
    form: str
    conc_molar: float | None
    mass_percent: float | None
    density_g_ml: float | None
    assay_percent: float = 100.0
    text: str = ""
    density_note: str = ""
    base_capacity: int = 0
    acid_capacity: int = 0

    @property
    def key(self) -> str:
        return self.compound.key

    @property
    def is_solid(self) -> bool:
        return self.form == "solid"

    @property
    def is_slurry(self) -> bool:
        """A slightly soluble base fed as a suspension: ``planning.toml [slurry]`` names it."""
        from carboy.model.thermo import planning_constants  # lazily, as the catalog below

        return self.compound.key in planning_constants()["slurry"]

    @property
    def has_carbonate(self) -> bool:
        return "carbonate" in self.compound.composition

    @property
    def l_per_mol(self) -> float:
        """Litres of reagent per mol (0 for a solid: its own volume is neglected)."""
        return 0.0 if self.conc_molar is None else 1.0 / self.conc_molar

    def volume_l(self, mol: float) -> float | None:
        """Volume of solution holding ``mol`` of the reagent, L (None for a solid)."""
        if self.conc_molar is None:
            return None
        return float(mol) / self.conc_molar

    def mass_g(self, mol: float) -> float:
        """Mass measured out for ``mol``: solution mass for liquids, solid mass with assay."""
        if self.conc_molar is None:
            return float(mol) * self.compound.molar_mass_g_mol / (self.assay_percent / 100.0)
        return self.volume_l(mol) * 1000.0 * self.density_g_ml

    def describe(self) -> str:
        """What carboy understood, e.g. ``NaOH 50 %w/w (19.07 M, ρ 1.5253 g/mL, …)``."""
        c = self.compound
        if self.form == "solid":
            assay = "" if self.assay_percent == 100.0 else f", assay {self.assay_percent:g} %"
            slurry = " (fed as a slurry)" if self.is_slurry else ""
            return f"{c.key} solid{assay}{slurry}, M {c.molar_mass_g_mol:.3f} g/mol"
        if self.form == "concentrate":
            src = c.density.source if c.density else ""
            return (f"{c.key} {self.mass_percent:g} %w/w ({self.conc_molar:.4g} M, "
                    f"ρ {self.density_g_ml:.4f} g/mL at {c.density.temperature_c:g} °C; {src})")
        return f"{c.key} {self.conc_molar:.4g} M solution ({self.density_note})"


def _capacities(compound: Compound, catalog) -> tuple[int, int]:
    top = bottom = 0
    for key, count in compound.composition.items():
        if key in catalog.ions:
            z = catalog.ions[key].charge
            top += count * z
            bottom += count * z
        else:
            system = catalog.systems[key]
            top += count * system.top_charge
            bottom += count * system.bottom_charge
    return max(top, 0), max(-bottom, 0)


def _density_of_molar(compound: Compound, conc: float, catalog) -> tuple[float, str]:
    """Density of a solution of given molarity: from the catalog table where it covers it."""
    table = compound.density
    if table is not None:
        from carboy.model.catalog import density_at

        lo, hi = table.mass_percent[0], table.mass_percent[-1]
        c_lo = lo / 100 * table.density_g_ml[0] * 1000 / compound.molar_mass_g_mol
        c_hi = hi / 100 * table.density_g_ml[-1] * 1000 / compound.molar_mass_g_mol
        if c_lo <= conc <= c_hi:
            a, b = lo, hi
            for _ in range(60):  # molarity rises with mass % over these tables
                w = 0.5 * (a + b)
                cw = w / 100 * density_at(compound, w) * 1000 / compound.molar_mass_g_mol
                a, b = (w, b) if cw < conc else (a, w)
            w = 0.5 * (a + b)
            rho = density_at(compound, w)
            return rho, f"ρ {rho:.4f} g/mL from the catalog table at {w:.3g} %w/w"
    return WATER_DENSITY_ASSUMED_G_ML, (
        f"density taken as {WATER_DENSITY_ASSUMED_G_ML:g} g/mL for its mass")


def parse_reagent(text: str, catalog=None) -> Reagent:
    """Read a reagent as typed.

    ``NAME=CONC`` is a solution (M, mM, mol/L; a bare number is molar); ``NAME=W%`` a
    concentrate by %w/w with its density from the catalog table (no extrapolation);
    ``NAME`` a solid of 100 % assay; ``NAME@A%`` a solid of assay A %.  Raises
    :class:`InvalidInput` or :class:`UnknownCompound` naming the bad part.
    """
    if catalog is None:
        from carboy.model.catalog import default_catalog

        catalog = default_catalog()
    if not isinstance(text, str) or not text.strip():
        raise InvalidInput("reagent", text, "expected e.g. NaOH=2M, NaOH=50%, NaHCO3 or NaOH@97%")
    raw = text.strip()
    if "=" in raw:
        name, _, strength = raw.rpartition("=")
        name, strength = name.strip(), strength.strip()
        if not name or not strength:
            raise InvalidInput("reagent", text, "expected NAME=STRENGTH, e.g. NaOH=2M or NaOH=50%")
        compound = catalog.compound(name)
        beta, alpha = _capacities(compound, catalog)
        if strength.endswith("%") or strength.lower().endswith(("w/w", "wt%")):
            from carboy.model.catalog import density_at

            w = quantities.percent(strength, what=f"mass percentage of {name}")
            if w <= 0:
                raise InvalidInput("reagent", text, "the mass percentage must be above 0")
            rho = density_at(compound, w)  # raises outside the table / without a table
            conc = w / 100.0 * rho * 1000.0 / compound.molar_mass_g_mol
            return Reagent(compound, "concentrate", conc, w, rho, 100.0, raw, "",
                           beta, alpha)
        conc = quantities.concentration_molar(strength, what=f"concentration of {name}")
        if not conc > 0 or not math.isfinite(conc):
            raise InvalidInput("reagent", text, "the concentration must be above 0")
        rho, note = _density_of_molar(compound, conc, catalog)
        return Reagent(compound, "solution", conc, None, rho, 100.0, raw, note, beta, alpha)
    assay = 100.0
    name = raw
    m = _ASSAY.match(raw)
    if m:
        name = m.group("name").strip()
        assay = quantities.percent(m.group("assay").strip(), what=f"assay of {name}")
        if not 0 < assay <= 100:
            raise InvalidInput("reagent", text, "the assay must be above 0 and at most 100 %")
    compound = catalog.compound(name)
    if compound.form != "solid":
        raise InvalidInput(
            "reagent", text, f"{compound.key} is supplied as a {compound.form}, not a solid: "
            f"give its strength, e.g. {compound.key}=1M or {compound.key}=37%")
    beta, alpha = _capacities(compound, catalog)
    return Reagent(compound, "solid", None, None, None, assay, raw, "", beta, alpha)
