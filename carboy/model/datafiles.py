"""The packaged data files and the one way they are read.

carboy ships its constants as TOML under ``carboy/model/data``:

=================  ===================================================  =====================
file               what it holds                                        read by
=================  ===================================================  =====================
systems.toml       acid–base systems (pKa, ΔH, ΔCp) and spectator ions  catalog_files
compounds.toml     compounds as on labels, hazard-tag vocabulary        catalog_files
densities.toml     density against % w/w of concentrates (20 °C)        catalog_files
ghs.toml           GHS statements, pictograms, concentration bands      ghs
standards.toml     primary standards, titrants, acceptance rule         standards_data
planning.toml      heats, Ksp, CO2 solubility, planner thresholds       planning_data
upkeep.toml        re-check intervals and shelf lives                   upkeep
handling.toml      bench handling per compound (hood, weighing ...)     handling
compatibility.toml waste streams and the rules refusing an addition     compatibility
metals.toml        metal hydrolysis, hydroxides, ligand solids          metals
pitzer.toml        Pitzer ion-interaction parameters                    pitzer_data
ion_pairs.toml     ion-pair formation constants                         ion_pairs
disposal_rules.toml  the disposal rule profile's placeholders           disposal_profile
=================  ===================================================  =====================

Every value carries a ``source`` and a ``status`` from the one vocabulary of
:mod:`carboy.model.provenance`, checked by its one check.  Loaders read a file with
:func:`read_data_file` and walk it with :class:`Table`, whose readers raise
:class:`~carboy.errors.CatalogError` naming the file, the entry and the field of anything
missing or malformed (``pitzer_data`` and ``ion_pairs`` still check their fields with
readers of their own, through the same provenance check).

:func:`compound_keys_by_file` lists, per file, every key that names a compound of the
catalog (a test checks each against the catalog and lists where each compound appears).
"""

from __future__ import annotations

import math
from collections.abc import Callable, Iterable, Mapping
from typing import Any

from carboy.errors import CatalogError
from carboy.model.data_mirror import mirrored, package_file
from carboy.model.provenance import PACKAGED_STATUSES, Provenance, check_provenance

__all__ = [
    "DATA_FILES",
    "DATA_PACKAGE",
    "Table",
    "compound_keys_by_file",
    "compound_keys_in",
    "read_data_file",
]

DATA_PACKAGE = "carboy.model.data"

DATA_FILES = (
    "systems.toml",
    "compounds.toml",
    "densities.toml",
    "ghs.toml",
    "standards.toml",
    "planning.toml",
    "upkeep.toml",
    "handling.toml",
    "compatibility.toml",
    "metals.toml",
    "pitzer.toml",
    "ion_pairs.toml",
    "disposal_rules.toml",
)
"""Every packaged data file."""

_MISSING: Any = object()


def read_data_file(name: str) -> dict[str, Any]:
    """A packaged ``carboy/model/data`` TOML file, parsed (from its parsed mirror when
    that is current: :mod:`carboy.model.data_mirror`).

    Raises
    ------
    CatalogError
        If the file is missing or is not valid TOML (naming the file).
    """
    try:
        with open(package_file(DATA_PACKAGE, name), encoding="utf-8") as fh:
            text = fh.read()
    except FileNotFoundError:
        raise CatalogError(name, "the packaged data file is missing") from None
    data = mirrored(DATA_PACKAGE, name, text)
    if data is not None:
        return data
    import tomllib  # only for a file whose mirror is not current (about 4 ms to load)

    try:
        return tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise CatalogError(name, f"not valid TOML: {exc}") from None


def _is_number(value: object) -> bool:
    return isinstance(value, (int, float)) and not isinstance(value, bool)


def _range_text(low: float | None, high: float | None) -> str:
    if low is None:
        return f"at most {high:g}"
    if high is None:
        return f"at least {low:g}"
    return f"from {low:g} to {high:g}"


