"""The standardization form: a titrant (a compound, with an optional nominal strength, or a
stock bottle ``#34``), a primary standard, its assay, the blank and the replicates.

:func:`evaluate` reads the fields and standardizes; every problem comes back by field (a
bad replicate line by its line number).  The Standardize screen types the replicates as
lines (``0.5106 25.02``); ``carboy standardize`` gives them as ``--mass``/``--volume``
pairs, read by the same :func:`read_replicate`.
"""

from __future__ import annotations

import re
import time
from dataclasses import dataclass

from carboy.errors import CarboyError, InvalidInput
from carboy.model import numbers, quantities
from carboy.model import standardization as sm
from carboy.model.forms import FormReader, Reading, bottle_ref, read_number
from carboy.model.standardization import MAX_MASS_G, MAX_VOLUME_ML

FIELDS = ("titrant", "standard", "assay", "blank")

NOMINAL = re.compile(
    r"^(?P<name>.*?\S)\s*(?:=\s*|\s+)"
    r"(?P<conc>[+-]?(?:\d[\d.,]*|[.,]\d+)\s*(?:M|mM|mol/L|mol/l))$")
"""``NaOH 0.1 M`` or ``NaOH=0.1M``: a titrant with its nominal strength."""

SEPARATORS = re.compile(r"[;\t]|,(?=\s|$)|\s+")
"""Between the values of a replicate line: spaces, tabs, semicolons, or a comma followed
by a space (a decimal comma sits between digits, so ``0,5106 25,02`` stays two numbers)."""

NEED_TITRANT = "needed: NaOH, HCl 0.1 M or a bottle #34"
NEED_STANDARD = "needed: KHP, sulfamic acid, Na2CO3, Tris"
NEED_REPLICATES = "one titration a line: mass, titre"
MAX_ASSAY_PERCENT = 100.1
"""A certified assay may exceed 100 % slightly."""


@dataclass(frozen=True)
class BottleInfo:
    """A stock bottle as the screen needs it (read in a worker)."""

    id: int
    compound_key: str
    compound_name: str
    strength_unit: str
    label_strength: float
    current_strength: float | None
    measured_at: str | None
    status: str
    location: str

    @classmethod
    def of(cls, bottle) -> BottleInfo:
        return cls(bottle.id, bottle.compound_key, bottle.compound_name, bottle.strength_unit,
                   float(bottle.label_strength),
                   None if bottle.current_strength is None else float(bottle.current_strength),
                   bottle.measured_at, bottle.status, bottle.location or "")

    @property
    def label_text(self) -> str:
        return f"{self.label_strength:g} {self.strength_unit}"

    @property
    def current_text(self) -> str:
        """The strength it holds now: the last measured one, else the label's."""
        if self.current_strength is None:
            return f"{self.label_text} (label; never standardized)"
        when = f", {self.measured_at[:10]}" if self.measured_at else ""
        return f"{fmt_molar(self.current_strength)} {self.strength_unit} (measured{when})"

    def echo(self) -> str:
        """``bottle 34: NaOH 0.1 M, last standardized 2025-02-09 (0.1001 M)``."""
        head = f"bottle {self.id}: {self.compound_key} {self.label_text}"
        if self.current_strength is None:
            head += ", never standardized"
        else:
            when = self.measured_at[:10] if self.measured_at else "on an unknown day"
            head += (f", last standardized {when} "
                     f"({fmt_molar(self.current_strength)} {self.strength_unit})")
        if self.status != "in-use":
            head += f"; {self.status}"
        return head


@dataclass(frozen=True)
class StandardizeFields:
    """The form's text as typed (nothing parsed yet)."""

    titrant: str = ""
    standard: str = ""
    assay: str = ""
    blank: str = "0"
    replicates: str = ""


@dataclass(frozen=True)
class ReplicateLine:
    """One replicate line as read: its line number (1-based), mass in g, titre in mL."""

    line: int
    mass_g: float
    volume_ml: float


@dataclass(frozen=True)
class LineError:
    """A replicate line that could not be read: the reason names the bad value."""

    line: int
    reason: str

    def __str__(self) -> str:
        return f"line {self.line}: {self.reason}"


@dataclass
class StandardizeReading(Reading):
    """A reading whose value is the standardization result; the replicate lines read and
    those that could not be, the bottle named as titrant, and the titrant and standard as
    far as they could be read."""

    lines: tuple[ReplicateLine, ...] = ()
    line_errors: tuple[LineError, ...] = ()
    bottle_id: int | None = None
    bottle: BottleInfo | None = None
    bottle_error: str | None = None
    titrant: object | None = None
    standard: object | None = None
    elapsed_ms: float = 0.0


