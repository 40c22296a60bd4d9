"""The warnings a speciation result carries, by what applies to it (texts built once)."""

from __future__ import annotations

from functools import lru_cache

from carboy.model.activity import DAVIES_LIMIT_MOLAR, outside_range_warning
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


def point_warnings(ionic, converged, t_c: float, activity: str, warm: bool) -> tuple:
    """Each point's warnings of a charge-only solve (``ionic`` its ionic strength in mol/L,
    ``warm``: metals away from 25 °C), one tuple of texts per point (the same tuple for
    every point where they agree, the usual case)."""
    n = converged.shape[0]
    hot = t_c > ENTHALPY_DATA_MAX_C
    code = (ionic > DAVIES_LIMIT_MOLAR).astype(int) + 2 * (~converged).astype(int)
    texts = [warning_texts(bool(c & 1), bool(c & 2), hot, activity, warm) for c in range(4)]
    if n and code.min() == code.max():
        return (texts[int(code[0])],) * n
    return tuple(map(texts.__getitem__, code.tolist()))
