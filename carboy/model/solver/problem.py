"""N solutions as the solver's paths see them: a :class:`Problem`.

Beside the :class:`~carboy.model.solver.layout.Layout` (what each column is) a problem
holds what fixes each system's amount (:class:`Amounts`: its total, or one of its
states held at a concentration), the charge and ionic strength of the spectator ions,
the largest charges the solutes can carry (which bracket the root), pKw and the
activity scale ``a_dh`` (see :mod:`carboy.model.activity`).  Indexing a problem by a
mask or an index array selects points, so a path can drop the points it has settled.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from carboy.errors import InvalidInput
from carboy.model.solver.layout import Layout


@dataclass(frozen=True, eq=False, repr=False)
class Amounts:
    """What fixes each system's amount: its total, or (open system) the concentration
    of one reference state held constant (CO2(aq) in equilibrium with a gas, say).

    For a held state j0 at concentration F, every state is F·e_j/e_j0, i.e. the
    system behaves as a total C = F·S/e_j0 that moves with x and A·D; its moments'
    derivatives then take j0 and c_j0 where a closed system has jbar and cbar.

    Arrays hold the points last, as the charge sums use them.
    """

    c: np.ndarray                        # (K, N) totals (ignored where held)
    held: np.ndarray | None = None       # (K, N) held concentration of the reference state
    mask: np.ndarray | None = None       # (K,) True where held
    j0: np.ndarray | None = None         # (K,) reference state
    c0: np.ndarray | None = None         # (K,) cmat of the reference state
    e0_col: np.ndarray | None = None     # (K,) row of the reference state in the flat states
    metal: np.ndarray | None = None      # (Mt, N) totals of the modelled metal ions
    shift: np.ndarray | None = None      # (S, N) log10 term added to each state's weight
    # (set by an outer loop: the specific-interaction coefficients, or ion pairs lumped
    # into the state they hold; see solver.outer)
    ligand_start: np.ndarray | None = None   # (N,) with metal complexes: log10 of the
    # free ligand at the last trial point (NaN: none yet), where the next trial's search
    # starts (``metal_complexes``, which writes it in place); a start only saves steps

    def __getitem__(self, idx) -> Amounts:
        metal = None if self.metal is None else self.metal[:, idx]
        shift = None if self.shift is None else self.shift[:, idx]
        start = None if self.ligand_start is None else self.ligand_start[idx]
        if self.held is None:
            return Amounts(self.c[:, idx], metal=metal, shift=shift, ligand_start=start)
        return Amounts(self.c[:, idx], self.held[:, idx], self.mask, self.j0, self.c0,
                       self.e0_col, metal, shift, start)


def _held_value(lay: Layout, key: str, spec, n: int) -> tuple[int, int, np.ndarray]:
    """Check one ``held`` entry: (system index, state index, (N,) concentration)."""
    if key not in lay.sys_keys:
        raise InvalidInput("held system", key, "is not an acid–base system with weak steps "
                           "in this solution")
    i = lay.sys_keys.index(key)
    try:
        label, value = spec
    except (TypeError, ValueError):
        raise InvalidInput(f"held {key}", spec, "expected (species label, mol/L)") from None
    if label not in lay.sys_labels[i]:
        raise InvalidInput(f"held {key} species", label,
                           f"choose one of {', '.join(lay.sys_labels[i])}")
    v = np.broadcast_to(np.asarray(value, dtype=float), (n,))
    if not np.all(np.isfinite(v)) or np.any(v < 0):
        raise InvalidInput(f"held {label} (mol/L)", value, "must be finite and >= 0")
    return i, lay.sys_labels[i].index(label), v


def held_amounts(lay: Layout, c_sys: np.ndarray, held) -> Amounts:
    """Validate ``held`` ({system key: (species label, mol/L)}) and express it as
    :class:`Amounts` over the totals ``c_sys`` (K, N)."""
    k, n = c_sys.shape
    if not held:
        return Amounts(c_sys)
    conc = np.zeros((k, n))
    mask = np.zeros(k, dtype=bool)
    j0 = np.zeros(k)
    e0_col = np.zeros(k, dtype=int)
    for key, spec in held.items():
        i, jj, v = _held_value(lay, key, spec, n)
        conc[i] = v
        mask[i] = True
        j0[i] = jj
        e0_col[i] = lay.sys_slices[i][0] + jj
    c0 = lay.cmat[np.arange(k), j0.astype(int)] if k else np.zeros(0)
    return Amounts(c_sys, conc, mask, j0, c0, e0_col)


@dataclass(frozen=True, eq=False, repr=False)
class Problem:
    """N solutions at one temperature, ready for the solver's paths (mol/L throughout)."""

    lay: Layout
    am: Amounts
    zs_pos: np.ndarray     # (N,) positive charge carried by the spectator ions
    zs_neg: np.ndarray     # (N,) negative charge carried by the spectator ions
    ispec: np.ndarray      # (N,) ionic strength of the spectator ions
    q: np.ndarray          # (N,) largest negative charge the solutes can carry
    p: np.ndarray          # (N,) largest positive charge the solutes can carry
    pkw: float             # or (N,) where an outer loop sets an effective pKw per point
    a_dh: float            # activity scale A (0: ideal)
    totals: np.ndarray     # (N, columns) the totals as given, for the one-solution path
    hi: np.ndarray         # (N,) upper bound of x, log10(Q + 1) + 1e-3
    lo_below: np.ndarray   # (N,) the lower bound's distance below log10 Kw', log10(P + 1) + 1e-3

    def __getitem__(self, idx) -> Problem:
        pkw = self.pkw if np.ndim(self.pkw) == 0 else self.pkw[idx]
        return Problem(self.lay, self.am[idx], self.zs_pos[idx], self.zs_neg[idx],
                       self.ispec[idx], self.q[idx], self.p[idx], pkw, self.a_dh,
                       self.totals[idx], self.hi[idx], self.lo_below[idx])

    def bounds(self, log_kw):
        """log10[H+] bounds with f(lo) < 0 < f(hi), from the totals alone.

        With Q the largest negative charge the solutes can carry and P the largest
        positive one, f(x) >= [H+] - [OH-] - Q and f(x) <= [H+] - [OH-] + P.  So
        [H+] = Q + 1 gives f > 0 and [H+] = Kw'/(P + 1) gives f < 0.
        """
        return log_kw - self.lo_below, self.hi.copy()

    def edges(self):
        """``(top, bottom, i_top, i_bottom)``, (N,) each: the net excess of acid over
        base (NEG - POS less H+ and OH-, mol/L) with every system in its most
        protonated state and each metal its free ion, and with every system in its
        least protonated state and each metal at its most negative charge; and
        Σ c z² / 2 of the systems and metals at each edge.  At the root [H+] - [OH-]
        lies between the two excesses (see ``starts.edge_starts``)."""
        lay, c = self.lay, self.am.c
        base = self.zs_neg - self.zs_pos
        top = base - _weighted(c.T, lay.sys_zmax)
        bottom = base - _weighted(c.T, lay.sys_zmin)
        i_top = 0.5 * _weighted(c.T, lay.sys_zmax ** 2)
        i_bottom = 0.5 * _weighted(c.T, lay.sys_zmin ** 2)
        if self.am.metal is not None:
            ml, cm = lay.metals, self.am.metal.T
            top = top - _weighted(cm, ml.z)
            bottom = bottom + _weighted(cm, ml.qneg)
            i_top = i_top + 0.5 * _weighted(cm, ml.z ** 2)
            i_bottom = i_bottom + 0.5 * _weighted(cm, ml.qneg ** 2)
        return top, bottom, i_top, i_bottom

    def held_of(self, n: int) -> dict:
        """The held states of point ``n`` as the one-solution path takes them:
        {system index: (reference state, its cmat term, its concentration)}."""
        am = self.am
        if am.held is None:
            return {}
        return {int(k): (float(am.j0[k]), float(am.c0[k]), float(am.held[k, n]))
                for k in np.flatnonzero(am.mask)}

    @property
    def open_system(self) -> bool:
        """True when some system's amount is set by a held state, not by its total."""
        return self.am.held is not None


