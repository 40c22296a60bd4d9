"""ln 10 and the tolerances and iteration limits of the solver's paths.

:mod:`carboy.model.speciation` re-exports every name.  It hands ``COUPLED_ITER`` to the
fast paths at each call, so setting ``speciation.COUPLED_ITER = 0`` sends every point
to the guaranteed path (the path-agreement tests do that).
"""

from __future__ import annotations

import math

LN10 = math.log(10.0)

X_TOL = 1e-12
"""Newton/bisection stops when the log10[H+] step is below this."""
F_TOL = 1e-14
"""...or when ln(positive charge / negative charge) is below this."""
MAX_ROOT_ITER = 200
"""Steps of the bracketed root find at one ionic strength."""
I_RTOL = 1e-10
"""Ionic strength is self-consistent when successive values agree to this (relative)."""
MAX_I_ITER = 100
"""Ionic-strength iterations of the guaranteed path."""
COUPLED_ITER = 30
"""Steps of the fast coupled iteration before a point goes to the guaranteed path."""
WIDEN_STEPS = 20
"""Bracket widenings (3 log units each) allowed when a state is held fixed."""
QUADRATIC_STEP = 1e-8
"""A Newton step this small leaves an error of order its square (F is smooth): in x at
a self-consistent I, or an exact 2x2 step this small in x and in I relative to I."""
QUADRATIC_MAX = 1e-6
"""...or below this one, where the step before it shows the iteration converging
quadratically and predicts an error below ``PREDICTED_ERROR`` (``coupled``)."""
PREDICTED_ERROR = 1e-14
"""The largest error (log10[H+]; ionic strength relative) a point is accepted with on
the prediction of its last two Newton steps."""
COUPLED_NEAR = 1.0
"""Below this plain Newton step in x the coupled iteration takes the exact 2x2 step."""
