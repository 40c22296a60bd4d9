"""The Pitzer equations of ``pitzer.py`` for one solution, in plain Python floats.

A solver that works on one solution calls the activity model several times; numpy's
cost per call (a few microseconds) would then dominate the arithmetic, as it does in
the Davies path (``solver/single.py``).  :class:`ScalarPitzer` is compiled once from a
:class:`~carboy.model.pitzer.PitzerModel` (the same parameter arrays at the same
temperature) into lists of the nonzero terms, and :meth:`ScalarPitzer.evaluate` gives
ln γ of every species, the osmotic coefficient, the water activity and the ionic
strength: the same numbers as ``PitzerModel.evaluate`` (tests/unit/test_pitzer_scalar.py
holds them to 1e-12), summed pair by pair.  The pair and triplet sums are compiled once
per model into one function of straight-line code with the parameters as literals
(:meth:`ScalarPitzer._compile`): a loop over lists of terms cost most of an evaluation.
"""

from __future__ import annotations

import math
from functools import lru_cache
from operator import mul

from carboy.model.etheta import GRID_STEP, X_MAX, X_MIN, j_integral
from carboy.model.etheta import _table as _j_table
from carboy.model.pitzer import WATER_KG_PER_MOL, PitzerModel
from carboy.model.pitzer_sums import triplets

_LN10 = math.log(10.0)


def _g(x: float) -> float:
    if x < 1e-3:
        return 1.0 - 2.0 * x / 3.0 + x * x / 4.0
    return 2.0 * (1.0 - (1.0 + x) * math.exp(-x)) / (x * x)


def _gp(x: float) -> float:
    if x < 1e-3:
        return -(x / 3.0 - x * x / 4.0)
    return -2.0 * (1.0 - (1.0 + x + 0.5 * x * x) * math.exp(-x)) / (x * x)


@lru_cache(maxsize=1)
def _j_lists():
    u0, u, j, dj, jp, djp = _j_table()
    return float(u0), len(u), u.tolist(), j.tolist(), dj.tolist(), jp.tolist(), djp.tolist()


def j_scalar(x: float) -> tuple[float, float]:
    """J(x) and J'(x) as ``etheta.j_function`` gives them, for one x."""
    if x < X_MIN:
        return 0.0, 0.0
    if x >= X_MAX:
        j, jp, _ = j_integral([x])
        return float(j[0]), float(jp[0])
    u0, n, u, j, dj, jp, djp = _j_lists()
    ux = math.log(x)
    k = min(int((ux - u0) / GRID_STEP), n - 2)
    t = (ux - u[k]) / GRID_STEP
    t2, t3 = t * t, t * t * t
    h00, h10, h01, h11 = 2 * t3 - 3 * t2 + 1, t3 - 2 * t2 + t, -2 * t3 + 3 * t2, t3 - t2
    h = GRID_STEP
    return (h00 * j[k] + h10 * h * dj[k] + h01 * j[k + 1] + h11 * h * dj[k + 1],
            h00 * jp[k] + h10 * h * djp[k] + h01 * jp[k + 1] + h11 * h * djp[k + 1])