def build_problem(lay: Layout, totals: np.ndarray, held, pkw: float, a_dh: float) -> Problem:
    """The :class:`Problem` of the (N, columns) ``totals`` laid out by ``lay``.

    ``held`` is validated here (see :func:`held_amounts`); a held system's total does
    not bound the charge, so it is left out of ``q`` and ``p``.  Modelled metal ions
    (``lay.metals``) are not spectators: their totals go to ``am.metal`` and the
    largest charges their species can carry widen ``q`` and ``p``.
    """
    c_sys = np.ascontiguousarray(totals[:, lay.sys_cols].T)
    am = held_amounts(lay, c_sys, held)
    if am.held is not None:
        # held systems' totals do not bound the charge
        c_sys = np.where(am.mask[:, None], 0.0, c_sys)
        am = Amounts(c_sys, am.held, am.mask, am.j0, am.c0, am.e0_col)
    c_ion = totals[:, lay.ion_cols]
    zs_pos = _weighted(c_ion, np.maximum(lay.ion_z, 0.0))
    zs_neg = _weighted(c_ion, np.maximum(-lay.ion_z, 0.0))
    ispec = 0.5 * _weighted(c_ion, lay.ion_z ** 2)
    q = zs_neg + _weighted(c_sys.T, np.maximum(-lay.sys_zmin, 0.0))
    p = zs_pos + _weighted(c_sys.T, np.maximum(lay.sys_zmax, 0.0))
    if lay.metals is not None:
        c_metal = totals[:, lay.metals.cols]
        am = replace(am, metal=np.ascontiguousarray(c_metal.T),
                     ligand_start=np.full(c_metal.shape[0], np.nan)
                     if lay.metals.data.complexes else None)
        q = q + _weighted(c_metal, lay.metals.qneg)
        p = p + _weighted(c_metal, lay.metals.z)
    return Problem(lay, am, zs_pos, zs_neg, ispec, q, p, pkw, a_dh, totals,
                   np.log10(q + 1.0) + 1e-3, np.log10(p + 1.0) + 1e-3)


def _weighted(cols: np.ndarray, w: np.ndarray) -> np.ndarray:
    """(N,) sum over columns of ``cols`` (N, J) times ``w`` (J,), without BLAS."""
    return np.einsum("nj,j->n", cols, w)
