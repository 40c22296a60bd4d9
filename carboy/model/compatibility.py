"""Waste compatibility: container streams and the rules that refuse or question an addition.

Pure: it reads the packaged ``data/compatibility.toml`` and the catalog, and judges one
proposed addition against one container (its stream, what it already holds, its
estimated pH, volume and material when known).  Nothing is written and nothing is
changed; the store decides what to do with the findings:

* a finding of severity ``refuse`` (every gas hazard: HCN, H2S, Cl2, chloramines, HN3, and
  the worst others) is never overridable: nothing is written;
* a finding of severity ``confirm`` (a lesser mismatch, such as a base into an acid
  container) needs a reason, which the journal keeps.

Every rule is judged in both directions: the compound added may match either side of
the rule, and the container the other.  :func:`check_container` applies the same rules
to what a container already holds (for databases older than streams); it only reports.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Mapping
from dataclasses import dataclass, field
from functools import lru_cache
from types import MappingProxyType

from carboy.errors import CatalogError, InvalidInput
from carboy.model.catalog import default_catalog
from carboy.model.datafiles import Table

SEVERITIES = ("refuse", "confirm")
KINDS = ("acid", "base", "neutral")
STATUSES = frozenset({"FOUND", "MEMORY", "PRACTICE"})
"""The statuses this file uses, a part of the one vocabulary (carboy.model.provenance)."""
REFERENCE_PH = 7.0
"""pH at which a compound's acid equivalents decide whether it is an acid or a base."""
MATERIALS = ("glass", "plastic", "metal")

_COMPOUND_KEYS = frozenset({"compounds", "tags", "components", "kinds", "concentrated"})
_CONTAINER_KEYS = frozenset({"streams", "drain_stream", "materials"})
_ALL_KEYS = _COMPOUND_KEYS | _CONTAINER_KEYS | {"acidic"}


@dataclass(frozen=True, eq=False, repr=False)
class Stream:
    """What a waste container is meant for."""

    key: str
    name: str
    words: str
    """What a person reads: what goes in, what never does, where it ends."""
    drain_treatable: bool
    """True when the stream may ever be treated for the drain (local rules permitting)."""
    acidic: bool
    materials: tuple[str, ...]
    """The container materials the stream allows (empty: any)."""
    accepts: tuple[Mapping, ...]
    refuses: tuple[Mapping, ...]
    refuse_hazard: str
    source: str


@dataclass(frozen=True, eq=False, repr=False)
class Rule:
    """One compatibility rule: two sides, a hazard, a severity and the advice."""

    id: str
    severity: str
    hazard: str
    a: tuple[Mapping, ...]
    b: tuple[Mapping, ...]
    advice_a: str
    """Advice when the compound added matches side a."""
    advice_b: str
    source: str
    gas: str = ""
    acidic_below_ph: float = 7.0
    superseded_by: tuple[str, ...] = ()


@dataclass(frozen=True, eq=False, repr=False)
class Container:
    """A waste container as the rules see it.

    ``contents`` maps compound keys (or names the catalog knows) to mol held;
    ``estimated_pH``, ``volume_l`` and ``material`` are None when unknown.
    """

    stream: str | None = None
    contents: Mapping[str, float] = field(default_factory=dict)
    estimated_pH: float | None = None
    volume_l: float | None = None
    material: str | None = None


@dataclass(frozen=True, eq=False, repr=False)
class Addition:
    """What is about to be logged: a compound, its amount (mol) and, if known, its
    strength (mol/L)."""

    compound: str
    amount_mol: float
    conc_molar: float | None = None


@dataclass(frozen=True, repr=False)
class Finding:
    """One rule that applies, with the hazard named in a sentence."""

    rule_id: str
    severity: str
    message: str
    hazard: str
    advice: str
    added: str
    present: tuple[str, ...]
    source: str
    gas: str = ""

    @property
    def overridable(self) -> bool:
        return self.severity == "confirm"

    def to_dict(self) -> dict:
        return {"rule": self.rule_id, "severity": self.severity, "message": self.message,
                "hazard": self.hazard, "advice": self.advice, "gas": self.gas,
                "added": self.added, "present": list(self.present), "source": self.source,
                "overridable": self.overridable}


@dataclass(frozen=True, eq=False, repr=False)
class _Facts:
    """What the rules know of one compound."""

    key: str
    tags: frozenset[str]
    components: frozenset[str]
    kind: str
    conc_molar: float | None


