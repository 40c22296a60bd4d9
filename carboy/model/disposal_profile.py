"""The storeroom's disposal rule profile as plain data: what a treatment in the lab must obey.

A :class:`DisposalProfile` holds the acceptance window, whether collected waste may be
batch-treated at all, the largest batch, the treatment vessel, the dilution required
before treatment (target % w/w and the part of the dilution water given as ice), the
flush, the safe temperature, the fill levels of a waste container and the never-treat
list.  carboy ships conservative placeholders (``data/disposal_rules.toml``, every value
with its source); a storeroom sets its own in the database (``carboy.store.disposal``)
and :func:`with_rules` lays them over the placeholders.

Everything a person types for a rule is read by :func:`read_rule` (the one reader, used
by the command line, the app and the store for values kept as JSON); a problem is an
:class:`~carboy.errors.InvalidInput` naming the rule as its field.

Never-treat items are written ``HClO4`` (a compound at any strength), ``HNO3>20%``
(a compound above a strength in the waste, % w/w), ``stream:hf`` (a container's stream)
or ``tag:organic+acutely_toxic`` (catalog hazard tags that must all be present).
"""

from __future__ import annotations

import functools
import math
import re
from collections.abc import Mapping
from dataclasses import dataclass, field, fields, replace
from types import MappingProxyType
from typing import Any

from carboy.errors import InvalidInput
from carboy.model import quantities
from carboy.model.datafiles import Table
from carboy.model.forms import read_number, read_ph

DATA_FILE = "disposal_rules.toml"
PLACEHOLDER = "placeholder"
"""Origin of a rule the storeroom has not set (carboy's shipped value)."""
STOREROOM = "storeroom"
"""Origin of a rule the storeroom set itself."""
USER_WHY = "on the storeroom's never-treat list"
"""The reason shown for a never-treat item a storeroom added without one."""


@dataclass(frozen=True, eq=False, repr=False)
class Rule:
    """What one rule of the profile is: its name, what people read, its kind of value."""

    name: str
    words: str
    kind: str
    """``ph``, ``yes-no``, ``litres-or-none``, ``percent-or-none``, ``fraction``,
    ``factor``, ``celsius``, ``percent`` or ``items``."""
    example: str
    low: float | None = None
    high: float | None = None


RULES: tuple[Rule, ...] = (
    Rule("window_low", "acceptance window, low edge", "ph", "6"),
    Rule("window_high", "acceptance window, high edge", "ph", "9"),
    Rule("batch_treatment", "collected waste may be treated in the lab", "yes-no", "yes"),
    Rule("batch_max_l", "largest batch of waste treated at once", "litres-or-none", "1 L",
         0.0, 1000.0),
    Rule("vessel_l", "treatment vessel (none: the container itself)", "litres-or-none",
         "4 L", 0.0, 1000.0),
    Rule("dilute_to_percent", "dilute a stronger waste to this before treating",
         "percent-or-none", "5 %", 0.0, 60.0),
    Rule("ice_fraction", "part of the dilution water given as ice", "fraction", "50 %",
         0.0, 1.0),
    Rule("flush_factor", "flush with this many volumes of water", "factor", "20", 0.0,
         1000.0),
    Rule("max_temperature_c", "safe temperature of a batch", "celsius", "40 °C", 15.0, 95.0),
    Rule("fill_limit_percent", "fill a waste container to at most", "percent", "90 %",
         50.0, 100.0),
    Rule("nearly_full_percent", "a waste container is nearly full from", "percent", "80 %",
         10.0, 100.0),
    Rule("never_treat", "never treated in the lab", "items", "HClO4, stream:hf"),
)
"""Every rule of the profile, in the order people read them."""
RULE_NAMES: tuple[str, ...] = tuple(r.name for r in RULES)
_BY_NAME = {r.name: r for r in RULES}
_NONE = ("none", "no limit", "off", "-", "")
_YES = ("yes", "y", "true", "on", "1", "allowed")
_NO = ("no", "n", "false", "off", "0", "forbidden")
_ITEM = re.compile(r"^(?P<key>[^<>=]+?)\s*>\s*(?P<pct>[0-9]+(?:[.,][0-9]+)?)\s*%?$")


