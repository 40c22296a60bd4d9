"""The ``carboy`` command (and ``python -m carboy``): the app without a subcommand, the
command line with one.

This is the one module that knows both front ends; they never import each other.
"""

from __future__ import annotations

import sys

from carboy.tui.cli.main import build_parser
from carboy.tui.edge import run_guarded


def main(argv: list[str] | None = None) -> int:
    args = build_parser().parse_args(sys.argv[1:] if argv is None else argv)
    func = getattr(args, "func", None)
    return run_guarded(open_app if func is None else func, args)


def open_app(args) -> int:
    """Open the terminal app: on the default database, or on a throwaway demo storeroom."""
    from carboy.tui.app.app import run

    return run(db=getattr(args, "db", None), demo=args.demo)


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
