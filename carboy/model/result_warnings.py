"""The warnings a speciation result carries, by what applies to it (texts built once)."""

from __future__ import annotations

from functools import lru_cache

from carboy.model.activity import outside_range_warning
from carboy.model.solver.layout import ENTHALPY_DATA_MAX_C

METAL_T_SPAN_C = 5.0
"""Beyond this distance from 25 °C a result with metals says their constants are for 25 °C."""


@lru_cache(maxsize=64)
def warning_texts(high_i: bool, bad: bool, hot: bool, activity: str,
                  metals_off: bool = False) -> tuple[str, ...]:
    """The texts for: metals away from 25 °C, ionic strength beyond the model's range,
    beyond the enthalpy data's temperatures, an unsettled solve."""
    out = []
    if metals_off:
        out.append("the metals' hydrolysis and solubility constants are for 25 °C: at this "
                   "temperature their share of the pH and the solids is approximate")
    if high_i:
        out.append(outside_range_warning(activity))
    if hot:
        out.append(
            f"above {ENTHALPY_DATA_MAX_C:g} °C the pKa temperature correction extrapolates "
            "beyond the range of its enthalpy data"
        )
    if bad:
        out.append("the solver did not reach its tolerance: the result is approximate")
    return tuple(out)
