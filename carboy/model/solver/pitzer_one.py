"""The specific-interaction (Pitzer) path for one solution, in plain Python floats.

The vectorized path (``outer.solve_pitzer``) pays numpy's cost per call on every
round; for one solution that cost is most of the time, so this module does the same
arithmetic on floats (as ``single.py`` does for the Davies path).  Molal throughout:
the unknown is x = log10 m(H+) (mol/kg); with the log10 coefficients ``lg`` of every
species and log10 a_w held, a state j of a system (j protons lost from its top state)
weighs ``10**(log beta_j - lg_j - j (x + lg_H))``, OH- is ``Kw a_w / (γ_H γ_OH m_H)``,
and a pair P = M + OH- (MgOH+, the Pitzer set's one) holds ``T_M k m_OH / (1 + k m_OH)``
of its cation, k = K γ_M γ_OH / γ_P.

Each round solves the charge balance for x with the coefficients held (Newton on
ln POS - ln NEG, which rises with x, inside a bracket that each step narrows; a step
that leaves it bisects), then evaluates the coefficients at the composition it gives
(``pitzer_scalar``).  The rounds are a fixed-point iteration on (lg, log10 a_w),
accelerated by Anderson mixing of depth one; a solution has settled when no
coefficient moved more than ``ONE_TOL`` in its last round.  A table without pairs,
hydroxides or salts has its charge-balance step compiled into straight-line code
(:func:`_compile_step`, the same numbers as :func:`_composition` and :func:`_balance`).

:func:`compile_one` returns None for a table this path does not take (a pair whose
ligand is a protonation state); the vectorized path then solves it.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace
from operator import mul, sub

import numpy as np

from carboy.model.pitzer import DAVIES_LIMIT_MOLAL, I_MAX_MOLAL, MISSING_PAIR_MOLAL
from carboy.model.pitzer_scalar import ScalarPitzer
from carboy.model.solver.constants import LN10
from carboy.model.solver.mixing import anderson
from carboy.model.solver.outer import Outcome
from carboy.model.solver.pitzer_salts import salt_float

ONE_TOL = 1e-8
"""A round that moves no log10 coefficient more than this ends the iteration; x is then
solved once more at the last coefficients (the Anderson-mixed rounds have by then
settled them to about 1e-11)."""
SETTLED_TOL = 1e-9
"""The error in log10 γ a settled solution may keep by the contraction estimate; its
coefficients are then the Anderson step from its last two rounds (closer than the last
evaluation).  The pH agrees with the fully settled one to about 2e-9 (bench_speciation's
concentrated waste and its curve); 1e-10 cost one more round for 1e-11."""
ONE_ROUNDS = 60
"""Rounds before the solution is reported unsettled."""
X_BOUNDS = (-20.0, 3.0)
"""log10 m(H+) always lies here (pH -3 to 20 on the molal scale)."""
NEWTON_STEPS = 100
X_STEP_TOL = 1e-12
"""The charge balance's root in x is settled when a Newton step is below this."""
MAX_STEP = 2.0
"""A Newton step in x is cut to this length (log10) before the bracket is consulted."""
QUADRATIC = 1e-2
"""A Newton step s with s² below this times the tolerance also ends the x-solve:
Newton's error after it is of order s²."""
FIRST_X_TOL = 0.1
"""The first round's x-solve (every coefficient still zero, off by up to about 2 in
log10) stops at a Newton step below this: a closer root buys nothing there."""
WARM_X_TOL = 1e-10
"""The first round's x-solve from started coefficients (a nearby solution's) needs x as
closely as they are known."""
ROUND_X_TOL = 1e-3
"""Later rounds solve x to this times the last round's largest coefficient move: the
error it leaves in x is then well inside what the coefficients still have to move."""


@dataclass(frozen=True, eq=False, repr=False)
class OneTable:
    """A species table compiled for the float path."""

    n: int                          # species (columns of the table)
    charges: tuple[float, ...]
    ions: tuple                     # (column, batch column) of each spectator ion
    systems: tuple                  # (batch column, ((column, log beta0, j, water), ...))
    pairs: tuple                    # (pair column, cation column, log10 K)
    pkw: float
    zpos: tuple[float, ...] = ()    # positive charge of each column
    zneg: tuple[float, ...] = ()    # magnitude of the negative charge
    solids: tuple = ()              # (cation column, pair column or -1, pair log10 K,
    #                                  z, log10 Ksp of M(OH)z = M + z OH-) per hydroxide
    salts: tuple = ()               # (system, pitzer_salts entry) per 1:1 salt
    step: object = None             # _composition and _balance compiled (see _compile_step)
    held: tuple = ()                # per system: its held state's place among its states,
    #                                  -1 closed (an open system: see open_table)


