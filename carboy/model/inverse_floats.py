"""The titration's inverse for a few pHs in plain Python floats.

:meth:`carboy.model.gas.TitrationModel.amount_at_pH` finds the amount of reagent that
brings the batch to each pH: at a fixed pH and ionic strength the volume-weighted charge
balance is linear in the amount, ``a + b n = 0``, and the ionic strength is iterated to
self-consistency.  A plan asks it for two or three pHs at a time, where numpy's cost per
call (some 50 calls a round) was most of the work: this module does the same rounds on
floats, every pH in step (the same secant steps on the ionic strength, the same test),
from the same constants (``Layout.py_systems``, the weights of the one-solution path).
It gives up (returns None) where it does not apply: metals (their charge comes from
``metal_doses``), a layout whose exponentials need shifting, or a number out of range;
the caller then takes the arrays.  ``tests/unit/test_inverse_floats.py`` checks that both
give the same amounts.
"""

from __future__ import annotations

import math

from carboy.model.activity import davies_d_float
from carboy.model.solver.constants import LN10

FLOAT_MAX = 16
"""The most pHs asked at once that this path takes (beyond, the arrays' cost per pH is
the lower)."""


def amounts_on_floats(model, lay, ph: list, loss: list, co2_molar, ionic: list, *,
                      a_dh: float, pkw: float, i_rtol: float, max_iter: int):
    """``(n, ionic, ok)`` per pH (lists; n NaN where no non-negative amount reaches the
    pH, ionic the settled ionic strength there), as ``TitrationModel._amount_at``'s rounds
    work them out; or None where this path does not apply (see the module docstring).
    ``model`` the TitrationModel, ``lay`` its layout, ``loss`` the carbonate lost per pH
    (mol), ``co2_molar`` CO2(aq) held (or None), ``ionic`` the starts."""
    if model.metals is not None or not lay.python_path or len(ph) > FLOAT_MAX:
        return None
    try:
        return _rounds(model, lay, ph, loss, co2_molar, ionic, a_dh, pkw, i_rtol, max_iter)
    except (OverflowError, ZeroDivisionError, ValueError):
        return None


def _constants(model, lay):
    """Per system (its column in the model's keys, its states (log beta0, c, j, z, z²)),
    the spectators' Σ n0 z and Σ per z, and per spectator (n0, per, z²)."""
    n0, per = model.n0.tolist(), model.per.tolist()
    systems = []
    for key, (_, states, _, _, _) in zip(lay.sys_keys, lay.py_systems):
        col = model.keys.index(key)
        systems.append((col, tuple((lb0, cc, j, zp - zn, z2) for lb0, cc, j, zp, zn, z2
                                   in states)))
    ions = [(n0[c], per[c], z) for c, z in zip(model.ion_cols.tolist(), model.ion_z.tolist())]
    ion_a = sum(a * z for a, _, z in ions)
    ion_b = sum(b * z for _, b, z in ions)
    return n0, per, systems, ion_a, ion_b, [(a, b, z * z) for a, b, z in ions]


def _rounds(model, lay, ph, loss, co2_molar, ionic, a_dh, pkw, i_rtol, max_iter):
    n0, per, systems, ion_a, ion_b, ions = _constants(model, lay)
    v0, lpm = model.v0, model.lpm
    kc = None
    if model.carb is not None:
        kc = next((k for k, (col, _) in enumerate(systems) if col == model.carb), None)
        if kc is None:   # (carbonate not among the layout's systems: the arrays' way)
            return None
    t = len(ph)
    ionic = list(ionic)
    i_prev = r_prev = None
    n = [math.nan] * t
    ok = [False] * t
    new_i = list(ionic)
    for _ in range(max_iter):
        r = [0.0] * t
        done = [False] * t
        for p in range(t):
            n[p], ok[p], new_i[p] = _one(ph[p], ionic[p], loss[p], co2_molar, a_dh, pkw,
                                         systems, kc, n0, per, ion_a, ion_b, ions, v0, lpm)
            r[p] = new_i[p] - ionic[p]
            done[p] = abs(r[p]) <= i_rtol * max(new_i[p], 1e-12)
        if a_dh == 0.0 or all(done):
            break
        nxt = [new_i[p] if done[p] else _next_ionic(ionic[p], r[p],
                                                     None if i_prev is None else i_prev[p],
                                                     None if r_prev is None else r_prev[p],
                                                     new_i[p]) for p in range(t)]
        i_prev, r_prev, ionic = ionic, r, nxt
    return [v if good else math.nan for v, good in zip(n, ok)], new_i, ok


def _one(ph, ionic, loss, co2_molar, a_dh, pkw, systems, kc, n0, per, ion_a, ion_b, ions,
         v0, lpm):
    """One pH at one ionic strength: (n, whether it is a non-negative amount, the ionic
    strength after it)."""
    ad = a_dh * davies_d_float(ionic) if a_dh != 0.0 else 0.0
    x = ad - ph
    tad = 2.0 * ad
    h = 10.0 ** x
    oh = 10.0 ** (tad - pkw - x)
    exp = math.exp
    a = (h - oh) * v0 + ion_a
    b = (h - oh) * lpm + ion_b
    means = []
    open_c = None
    for k, (col, states) in enumerate(systems):
        s0 = sz = sz2 = 0.0
        first = None
        for lb0, cc, j, z, z2 in states:
            e = exp((lb0 - tad * cc - j * x) * LN10)
            if first is None:
                first = e
            s0 += e
            sz += z * e
            sz2 += z2 * e
        zbar, z2bar = sz / s0, sz2 / s0
        c0, cp = n0[col], per[col]
        if k == kc:
            if co2_molar is not None:   # held CO2(aq): the total follows the pH
                open_c = float(co2_molar) / (first / s0)
                c0 = cp = 0.0
            else:
                c0 -= loss
        means.append((zbar, z2bar, c0, cp))
        a += zbar * c0
        b += zbar * cp
    if open_c is not None:
        zc = means[kc][0]
        a += zc * open_c * v0
        b += zc * open_c * lpm
    n = -a / b if b != 0.0 else math.nan
    good = math.isfinite(n) and n >= 0.0
    if not good:
        return n, False, ionic
    vol = v0 + n * lpm
    out = 0.5 * sum((c + n * q) * z2 for c, q, z2 in ions) / vol + 0.5 * (h + oh)
    for k, (_, z2bar, c0, cp) in enumerate(means):
        tot = open_c if k == kc and open_c is not None else (c0 + n * cp) / vol
        out += 0.5 * tot * z2bar
    return n, True, out


def _next_ionic(i_now, r_now, i_prev, r_prev, g):
    """``mixing.next_ionic`` for one point: the secant step on r(I) = g(I) - I where it
    is finite, positive and no wilder than two plain steps, else g."""
    if i_prev is None:
        return g
    denom = r_now - r_prev
    if denom == 0.0:
        return g
    sec = i_now - r_now * (i_now - i_prev) / denom
    if math.isfinite(sec) and sec > 0 and abs(sec - g) <= 2.0 * abs(r_now):
        return sec
    return g