@dataclass(frozen=True, eq=False)
class NeverTreat:
    """One item of the never-treat list."""

    item: str
    """As written: ``HClO4``, ``HNO3>20%``, ``stream:hf``, ``tag:a+b``."""
    kind: str
    """``compound``, ``stream`` or ``tag``."""
    keys: tuple[str, ...]
    """The compound key, the stream key, or the tags (all must be present)."""
    above_percent: float | None = None
    why: str = USER_WHY

    def to_dict(self) -> dict:
        return {"item": self.item, "why": self.why}


@dataclass(frozen=True, eq=False)
class DisposalProfile:
    """The rules a treatment in the lab obeys; see the module docstring."""

    window_low: float = 6.0
    window_high: float = 9.0
    batch_treatment: bool = True
    batch_max_l: float | None = 1.0
    vessel_l: float | None = 4.0
    dilute_to_percent: float | None = 5.0
    ice_fraction: float = 0.5
    flush_factor: float = 20.0
    max_temperature_c: float = 40.0
    fill_limit_percent: float = 90.0
    nearly_full_percent: float = 80.0
    never_treat: tuple[NeverTreat, ...] = ()
    origin: Mapping[str, str] = field(default_factory=dict, compare=False)
    """Rule name -> ``placeholder`` or ``storeroom``."""

    @property
    def window(self) -> tuple[float, float]:
        return self.window_low, self.window_high

    @property
    def all_placeholders(self) -> bool:
        return all(self.origin.get(n, PLACEHOLDER) == PLACEHOLDER for n in RULE_NAMES)

    def value(self, name: str) -> Any:
        return getattr(self, rule(name).name)

    def to_dict(self) -> dict:
        """Plain data: every rule with its value, what it means and where it comes from."""
        out = {}
        for r in RULES:
            value = self.value(r.name)
            if r.kind == "items":
                value = [item.to_dict() for item in value]
            out[r.name] = value
        out["origin"] = {n: self.origin.get(n, PLACEHOLDER) for n in RULE_NAMES}
        out["placeholders"] = [n for n in RULE_NAMES
                               if self.origin.get(n, PLACEHOLDER) == PLACEHOLDER]
        out["note"] = shipped_notice()
        return out


def rule(name: str) -> Rule:
    """The rule called ``name``; :class:`InvalidInput` listing the names otherwise."""
    found = _BY_NAME.get((name or "").strip())
    if found is None:
        raise InvalidInput("disposal rule", name, "expected one of " + ", ".join(RULE_NAMES),
                           field="rule")
    return found


# -- reading a rule's value --------------------------------------------------------------

def _number(r: Rule, raw: object, unit_reader=None) -> float:
    if isinstance(raw, bool):
        raise InvalidInput(r.words, raw, f"expected e.g. {r.example}", field=r.name)
    if isinstance(raw, (int, float)):
        value = float(raw)
    elif unit_reader is not None and any(ch.isalpha() or ch in "%°" for ch in str(raw)):
        value = unit_reader(str(raw), what=r.words)
    else:
        value = read_number(str(raw), r.words, field_name=r.name, example=r.example.split()[0])
    if not math.isfinite(value):
        raise InvalidInput(r.words, raw, "must be a finite number", field=r.name)
    if r.kind in ("litres-or-none", "percent-or-none") and not value > (r.low or 0.0):
        raise InvalidInput(r.words, raw, f"must be above {r.low or 0:g} (or 'none')",
                           field=r.name)
    if (r.low is not None and value < r.low) or (r.high is not None and value > r.high):
        raise InvalidInput(r.words, raw, f"expected {r.low:g} to {r.high:g}", field=r.name)
    return value


def _fraction(r: Rule, raw: object) -> float:
    text = str(raw).strip()
    if isinstance(raw, str) and text.endswith("%"):
        raw = read_number(text[:-1], r.words, field_name=r.name, example="50") / 100.0
    return _number(r, raw)


def _yes_no(r: Rule, raw: object) -> bool:
    if isinstance(raw, bool):
        return raw
    text = str(raw).strip().lower()
    if text in _YES:
        return True
    if text in _NO:
        return False
    raise InvalidInput(r.words, raw, "expected yes or no", field=r.name)


