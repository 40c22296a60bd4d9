"""The demo storeroom kept between runs of ``carboy --demo``, so the demo starts quickly.

Building the demo storeroom (:func:`carboy.store.demo.create_demo_database`) takes a
good part of a second; copying a finished one takes a millisecond.  So the day's demo
storeroom is built once, kept as a *template* in the user cache directory, and every run
works on its own copy in a temporary folder (:func:`throwaway`).

* **Where**: ``$CARBOY_CACHE_DIR/demo`` when that variable is set (the tests and the
  benchmarks point it at a temporary folder), else ``demo`` in the user cache directory
  (``platformdirs.user_cache_dir("carboy")``).  Folders made here are mode 0700; a
  template, like every database carboy makes, is mode 0660.  No cache directory: the
  demo is built in place, as before there was a cache.
* **Which**: the file name holds carboy's version, a fingerprint of the demo's sources
  (the text of the demo module, the size and time of every other file of the store and
  the model: what the demo storeroom is built from) and the day the demo is dated from.
  A new version, a changed checkout or a new day never finds an older template: it
  builds its own, and templates of other days of the same sources, and any template not
  touched for :data:`KEEP_S`, are removed after a build.
* **Whole or not at all**: a template is built in a private folder beside its place and
  renamed into it, so a reader never finds half of one; two first runs at once each
  build one, and both leave a whole template (the last rename wins).
* **Checked before each use**: through a read-only, immutable connection (nothing is
  written, not even a ``-wal`` file): carboy's application id, every migration applied
  and none unknown, and SQLite's ``quick_check``.  A template that fails (damaged,
  truncated, another program's file, an older schema) is removed and built again.
* **Never more than a source of copies**: a template is only ever read to be checked and
  copied; nothing opens it as a store, and nothing here touches any other database.

When the day's template is missing, the run that finds it so builds it, in its own
process (a second process building it while the app loads its modules was slower on a
busy two-core machine: it loads Python and the store a second time).
"""

from __future__ import annotations

import contextlib
import hashlib
import os
import shutil
import sqlite3
import tempfile
import time
from collections.abc import Iterator
from datetime import date
from pathlib import Path
from types import SimpleNamespace

import carboy
from carboy.errors import CarboyError
from carboy.store import files, migrations
from carboy.store.db import APPLICATION_ID
from carboy.store.demo import create_demo_database

__all__ = ["ENV_VAR", "DemoTemplate", "throwaway", "cache_folder", "template_path",
           "build_template", "template_problem", "source_fingerprint"]

ENV_VAR = "CARBOY_CACHE_DIR"
"""Carboy's cache folder, instead of the user cache directory (empty: unset)."""
FOLDER_MODE = 0o700
KEEP_S = 2 * 24 * 3600.0
"""A template of other sources (another version or checkout) not touched for this long
is removed by the next build."""
STALE_BUILD_S = 3600.0
"""A build folder older than this is a crashed build's leftover, removed by the next one."""
_PREFIX, _SUFFIX = "demo-", ".db"
_BUILDING = "building-"


@contextlib.contextmanager
def throwaway(today: date | None = None) -> Iterator[Path]:
    """A demo database in a new temporary directory, removed on exit (``carboy --demo``).

    Dated from ``today`` (default: the real today), so the demo's expiry and
    standardization dates look fresh.  It is a copy of the day's template (built first
    when there is none).
    """
    template = DemoTemplate(today or date.today())
    with tempfile.TemporaryDirectory(prefix="carboy-demo-") as tmp:
        yield template.copy_to(Path(tmp) / "demo.db")


class DemoTemplate:
    """The demo storeroom of one day in the cache, and copies of it: :meth:`copy_to`
    finds it, checks it (built again when damaged or stale, built first when missing)
    and copies it.  Without a usable cache directory, or when the build there fails,
    the copy is built in place.
    """

    def __init__(self, today: date) -> None:
        self.today = today
        self.path = template_path(today)

    def ready(self) -> Path | None:
        """The template, checked (built when missing, damaged or stale); None when none
        can be kept."""
        if self.path is None:
            return None
        if _present(self.path) and template_problem(self.path) is None:
            return self.path
        with contextlib.suppress(OSError):  # damaged or stale: built again
            self.path.unlink()
        try:
            return build_template(self.path, self.today.isoformat())
        except (OSError, CarboyError, sqlite3.Error):
            return None

    def copy_to(self, dest: Path) -> Path:
        """A new demo database at ``dest`` (which must not exist): a copy of the checked
        template, else built there."""
        source = self.ready()
        if source is None:
            return create_demo_database(dest, self.today)
        files.create_file(dest)  # mode 0660, as every database carboy makes
        try:
            shutil.copyfile(source, dest)  # into the file just made: its mode stays
            return dest
        except OSError:  # removed under us by another run's clean-up: built here
            dest.write_bytes(b"")
        return create_demo_database(dest, self.today)