class Table:
    """One TOML table of a data file, read with checks that name file, entry and field.

    ``Table(file, entry, data)``: ``entry`` is how errors name the table (``"H2SO4"``,
    ``"[thresholds]"``, ``"phosphate step 2"``).  Each reader takes a field name and an
    optional ``default``; without a default a missing field is an error.
    """

    __slots__ = ("data", "entry", "file")

    def __init__(self, file: str, entry: str, data: object) -> None:
        self.file = file
        self.entry = entry
        if not isinstance(data, Mapping):
            raise CatalogError(self.where, f"must be a table, not {data!r}")
        self.data: Mapping[str, Any] = data

    @classmethod
    def of_file(cls, name: str) -> Table:
        """The top level of a packaged data file."""
        return cls(name, "(top level)", read_data_file(name))

    @property
    def where(self) -> str:
        """``file: entry``, the entry name errors carry."""
        return f"{self.file}: {self.entry}"

    def fail(self, field: str | None, reason: str) -> CatalogError:
        """The error for ``field`` of this table (``field=None``: the table itself)."""
        return CatalogError(self.where, f"field {field!r}: {reason}" if field else reason)

    def has(self, field: str) -> bool:
        return field in self.data

    def raw(self, field: str, default: Any = _MISSING) -> Any:
        """The value as parsed, unchecked; missing is an error unless ``default`` is given."""
        if field in self.data:
            return self.data[field]
        if default is _MISSING:
            raise self.fail(field, "missing")
        return default

    def text(self, field: str, default: Any = _MISSING) -> str:
        """A non-empty string (surrounding white space kept)."""
        if field not in self.data and default is not _MISSING:
            return default
        value = self.raw(field)
        if not isinstance(value, str) or not value.strip():
            raise self.fail(field, f"must be a non-empty string, got {value!r}")
        return value

    def texts(self, field: str, default: Any = _MISSING) -> tuple[str, ...]:
        """A list of non-empty strings."""
        if field not in self.data and default is not _MISSING:
            return tuple(default)
        value = self.raw(field)
        if not isinstance(value, (list, tuple)) or not all(
            isinstance(v, str) and v.strip() for v in value
        ):
            raise self.fail(field, f"must be a list of non-empty strings, got {value!r}")
        return tuple(value)

    def flag(self, field: str, default: Any = _MISSING) -> bool:
        """A true or false (a TOML boolean, nothing else)."""
        if field not in self.data and default is not _MISSING:
            return default
        value = self.raw(field)
        if not isinstance(value, bool):
            raise self.fail(field, f"must be true or false, got {value!r}")
        return value

    def number(
        self,
        field: str,
        default: Any = _MISSING,
        *,
        low: float | None = None,
        high: float | None = None,
        positive: bool = False,
    ) -> float:
        """A finite number (int or float, not bool), optionally bounded."""
        if field not in self.data and default is not _MISSING:
            return default
        value = self.raw(field)
        return self._check_number(field, value, low=low, high=high, positive=positive)

    def numbers(self, field: str, *, ascending: bool = False, **bounds: Any) -> tuple[float, ...]:
        """A non-empty list of finite numbers; ``ascending``: strictly rising."""
        value = self.raw(field)
        if not isinstance(value, list) or not value:
            raise self.fail(field, f"must be a non-empty list of numbers, got {value!r}")
        out = tuple(self._check_number(field, v, **bounds) for v in value)
        if ascending and any(b <= a for a, b in zip(out, out[1:])):
            raise self.fail(field, f"must rise strictly, got {list(out)!r}")
        return out

    def integer(
        self, field: str, default: Any = _MISSING, *, low: int | None = None,
        high: int | None = None,
    ) -> int:
        """A whole number (int, not bool), optionally bounded."""
        if field not in self.data and default is not _MISSING:
            return default
        value = self.raw(field)
        if not isinstance(value, int) or isinstance(value, bool):
            raise self.fail(field, f"must be a whole number, got {value!r}")
        if (low is not None and value < low) or (high is not None and value > high):
            raise self.fail(field, f"must be {_range_text(low, high)}, got {value!r}")
        return value

    def table(self, field: str, entry: str | None = None, default: Any = _MISSING) -> Table:
        """A sub-table; its errors name it ``entry`` (default ``"<this entry> / field"``)."""
        value = self.raw(field, default)
        return Table(self.file, entry or f"{self.entry} [{field}]", value)

    def tables(
        self, field: str, name: Callable[[int, Mapping[str, Any]], str] | None = None
    ) -> tuple[Table, ...]:
        """An array of tables (``[[field]]``); ``name(i, data)`` names each entry.

        By default an entry is named by its ``key`` field, else ``field[i]``.
        """
        value = self.raw(field, [])
        if not isinstance(value, list):
            raise self.fail(field, f"must be an array of tables, got {value!r}")
        out = []
        for i, item in enumerate(value):
            if name is not None and isinstance(item, Mapping):
                label = name(i, item)
            elif isinstance(item, Mapping) and isinstance(item.get("key"), str):
                label = item["key"]
            else:
                label = f"{field}[{i}]"
            out.append(Table(self.file, label, item))
        return tuple(out)

    def keyed(
        self, field: str, default: Any = _MISSING, *, name: Callable[[str], str] | None = None
    ) -> tuple[tuple[str, Table], ...]:
        """A table of tables (``[field.KEY]``): ``(KEY, Table)`` pairs in file order.

        Each entry is named ``name(KEY)`` in errors (default: the key itself).
        """
        value = self.raw(field, default)
        if not isinstance(value, Mapping):
            raise self.fail(field, f"must be a table of tables, got {value!r}")
        label = name or str
        return tuple((str(k), Table(self.file, label(str(k)), v)) for k, v in value.items())

    def provenance(
        self,
        what: str = "",
        *,
        status: str = "status",
        source: str = "source",
        resolve: Callable[[str], str] | None = None,
        allowed: frozenset[str] = PACKAGED_STATUSES,
    ) -> Provenance:
        """The status and source of this table, checked by the one provenance check.

        ``resolve`` turns the source as written into the full citation first (GHS
        source keys).  ``what`` names the value in errors (default: none, the entry's own).
        """
        raw_source = self.text(source)
        full = resolve(raw_source) if resolve is not None else raw_source
        return check_provenance(self.where, what, self.raw(status), full, allowed=allowed)

    def _check_number(
        self, field: str, value: object, *, low: float | None = None,
        high: float | None = None, positive: bool = False,
    ) -> float:
        if not _is_number(value) or not math.isfinite(value):
            raise self.fail(field, f"must be a finite number, got {value!r}")
        x = float(value)
        if positive and not x > 0:
            raise self.fail(field, f"must be above 0, got {value!r}")
        if (low is not None and x < low) or (high is not None and x > high):
            raise self.fail(field, f"must be {_range_text(low, high)}, got {value!r}")
        return x