def compile_one(lay, tab, pkw: float, hydroxides: tuple = (), salts: tuple = ()
                ) -> OneTable | None:
    """The :class:`OneTable` of a layout's Pitzer table (None: a pair on a state);
    ``hydroxides`` (cation label, z, log10 Ksp of M(OH)z = M + z OH-) and ``salts``
    (cation label, system key, ligand label, log10 Ksp, waters) may precipitate."""
    if any(p.state >= 0 for p in tab.pairs):
        return None
    ions = tuple((int(c), int(b)) for c, b in zip(tab.ion_cols.tolist(), lay.ion_cols.tolist()))
    systems = []
    cols, water = tab.state_cols.tolist(), tab.state_water.tolist()
    for k, (a, b) in enumerate(lay.sys_slices):
        states = tuple((cols[s], float(lay.flat_lb0[s]), float(lay.flat_j[s]), water[s])
                       for s in range(a, b))
        systems.append((int(lay.sys_cols[k]), states))
    pairs = [(int(c), int(tab.ion_cols[p.ion]), float(p.log_k))
             for p, c in zip(tab.pairs, tab.pair_cols.tolist())]
    solids = []
    for label, zm, log_ksp in hydroxides:
        if label not in tab.labels:
            continue
        mc = tab.labels.index(label)
        own = [pr for pr in pairs if pr[1] == mc]
        pairs = [pr for pr in pairs if pr[1] != mc]
        pc, log_k = (own[0][0], own[0][2]) if own else (-1, 0.0)
        solids.append((mc, pc, log_k, float(zm), float(log_ksp)))
    solids, salt_rows = _salt_rows(lay, tab, solids, pairs, salts)
    z = tuple(float(v) for v in tab.charges.tolist())
    zpos, zneg = tuple(max(v, 0.0) for v in z), tuple(max(-v, 0.0) for v in z)
    step = None if pairs or solids or salt_rows else \
        _compile_step(len(z), systems, float(pkw), zpos, zneg, (-1,) * len(systems))
    return OneTable(len(tab.labels), z, ions, tuple(systems), tuple(pairs), float(pkw),
                    zpos, zneg, tuple(solids), salt_rows, step)


def _number(value) -> float:
    """``value`` as a plain finite float, the only kind of value written into compiled
    source (ValueError otherwise)."""
    out = float(value)
    if not math.isfinite(out):
        raise ValueError(f"not a finite number: {value!r}")
    return out