def split_nominal(text: str) -> tuple[str, str | None]:
    """``'NaOH 0.1 M'`` -> ``('NaOH', '0.1 M')``; ``'NaOH'`` -> ``('NaOH', None)``."""
    match = NOMINAL.match(text.strip())
    if match:
        return match.group("name").strip(), match.group("conc").strip()
    return text.strip(), None


def _tokens(line: str) -> list[str]:
    """The values of one line, each with the unit typed after it (``'0,51 g'``)."""
    words = [w for w in SEPARATORS.split(line) if w]
    out: list[str] = []
    for word in words:
        if (not _starts_number(word) and out and not _has_unit(out[-1])
                and _kind(f"{out[-1]} {word}") is not None):
            out[-1] = f"{out[-1]} {word}"
        else:
            out.append(word)
    return out


def _starts_number(word: str) -> bool:
    return word[:1].isdigit() or (word[:1] in ("+", "-", ".", ",") and word[1:2].isdigit())


def _has_unit(token: str) -> bool:
    return bool(re.search(r"[^\d\s.,+\-eE]", token)) or " " in token


def _kind(token: str) -> str | None:
    """``'mass'`` or ``'volume'`` by the unit typed, None for a bare number or an odd unit."""
    if not _has_unit(token):
        return None
    for kind in ("mass", "volume"):
        try:
            quantities.parse(token, kind)
        except CarboyError:
            continue
        return kind
    return None


def read_millilitres(text: str, what: str) -> float:
    """A volume in mL (a bare number is mL): ``'25,02'``, ``'25.02 mL'``, ``'0.02502 L'``."""
    litres = quantities.parse(text, "volume", what=what, default_unit="mL").value
    return numbers.settled(litres * 1000.0)  # 25.05 mL stays 25.05, not …0004


def read_replicate(mass_text: str, titre_text: str, *, what: str = "") -> tuple[float, float]:
    """One titration: (mass of standard in g, titre in mL); a bare mass is in g."""
    mass = quantities.parse(mass_text, "mass", what=f"mass{what}", default_unit="g").value
    if mass <= 0:
        raise InvalidInput(f"mass{what}", mass_text, "must be greater than zero")
    if mass > MAX_MASS_G:
        raise InvalidInput(f"mass{what}", mass_text, f"exceeds {MAX_MASS_G:g} g, which is no "
                           "titration sample; is it in mg? (write 510.6 mg)")
    volume = read_millilitres(titre_text, f"titre{what}")
    if volume <= 0:
        raise InvalidInput(f"titre{what}", titre_text, "must be greater than zero")
    if volume > MAX_VOLUME_ML:
        raise InvalidInput(f"titre{what}", titre_text, f"exceeds {MAX_VOLUME_ML:g} mL, which "
                           "is no burette reading")
    return mass, volume


def parse_replicates(text: str) -> tuple[tuple[ReplicateLine, ...], tuple[LineError, ...]]:
    """Read the replicate lines: ``mass volume``, a bare mass in g and a bare titre in mL.

    Blank lines and anything after ``#`` are ignored; values may carry units
    (``510.6 mg``, ``25,02 mL``) and, with units, come in either order.  Every line that
    cannot be read is returned as a :class:`LineError` naming the bad value.
    """
    lines: list[ReplicateLine] = []
    errors: list[LineError] = []
    for number, raw in enumerate((text or "").splitlines(), start=1):
        content = raw.split("#", 1)[0].strip()
        if not content:
            continue
        tokens = _tokens(content)
        word = next((w for w in tokens if not _starts_number(w)), None)
        if word is not None:
            errors.append(LineError(number, f"{word!r} is not a number: expected the mass of "
                                            "standard and the titre (e.g. 0.5106 25.02)"))
            continue
        if len(tokens) != 2:
            errors.append(LineError(number, (
                f"{content!r}: expected two values, the mass of standard and the titre "
                f"(e.g. 0.5106 25.02); found {len(tokens)}")))
            continue
        first, second = tokens
        kinds = (_kind(first), _kind(second))
        if kinds in (("volume", "mass"), ("volume", None), (None, "mass")):
            first, second = second, first
        elif kinds in (("mass", "mass"), ("volume", "volume")):
            twice = "masses" if kinds[0] == "mass" else "volumes"
            errors.append(LineError(number, f"{content!r}: two {twice}; give the mass of "
                                            "standard and the titre"))
            continue
        try:
            mass, volume = read_replicate(first, second)
        except CarboyError as err:
            errors.append(LineError(number, str(err)))
            continue
        lines.append(ReplicateLine(number, mass, volume))
    return tuple(lines), tuple(errors)


