"""The checked arguments of a neutralization plan (the planner's first step).

:func:`check_request` checks what :func:`~carboy.model.planner.plan_neutralization` is
given (target, window, activity model, the sample's components, volume and temperature,
curve points), each problem an :class:`~carboy.errors.InvalidInput` naming its field;
:func:`with_safe_temperature` adds the temperature the batch is kept under.
"""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass

from carboy.errors import InvalidInput
from carboy.model import water
from carboy.model.activity import check_model
from carboy.model.cautions import Sample
from carboy.model.mixture import Mixture
from carboy.model.reagents import Reagent

__all__ = ["PlanRequest", "check_ph", "check_request", "with_safe_temperature"]


@dataclass(frozen=True, eq=False, repr=False)
class PlanRequest:
    """The checked arguments of a plan."""

    sample: Mixture
    reagent: Reagent
    catalog: object
    activity: str
    target: float
    window: tuple[float, float]
    hazards: frozenset[str]
    curve_points: int
    waste: Sample | None = None
    safe_temperature_c: float | None = None
    safe_from: str = ""
    activity_note: str = ""
    """Why ``"auto"`` settled on the Davies equation where the ionic strength would have
    taken the Pitzer model (it could not be evaluated: ``pitzer_reach``); "" elsewhere.
    The plan's warnings carry it."""

    @property
    def temperature_c(self) -> float:
        return self.sample.temperature_c


def check_ph(what: str, value, field: str) -> float:
    """``value`` as a pH from 0 to 14; InvalidInput naming ``what`` otherwise."""
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise InvalidInput(what, value, "must be a number", field=field) from None
    if not math.isfinite(v) or not 0.0 <= v <= 14.0:
        raise InvalidInput(what, value, "must be a pH between 0 and 14", field=field)
    return v


def check_request(sample: Mixture, reagent: Reagent, target_ph, window, activity: str,
                   catalog, hazards, curve_points, waste=None) -> PlanRequest:
    """The arguments of :func:`~carboy.model.planner.plan_neutralization`, checked
    (InvalidInput naming the bad one), with the built-in catalog where none is given."""
    if catalog is None:
        from carboy.model.catalog import default_catalog

        catalog = default_catalog()
    target = check_ph("target pH", target_ph, "target")
    try:
        lo_w, hi_w = (float(window[0]), float(window[1]))
    except (TypeError, ValueError, IndexError):
        raise InvalidInput("window", window, "expected (low pH, high pH)",
                           field="window") from None
    lo_w = check_ph("window low pH", lo_w, "window")
    hi_w = check_ph("window high pH", hi_w, "window")
    if not lo_w < hi_w:
        raise InvalidInput("window", window, "the low pH must be below the high pH",
                           field="window")
    check_model(activity)
    unknown = sorted(k for k in sample.totals
                     if k not in catalog.systems and k not in catalog.ions)
    if unknown:
        raise InvalidInput("sample", ", ".join(unknown), "the catalog knows no such acid–base "
                           "system, ion, metal or salt", field="sample")
    if sample.volume_l is None:
        raise InvalidInput("sample volume", None, "a plan needs the sample's volume",
                           field="volume")
    if not sample.totals:
        raise InvalidInput("sample", dict(sample.totals), "holds nothing to neutralize",
                           field="sample")
    if int(curve_points) < 20:
        raise InvalidInput("curve points", curve_points, "need at least 20")
    water.check_temperature(sample.temperature_c)
    return PlanRequest(sample, reagent, catalog, activity, target, (lo_w, hi_w),
                    frozenset(hazards), int(curve_points), waste)


def with_safe_temperature(req: PlanRequest, safe_c, safe_from: str) -> PlanRequest:
    """The safe temperature of the batch, checked (InvalidInput naming it)."""
    if safe_c is None:
        return req
    try:
        t = float(safe_c)
    except (TypeError, ValueError):
        raise InvalidInput("safe temperature", safe_c, "must be a number (°C)") from None
    if not math.isfinite(t) or not 0.0 < t < 100.0:
        raise InvalidInput("safe temperature", safe_c, "must lie between 0 and 100 °C")
    return dataclasses.replace(req, safe_temperature_c=t, safe_from=safe_from)