def _compile_step(n: int, systems: list, pkw: float, zpos: tuple, zneg: tuple, held: tuple):
    """:func:`_composition` (with the slopes) and :func:`_balance` of a table without
    pairs, hydroxides or salts as one function of straight-line code, the constants as
    literals (a loop over the states costs most of a charge-balance step in Python):
    ``step(x, lg, lw, ions, sys_tot)`` returns (m, dm, g, dg), the same numbers.
    ``held`` (per system, see ``OneTable.held``): an open system's entry of ``sys_tot``
    is its held state's molality."""
    ln10 = repr(LN10)
    # only plain finite numbers enter the source (a user compound's pKa among them)
    systems = [(k, [(int(c), _number(lb), _number(j), _number(h2o)) for c, lb, j, h2o in st])
               for k, st in systems]
    pkw, zpos, zneg = _number(pkw), tuple(map(_number, zpos)), tuple(map(_number, zneg))
    src = ["def step(x, lg, lw, ions, sys_tot):", "    m = list(ions)",
           f"    dm = [0.0] * {n}", "    lg0 = lg[0]", "    m[0] = h = 10.0 ** x",
           f"    m[1] = oh = 10.0 ** (lw - {pkw!r} - lg0 - lg[1] - x)",
           f"    dm[0] = {ln10} * h", f"    dm[1] = -{ln10} * oh", "    xs = x + lg0"]
    for k, (_, states) in enumerate(systems):
        for s, (c, lb, j, h2o) in enumerate(states):
            src.append(f"    w{s} = 10.0 ** ({lb!r} - lg[{c}] - {j!r} * xs + {h2o!r} * lw)")
        src.append(f"    tot = sys_tot[{k}]")
        ref = int(held[k])
        den = f"w{ref}" if ref >= 0 else " + ".join(f"w{s}" for s in range(len(states)))
        src.append(f"    inv = tot / ({den})")
        for s, (c, _, _, _) in enumerate(states):
            src.append(f"    c{s} = w{s} * inv")
            src.append(f"    m[{c}] += c{s}")
        src.append("    if tot:")
        jsum = " + ".join(f"c{s} * {st[2]!r}" for s, st in enumerate(states))
        src.append(f"        jb = {states[ref][2]!r}" if ref >= 0 else f"        jb = ({jsum}) / tot")
        src.extend(f"        dm[{c}] -= {ln10} * c{s} * ({j!r} - jb)"
                   for s, (c, _, j, _) in enumerate(states))
    for name, zs in (("pos", zpos), ("neg", zneg)):
        terms = [(i, z) for i, z in enumerate(zs) if z]
        src.append(f"    {name} = {' + '.join(f'{z!r} * m[{i}]' for i, z in terms)}")
        src.append(f"    d{name} = {' + '.join(f'{z!r} * dm[{i}]' for i, z in terms)}")
    src.append("    return m, dm, _log(pos) - _log(neg), dpos / pos - dneg / neg")
    space = {"_log": math.log}
    exec(compile("\n".join(src), "<pitzer step>", "exec"), space)   # noqa: S102
    return space["step"]


def _salt_rows(lay, tab, solids: list, pairs: list, salts: tuple):
    """The salts a table can take (cation without a pair, ligand state present), each
    with its cation's hydroxide, which then leaves ``solids``."""
    rows = []
    for label, system, ligand, log_ksp, waters in salts:
        if label not in tab.labels or system not in lay.sys_keys:
            continue
        ca = tab.labels.index(label)
        k = lay.sys_keys.index(system)
        a, b = lay.sys_slices[k]
        cols = tab.state_cols.tolist()[a:b]
        if any(pr[1] == ca for pr in pairs) or ligand not in tab.labels or \
                tab.labels.index(ligand) not in cols:
            continue
        own = [sd for sd in solids if sd[0] == ca]
        solids = [sd for sd in solids if sd[0] != ca]
        hz, hlog = (own[0][3], own[0][4]) if own else (0.0, 0.0)
        rows.append((k, (ca, cols.index(tab.labels.index(ligand)), float(log_ksp),
                         float(waters), hz, hlog)))
    return solids, tuple(rows)


def _hydroxides(ot: OneTable, m, dm, lg, log_oh_act: float, oh: float) -> None:
    """Each hydroxide's cation (and its pair with OH-) at x, in place: the free cation
    is the smaller of its mass balance's and the solubility product's (the solid present
    by saturation, as the metal path decides it)."""
    for mc, pc, log_k, z, log_ksp in ot.solids:
        total = m[mc]
        k = 10.0 ** (log_k + lg[mc] + lg[1] - lg[pc]) if pc >= 0 else 0.0
        free = total / (1.0 + k * oh)
        cap = 10.0 ** (log_ksp - lg[mc] - z * log_oh_act)
        present = cap < free
        if present:
            free = cap
        p = k * free * oh
        m[mc] = free
        if pc >= 0:
            m[pc] += p
        if dm is not None:
            dfree = z * LN10 * free if present else LN10 * p / (1.0 + k * oh)
            dp = p * LN10 * (z - 1.0) if present else -dfree
            dm[mc] += dfree
            if pc >= 0:
                dm[pc] += dp


