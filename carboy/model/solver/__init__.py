"""The speciation solver's parts; the public API is :mod:`carboy.model.speciation`.

``constants``       ln 10, the tolerances and iteration limits of every path
``layout``          a solution's keys compiled, at one temperature, into arrays (pKa(T),
                    charges, the weights of the charge sums' rows)
``problem``         N solutions as the paths see them (amounts, spectator charges, bounds)
``charge_balance``  the vectorized charge sums and their derivatives at a given log10[H+]:
                    weighted sums of rows, no matrix product (so no BLAS and its threads),
                    in per-thread work arrays, a block of points at a time
``coupled``         the fast path: vectorized Newton on (log10[H+], ionic strength), and
                    ``solve_warm``: a batch coarse to fine, each point starting from its
                    solved neighbours (a curve's points are alike)
``starts``          start values between solved neighbours (cubic; across a large jump the
                    straight line in the excess of H+ over OH-)
``bracketed``       the guaranteed path: bracketed Newton inside an ionic-strength loop;
                    ``solve_with_metals``, the route of a solution with metals
``metal_terms``     the modelled metal ions laid out, and their terms (hydrolysis, solids
                    by saturation, calcium salts) added to the charge sums at each x
``single``          the fast path for one solution, in plain Python floats (closed forms for
                    single-signed systems); also a handful of points, one after another

``outer``           outer loops around the guaranteed path: the specific-interaction
                    (Pitzer) coefficients and ion pairs, held per point as state terms

The activity model (Davies or ideal) is :mod:`carboy.model.activity`; the routing of
``"pitzer"``, ``"auto"`` and Davies with ion pairs is :mod:`carboy.model.speciation_models`.
"""