def read_rule(name: str, raw: object, catalog=None) -> Any:
    """The value of rule ``name`` from text as typed (``'1 L'``, ``'none'``, ``'yes'``,
    ``'6,5'``) or from its stored JSON value; raises :class:`InvalidInput` (field: the
    rule's name).  ``never_treat`` takes a list of items (text or ``{item, why}``)."""
    r = rule(name)
    try:
        return _read(r, raw, catalog)
    except InvalidInput as err:
        if not err.field:
            err.field = r.name
        raise


def _read(r: Rule, raw: object, catalog) -> Any:
    if r.kind == "items":
        return read_items(raw, catalog)
    if raw is None or (isinstance(raw, str) and raw.strip().lower() in _NONE):
        if r.kind in ("litres-or-none", "percent-or-none"):
            return None
        raise InvalidInput(r.words, raw, f"is needed, e.g. {r.example}", field=r.name)
    if r.kind == "ph":
        return raw if isinstance(raw, float) and 0 <= raw <= 14 else \
            read_ph(str(raw), r.words, field_name=r.name)
    if r.kind == "yes-no":
        return _yes_no(r, raw)
    if r.kind == "fraction":
        return _fraction(r, raw)
    if r.kind == "litres-or-none":
        return _number(r, raw, quantities.volume_l)
    if r.kind == "celsius":
        return _number(r, raw, quantities.temperature_c)
    if isinstance(raw, str):
        raw = raw.strip().removesuffix("%").strip()
    return _number(r, raw)


def read_item(text: object, catalog=None, why: str = "") -> NeverTreat:
    """One never-treat item (see the module docstring); compound keys and streams are
    checked against the catalog and the stream table."""
    from carboy.model import compatibility

    raw = str(text or "").strip()
    if not raw or len(raw) > 80:
        raise InvalidInput("never-treat item", text, "expected e.g. HClO4, HNO3>20%, "
                           "stream:hf or tag:heavy_metal", field="never_treat")
    why = " ".join((why or "").split()) or USER_WHY
    head, sep, rest = raw.partition(":")
    if sep and head.strip().lower() == "stream":
        key = compatibility.stream(rest.strip()).key
        return NeverTreat(f"stream:{key}", "stream", (key,), None, why)
    if sep and head.strip().lower() == "tag":
        tags = tuple(t.strip() for t in rest.split("+") if t.strip())
        known = catalog.hazard_tags if catalog is not None else None
        bad = [t for t in tags if known is not None and t not in known]
        if not tags or bad:
            raise InvalidInput("never-treat item", text, "expected hazard tags of the "
                               "catalog joined by +, e.g. tag:organic+acutely_toxic",
                               field="never_treat")
        return NeverTreat("tag:" + "+".join(tags), "tag", tags, None, why)
    found = _ITEM.match(raw)
    name, above = (found.group("key"), found.group("pct")) if found else (raw, None)
    key = name.strip()
    if catalog is not None:
        key = catalog.compound(key).key
    pct = None
    if above is not None:
        pct = float(above.replace(",", "."))
        if not 0 < pct < 100:
            raise InvalidInput("never-treat item", text, "the strength must be above 0 "
                               "and below 100 % w/w", field="never_treat")
    return NeverTreat(key + (f">{pct:g}%" if pct is not None else ""), "compound", (key,),
                      pct, why)


def read_items(raw: object, catalog=None) -> tuple[NeverTreat, ...]:
    """A never-treat list: a sequence of items (text or ``{item, why}``) or one text with
    the items separated by commas."""
    if isinstance(raw, str):
        raw = [part for part in raw.split(",") if part.strip()]
    if not isinstance(raw, (list, tuple)):
        raise InvalidInput("never-treat list", raw, "expected a list of items",
                           field="never_treat")
    out: list[NeverTreat] = []
    for entry in raw:
        if isinstance(entry, NeverTreat):
            item = entry
        elif isinstance(entry, Mapping):
            item = read_item(entry.get("item"), catalog, str(entry.get("why") or ""))
        else:
            item = read_item(entry, catalog)
        if item.item not in {o.item for o in out}:
            out.append(item)
    return tuple(out)


def with_reasons(text: str, current: tuple[NeverTreat, ...]) -> list:
    """A never-treat list typed as text (comma-separated), each item already on the list
    keeping its reason (for :func:`read_items`)."""
    known = {i.item: i.to_dict() for i in current}
    return [known.get(part.strip(), part.strip()) for part in text.split(",") if part.strip()]