@dataclass(frozen=True, eq=False, repr=False)
class _Settings:
    """``compatibility.toml`` read and checked: the streams by key, the rules and the
    two thresholds."""

    streams: Mapping[str, Stream]
    rules: tuple[Rule, ...]
    kind_threshold: float
    concentrated_molar: float


# ----------------------------------------------------------------------------- data


DATA_FILE = "compatibility.toml"


def _sourced(t: Table) -> str:
    """The source cited with its status, checked by the one provenance check."""
    return t.provenance(allowed=STATUSES).cited()


def _sides(t: Table, field: str, *, required: bool = True) -> tuple[Mapping, ...]:
    """The alternatives of one side of a rule (or a stream's accepts/refuses): each a
    table of match criteria among ``_ALL_KEYS``."""
    if required:
        t.raw(field)
    out = []
    for alt in t.tables(field, name=lambda i, _d: f"{t.entry} {field}[{i}]"):
        unknown = set(alt.data) - _ALL_KEYS
        if unknown:
            raise alt.fail(None, f"unknown match criteria {sorted(unknown)}")
        bad = set(alt.texts("kinds", ())) - set(KINDS)
        if bad:
            raise alt.fail("kinds", f"{sorted(bad)} are not among {KINDS}")
        strong = alt.data.get("concentrated", True)
        if isinstance(strong, bool) and strong is not True or not isinstance(
                strong, bool | int | float) or not strong > 0:
            raise alt.fail("concentrated", "true, or a strength in mol/L above 0")
        out.append(MappingProxyType(dict(alt.data)))
    return tuple(out)


def _parse_stream(t: Table) -> Stream:
    key = t.text("key")
    return Stream(key, t.text("name"), t.text("words"), t.flag("drain_treatable"),
                  t.flag("acidic", False), t.texts("materials", ()), _sides(t, "accepts"),
                  _sides(t, "refuses", required=False), t.text("refuse_hazard", ""),
                  _sourced(t))


def _parse_rule(t: Table) -> Rule:
    severity, gas = t.text("severity"), t.text("gas", "")
    if severity not in SEVERITIES:
        raise t.fail("severity", f"{severity!r} is not one of {SEVERITIES}")
    if gas and severity != "refuse":
        raise t.fail("gas", f"releases {gas}: a gas hazard must refuse, never confirm")
    return Rule(t.text("id"), severity, t.text("hazard"), _sides(t, "a"), _sides(t, "b"),
                t.text("advice_a"), t.text("advice_b"), _sourced(t), gas,
                t.number("acidic_below_ph", REFERENCE_PH, low=0.0, high=14.0),
                t.texts("superseded_by", ()))


@lru_cache(maxsize=1)
def _settings() -> _Settings:
    top = Table.of_file(DATA_FILE)
    streams = {st.key: st for st in map(_parse_stream, top.tables("streams"))}
    rules = tuple(map(_parse_rule, top.tables(
        "rules", name=lambda i, d: str(d.get("id") or f"rules[{i}]"))))
    ids = [r.id for r in rules]
    if len(ids) != len(set(ids)):
        raise top.fail("rules", "rule ids must be unique")
    for rule in rules:
        for side in (rule.a, rule.b):
            for alt in side:
                unknown = set(alt.get("streams", ())) - set(streams)
                if unknown:
                    raise CatalogError(f"{DATA_FILE}: {rule.id}",
                                       f"names unknown streams {sorted(unknown)}")
        if set(rule.superseded_by) - set(ids):
            raise CatalogError(f"{DATA_FILE}: {rule.id}", "superseded by an unknown rule")
    return _Settings(MappingProxyType(streams), rules,
                     top.number("kind_threshold", positive=True),
                     top.number("concentrated_molar", positive=True))


def streams() -> Mapping[str, Stream]:
    """Every stream by key, in the order of the data file."""
    return _settings().streams


def stream(key: str) -> Stream:
    """One stream; an unknown key is an error that lists the known ones."""
    known = _settings().streams
    if key not in known:
        raise InvalidInput("stream", key, "not a waste stream; choose one of "
                           + ", ".join(known), field="stream")
    return known[key]


def rules() -> tuple[Rule, ...]:
    """Every compatibility rule, in the order of the data file."""
    return _settings().rules


# ----------------------------------------------------------------------------- compounds


