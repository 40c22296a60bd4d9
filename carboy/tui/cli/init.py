"""``carboy init``: create a new, empty storeroom database (the only command that does).

Every other command refuses a path where there is no database, so a mistyped ``--db``
or a file that went missing is an error, never a new empty storeroom.
"""

from __future__ import annotations

import argparse

from carboy.tui.cli.kit import EXIT_OK, emit_json


def register(sub) -> None:
    p = sub.add_parser(
        "init", help="create a new, empty database",
        description="Create a new, empty carboy database at PATH (default: --db, else "
                    "$CARBOY_DB, else the user data directory), readable and writable by "
                    "its owner and group only (mode 0660). A file already there is left "
                    "alone. For a database shared by several staff, see "
                    "docs/shared-server.md first.",
        epilog="example:\n  carboy init /srv/storeroom/carboy.db",
        formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("path", nargs="?", metavar="PATH", help="the database file to create")
    p.add_argument("--db", metavar="PATH", default=argparse.SUPPRESS,
                   help="the same as PATH")
    p.add_argument("--json", action="store_true", help="print one JSON object")
    p.set_defaults(func=init_cmd)


def init_cmd(args) -> int:
    from carboy.store.db import init_database

    target = args.path if args.path is not None else getattr(args, "db", None)
    store = init_database(target)
    try:
        created, mode = store.path, f"{store.path.stat().st_mode & 0o777:04o}"
    finally:
        store.close()
    if args.json:
        emit_json({"created": str(created), "mode": mode})
    else:
        print(f"created {created} (mode {mode}); set up backups and the verify routine "
              "(docs/shared-server.md)")
    return EXIT_OK
