"""Salts of calcium with an acid-base ligand on the Pitzer paths (gypsum, brushite).

A 1:1 salt M L(s) of a cation M (a spectator column, no pair) and one protonation state
L of a system (SO4-2 of sulfate for gypsum, HPO4-2 of phosphate for brushite, hydrates
counted with a_w) is present or absent by saturation at each trial x, with the
coefficients held, together with the cation's hydroxide:

* the salt alone: (T_M - p) α (T_L - p) = K', K' = Ksp / (γ_M γ_L a_w^n), α the share of
  the system in state L at x, so p = ((T_M + T_L) - sqrt((T_M - T_L)² + 4 K'/α)) / 2;
* where that leaves more free M than the hydroxide allows (``cap``, the hydroxide's own
  saturation at x), the hydroxide is present: free M = cap and p = T_L - K' / (cap α)
  (0 if negative), the rest of M in the hydroxide.

The system's states are scaled by (T_L - p) / T_L.  The x-derivatives follow in closed
form (d ln α / dx = -ln 10 (j_L - j̄); the cap rises as 10^(z x)), so the solver's Newton
steps stay exact; the balance stays monotone in x (the salt takes M and L together, and
less of it as L's share falls).  ``salt_float`` works on one solution's lists,
``salt_array`` on a batch's arrays.
"""

from __future__ import annotations

import math

import numpy as np

from carboy.model.solver.constants import LN10


def salt_float(entry, m, dm, lg, lw: float, log_oh_act: float, states, conc, jbar, tot):
    """One salt (``OneTable.salts`` entry) at one solution's x, in place; ``states``,
    ``conc``, ``jbar`` and ``tot`` are its ligand system's states, their molalities at
    the full total, the mean j and the total."""
    ca, i_s, log_ksp, nw, hz, hlog = entry
    total = m[ca]
    cap = 10.0 ** (hlog - lg[ca] - hz * log_oh_act) if hz else math.inf
    alpha = conc[i_s] / tot if tot > 0 else 0.0
    p = dp = 0.0
    a_ln = -LN10 * (states[i_s][2] - jbar)
    kp = 10.0 ** (log_ksp - lg[ca] - lg[states[i_s][0]] - nw * lw)
    if alpha > 0 and total * alpha * tot > kp:
        u = kp / alpha
        sd = math.sqrt((total - tot) ** 2 + 4.0 * u)
        p, dp = 0.5 * ((total + tot) - sd), u * a_ln / sd
    free, dfree = total - p, -dp
    if free > cap:
        free, dfree = cap, hz * LN10 * cap
        v = kp / (cap * alpha) if alpha > 0 else math.inf
        p, dp = (tot - v, v * (hz * LN10 + a_ln)) if v < tot else (0.0, 0.0)
    m[ca] = free
    r = (tot - p) / tot if tot > 0 else 1.0
    for (c, _, j, _), v in zip(states, conc):
        m[c] += (r - 1.0) * v
        if dm is not None:
            dm[c] += (r - 1.0) * (-LN10 * v * (j - jbar)) - v * dp / tot
    if dm is not None:
        dm[ca] += dfree


def salt_array(entry, m, dm, lg, lw, log_oh_act, cols, j, conc, jbar, tot):
    """:func:`salt_float` for a batch: ``cols`` and ``j`` the ligand system's columns and
    protons lost, ``conc`` (N, M) its states at the full total, ``jbar`` and ``tot``
    (N,)."""
    ca, i_s, log_ksp, nw, hz, hlog = entry
    total = m[:, ca].copy()
    cap = np.exp(LN10 * (hlog - lg[:, ca] - hz * log_oh_act)) if hz else np.full(
        total.shape, np.inf)
    safe = np.where(tot > 0, tot, 1.0)
    alpha = np.where(tot > 0, conc[:, i_s] / safe, 0.0)
    a_ln = -LN10 * (j[i_s] - jbar)
    kp = np.exp(LN10 * (log_ksp - lg[:, ca] - lg[:, cols[i_s]] - nw * lw))
    with np.errstate(divide="ignore", invalid="ignore"):
        u = kp / alpha
        sd = np.sqrt((total - tot) ** 2 + 4.0 * u)
        sat = (alpha > 0) & (total * alpha * tot > kp)
        p = np.where(sat, 0.5 * ((total + tot) - sd), 0.0)
        dp = np.where(sat, u * a_ln / sd, 0.0)
        free, dfree = total - p, -dp
        over = free > cap
        v = kp / (cap * alpha)
        both = over & (v < tot)
        free = np.where(over, cap, free)
        dfree = np.where(over, hz * LN10 * cap, dfree)
        p = np.where(over, np.where(both, tot - v, 0.0), p)
        dp = np.where(over, np.where(both, v * (hz * LN10 + a_ln), 0.0), dp)
    m[:, ca] = free
    dm[:, ca] += dfree
    r = np.where(tot > 0, (tot - p) / safe, 1.0)
    m[:, cols] += (r - 1.0)[:, None] * conc
    dm[:, cols] += ((r - 1.0)[:, None] * (-LN10 * conc * (j[None, :] - jbar[:, None]))
                    - conc * (dp / safe)[:, None])
