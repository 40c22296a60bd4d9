"""``python -m carboy``: the same as the ``carboy`` command."""

import sys

from carboy.tui.launch import main

sys.exit(main())
