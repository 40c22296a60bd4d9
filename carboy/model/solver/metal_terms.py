"""Metal cations in the solver: their terms in the charge balance at each trial point.

A solution's modelled metal ions (those ``data/metals.toml`` holds: Zn+2, Cu+2, Al+3,
Ca+2 ...) are not spectators: at each trial log10[H+] the metals' dissolved species,
solids present or absent by saturation, and the salts a cation forms with a ligand
system of the solution (calcium with fluoride, phosphate, sulfate), and the complexes
of a cation with a state of one (CaSO4°, MgSO4° ...) come from
:func:`carboy.model.metals.state_of`.  They join the charge sums: POS gains the metal
species' positive charge and the ligand correction (<= 0), NEG their negative charge
and its ligand correction, Σ c z² theirs; and the derivatives by x and by A·D join the
Jacobian (the ligands' own fractions held, so inside a bracket: the guaranteed path
cannot miss the root, and the fast path only takes more steps).  The largest charges
the metals can carry widen the bracket (``problem``).

:class:`MetalLayout` is compiled once per layout (see ``layout.compile_layout``);
nothing here is computed for a solution without metals.  Inert cations (Na+, K+, Li+)
stay spectators.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from carboy.model.metal_data import MetalData, metal_data
from carboy.model.metals import LigandAtX, MetalState, solid_formulas, state_of


@dataclass(frozen=True)
class LigandLink:
    """An acid-base system of the layout that a metal present may precipitate with."""

    key: str
    k: int                      # its index among the layout's systems
    first: int                  # its first state in the flat order of states
    strong: int                 # its strong steps (states the layout leaves out)
    charges: tuple[int, ...]    # every state's charge, the strong ones too


@dataclass(frozen=True)
class MetalLayout:
    """The modelled metal ions of a layout."""

    cols: np.ndarray            # (Mt,) batch column of each metal ion
    keys: tuple[str, ...]
    z: np.ndarray               # (Mt,) charge of the free ion
    qneg: np.ndarray            # (Mt,) most negative charge one of its species carries
    ligands: tuple[LigandLink, ...]
    labels: tuple[str, ...]     # every metal species, metal after metal (free ion first,
                                # its complex with a linked system last)
    charges: tuple[int, ...]
    solids: tuple[str, ...]     # every solid a metal present may form
    data: MetalData
    complexes: int = 0          # metal-ligand complexes among the labels


def compile_metals(catalog, cols: list[int], keys: tuple[str, ...], sys_keys: tuple[str, ...],
                   slices: tuple) -> MetalLayout | None:
    """The :class:`MetalLayout` of the metal ions ``keys`` at batch columns ``cols``, with
    the layout's weak systems ``sys_keys`` (their flat ``slices``) as possible ligands."""
    if not keys:
        return None
    data = metal_data()
    metals = [data.metals[k] for k in keys]
    links = []
    for key in sorted({s.ligand_system for s in data.ligand_solids
                       if s.cation in keys and s.ligand_system in sys_keys}
                      | {c.ligand_system for c in data.complexes
                         if c.cation in keys and c.ligand_system in sys_keys}):
        system = catalog.systems[key]
        k = sys_keys.index(key)
        links.append(LigandLink(key, k, slices[k][0], system.strong_steps,
                                tuple(system.charge_of(j) for j in range(system.n_steps + 1))))
    linked = {lk.key for lk in links}
    solids = [m.solid.name for m in metals] + [
        s.name for s in data.ligand_solids if s.cation in keys and s.ligand_system in linked]
    labels, charges, n_complexes = [], [], 0
    for m in metals:
        cxs = [c for c in data.complexes if c.cation == m.key and c.ligand_system in linked]
        labels += [s.label for s in m.species] + [c.label for c in cxs]
        charges += [s.charge for s in m.species] + [c.charge for c in cxs]
        n_complexes += len(cxs)
    return MetalLayout(
        cols=np.asarray(cols, dtype=int), keys=tuple(keys),
        z=np.array([m.charge for m in metals], dtype=float),
        qneg=np.array([m.max_negative_charge for m in metals], dtype=float),
        ligands=tuple(links), labels=tuple(labels), charges=tuple(charges),
        solids=tuple(solids), data=data, complexes=n_complexes)


def ligands_at(ml: MetalLayout, e: np.ndarray, s0: np.ndarray, ceff: np.ndarray) -> dict:
    """The linked systems at the trial points, from the solver's state weights ``e``
    (flat states first, points last), their sums ``s0`` (K, N) and totals ``ceff``."""
    out = {}
    n = e.shape[1]
    for lk in ml.ligands:
        m = len(lk.charges) - lk.strong
        alpha = np.zeros((n, len(lk.charges)))
        alpha[:, lk.strong:] = (e[lk.first:lk.first + m] / s0[lk.k]).T
        out[lk.key] = LigandAtX(ceff[lk.k], alpha, lk.charges)
    return out


