"""carboy: acid–base planning and inventory for a chemical storeroom.

Sub-packages: ``carboy.model`` (pure computation), ``carboy.store`` (the SQLite
database) and ``carboy.tui`` (the terminal app and the command line).
"""

__version__ = "0.1.0"
