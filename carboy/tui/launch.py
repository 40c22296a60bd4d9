"""The ``carboy`` command (and ``python -m carboy``): the app without a subcommand, the
command line with one.

This is the one module that knows both front ends; they never import each other.
Everything a command prints goes through :func:`carboy.tui.cli.kit.clean_output`, and
every error through :func:`carboy.tui.edge.run_guarded`: one line, exit status 0, 1 or
2, never a traceback.  Called in-process (the tests, the fuzz test) :func:`main`
returns the status instead of exiting, also for ``--help`` and for bad usage.
"""

from __future__ import annotations

import gc
import os
import sys

from carboy.tui.cli.kit import clean_output
from carboy.tui.cli.main import build_parser, command_named
from carboy.tui.edge import EXIT_BAD_INPUT, EXIT_OK, run_guarded

ONE_BLAS_THREAD = ("OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS")
"""Set to 1 (unless already set) before numpy is first imported: carboy makes no BLAS
calls (the solver's rule), and OpenBLAS's pool of spinning threads cost a cold start
about 65 ms of CPU on a 2-core machine (a busy server's cores), for nothing."""


def main(argv: list[str] | None = None) -> int:
    for name in ONE_BLAS_THREAD:
        os.environ.setdefault(name, "1")
    own = argv is None   # the process's own command line (not a caller's, as in the tests)
    with clean_output():
        try:
            argv = sys.argv[1:] if own else argv
            args = _parsed(argv, own)
        except SystemExit as done:  # --help, --version, or bad usage (already reported)
            code = done.code
            return code if isinstance(code, int) else (EXIT_OK if code is None
                                                        else EXIT_BAD_INPUT)
        func = getattr(args, "func", None)
        if func is not None:
            return run_guarded(func, args)
    return run_guarded(open_app, args)  # the app writes to the terminal itself


def _parsed(argv: list[str], own: bool):
    """``argv`` parsed.  In the program's own process the collector is held off while the
    parser is built (that imports the command's modules, numpy among them: every new
    object would be walked several times over), and what they made is then frozen
    (``gc.freeze``): no later collection walks it again, nor the last one as the
    interpreter exits (about 4 % of the instructions of ``carboy neutralize``).  A
    caller's process (the tests) keeps its collector as it was."""
    if not own:
        return _parser(argv).parse_args(argv)
    gc.disable()
    try:
        return _parser(argv).parse_args(argv)
    finally:
        gc.freeze()
        gc.enable()


def _parser(argv: list[str]):
    """The parser for ``argv``.  Without a command word (the app opens) only the global
    options are read, so the parser is built with one light subcommand instead of all of
    them (each loads its part of the model: time the app's first frame would wait for).
    ``argv`` with the light command appended names it only when ``argv`` names no
    command, asks for no help and has no stray word."""
    light = command_named([*argv, _LIGHT_COMMAND]) == _LIGHT_COMMAND
    return build_parser([_LIGHT_COMMAND] if light else argv)


_LIGHT_COMMAND = "init"
"""A subcommand whose module loads almost nothing (it is not run: no word names it)."""


def open_app(args) -> int:
    """Open the terminal app: on the default database, or on a throwaway demo storeroom.

    A database that does not exist yet is created only after a question naming its path
    (in the terminal, before the app starts); without a terminal to ask, carboy stops
    with the ``carboy init`` hint.

    The garbage collector is held off until the app has drawn its first screen (it
    would walk every new module and widget several times over: about 45 ms of the first
    frame); the app lets it resume then (:meth:`carboy.tui.app.app.CarboyApp.on_mount`).
    """
    gc.disable()
    try:
        return _open_app(args)
    finally:
        gc.enable()


FRAMES_PER_SECOND = "120"
"""Textual's frame rate for the app (``TEXTUAL_FPS``, unless set): a change waits for the
next frame, up to 17 ms at Textual's 60; a keystroke's answer often comes just after one."""


def _open_app(args) -> int:
    os.environ.setdefault("TEXTUAL_FPS", FRAMES_PER_SECOND)  # read as Textual is imported
    from carboy.tui.app.app import run

    if args.demo:
        return run(demo=True)
    from carboy.tui.first_start import ensure_database

    path = ensure_database(getattr(args, "db", None))
    if path is None:
        return EXIT_BAD_INPUT
    return run(db=str(path), demo=False)


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
