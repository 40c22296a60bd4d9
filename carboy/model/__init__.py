"""Pure computation: no files written, no database, no UI (numpy and scipy only).

Modules: ``entities`` (systems, ions, compounds), ``catalog`` (the packaged data),
``quantities`` (reading typed quantities), ``mixture`` (what is in a solution),
``water`` (pKw, density, permittivity), ``speciation`` (the exact solver).
"""
