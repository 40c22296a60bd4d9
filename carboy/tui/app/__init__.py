"""Front end 1: the Textual app (``app.py``, ``screens/``, ``widgets/``, ``app.tcss``).

It never imports the command line (``carboy.tui.cli``); what both front ends do lives
below them, in ``carboy.store`` or ``carboy.model``.
"""