def acid_equivalents(compound, catalog=None) -> float:
    """Protons one formula unit gives up (negative: takes up) on the way to pH 7.

    The formula unit is neutral, so from its spectator ions and each system's fully
    deprotonated charge follows how many protons it carries; the systems' pKa values
    say how many stay bound at pH 7 (ideal solution, 25 °C).
    """
    catalog = catalog or default_catalog()
    carried, bound = 0.0, 0.0
    for key, count in compound.composition.items():
        part = catalog.component(key)
        if hasattr(part, "pka25"):
            carried -= count * (part.top_charge - part.n_steps)
            bound += count * _protons_bound(part.pka25, REFERENCE_PH)
        else:
            carried -= count * part.charge
    return carried - bound


def _protons_bound(pkas: tuple[float, ...], ph: float) -> float:
    n = len(pkas)
    logs, acc = [], 0.0
    for j in range(n + 1):  # state j has lost j protons
        logs.append(j * ph - acc)
        if j < n:
            acc += pkas[j]
    top = max(logs)
    weights = [10.0 ** (v - top) for v in logs]
    return sum((n - j) * w for j, w in enumerate(weights)) / sum(weights)


def compound_kind(compound, catalog=None) -> str:
    """``acid``, ``base`` or ``neutral`` (acid equivalents at pH 7 beyond the threshold)."""
    eq = acid_equivalents(compound, catalog)
    limit = _settings().kind_threshold
    return "acid" if eq > limit else "base" if eq < -limit else "neutral"


def _facts(name: str, catalog, conc_molar: float | None) -> _Facts:
    c = catalog.compound(name)
    return _Facts(c.key, frozenset(c.hazards), frozenset(c.composition),
                  compound_kind(c, catalog), conc_molar)


def _compound_ok(alt: Mapping, f: _Facts, concentrated_molar: float) -> bool:
    if "compounds" in alt and f.key not in alt["compounds"]:
        return False
    if "tags" in alt and not f.tags & set(alt["tags"]):
        return False
    if "components" in alt and not f.components & set(alt["components"]):
        return False
    if "kinds" in alt and f.kind not in alt["kinds"]:
        return False
    strong = alt.get("concentrated")   # true: the file's threshold; a number: its own
    if not strong:
        return True
    limit = concentrated_molar if strong is True else float(strong)
    return f.conc_molar is not None and f.conc_molar >= limit


def _addition_matches(side: tuple[Mapping, ...], f: _Facts, settings: _Settings) -> bool:
    for alt in side:
        if set(alt) & _CONTAINER_KEYS:
            continue
        if alt.get("acidic") and f.kind != "acid":
            continue
        if _compound_ok(alt, f, settings.concentrated_molar):
            return True
    return False


# ----------------------------------------------------------------------------- containers


@dataclass(frozen=True, eq=False, repr=False)
class _Box:
    """A container with its compounds' facts."""

    stream: Stream | None
    held: tuple[_Facts, ...]
    pH: float | None
    material: str | None


@dataclass(eq=False, repr=False)
class _Evidence:
    """What made a container match one side of a rule: the compounds it holds that
    matched, and whether its stream, its material or its pH did."""

    holds: list[str] = field(default_factory=list)
    stream: bool = False
    material: bool = False
    ph: bool = False


def _acidic(box: _Box, below_ph: float) -> tuple[bool, list[str], bool, bool]:
    """(acidic?, acid compounds named, via the stream?, via the pH?)."""
    acids = [f.key for f in box.held if f.kind == "acid"]
    via_stream = bool(box.stream and box.stream.acidic)
    if box.pH is not None:
        via_ph = box.pH < below_ph
        return via_stream or via_ph, acids if via_ph else [], via_stream, via_ph
    return via_stream or bool(acids), acids, via_stream, False


def _container_matches(side, rule_ph: float, box: _Box, settings: _Settings):
    for alt in side:
        ev = _Evidence()
        if "streams" in alt:
            if not box.stream or box.stream.key not in alt["streams"]:
                continue
            ev.stream = True
        if alt.get("drain_stream"):
            if not (box.stream and box.stream.drain_treatable):
                continue
            ev.stream = True
        if "materials" in alt:
            if box.material not in alt["materials"]:
                continue
            ev.material = True
        if alt.get("acidic"):
            ok, acids, via_stream, via_ph = _acidic(box, rule_ph)
            if not ok:
                continue
            ev.holds, ev.stream, ev.ph = acids, ev.stream or via_stream, via_ph
        wanted = {k: v for k, v in alt.items() if k in _COMPOUND_KEYS}
        if wanted:
            found = [f.key for f in box.held if _compound_ok(wanted, f, settings.concentrated_molar)]
            if not found:
                continue
            ev.holds = found
        return ev
    return None


