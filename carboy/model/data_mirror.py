"""Parsed copies of the packaged TOML data files, read instead of parsing the TOML.

Python's TOML parser is written in Python: the thirteen data files take about 35 ms to
parse, a sixth of a command's cold start, while the same data as JSON loads in under
2 ms.  So carboy ships, beside each ``data/NAME.toml``, a *mirror*
``data/parsed/NAME.json``: ``{"toml_digest": ..., "data": ...}``, the parsed file and
the digest of the exact text it was parsed from (its length and CRC-32: an edit detector,
not a seal; zlib is loaded anyway, while hashlib's OpenSSL costs a cold start ~4 ms).

The TOML stays the one source.  A mirror is used only when its digest is the digest of
the TOML text being read, so an edited data file whose mirror was not written again is
parsed as before (only slower); a mirror that cannot be read is ignored the same way.
``python -m carboy.model.data_mirror`` writes every mirror, and a test checks that each
is present, current and equal to what the TOML parser gives.  A file whose parsed data
JSON cannot carry exactly (a date, a NaN) gets no mirror.

The files are found by :func:`package_file`, a path in the package's folder, rather
than through :mod:`importlib.resources`, whose imports (zipfile, tempfile ...) cost a
command about 10 ms at every start; carboy is installed as files, never run from a zip.
"""

from __future__ import annotations

import importlib
import json
import os
import zlib
from typing import Any

__all__ = ["MIRROR_FOLDER", "digest", "mirror_name", "mirrored", "mirror_of", "package_file"]

MIRROR_FOLDER = "parsed"
"""The mirrors' folder inside ``carboy/model/data``."""


def digest(text: str) -> str:
    """The digest of a data file's text, as its mirror records it: the length of its
    UTF-8 bytes and their CRC-32 (hex)."""
    data = text.encode("utf-8")
    return f"{len(data)}:{zlib.crc32(data):08x}"


def package_file(package: str, *parts: str) -> str:
    """The path of a file in the folder of the importable ``package`` (a regular or a
    namespace package: ``carboy.model.data``)."""
    folder = next(iter(importlib.import_module(package).__path__))
    return os.path.join(folder, *parts)


def mirror_name(name: str) -> str:
    """``systems.toml`` -> ``systems.json``."""
    return name.rsplit(".", 1)[0] + ".json"


def mirrored(package: str, name: str, text: str) -> dict[str, Any] | None:
    """The parsed data of ``name`` from its mirror when the mirror is of exactly
    ``text``; None otherwise (no mirror, unreadable, or of another text)."""
    try:
        path = package_file(package, MIRROR_FOLDER, mirror_name(name))
        with open(path, encoding="utf-8") as fh:
            found = json.loads(fh.read())
    except (OSError, ValueError):
        return None
    if not isinstance(found, dict) or found.get("toml_digest") != digest(text):
        return None
    data = found.get("data")
    return data if isinstance(data, dict) else None


def mirror_of(text: str, data: dict[str, Any]) -> str | None:
    """The mirror's JSON text for ``data`` parsed from ``text``, or None when JSON would
    not give back exactly ``data``."""
    try:
        out = json.dumps({"toml_digest": digest(text), "data": data}, allow_nan=False,
                         ensure_ascii=False, separators=(",", ":"))
    except (TypeError, ValueError):
        return None
    return out if json.loads(out)["data"] == data else None


def _write_all() -> None:  # python -m carboy.model.data_mirror
    import tomllib
    from pathlib import Path

    folder = Path(__file__).with_name("data") / MIRROR_FOLDER
    folder.mkdir(exist_ok=True)
    for name in sorted(p.name for p in folder.parent.glob("*.toml")):
        text = (folder.parent / name).read_text(encoding="utf-8")
        out = mirror_of(text, tomllib.loads(text))
        target = folder / mirror_name(name)
        if out is None:
            target.unlink(missing_ok=True)
            print(f"{name}: JSON cannot carry its data exactly, no mirror")
            continue
        target.write_text(out + "\n", encoding="utf-8")
        print(f"wrote {target}")


if __name__ == "__main__":
    _write_all()