BRIEF_CHARS = 80
"""A handling note longer than this (without its parentheses) is cut at its first ';'."""


def _brief(note: str) -> str:
    """The gist of a handling note: without parentheses, and up to its first ';' if long."""
    text = re.sub(r"\s*\([^)]*\)", "", note).strip()
    if len(text) > BRIEF_CHARS:
        text = text.split(";", 1)[0].strip()
    return text


def _standard_echo(std) -> str:
    brief = _brief(std.drying[0].text) if std.drying else ""
    text = f"{std.name}, {std.molar_mass_g_mol:.2f} g/mol"
    return f"{text} · {brief}" if brief else text


def _titrant_echo(tit, nominal: float | None) -> str:
    suited = _suited(tit)
    text = f"{tit.name}, {'a base' if tit.kind == 'base' else 'an acid'}"
    if nominal is not None:
        text += f", nominal {nominal:g} M"
    return f"{text} · standard: {suited}"


def _suited(tit) -> str:
    """The standards that titrate ``tit`` ("KHP or sulfamic acid")."""
    return " or ".join(s.label for s in sm.primary_standards().values()
                       if s.reacts_with == tit.kind)


def _pair_error(tit, std) -> str | None:
    if std.reacts_with == tit.kind:
        return None
    suited = _suited(tit)
    fits = ", ".join(t.key for t in sm.titrants().values() if t.kind == std.reacts_with)
    article = "an" if std.nature == "acid" else "a"
    return (f"{std.label} is {article} {std.nature} standard (for {fits}), not for the "
            f"{tit.kind} {tit.key}: use {suited}")




def fmt_molar(value: float) -> str:
    """A molarity as shown: five significant figures (``0.099943``)."""
    return f"{value:.5g}"


def method_of(result) -> str:
    """How a strength was measured, as the bottle and the journal keep it."""
    return (f"titration against {result.standard.name} "
            f"(n = {len(result.replicates)}, RSD {result.rsd_percent:.3f} %)")


def _titrant_from_bottle(form: FormReader, bid: int, bottle: BottleInfo | None,
                         bottle_error: str | None):
    if bottle_error:
        form.fail("titrant", bottle_error)
    elif bottle is None or bottle.id != bid:
        form.fail("titrant", f"bottle {bid}: not read yet")
    elif bottle.strength_unit != "M":
        form.fail("titrant", f"bottle {bid} is {bottle.compound_key} labelled "
                             f"{bottle.label_text}: standardization gives a molarity, so only "
                             "a bottle labelled in M can take it")
    else:
        try:
            tit = sm.titrant(bottle.compound_key)
        except CarboyError:
            known = ", ".join(sm.titrants())
            form.fail("titrant", f"bottle {bid} holds {bottle.compound_key}, which carboy does "
                                 f"not standardize (titrants: {known})")
            return None, None
        form.echo("titrant", bottle.echo())
        return tit, bottle.label_strength
    return None, None


def read_nominal(text: str) -> float:
    """A titrant's nominal molarity, above 0 and at most the largest carboy knows."""
    nominal = quantities.concentration_molar(text, "nominal strength")
    if not 0 < nominal <= sm.MAX_NOMINAL_MOLAR:
        raise InvalidInput("nominal strength", text, "expected above 0 and at most "
                           f"{sm.MAX_NOMINAL_MOLAR:g} M")
    return nominal


def _read_titrant(form: FormReader, text: str, bottle: BottleInfo | None,
                  bottle_error: str | None):
    """(titrant, nominal molarity) from a compound with an optional strength or a bottle."""
    if not form.need("titrant", text, NEED_TITRANT):
        return None, None
    bid = form.read("titrant", bottle_ref, text)
    if bid is not None:
        return _titrant_from_bottle(form, bid, bottle, bottle_error)
    if form.failed("titrant"):
        return None, None
    name, conc = split_nominal(text)
    tit = form.read("titrant", sm.titrant, name)
    nominal = form.read("titrant", read_nominal, conc) if tit is not None and conc else None
    if tit is not None and not form.failed("titrant"):
        form.echo("titrant", _titrant_echo(tit, nominal))
    return tit, nominal