def _context(ev: _Evidence, box: _Box, show_ph: bool) -> str:
    parts = []
    if ev.holds:
        parts.append("the container holds " + ", ".join(ev.holds))
    if box.pH is not None and (show_ph or ev.ph):
        parts.append(f"pH about {box.pH:.1f}" if parts else f"the container is at pH about "
                     f"{box.pH:.1f}")
    if ev.stream and box.stream and not ev.holds:
        parts.append(f"the container is meant for {box.stream.name}")
    if ev.material:
        parts.append(f"the container is {box.material}")
    return ", ".join(parts)


def _box(container: Container, catalog, settings: _Settings, skip: str | None = None) -> _Box:
    st = stream(container.stream) if container.stream is not None else None
    if container.material is not None and container.material not in MATERIALS:
        raise InvalidInput("container material", container.material,
                           "must be one of " + ", ".join(MATERIALS), field="material")
    held = []
    for name, amount in container.contents.items():
        if name == skip or not amount > 0:
            continue
        conc = amount / container.volume_l if container.volume_l else None
        held.append(_facts(name, catalog, conc))
    return _Box(st, tuple(held), container.estimated_pH, container.material)


def _check_amount(addition: Addition) -> None:
    if not (isinstance(addition.amount_mol, (int, float)) and math.isfinite(addition.amount_mol)
            and addition.amount_mol > 0):
        raise InvalidInput("amount", addition.amount_mol, "must be a positive number of mol",
                           field="amount")
    if addition.conc_molar is not None and not (math.isfinite(addition.conc_molar)
                                                and addition.conc_molar > 0):
        raise InvalidInput("concentration", addition.conc_molar, "must be positive",
                           field="concentration")


# ----------------------------------------------------------------------------- checks


def _rule_findings(f: _Facts, box: _Box, settings: _Settings) -> list[Finding]:
    out = []
    for rule in settings.rules:
        for mine, theirs, advice in ((rule.a, rule.b, rule.advice_a),
                                     (rule.b, rule.a, rule.advice_b)):
            if not _addition_matches(mine, f, settings):
                continue
            ev = _container_matches(theirs, rule.acidic_below_ph, box, settings)
            if ev is None:
                continue
            context = _context(ev, box, show_ph=bool(rule.gas))
            message = f"{rule.hazard}: {context}; {advice}" if context else \
                f"{rule.hazard}; {advice}"
            out.append(Finding(rule.id, rule.severity, message, rule.hazard, advice, f.key,
                               tuple(ev.holds), rule.source, rule.gas))
            break
    fired = {x.rule_id for x in out}
    by_id = {r.id: r for r in settings.rules}
    return [x for x in out if not set(by_id[x.rule_id].superseded_by) & fired]


def _stream_findings(f: _Facts, box: _Box, settings: _Settings) -> list[Finding]:
    st = box.stream
    if st is None:
        return []
    if _addition_matches(st.refuses, f, settings):
        advice = f"this container is for {st.name}: {st.words}"
        return [Finding(f"stream-{st.key}", "refuse", f"{st.refuse_hazard}: {advice}",
                        st.refuse_hazard, advice, f.key, (), st.source)]
    if st.accepts and not _addition_matches(st.accepts, f, settings):
        hazard = f"{f.key} ({f.kind}) is not what this container is meant for"
        advice = f"this container is for {st.name}: {st.words}"
        return [Finding(f"stream-{st.key}", "confirm", f"{hazard}; {advice}", hazard, advice,
                        f.key, (), st.source)]
    return []


def _ordered(findings: Iterable[Finding]) -> tuple[Finding, ...]:
    return tuple(sorted(findings, key=lambda x: SEVERITIES.index(x.severity)))


def check_addition(container: Container, addition: Addition, *, catalog=None
                   ) -> tuple[Finding, ...]:
    """Every finding for logging ``addition`` into ``container``, refusals first.

    Empty means no rule objects (it never means the waste is safe or drain-fit).
    Unknown compounds raise :class:`carboy.errors.UnknownCompound`; an unknown stream or
    material raises :class:`carboy.errors.InvalidInput`.
    """
    catalog = catalog or default_catalog()
    settings = _settings()
    _check_amount(addition)
    f = _facts(addition.compound, catalog, addition.conc_molar)
    return _ordered(_findings(f, _box(container, catalog, settings), settings))


def _findings(f: _Facts, box: _Box, settings: _Settings) -> list[Finding]:
    """The rules' findings and the stream's; the stream's generic "not meant for this"
    only when no rule already says what is wrong."""
    found = _rule_findings(f, box, settings)
    stream_side = _stream_findings(f, box, settings)
    return found + [x for x in stream_side if x.severity == "refuse" or not found]