def _totals(ml: MetalLayout, metal: np.ndarray) -> dict:
    return {key: metal[i] for i, key in enumerate(ml.keys)}


def add_terms(ml: MetalLayout, metal: np.ndarray, x, ad, log_kw, ligands, sums, d_x,
              d_ad, ligand_start=None) -> None:
    """Add the metals' terms to the charge sums ``sums`` (3, N: POS and NEG less the
    spectators, Σ c z²), their x-derivatives ``d_x`` and (unless None) their
    A·D-derivatives ``d_ad``, in place.  ``ad`` None: ideal; ``log_kw`` is the
    conditional log10 Kw' of the solver; ``ligand_start`` (``Amounts.ligand_start``)
    carries the complexes' search from one trial point to the next."""
    ad0 = np.zeros(x.shape) if ad is None else ad
    got = state_of(_totals(ml, metal), x, ad0, log_kw - 2.0 * ad0, ligands, True, ml.data,
                   detail=False, ligand_start=ligand_start)
    sums[0] += got["pos"] + got["ligand_pos"]
    sums[1] += got["neg"] + got["ligand_neg"]
    sums[2] += got["iz2"] + got["ligand_iz2"]
    d_x[0] += got["dpos"]
    d_x[1] += got["dneg"]
    d_x[2] += got["diz2"]
    if d_ad is not None:
        d_ad[0] += got["apos"]
        d_ad[1] += got["aneg"]
        d_ad[2] += got["aiz2"]


def solved_state(ml: MetalLayout, metal: np.ndarray, x, ad, log_kw, ligands) -> MetalState:
    """The metals' full state (species, solids, saturation) at solved points."""
    ad0 = np.zeros(x.shape) if ad is None else ad
    return state_of(_totals(ml, metal), x, ad0, log_kw - 2.0 * ad0, ligands, True, ml.data)


def dissolved_ligands(ml: MetalLayout, state: MetalState, conc: np.ndarray,
                      alpha: np.ndarray, ceff: np.ndarray, slices) -> None:
    """Take what the salts and complexes hold out of the linked systems' species
    ``conc`` (S, N), and what the salts hold out of their totals ``ceff`` (K, N: the
    complexes stay dissolved), in place (``alpha``: the (S, N) fractions)."""
    for lk in ml.ligands:
        removed = state.ligand_removed.get(lk.key)
        if removed is None:
            continue
        a, b = slices[lk.k]
        conc[a:b] -= removed * alpha[a:b]
        np.maximum(conc[a:b], 0.0, out=conc[a:b])
        salts = removed - state.ligand_complexed.get(lk.key, 0.0)
        ceff[lk.k] = np.maximum(ceff[lk.k] - salts, 0.0)


@dataclass(frozen=True)
class MetalColumns:
    """The metals of N solved points, points first."""

    species: np.ndarray         # (N, len(labels)) mol/L of every metal species
    dissolved: np.ndarray       # (N, Mt) dissolved total of each metal
    oh_bound: np.ndarray        # (N,) hydroxide bound by the metals
    solids: np.ndarray          # (N, P) precipitated, mol of formula units per L
    saturation: np.ndarray      # (N, P) log10(IAP / K)


def columns(ml: MetalLayout, states: list[MetalState]) -> MetalColumns:
    """The metal columns of a batch from its blocks' states (in order)."""
    def stack(get):
        return np.concatenate([np.column_stack(get(st)) for st in states], axis=0)

    species = stack(lambda st: [st.species[k][lab] for k in ml.keys
                                for lab in st.species[k]])
    dissolved = stack(lambda st: [st.dissolved[k] for k in ml.keys])
    solids = stack(lambda st: [st.precipitated.get(s, np.zeros(st.pos.shape))
                               for s in ml.solids])
    sat = stack(lambda st: [st.saturation_index.get(s, np.full(st.pos.shape, -np.inf))
                            for s in ml.solids])
    oh = np.concatenate([st.oh_bound for st in states])
    return MetalColumns(species, dissolved, oh, solids, sat)


def formulas(ml: MetalLayout) -> dict[str, tuple[str, float]]:
    """Solid name -> (formula, g/mol) of the solids of this layout."""
    known = solid_formulas(ml.data)
    return {s: known[s] for s in ml.solids}