def _composition(ot: OneTable, x: float, lg, lw: float, ions, sys_tot, want_slope=False):
    """Molalities of every column at x, and (if asked) their x-derivatives."""
    m = list(ions)
    lg_h = lg[0]
    m[0] = h = 10.0 ** x
    m[1] = oh = 10.0 ** (lw - ot.pkw - lg_h - lg[1] - x)
    dm = [0.0] * ot.n if want_slope else None
    if want_slope:
        dm[0], dm[1] = LN10 * h, -LN10 * oh
    for pc, mc, log_k in ot.pairs:
        total = m[mc]
        k = 10.0 ** (log_k + lg[mc] + lg[1] - lg[pc])
        p = total * k * oh / (1.0 + k * oh)
        m[pc] += p
        m[mc] -= p
        if want_slope:
            dp = -LN10 * total * k * oh / (1.0 + k * oh) ** 2
            dm[pc] += dp
            dm[mc] -= dp
    xs = x + lg_h
    sysc = []
    held = ot.held or (-1,) * len(ot.systems)
    for (_, states), tot, ref in zip(ot.systems, sys_tot, held):
        ws = [10.0 ** (lb - lg[c] - j * xs + h2o * lw) for c, lb, j, h2o in states]
        inv = tot / (ws[ref] if ref >= 0 else sum(ws))
        conc = [w * inv for w in ws]
        for (c, _, _, _), v in zip(states, conc):
            m[c] += v
        if ref >= 0:   # open: the held state's molality is fixed, the total moves with x
            jbar, tot = states[ref][2], sum(conc)
        else:
            jbar = sum(v * j for v, (_, _, j, _) in zip(conc, states)) / tot if tot else 0.0
        if want_slope and tot:
            for v, (c, _, j, _) in zip(conc, states):
                dm[c] -= LN10 * v * (j - jbar)
        sysc.append((states, conc, jbar, tot))
    log_oh_act = lw - ot.pkw - lg_h - x
    if ot.solids:
        _hydroxides(ot, m, dm, lg, log_oh_act, oh)
    for k, entry in ot.salts:
        salt_float(entry, m, dm, lg, lw, log_oh_act, *sysc[k])
    return m, dm


def _balance(ot: OneTable, m, dm):
    """ln POS - ln NEG and its x-derivative."""
    zp, zn = ot.zpos, ot.zneg
    pos, neg = sum(map(mul, zp, m)), sum(map(mul, zn, m))
    dpos, dneg = sum(map(mul, zp, dm)), sum(map(mul, zn, dm))
    return math.log(pos) - math.log(neg), dpos / pos - dneg / neg


def solve_x(ot: OneTable, x: float, lg, lw: float, ions, sys_tot,
            tol: float = X_STEP_TOL):
    """The root in x of the charge balance with ``lg`` and ``lw`` held, to a Newton
    step below ``tol``: (x, the molalities there).  The last step, below ``tol``, moves
    the molalities by their derivatives (an error of order step²)."""
    lo, hi = X_BOUNDS
    x = min(max(x, lo), hi)
    m = None
    step_of = ot.step
    for _ in range(NEWTON_STEPS):
        if step_of is not None:
            m, dm, g, dg = step_of(x, lg, lw, ions, sys_tot)
        else:
            m, dm = _composition(ot, x, lg, lw, ions, sys_tot, True)
            g, dg = _balance(ot, m, dm)
        if g > 0:
            hi = x
        else:
            lo = x
        if dg > 0:
            step = -g / dg
            if abs(step) < tol or step * step < QUADRATIC * tol:
                return x + step, [a + b * step for a, b in zip(m, dm)]
            new = x + max(-MAX_STEP, min(MAX_STEP, step))
        else:   # cannot happen for a balance that rises with x: bisect all the same
            new = lo - 1.0
        if not lo < new < hi:
            new = 0.5 * (lo + hi)
        if hi - lo < X_STEP_TOL:
            return x, m
        x = new
    return x, m


def _start(ot: OneTable, ions, sys_tot) -> float:
    """A first x from the charge the spectators and systems leave to H+ or OH-: with
    every system at its lowest charge (an upper bound on H+) or at its highest (an
    upper bound on OH-); -7 where neither bound is one-sided.  An open system's total
    is not known: it is left out."""
    z = ot.charges
    fixed = sum(zi * mi for zi, mi in zip(z, ions))
    closed = [(st, t) for (_, st), t, ref in zip(ot.systems, sys_tot,
                                                 ot.held or (-1,) * len(sys_tot)) if ref < 0]
    low = fixed + sum(t * min(z[s[0]] for s in st) for st, t in closed)
    high = fixed + sum(t * max(z[s[0]] for s in st) for st, t in closed)
    if low < 0:
        return math.log10(-low)
    if high > 0:
        return -ot.pkw - math.log10(high)
    return -7.0