_FORMATS = {"ph": ("pH {}", "{}"), "litres-or-none": ("{} L", "{} L"),
            "fraction": ("{} %", "{} %"), "celsius": ("{} °C", "{} °C"),
            "factor": ("{} volumes", "{}"), "percent": ("{} %", "{} %"),
            "percent-or-none": ("{} %", "{} %")}
"""Rule kind -> (how people read a value, how an edit field shows it)."""


def _text(name: str, value: Any, editing: bool) -> str:
    r = rule(name)
    if r.kind == "items":
        return ", ".join(i.item for i in value) or ("" if editing else "nothing listed")
    if value is None:
        return "no limit" if r.kind == "litres-or-none" and not editing else "none"
    if r.kind == "yes-no":
        return "yes" if value else "no"
    number = value * 100 if r.kind == "fraction" else value
    return _FORMATS[r.kind][int(editing)].format(f"{number:g}")


def describe(name: str, value: Any) -> str:
    """A rule's value as people read it (``1 L``, ``no limit``, ``pH 6``, ``yes``)."""
    return _text(name, value, editing=False)


def as_text(name: str, value: Any) -> str:
    """A rule's value as text :func:`read_rule` reads back (what an edit field starts with)."""
    return _text(name, value, editing=True)


def check(profile: DisposalProfile) -> DisposalProfile:
    """Rules that must agree with each other: the window's edges, the fill levels."""
    if not profile.window_low < profile.window_high:
        raise InvalidInput("acceptance window", f"{profile.window_low:g}–"
                           f"{profile.window_high:g}", "the low edge must be below the high "
                           "edge", field="window_low")
    if profile.nearly_full_percent > profile.fill_limit_percent:
        raise InvalidInput("nearly full", f"{profile.nearly_full_percent:g} %",
                           f"must not be above the fill limit "
                           f"({profile.fill_limit_percent:g} %)", field="nearly_full_percent")
    return profile


def with_rules(base: DisposalProfile, values: Mapping[str, Any],
               origin: str = STOREROOM) -> DisposalProfile:
    """``base`` with ``values`` (rule name -> value already read) laid over it."""
    names = {f.name for f in fields(DisposalProfile)}
    changes = {rule(n).name: v for n, v in values.items() if n in names}
    marks = dict(base.origin)
    marks.update(dict.fromkeys(changes, origin))
    return check(replace(base, **changes, origin=MappingProxyType(marks)))


# -- the shipped placeholders --------------------------------------------------------------

@functools.lru_cache(maxsize=1)
def _shipped() -> tuple[DisposalProfile, Mapping[str, tuple[str, str]], str]:
    doc = Table.of_file(DATA_FILE)
    notice = doc.table("notice", "[notice]").text("text")
    rules = doc.table("rules", "[rules]")
    values: dict[str, Any] = {}
    sources: dict[str, tuple[str, str]] = {}
    for r in RULES[:-1]:
        entry = rules.table(r.name, f"[rules.{r.name}]")
        prov = entry.provenance()
        try:
            values[r.name] = read_rule(r.name, entry.raw("value"))
        except InvalidInput as err:
            raise entry.fail("value", str(err)) from None
        sources[r.name] = (prov.status, prov.source)
    items = []
    for entry in doc.tables("never_treat", lambda i, d: f"never_treat {d.get('item', i)}"):
        prov = entry.provenance()
        try:
            items.append(read_item(entry.text("item"), None, entry.text("why")))
        except InvalidInput as err:
            raise entry.fail("item", str(err)) from None
        sources[f"never_treat {items[-1].item}"] = (prov.status, prov.source)
    values["never_treat"] = tuple(items)
    base = DisposalProfile(origin=MappingProxyType(dict.fromkeys(RULE_NAMES, PLACEHOLDER)))
    return with_rules(base, values, PLACEHOLDER), MappingProxyType(sources), notice


def shipped() -> DisposalProfile:
    """carboy's placeholders (every rule's origin ``placeholder``)."""
    return _shipped()[0]


def shipped_sources() -> Mapping[str, tuple[str, str]]:
    """Rule name (and ``never_treat ITEM``) -> (status, source) of the shipped value."""
    return _shipped()[1]


def shipped_notice() -> str:
    """The line that says the placeholders are not the institution's rules."""
    return _shipped()[2]