def check_container(container: Container, *, catalog=None) -> tuple[Finding, ...]:
    """Warnings for what a container already holds: its stream against its contents,
    the contents against each other, and the container's material against its stream.
    Changes nothing; messages start with "already in the container"."""
    catalog = catalog or default_catalog()
    settings = _settings()
    out: dict[tuple, Finding] = {}
    st = stream(container.stream) if container.stream is not None else None
    if st and st.materials and container.material and container.material not in st.materials:
        hazard = f"{st.name} must be kept in {' or '.join(st.materials)}"
        out[("material",)] = Finding(f"stream-{st.key}", "confirm",
                                     f"already in the container: {hazard}; the container is "
                                     f"{container.material}", hazard, st.words, "", (),
                                     st.source)
    for name, amount in container.contents.items():
        if not amount > 0:
            continue
        conc = amount / container.volume_l if container.volume_l else None
        f = _facts(name, catalog, conc)
        box = _box(container, catalog, settings, skip=name)
        for x in _findings(f, box, settings):
            key = (x.rule_id, frozenset((x.added, *x.present)))
            out.setdefault(key, Finding(x.rule_id, x.severity,
                                        f"already in the container: {f.key}; {x.message}",
                                        x.hazard, x.advice, x.added, x.present, x.source, x.gas))
    return _ordered(out.values())


def refusals(findings: Iterable[Finding]) -> tuple[Finding, ...]:
    """The findings that stop an addition whatever reason is given."""
    return tuple(x for x in findings if x.severity == "refuse")


def confirmations(findings: Iterable[Finding]) -> tuple[Finding, ...]:
    """The findings an addition may pass with a journaled reason."""
    return tuple(x for x in findings if x.severity == "confirm")


# ----------------------------------------------------------------------------- inference


@dataclass(frozen=True, eq=False, repr=False)
class StreamGuess:
    """The stream a container's contents point to, and why (for containers logged before
    streams existed).  ``settled`` is False when the contents did not settle it and the
    stream is ``mixed``."""

    stream: str
    settled: bool
    reason: str


def _specific(st: Stream, held: Iterable[_Facts], settings: _Settings) -> bool:
    """Some held compound matches one of the stream's accepts by its hazard tags (the
    stream is made for it, not merely open to its kind)."""
    tagged = tuple(alt for alt in st.accepts if "tags" in alt)
    return any(_addition_matches(tagged, f, settings) for f in held)


def infer_stream(contents: Mapping[str, float], *, catalog=None) -> StreamGuess:
    """The one stream that fits everything a container holds, else ``mixed``.

    A stream fits when it accepts every compound held (and refuses none) and
    :func:`check_container` finds nothing with it.  Of the streams that fit, one made
    for a held compound's hazard (cyanide, fluoride, a heavy metal, an oxidizing acid)
    is chosen; failing that, the one drain-treatable stream (acid or alkaline).  Any
    other outcome (nothing held, a compound the catalog does not know, no fit, two
    equal fits) is ``mixed``, with the reason.  ``contents`` maps compound keys to mol.
    """
    catalog = catalog or default_catalog()
    settings = _settings()
    held_keys = sorted(k for k, v in contents.items() if v > 0)
    if not held_keys:
        return StreamGuess("mixed", False, "nothing was logged in it")
    unknown = [k for k in held_keys if k not in catalog]
    if unknown:
        return StreamGuess("mixed", False, "it holds " + ", ".join(unknown)
                           + ", which the catalog does not know")
    held = tuple(_facts(k, catalog, None) for k in held_keys)
    names = ", ".join(held_keys)
    fits = []
    for st in settings.streams.values():
        if st.key == "mixed" or any(_addition_matches(st.refuses, f, settings) for f in held):
            continue
        if st.accepts and not all(_addition_matches(st.accepts, f, settings) for f in held):
            continue
        if not check_container(Container(st.key, dict(contents)), catalog=catalog):
            fits.append(st)
    for pick in ([s for s in fits if _specific(s, held, settings)],
                 [s for s in fits if s.drain_treatable]):
        if len(pick) == 1:
            return StreamGuess(pick[0].key, True, f"inferred from its contents ({names})")
        if len(pick) > 1:
            return StreamGuess("mixed", False, f"its contents ({names}) fit "
                               + " and ".join(s.name for s in pick) + " alike")
    return StreamGuess("mixed", False, f"its contents ({names}) fit no single stream")