def settled(moved: float, last: float, rounds: int) -> bool:
    """True when the coefficients are within ``ONE_TOL`` of their fixed point, or, from
    the third round on, when the contraction the last two rounds show (ρ = moved / last
    below one half) puts them within ``SETTLED_TOL`` (ρ moved / (1 - ρ))."""
    if moved <= ONE_TOL:
        return True
    rho = moved / last if last > 0 else 1.0
    return rounds >= 3 and rho < 0.5 and moved * rho / (1.0 - rho) <= SETTLED_TOL


def solve_one_pitzer(ot: OneTable, model: ScalarPitzer, row, per_molar: float,
                     x0: float | None = None, held: tuple = (), v0=None, water=None):
    """Solve one solution: ``row`` the batch totals (mol/L), ``per_molar`` mol/kg per
    mol/L; an open table (:func:`open_table`) takes ``held``, the held state's mol/L of
    each of its open systems in order, and ``water`` (where given: ``OpenWater.one``)
    gives the kg of water per litre from what those systems hold (mol/L, a list), which
    the rounds then settle with the coefficients (per_molar its start).  ``x0`` and
    ``v0`` start x and the coefficients (log10 γ of every column, then log10 a_w: a
    nearby solution's); a start only saves rounds, the test that ends them is the same.
    Returns (x molal, molalities, lg, (φ, a_w, I, kg of water per litre), rounds,
    converged)."""
    ions = [0.0] * ot.n
    for c, b in ot.ions:
        ions[c] += row[b] * per_molar
    sys_tot = [row[b] * per_molar for b, _ in ot.systems]
    opened = [k for k, ref in enumerate(ot.held) if ref >= 0] if held else []
    for k, v in zip(opened, held):
        sys_tot[k] = v * per_molar
    w = 1.0 / per_molar
    n = ot.n
    # log10 γ of every column, then log10 a_w (and, with water, log10 W: mixed and
    # tested with the coefficients)
    v = [0.0] * (n + 1) if v0 is None else list(v0)
    if water is not None:
        v.append(math.log10(w))
    x = _start(ot, ions, sys_tot) if x0 is None else x0
    prev = None
    moved = last = 1.0
    first_tol = FIRST_X_TOL if v0 is None else WARM_X_TOL
    for rounds in range(1, ONE_ROUNDS + 1):
        # early rounds need x no closer than their coefficients are settled; v holds
        # log10 a_w after the n coefficients, which the x-solve does not read
        tol = first_tol if rounds == 1 else max(X_STEP_TOL, ROUND_X_TOL * moved)
        x, m = solve_x(ot, x, v, v[n], ions, sys_tot, tol)
        ln, phi, aw, ionic = model.evaluate(m)
        g = [a / LN10 for a in ln]
        g.append(math.log10(aw))
        if water is not None:   # the water the open systems' holdings leave
            g.append(math.log10(water([w * sum(m[s[0]] for s in ot.systems[k][1])
                                       for k in opened])))
        last, moved = moved, max(map(abs, map(sub, g, v)))
        # (with the water in the rounds only the plain test: the water follows the open
        # systems' totals, which follow x, and the contraction estimate misjudged it)
        if moved <= ONE_TOL or (water is None and settled(moved, last, rounds)):
            if moved > ONE_TOL:
                g = anderson(v, g, prev)
            if water is not None:
                ions, sys_tot, w = _rewater(ions, sys_tot, w, 10.0 ** g[n + 1])
            x, m = solve_x(ot, x, g, g[n], ions, sys_tot)
            return x, m, g[:n], (phi, aw, ionic, w), rounds, True
        if rounds < ONE_ROUNDS:
            v, prev = anderson(v, g, prev), (v, g)
            if water is not None:
                ions, sys_tot, w = _rewater(ions, sys_tot, w, 10.0 ** v[n + 1])
    return x, m, g[:n], (phi, aw, ionic, w), ONE_ROUNDS, False


def _rewater(ions: list, sys_tot: list, w: float, new: float):
    """The molalities at the water per litre ``new`` (they were at ``w``)."""
    ratio = w / new
    return [a * ratio for a in ions], [a * ratio for a in sys_tot], new


_ONE: dict = {}