class ScalarPitzer:
    """One :class:`PitzerModel` as lists of its nonzero terms (species in its order)."""

    def __init__(self, model: PitzerModel):
        p, z = model._p, [float(v) for v in model._z]
        self.n_user = len(model.species)
        self.n = len(z)
        self.z = z
        self.z2 = [v * v for v in z]
        self.az = [abs(v) for v in z]
        self.ions = [i for i, v in enumerate(z) if v]
        cat, ani = p.cat.tolist(), p.ani.tolist()
        self.binary = []
        alphas = set()
        for ci, c in enumerate(cat):
            for ai, a in enumerate(ani):
                b0, b1, b2 = float(p.b0[ci, ai]), float(p.b1[ci, ai]), float(p.b2[ci, ai])
                cc = float(p.c[ci, ai])
                a1, a2 = float(p.alpha1[ci, ai]), float(p.alpha2[ci, ai])
                if b0 or b1 or b2 or cc:
                    self.binary.append((c, a, b0, b1, a1, b2, a2, cc))
                    alphas.update(v for v, b in ((a1, b1), (a2, b2)) if b)
        self.alphas = tuple(sorted(alphas))
        like = self._like(cat, p.theta_c) + self._like(ani, p.theta_a)
        self.theta = [(i, j, 2.0 * th, th) for i, j, th, key in like if key is None]
        self.like = [t for t in like if t[3] is not None]    # with an Eθ term
        self.charge_pairs = tuple(sorted({key for *_, key in self.like}))
        self.neutral = self._neutrals(cat, ani, p.neu.tolist(), p)
        # ψ (two like ions and one other) and ζ (a neutral, a cation, an anion) enter
        # every sum in the same form: one list of triplets
        self.triples = triplets(p)
        self.fallback = [i for i, f in enumerate(model._fallback_mask.tolist()) if f]
        self.ref = model._ref
        self.kcl = model._kcl
        self.b, self.aphi, self.a_davies = model._b, model._aphi, model._a_davies
        self.macinnes = model.scale == "macinnes"
        self._sums = self._compile()

    def _like(self, idx: list[int], theta) -> list:
        """(i, j, θ, (|zi|, |zj|) or None) for every like-signed pair with a θ or with
        charges of different size (the unsymmetrical Eθ term)."""
        out = []
        for a, i in enumerate(idx):
            for b in range(a + 1, len(idx)):
                j = idx[b]
                zi, zj = self.az[i], self.az[j]
                key = (min(zi, zj), max(zi, zj)) if zi != zj else None
                th = float(theta[a, b])
                if th or key:
                    out.append((i, j, th, key))
        return out

    @staticmethod
    def _neutrals(cat, ani, neu, p) -> list:
        lam = []
        for k, n in enumerate(neu):
            for idx, arr in ((cat, p.lam_c), (ani, p.lam_a)):
                lam.extend((n, o, float(arr[k, t]), True) for t, o in enumerate(idx)
                           if arr[k, t])
            for t in range(k, len(neu)):
                if p.lam_n[k, t]:
                    lam.append((n, neu[t], float(p.lam_n[k, t]), False))
        return lam

    # ------------------------------------------------------------------ evaluation

    def _compile(self):
        """The cation–anion, θ, Eθ, ψ, ζ and λ sums and the terms every ion takes (F, the
        C sum, the Davies fallback, the MacInnes scaling) as one function of straight-line
        code over this model's nonzero terms (a loop over lists of terms costs most of an
        evaluation in Python): ``sums(m, ionic, root, big_z, f_dh, dav)``
        returns (ln γ of every species, the osmotic sum of the terms).  The source is built
        from numbers only (``repr`` of floats)."""
        n = self.n
        src = ["def sums(m, ionic, root, big_z, f_dh, dav):",
               f"    {_names('m', n)} = m",
               f"    {_names('l', n)} = {', '.join(['0.0'] * n)}",
               "    fb = ob = cs = fm = om = 0.0"]
        for k, a in enumerate(self.alphas):   # _g and _gp with one exponential
            src += [f"    x = {a!r} * root", f"    e{k} = _exp(-x)", "    if x < 1e-3:",
                    f"        g{k}, gp{k} = _g(x), _gp(x)", "    else:",
                    f"        g{k} = 2.0 * (1.0 - (1.0 + x) * e{k}) / (x * x)",
                    f"        gp{k} = -2.0 * (1.0 - (1.0 + x + 0.5 * x * x) * e{k}) / (x * x)"]
        src.extend(_etheta_values(self.charge_pairs, 6.0 * self.aphi))
        # ln γ±(KCl) at the same I, for the MacInnes scale (its g at 2√I may be above)
        b0, b1, cphi = self.kcl
        if 2.0 in self.alphas:
            k = self.alphas.index(2.0)
            gk = f"(2.0 * g{k} + gp{k})"
        else:
            src.append("    x = 2.0 * root")
            gk = "(2.0 * _g(x) + _gp(x))"
        src.append(f"    kcl = (f_dh + ionic * (2.0 * {b0!r} + {b1!r} * {gk}) "
                   f"+ 1.5 * {cphi!r} * ionic * ionic)")
        src.extend(_binary_lines(self.binary, self.alphas))
        src.extend(_mixing_lines(self.theta, self.like, self.charge_pairs, self.z, self.triples,
                                 self.neutral))
        src.append("    big_f = f_dh + fb / ionic + fm")
        src.extend(f"    l{i} += {self.z2[i]!r} * big_f + {self.az[i]!r} * cs"
                   for i in self.ions)
        src.append(f"    phimac = l{self.ref} - kcl")
        src.extend(f"    l{i} = dav * {self.z2[i]!r}" for i in self.fallback)
        if self.macinnes:
            src.extend(f"    l{i} += phimac * {self.z[i]!r}" for i in range(n) if self.z[i])
        src.append(f"    return [{_names('l', n)}], ob + om")
        space = {"_g": _g, "_gp": _gp, "_exp": math.exp, "_log": math.log, "_js": j_scalar}
        if self.charge_pairs:   # J's table (built once, on the first model that needs it)
            u0, n_grid, u, j, dj, jp, djp = _j_lists()
            space.update(_u=u, _j=j, _dj=dj, _jp=jp, _djp=djp, _u0=u0, _kmax=n_grid - 2)
        exec(compile("\n".join(src), "<pitzer sums>", "exec"), space)   # noqa: S102
        return space["sums"]

    def evaluate(self, molality: list[float]):
        """(ln γ of the model's species, osmotic φ, a_w, I) at one composition (mol/kg)."""
        m = list(molality)
        if len(m) < self.n:
            m.append(0.0)   # the reference anion (Cl-), carried at zero
        ionic = 0.5 * sum(map(mul, m, self.z2))
        big_z = sum(map(mul, m, self.az))
        total = sum(m)
        i_safe = ionic if ionic > 1e-100 else 1e-100
        root = math.sqrt(i_safe)
        b, aphi = self.b, self.aphi
        f_dh = -aphi * (root / (1.0 + b * root) + 2.0 / b * math.log1p(b * root))
        dav = -_LN10 * self.a_davies * (root / (1.0 + root) - 0.3 * ionic) \
            if self.fallback else 0.0
        ln, osm = self._sums(m, i_safe, root, big_z, f_dh, dav)
        osm += -aphi * ionic * root / (1.0 + b * root)
        phi = 1.0 + 2.0 * osm / total if total > 0 else 1.0
        return ln[:self.n_user], phi, math.exp(-phi * total * WATER_KG_PER_MOL), ionic


