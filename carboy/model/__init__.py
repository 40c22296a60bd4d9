"""Pure computation: no files written, no database, no UI (numpy and scipy only).

Modules: ``entities`` (systems, ions, compounds), ``catalog`` (the packaged data),
``quantities`` (reading typed quantities), ``mixture`` (what is in a solution),
``water`` (pKw, density, permittivity), ``activity`` (Davies or ideal coefficients),
``speciation`` (the exact solver's public API; its paths are in ``solver``), and the
neutralization planner: ``planner`` (the steps of a plan), ``plan_result`` (what a
plan holds), ``reagents``, ``dosing``, ``gas``, ``thermo``, ``equivalence``,
``precipitates``, ``cautions``.
"""