def one_table(lay, tab, pkw: float, hydroxides: tuple = (), salts: tuple = ()
              ) -> OneTable | None:
    """:func:`compile_one`, cached beside the layout and its table (both never change)."""
    key = (id(lay), id(tab), pkw, hydroxides, salts)
    hit = _ONE.get(key)
    if hit is not None and hit[0] is lay and hit[1] is tab:
        return hit[2]
    ot = compile_one(lay, tab, pkw, hydroxides, salts)
    if len(_ONE) >= 512:
        _ONE.clear()
    _ONE[key] = (lay, tab, ot)
    return ot


_OPEN: dict = {}


def open_table(ot: OneTable, held: tuple) -> OneTable | None:
    """``ot`` with some systems open (``held``: per system the place of its held state
    among its states, -1 closed): each open system's held state stays at a given
    molality and its total follows x.  None where an open system forms a salt (the
    held path takes no solids).  Cached beside ``ot``."""
    key = (id(ot), held)
    hit = _OPEN.get(key)
    if hit is not None and hit[0] is ot:
        return hit[1]
    got = None
    if not any(held[k] >= 0 for k, _ in ot.salts):
        step = None if ot.pairs or ot.solids or ot.salts else _compile_step(
            ot.n, list(ot.systems), ot.pkw, ot.zpos, ot.zneg, held)
        got = replace(ot, held=held, step=step)
    if len(_OPEN) >= 512:
        _OPEN.clear()
    _OPEN[key] = (ot, got)
    return got


def one_outcome(ot: OneTable, model, scalar: ScalarPitzer, row, water_kg_per_l: float,
                x0: float | None = None, held: tuple = (), v0=None, water=None):
    """The :class:`~carboy.model.solver.outer.Outcome` of one solution (``row`` its batch
    totals, mol/L) as the vectorized path gives it: concentrations in mol/L, x = log10
    [H+] in mol/L, the Pitzer model's (``model``) warnings at the composition, the water
    per litre (``extra``).  ``x0`` (log10 m(H+), mol/kg), ``held``, ``v0`` and
    ``water``: see :func:`solve_one_pitzer`."""
    x, m, lg, (phi, aw, ionic, w), rounds, ok = solve_one_pitzer(
        ot, scalar, row, 1.0 / water_kg_per_l, x0, held, v0, water)
    table = np.array([m]) * w
    alpha, ceff = [], []
    for _, states in ot.systems:
        tot = sum(m[s[0]] for s in states)     # dissolved: a salt holds the rest
        ceff.append([tot * w])
        alpha.extend([m[s[0]] / tot if tot > 0 else 0.0] for s in states)
    here, warnings = model_warnings(model, m, ionic)
    extra = {"ionic_strength_molal": np.array([ionic]), "water_activity": np.array([aw]),
             "osmotic": np.array([phi]), "valid": np.array([ionic <= I_MAX_MOLAL and not here]),
             "point_warnings": [warnings], "water_kg_per_l": np.array([w])}
    return Outcome(np.array([x + math.log10(w)]), np.zeros(1), np.array([ok]), rounds,
                   table, np.array([lg]), np.array([-(x + lg[0])]),
                   (np.array(alpha).reshape(-1, 1), np.array(ceff).reshape(-1, 1)), extra)


def model_warnings(model, m: list, ionic: float) -> tuple[bool, tuple[str, ...]]:
    """Whether a species of the Davies fallback is present in the molalities ``m``, and
    the Pitzer model's (``model``) warnings of that point (``PitzerModel.point_warnings``):
    worked out once per case (they depend only on which of the model's conditions
    hold)."""
    mask = model._fallback_mask
    here = any(v > 0 for v, f in zip(m, mask.tolist()) if f)
    full = m + [0.0] * (len(model._all) - len(m))
    key = (id(model), here, ionic > DAVIES_LIMIT_MOLAL,
           tuple(full[i] > MISSING_PAIR_MOLAL and full[j] > MISSING_PAIR_MOLAL
                 for i, j in model._p.missing))
    hit = _WARNED.get(key)
    if hit is None or hit[0] is not model:
        if len(_WARNED) >= 512:
            _WARNED.clear()
        hit = _WARNED[key] = (model, model.point_warnings(np.array([full]),
                                                           np.array([ionic]))[0])
    return here, hit[1]


_WARNED: dict = {}