def _etheta_values(charge_pairs, xcon: float) -> list[str]:
    """Source lines of Eθ (``t``) and Eθ' (``tp``) of each charge pair, as
    ``etheta.etheta`` gives them, with :func:`j_scalar`'s interpolation written out for
    each x (its calls cost a fifth of an evaluation)."""
    h = GRID_STEP
    out = [f"    xc = {xcon!r} * root"]
    for p in sorted({q for zi, zj in charge_pairs for q in (zi * zj, zi * zi, zj * zj)}):
        v = f"{int(p)}"
        out += [f"    x{v} = {p!r} * xc", f"    if {X_MIN!r} <= x{v} < {X_MAX!r}:",
                f"        ux = _log(x{v})", f"        k = int((ux - _u0) / {h!r})",
                "        if k > _kmax:", "            k = _kmax",
                f"        t = (ux - _u[k]) / {h!r}", "        t2 = t * t", "        t3 = t2 * t",
                "        h00, h01 = 2 * t3 - 3 * t2 + 1, -2 * t3 + 3 * t2",
                f"        h10, h11 = (t3 - 2 * t2 + t) * {h!r}, (t3 - t2) * {h!r}",
                f"        j{v} = h00 * _j[k] + h10 * _dj[k] + h01 * _j[k + 1] + h11 * _dj[k + 1]",
                f"        jp{v} = h00 * _jp[k] + h10 * _djp[k] + h01 * _jp[k + 1] "
                "+ h11 * _djp[k + 1]",
                "    else:", f"        j{v}, jp{v} = _js(x{v})"]
    for k, (zi, zj) in enumerate(charge_pairs):
        a, b, c = (f"{int(q)}" for q in (zi * zj, zi * zi, zj * zj))
        zz = zi * zj
        out += [f"    t{k} = {zz!r} * (j{a} - 0.5 * j{b} - 0.5 * j{c}) / (4.0 * ionic)",
                f"    tp{k} = -t{k} / ionic + {zz!r} * (x{a} * jp{a} - 0.5 * x{b} * jp{b} "
                f"- 0.5 * x{c} * jp{c}) / (8.0 * ionic * ionic)"]
    return out


def _names(prefix: str, n: int) -> str:
    return ", ".join(f"{prefix}{i}" for i in range(n)) + ("," if n == 1 else "")


