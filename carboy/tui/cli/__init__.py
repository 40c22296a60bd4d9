"""Front end 2: the command line (one module per command group, ``kit`` for the shared
output and argument pieces).

It never imports the app (``carboy.tui.app``) or textual; what both front ends do lives
below them, in ``carboy.store`` or ``carboy.model``.
"""