def _read_standard(form: FormReader, text: str, tit):
    hint = f"needed: {_suited(tit)}" if tit is not None else NEED_STANDARD
    if not form.need("standard", text, hint):
        return None
    std = form.read("standard", sm.primary_standard, text)
    if std is not None:
        form.echo("standard", _standard_echo(std))
        problem = _pair_error(tit, std) if tit is not None else None
        if problem:
            form.fail("standard", problem)
    return std


def read_assay(text: str) -> float:
    """A certificate's assay in % (``'99,97'`` or ``'99.97 %'``)."""
    purity = read_number(text, "assay", unit="%", example="99.97")
    if not 0 < purity <= MAX_ASSAY_PERCENT:
        raise InvalidInput("assay", text, f"expected above 0 and at most "
                           f"{MAX_ASSAY_PERCENT:g} % (a certified value may exceed 100 % "
                           "slightly)")
    return purity


def _read_assay_and_blank(form: FormReader, fields: StandardizeFields, std):
    purity = None
    if fields.assay.strip():
        purity = form.read("assay", read_assay, fields.assay)
        if purity is not None:
            form.echo("assay", f"→ {purity:g} % (certificate)")
    elif std is not None:
        form.echo("assay", f"empty: {std.assay_percent:g} % assumed ({std.label})")
    else:
        form.echo("assay", "empty: the standard's own assay")
    blank = 0.0
    if fields.blank.strip():
        blank = form.read("blank", read_millilitres, fields.blank, "blank")
        if blank is not None and blank:
            form.echo("blank", f"→ {blank:g} mL taken from every titre")
    return purity, blank


def _read_lines(form: FormReader, text: str, blank: float | None, rule):
    lines, line_errors = parse_replicates(text)
    if blank:
        extra = [LineError(r.line, f"titre {r.volume_ml:g} mL is not more than the blank "
                                   f"{blank:g} mL") for r in lines if r.volume_ml <= blank]
        if extra:
            bad = {e.line for e in extra}
            lines = tuple(r for r in lines if r.line not in bad)
            line_errors = tuple(sorted(line_errors + tuple(extra), key=lambda e: e.line))
    if not lines and not line_errors:
        form.need("replicates", "", NEED_REPLICATES)
    elif lines:
        n = len(lines)
        said = f"{n} replicate{'s' if n != 1 else ''} read"
        if n < rule.min_replicates:
            said += f"; the rule needs at least {rule.min_replicates}"
        form.echo("replicates", said)
    return lines, line_errors


def _standardize(out: StandardizeReading, purity, blank, rule, nominal) -> None:
    try:
        out.value = sm.standardize(
            out.titrant, out.standard,
            [sm.Replicate(r.mass_g, r.volume_ml, blank) for r in out.lines],
            purity_percent=purity, rule=rule, nominal_molar=nominal)
    except CarboyError as err:
        name = getattr(err, "field", "") or "general"
        out.errors[name] = str(err)
        out.problems.append((name, err))
    except Exception as err:  # noqa: BLE001 - shown in place, never as a traceback
        out.errors["general"] = f"the computation failed ({type(err).__name__}: {err})"


def evaluate(fields: StandardizeFields, rule=None, *, bottle: BottleInfo | None = None,
             bottle_error: str | None = None) -> StandardizeReading:
    """Read the form and standardize; never raises (errors come back per field).

    ``bottle`` is the stock bottle the titrant field names (read by the caller), or
    ``bottle_error`` why it could not be read.  ``rule`` is the acceptance rule in force
    (default: carboy's).
    """
    started = time.perf_counter()
    rule = rule if rule is not None else sm.AcceptanceRule()
    form = FormReader()
    tit, nominal = _read_titrant(form, fields.titrant.strip(), bottle, bottle_error)
    std = _read_standard(form, fields.standard.strip(), tit)
    purity, blank = _read_assay_and_blank(form, fields, std)
    lines, line_errors = _read_lines(form, fields.replicates,
                                     None if form.failed("blank") else blank, rule)
    base = form.done(None)
    try:
        bid = bottle_ref(fields.titrant)
    except CarboyError:
        bid = None
    out = StandardizeReading(None, base.errors, base.echoes, base.missing, base.problems,
                             lines, line_errors, bid, bottle if bid is not None else None,
                             bottle_error, tit, std)
    if not out.errors and not line_errors:
        _standardize(out, purity, blank, rule, nominal)
    out.elapsed_ms = (time.perf_counter() - started) * 1000.0
    return out