def _binary_lines(binary, alphas) -> list[str]:
    """Source lines of the cation–anion terms (as ``pitzer.PitzerModel._binary``): each
    pair adds its ``t`` = 2B + ZC to both ions' ln γ and its product m_c m_a, times each
    parameter, to one sum per kind (β0, β at each α, C); the F, osmotic and C sums are
    those sums times g'(α√I), e^(-α√I) and Z once, after the pairs."""
    out = [f"    q{k} = 0.0" for k in range(len(alphas))]
    for c, a, b0, b1, a1, b2, a2, cc in binary:
        gam = [f"{2.0 * b0!r}"]
        sums = [f"ob += mm * {b0!r}"] if b0 else []
        for b, al in ((b1, a1), (b2, a2)):
            if b:
                k = alphas.index(al)
                gam.append(f"{2.0 * b!r} * g{k}")
                sums.append(f"q{k} += mm * {b!r}")
        if cc:
            gam.append(f"big_z * {cc!r}")
            sums.append(f"cs += mm * {cc!r}")
        out.append(f"    t = {' + '.join(gam)}")
        out.append(f"    l{c} += m{a} * t; l{a} += m{c} * t; mm = m{c} * m{a}")
        out.append(f"    {'; '.join(sums)}" if sums else "    pass")
    if alphas:
        out.append(f"    fb = {' + '.join(f'q{k} * gp{k}' for k in range(len(alphas)))}")
        out.append(f"    ob += {' + '.join(f'q{k} * e{k}' for k in range(len(alphas)))}")
    out.append("    ob += big_z * cs")
    return out


def _mixing_lines(theta, like, charge_pairs, z, triples, neutral) -> list[str]:
    """Source lines of the θ, Eθ, ψ, ζ and λ terms (as ``pitzer.PitzerModel._sums``)."""
    out = []
    for i, j, th2, th in theta + [(i, j, 2.0 * th, th) for i, j, th, _ in like if th]:
        out.append(f"    l{i} += m{j} * {th2!r}; l{j} += m{i} * {th2!r}; "
                   f"om += m{i} * m{j} * {th!r}")
    out.extend(_etheta_lines(like, charge_pairs, z))
    groups: dict = {}
    for i, j, k, v in triples:   # v m_i m_j m_k: grouped by (i, j), S = Σ_k v m_k
        groups.setdefault((i, j), []).append((k, v))
    for (i, j), terms in groups.items():
        out.append(f"    s = {' + '.join(f'{v!r} * m{k}' for k, v in terms)}; mm = m{i} * m{j}")
        out.append(f"    l{i} += m{j} * s; l{j} += m{i} * s; om += mm * s")
        out.extend(f"    l{k} += mm * {v!r}" for k, v in terms)
    for n, o, v, ion in neutral:
        if ion or o != n:
            out.append(f"    l{o} += m{n} * {2.0 * v!r}; l{n} += m{o} * {2.0 * v!r}; "
                       f"om += m{n} * m{o} * {v!r}")
        else:
            out.append(f"    l{n} += m{n} * {2.0 * v!r}; om += m{n} * m{n} * {0.5 * v!r}")
    return out


def _etheta_lines(like, charge_pairs, z) -> list[str]:
    """Source lines of the Eθ terms: every like-signed pair of charges |za| < |zb| takes
    the same Eθ, so with A and B the sums of those ions' molalities each ion of A takes
    2 Eθ B, each of B 2 Eθ A, and the sums Eθ' A B and (Eθ + I Eθ') A B."""
    groups: dict = {}
    for i, j, _, key in like:
        a, b = (i, j) if abs(z[i]) == key[0] else (j, i)
        sides = groups.setdefault((z[i] > 0, key), ([], []))
        sides[0].append(a)
        sides[1].append(b)
    out = []
    for (_, key), (a_side, b_side) in groups.items():
        k = charge_pairs.index(key)
        a_ions, b_ions = sorted(set(a_side)), sorted(set(b_side))
        assert len(a_side) == len(a_ions) * len(b_ions), "Eθ pairs: not every pair listed"
        out.append(f"    sa = {' + '.join(f'm{i}' for i in a_ions)}; "
                   f"sb = {' + '.join(f'm{i}' for i in b_ions)}; u = 2.0 * t{k}; mm = sa * sb")
        out.extend(f"    l{i} += u * sb" for i in a_ions)
        out.extend(f"    l{i} += u * sa" for i in b_ions)
        out.append(f"    fm += mm * tp{k}; om += mm * (t{k} + ionic * tp{k})")
    return out


@lru_cache(maxsize=64)
def scalar_model(model: PitzerModel) -> ScalarPitzer:
    """The scalar form of ``model`` (models are cached and never change)."""
    return ScalarPitzer(model)
