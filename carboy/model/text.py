"""Reading the names and labels people type: one reader for every label and name.

Container labels, bottle lots and locations, and compound names all go through
:func:`read_label`, so two labels that look the same are the same label:

* The text is Unicode-normalized to NFKC: a no-break space becomes a space, full-width
  letters and digits become ASCII ones, ``H₂SO₄`` becomes ``H2SO4``.
* Characters that are invisible or change the order text is shown in are refused, not
  dropped (a label that carried one was typed or pasted wrongly, and silently removing
  it would hide that): control characters, format characters (zero-width space and
  joiners, the soft hyphen, the byte-order mark, the left-to-right and right-to-left
  marks, embeddings, overrides and isolates), line and paragraph separators, private-use,
  surrogate and unassigned code points.
* Leading and trailing spaces go; runs of spaces inside become one space.
* The length is checked on the raw text first (so a huge value costs nothing) and on the
  normalized text after.

Letters of different scripts that look alike (Latin ``A``, Cyrillic ``А``) are not
folded together: NFKC keeps them apart, and so does carboy.
"""

from __future__ import annotations

import re
import unicodedata

from carboy.errors import InvalidInput

MAX_LABEL = 200
"""Longest label or name read when the caller names no limit."""

REFUSED_CATEGORIES = frozenset({"Cc", "Cf", "Zl", "Zp", "Co", "Cs", "Cn"})
"""Unicode general categories that may not appear in a label or a name."""

_SPACES = re.compile(r"\s+")


def refused_character(text: str) -> str | None:
    """The first character of ``text`` a label may not hold, else None."""
    for char in text:
        if unicodedata.category(char) in REFUSED_CATEGORIES:
            return char
    return None


def describe_character(char: str) -> str:
    """``U+202E RIGHT-TO-LEFT OVERRIDE`` (for a message)."""
    name = unicodedata.name(char, "") or unicodedata.category(char)
    return f"U+{ord(char):04X} {name}".strip()


def read_label(value: object, what: str, *, field: str = "", most: int = MAX_LABEL,
               required: bool = False) -> str:
    """``value`` as a normalized single-line label (see the module notes).

    Returns ``""`` for an empty value unless ``required``.  Raises :class:`InvalidInput`
    (naming ``field``) for a value that is not text, too long, or holds a refused
    character.
    """
    if value is None:
        value = ""
    if not isinstance(value, str):
        raise InvalidInput(what, value, "must be text", field=field)
    if len(value) > 4 * most:
        raise InvalidInput(what, value, f"is too long ({most} characters at most)",
                           field=field)
    bad = refused_character(value)
    if bad is not None:
        raise InvalidInput(what, value, f"holds an invisible or control character "
                           f"({describe_character(bad)}); type it again without it",
                           field=field)
    text = _SPACES.sub(" ", unicodedata.normalize("NFKC", value)).strip()
    bad = refused_character(text)
    if bad is not None:  # pragma: no cover - NFKC of allowed text stays allowed
        raise InvalidInput(what, value, f"holds {describe_character(bad)}", field=field)
    if len(text) > most:
        raise InvalidInput(what, value, f"is too long ({most} characters at most)",
                           field=field)
    if required and not text:
        raise InvalidInput(what, value, "must not be empty", field=field)
    return text