def cache_folder() -> Path | None:
    """Where templates are kept (not made here), or None without a cache directory."""
    chosen = os.environ.get(ENV_VAR, "")
    if chosen:
        return Path(chosen).absolute() / "demo"
    try:
        import platformdirs

        return Path(platformdirs.user_cache_dir("carboy", appauthor=False)).absolute() / "demo"
    except Exception:  # noqa: BLE001 - no home, no cache: the demo is built in place
        return None


def template_path(today: date) -> Path | None:
    """The template of ``today`` for this carboy (see the module notes), or None."""
    folder = cache_folder()
    if folder is None:
        return None
    return (folder / f"{_PREFIX}{carboy.__version__}-{source_fingerprint()}-"
                     f"{today.isoformat()}{_SUFFIX}")


def build_template(path: str | os.PathLike, today: str) -> Path:
    """Build the demo storeroom dated ``today`` (ISO) as ``path`` in one step (see the
    module notes), then remove the templates it replaces."""
    target = Path(path)
    _make_folder(target.parent)
    work = Path(tempfile.mkdtemp(prefix=_BUILDING, dir=target.parent))
    try:
        os.replace(create_demo_database(work / target.name, date.fromisoformat(today)),
                   target)
    finally:
        shutil.rmtree(work, ignore_errors=True)
    _remove_old(target)
    return target


def template_problem(path: Path) -> str | None:
    """What is wrong with the template at ``path`` (None: nothing), read through an
    immutable read-only connection."""
    try:
        conn = sqlite3.connect(f"{path.absolute().as_uri()}?mode=ro&immutable=1", uri=True)
    except sqlite3.Error as exc:
        return f"cannot be opened ({exc})"
    try:
        if conn.execute("PRAGMA application_id").fetchone()[0] != APPLICATION_ID:
            return "not a carboy database"
        applied = migrations.applied_names(SimpleNamespace(conn=conn))
        if applied != migrations.known_names():
            return f"its schema is not this carboy's ({', '.join(applied) or 'none'})"
        found = [row[0] for row in conn.execute("PRAGMA quick_check").fetchall()]
        return None if found == ["ok"] else "damaged: " + "; ".join(found[:3])
    except sqlite3.Error as exc:
        return f"unreadable ({exc})"
    finally:
        conn.close()


def _present(path: Path) -> bool:
    try:
        return path.stat().st_size > 0
    except OSError:
        return False


def _make_folder(folder: Path) -> None:
    """``folder`` and its parent (carboy's cache folder) as 0700 when made here."""
    folder.parent.parent.mkdir(parents=True, exist_ok=True)
    for level in (folder.parent, folder):
        with contextlib.suppress(FileExistsError):
            level.mkdir(mode=FOLDER_MODE)


def _remove_old(kept: Path) -> None:
    """Templates this one replaces (other days of the same sources), templates of other
    sources untouched for :data:`KEEP_S`, and leftovers of crashed builds."""
    same_sources = kept.name.rsplit("-", 3)[0] + "-"
    now = time.time()
    for entry in kept.parent.iterdir():
        name = entry.name
        try:
            age = now - entry.stat().st_mtime
            if entry == kept:
                continue
            if name.startswith(_BUILDING) and age > STALE_BUILD_S:
                shutil.rmtree(entry, ignore_errors=True)
            elif name.startswith(_PREFIX) and name.endswith(_SUFFIX) and (
                    name.startswith(same_sources) or age > KEEP_S):
                entry.unlink()
        except OSError:  # another run removed it first
            continue


def source_fingerprint(package: Path | None = None) -> str:
    """A fingerprint of what the demo storeroom is built from: the text of the demo
    module, and the size and time of every other file of the store and the model
    (``package``: carboy's own folder by default; about a millisecond)."""
    package = package or Path(carboy.__file__).parent
    digest = hashlib.sha256()
    with contextlib.suppress(OSError):
        digest.update((package / "store" / "demo.py").read_bytes())
    found: list[str] = []
    todo = [package / "store", package / "model"]
    while todo:
        with contextlib.suppress(OSError), os.scandir(todo.pop()) as entries:
            for entry in entries:
                if entry.is_dir(follow_symlinks=False):
                    if entry.name != "__pycache__":
                        todo.append(Path(entry.path))
                elif entry.name.endswith((".py", ".toml")):
                    st = entry.stat()
                    found.append(f"{entry.path}\0{st.st_size}\0{st.st_mtime_ns}")
    digest.update("\n".join(sorted(found)).encode())
    return digest.hexdigest()[:12]