# ----------------------------------------------------------------------------- compound keys


def _array_keys(*fields: str, key: str = "key") -> Callable[[Mapping[str, Any]], Iterable]:
    def keys(data: Mapping[str, Any]) -> Iterable:
        for field in fields:
            for rec in data.get(field, ()):
                if isinstance(rec, Mapping) and key in rec:
                    yield rec[key]

    return keys


def _table_keys(*fields: str, skip: frozenset[str] = frozenset()) -> Callable:
    def keys(data: Mapping[str, Any]) -> Iterable:
        for field in fields:
            table = data.get(field, {})
            if isinstance(table, Mapping):
                yield from (k for k in table if k not in skip)

    return keys


def _compatibility_keys(data: Mapping[str, Any]) -> Iterable:
    """The ``compounds`` criteria of every stream's and rule's alternatives."""
    sides = [(rec, ("accepts", "refuses")) for rec in data.get("streams", ())]
    sides += [(rec, ("a", "b")) for rec in data.get("rules", ())]
    for rec, fields in sides:
        for field in fields:
            for alternative in rec.get(field, ()):
                yield from alternative.get("compounds", ())


def _never_treat_keys(data: Mapping[str, Any]) -> Iterable:
    """The compounds of the never-treat list (``HClO4``, ``HNO3>20%``; not ``stream:`` or
    ``tag:`` items)."""
    for rec in data.get("never_treat", ()):
        item = str(rec.get("item", "")) if isinstance(rec, Mapping) else ""
        if item and ":" not in item:
            yield item.partition(">")[0].strip()


def _ghs_keys(data: Mapping[str, Any]) -> Iterable:
    yield from _array_keys("compounds")(data)
    yield from _array_keys("compounds", key="bands_of")(data)


COMPOUND_KEYS: Mapping[str, Callable[[Mapping[str, Any]], Iterable]] = {
    "compounds.toml": _array_keys("compounds"),
    "densities.toml": _table_keys("tables"),
    "ghs.toml": _ghs_keys,
    "standards.toml": _array_keys("standards", "titrants"),
    "planning.toml": _table_keys("heat_of_solution", "dilution", "slurry"),
    "upkeep.toml": _table_keys("recheck_days", "shelf_life_days", skip=frozenset({"default"})),
    "handling.toml": _table_keys(
        "supplied_strength", "fume_hood_from_percent", "weigh_from_percent", "hygroscopic_solids"
    ),
    "compatibility.toml": _compatibility_keys,
    "disposal_rules.toml": _never_treat_keys,
}
"""Per data file: where its keys that name a compound (``compounds.toml`` key) stand."""


def compound_keys_in(name: str, data: Mapping[str, Any]) -> frozenset[str]:
    """Every key of data file ``name`` (parsed as ``data``) that names a compound."""
    return frozenset(str(k) for k in COMPOUND_KEYS[name](data))


def compound_keys_by_file() -> dict[str, frozenset[str]]:
    """Data file -> the compound keys it holds entries for (files without any are left out)."""
    return {name: compound_keys_in(name, read_data_file(name)) for name in COMPOUND_KEYS}
