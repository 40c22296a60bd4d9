"""The Standardize screen: the molarity of a titrant from replicate titrations of a
weighed primary standard, and, for a stock bottle, recording it as the bottle's strength.

Left, the form: the titrant (a compound such as ``NaOH``, ``NaOH 0.1 M`` with its
nominal strength, or a stock bottle ``#34``), the primary standard, its assay and the
blank titre, then the replicates, one titration per line (``0.5106 25.02``, units
optional: ``0,5106 g 25,02 mL``).  Every field echoes what carboy understood or says
in place what is wrong; a bad replicate line is named by its line number and the bad
value.  The typed text is never touched.  Right, the result: each replicate's
molarity, the mean, its spread, the outlier test and the decision against the rule in
force.  Below, the handling notes for the standard and the titrant.

Recompute
---------
As on the Neutralize screen: each change bumps a generation counter; a change after a
quiet spell is computed at once, a burst of changes once, :data:`DEBOUNCE_S` after
the last.  One computation runs at a time (in a thread worker, which also reads the
bottle from the database when one is named); a result is shown only if its generation
is still the current one.  While the inputs have an error the last good result stays
on screen, greyed and marked STALE, and nothing can be recorded.

Record (ctrl+s) writes the accepted mean as the bottle's current strength with a
journal entry, in one transaction, after a confirmation.  It refuses, saying why, when
no bottle is given, the result is not accepted, or the result is not up to date.
"""

from __future__ import annotations

import re
import time
from dataclasses import dataclass, field

from rich.text import Text
from textual import on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, VerticalScroll
from textual.screen import Screen
from textual.timer import Timer
from textual.widgets import Footer, Input, Label, Static, TextArea

from carboy.errors import CarboyError, InvalidInput
from carboy.tui.app.screens.confirm import ConfirmScreen
from carboy.tui.app.widgets.mode_bar import ModeBar
from carboy.tui.app.workers import describe

DEBOUNCE_S = 0.15
"""Quiet time after the last change before a burst of changes is computed."""

FIELDS = ("titrant", "standard", "assay", "blank")
INPUT_IDS = ("sz-titrant", "sz-standard", "sz-assay", "sz-blank")

BOTTLE_ID = re.compile(r"^#?\s*(\d+)$")
"""``34``, ``#34`` or ``# 34``: a stock bottle."""

NOMINAL = re.compile(
    r"^(?P<name>.*?\S)\s*(?:=\s*|\s+)"
    r"(?P<conc>[+-]?(?:\d[\d.,]*|[.,]\d+)\s*(?:M|mM|mol/L|mol/l))$")
"""``NaOH 0.1 M`` or ``NaOH=0.1M``: a titrant with its nominal strength."""

SEPARATORS = re.compile(r"[;\t]|,(?=\s|$)|\s+")
"""Between the values of a replicate line: spaces, tabs, semicolons, or a comma followed
by a space (a decimal comma sits between digits, so ``0,5106 25,02`` stays two numbers)."""

OUTLIER_MARK = "◆ OUTLIER"
ACCEPTED_MARK = "✓ ACCEPTED"
REJECTED_MARK = "✗ NOT ACCEPTED"

NEED_TITRANT = "needed: NaOH, HCl 0.1 M or a bottle #34"
NEED_STANDARD = "needed: KHP, sulfamic acid, Na2CO3, Tris"
NEED_REPLICATES = "one titration a line: mass, titre"

REPLICATES_TITLE = "Replicates: mass g  titre mL"
PLACEHOLDER = "0.5106 25.02\n0,5098 g 24,97 mL\n…"

NO_RESULT = ("No result yet: give the titrant, the standard and at least one titration "
             "(mass of standard and titre, one per line).")

GENERAL_CAUTION = (
    "⚠ Dry the standard as its notes say; cool it in a desiccator. Use CO2-free water. Keep "
    "NaOH and KOH closed or behind a soda-lime guard tube (they take up CO2 from air). "
    "Eye protection and gloves.")
"""Common practice; shown until a titrant and a standard are given."""


# -- what the form holds, and what it means ------------------------------------------

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
class FormState:
    """The form's text as typed (nothing parsed yet) and the rule in force."""

    titrant: str = ""
    standard: str = ""
    assay: str = ""
    blank: str = "0"
    replicates: str = ""
    rule: object | None = None
    """The AcceptanceRule in force; None while the storeroom's rule is being read."""


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


@dataclass(frozen=True)
class Outcome:
    """What one computation found: a result, or per-field errors; echoes either way."""

    generation: int
    state: FormState
    result: object | None = None
    errors: dict[str, str] = field(default_factory=dict)
    echoes: dict[str, str] = field(default_factory=dict)
    missing: frozenset[str] = frozenset()
    """Fields still empty: their text is a hint, not an error."""
    lines: tuple[ReplicateLine, ...] = ()
    line_errors: tuple[LineError, ...] = ()
    bottle_id: int | None = None
    bottle: BottleInfo | None = None
    bottle_error: str | None = None
    titrant: object | None = None
    standard: object | None = None
    elapsed_ms: float = 0.0

    @property
    def ok(self) -> bool:
        return self.result is not None and not self.errors and not self.line_errors


def bottle_id_of(text: str) -> int | None:
    """The bottle id ``text`` names (``'#34'``, ``'34'``), else None."""
    match = BOTTLE_ID.match((text or "").strip())
    return int(match.group(1)) if match else None


def split_nominal(text: str) -> tuple[str, str | None]:
    """``'NaOH 0.1 M'`` -> ``('NaOH', '0.1 M')``; ``'NaOH'`` -> ``('NaOH', None)``."""
    match = NOMINAL.match(text.strip())
    if match:
        return match.group("name").strip(), match.group("conc").strip()
    return text.strip(), None


def _number(text: str, what: str, *, unit: str = "") -> float:
    raw = (text or "").strip()
    if unit and raw.endswith(unit):
        raw = raw[: -len(unit)].strip()
    raw = raw.replace(",", ".")
    try:
        value = float(raw)
    except ValueError:
        raise InvalidInput(what, text, "expected a number, e.g. 99.97 or 99,97") from None
    if value != value or value in (float("inf"), float("-inf")):
        raise InvalidInput(what, text, "must be a finite number")
    return value


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
    from carboy.model import quantities

    if not _has_unit(token):
        return None
    for kind in ("mass", "volume"):
        try:
            quantities.parse(token, kind)
        except CarboyError:
            continue
        return kind
    return None


def parse_replicates(text: str) -> tuple[tuple[ReplicateLine, ...], tuple[LineError, ...]]:
    """Read the replicate lines: ``mass volume``, a bare mass in g and a bare titre in mL.

    Blank lines and anything after ``#`` are ignored; values may carry units
    (``510.6 mg``, ``25,02 mL``) and, with units, come in either order.  Every line that
    cannot be read is returned as a :class:`LineError` naming the bad value.
    """
    from carboy.model import quantities
    from carboy.model.standardization import MAX_MASS_G, MAX_VOLUME_ML

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
            mass = quantities.parse(first, "mass", what="mass", default_unit="g").value
            if mass <= 0:
                raise InvalidInput("mass", first, "must be greater than zero")
            if mass > MAX_MASS_G:
                raise InvalidInput("mass", first, f"exceeds {MAX_MASS_G:g} g, which is no "
                                   "titration sample; is it in mg? (write 510.6 mg)")
            litres = quantities.parse(second, "volume", what="titre", default_unit="mL").value
            volume = float(f"{litres * 1000.0:.12g}")  # 25.05 mL stays 25.05, not …0004
            if volume <= 0:
                raise InvalidInput("titre", second, "must be greater than zero")
            if volume > MAX_VOLUME_ML:
                raise InvalidInput("titre", second, f"exceeds {MAX_VOLUME_ML:g} mL, which is "
                                   "no burette reading")
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
    from carboy.model.standardization import primary_standards

    suited = " or ".join(s.label for s in primary_standards().values()
                         if s.reacts_with == tit.kind)
    text = f"{tit.name}, {'a base' if tit.kind == 'base' else 'an acid'}"
    if nominal is not None:
        text += f", nominal {nominal:g} M"
    return f"{text} · standard: {suited}"


def _pair_error(tit, std) -> str | None:
    from carboy.model.standardization import primary_standards, titrants

    if std.reacts_with == tit.kind:
        return None
    suited = " or ".join(s.label for s in primary_standards().values()
                         if s.reacts_with == tit.kind)
    fits = ", ".join(t.key for t in titrants().values() if t.kind == std.reacts_with)
    article = "an" if std.nature == "acid" else "a"
    return (f"{std.label} is {article} {std.nature} standard (for {fits}), not for the "
            f"{tit.kind} {tit.key}: use {suited}")


def _model_field(err: InvalidInput, lines: tuple[ReplicateLine, ...]) -> tuple[str, int | None]:
    """Which field a model error is about (and for a replicate, its line number)."""
    what = str(err.what)
    match = re.match(r"replicate (\d+)", what)
    if match:
        index = int(match.group(1)) - 1
        line = lines[index].line if 0 <= index < len(lines) else None
        return ("blank" if "blank" in what else "replicates"), line
    if what.startswith("purity"):
        return "assay", None
    if what in ("titrant", "nominal concentration (mol/L)"):
        return "titrant", None
    if what == "primary standard":
        return "standard", None
    return "replicates", None


def compute(state: FormState, generation: int = 0, *, bottle: BottleInfo | None = None,
            bottle_error: str | None = None) -> Outcome:
    """Read the form and standardize; never raises (errors come back per field).

    ``bottle`` is the stock bottle the titrant field names (read by the caller), or
    ``bottle_error`` why it could not be read.
    """
    from carboy.model import quantities
    from carboy.model import standardization as sm

    started = time.perf_counter()
    errors: dict[str, str] = {}
    echoes: dict[str, str] = {}
    missing: set[str] = set()
    tit = std = nominal = None
    rule = state.rule if state.rule is not None else sm.AcceptanceRule()

    # the titrant: a compound (with an optional nominal) or a stock bottle
    text = state.titrant.strip()
    bid = bottle_id_of(text)
    if not text:
        errors["titrant"] = NEED_TITRANT
        missing.add("titrant")
    elif bid is not None:
        if bottle_error:
            errors["titrant"] = bottle_error
        elif bottle is None or bottle.id != bid:
            errors["titrant"] = f"bottle {bid}: not read yet"
        elif bottle.strength_unit != "M":
            errors["titrant"] = (f"bottle {bid} is {bottle.compound_key} labelled "
                                 f"{bottle.label_text}: standardization gives a molarity, so "
                                 "only a bottle labelled in M can take it")
        else:
            try:
                tit = sm.titrant(bottle.compound_key)
                nominal = bottle.label_strength
                echoes["titrant"] = bottle.echo()
            except CarboyError:
                known = ", ".join(sm.titrants())
                errors["titrant"] = (f"bottle {bid} holds {bottle.compound_key}, which carboy "
                                     f"does not standardize (titrants: {known})")
    else:
        name, conc = split_nominal(text)
        try:
            tit = sm.titrant(name)
        except CarboyError as err:
            errors["titrant"] = str(err)
        if tit is not None and conc is not None:
            try:
                nominal = quantities.concentration_molar(conc, "nominal strength")
                if not 0 < nominal <= sm.MAX_NOMINAL_MOLAR:
                    raise InvalidInput("nominal strength", conc, "expected above 0 and at "
                                       f"most {sm.MAX_NOMINAL_MOLAR:g} M")
            except CarboyError as err:
                errors["titrant"] = str(err)
                nominal = None
        if tit is not None and "titrant" not in errors:
            echoes["titrant"] = _titrant_echo(tit, nominal)

    # the primary standard
    if not state.standard.strip():
        if tit is not None:
            suited = " or ".join(s.label for s in sm.primary_standards().values()
                                 if s.reacts_with == tit.kind)
            errors["standard"] = f"needed: {suited}"
        else:
            errors["standard"] = NEED_STANDARD
        missing.add("standard")
    else:
        try:
            std = sm.primary_standard(state.standard)
            echoes["standard"] = _standard_echo(std)
            problem = _pair_error(tit, std) if tit is not None else None
            if problem:
                errors["standard"] = problem
        except CarboyError as err:
            errors["standard"] = str(err)

    # the assay (empty: the standard's own) and the blank
    purity = None
    if state.assay.strip():
        try:
            purity = _number(state.assay, "assay", unit="%")
            top = 100.1
            if not 0 < purity <= top:
                raise InvalidInput("assay", state.assay, f"expected above 0 and at most {top:g} % "
                                   "(a certified value may exceed 100 % slightly)")
            echoes["assay"] = f"→ {purity:g} % (certificate)"
        except CarboyError as err:
            errors["assay"] = str(err)
    elif std is not None:
        echoes["assay"] = f"empty: {std.assay_percent:g} % assumed ({std.label})"
    else:
        echoes["assay"] = "empty: the standard's own assay"
    blank = 0.0
    if state.blank.strip():
        try:
            litres = quantities.parse(state.blank, "volume", what="blank",
                                      default_unit="mL").value
            blank = float(f"{litres * 1000.0:.12g}")
            echoes["blank"] = f"→ {blank:g} mL taken from every titre" if blank else ""
        except CarboyError as err:
            errors["blank"] = str(err)

    # the replicates
    lines, line_errors = parse_replicates(state.replicates)
    if "blank" not in errors and blank > 0:
        extra = [LineError(r.line, f"titre {r.volume_ml:g} mL is not more than the blank "
                                   f"{blank:g} mL") for r in lines if r.volume_ml <= blank]
        if extra:
            bad = {e.line for e in extra}
            lines = tuple(r for r in lines if r.line not in bad)
            line_errors = tuple(sorted(line_errors + tuple(extra), key=lambda e: e.line))
    if not lines and not line_errors:
        errors["replicates"] = NEED_REPLICATES
        missing.add("replicates")
    elif lines:
        n = len(lines)
        echoes["replicates"] = f"{n} replicate{'s' if n != 1 else ''} read"
        if n < rule.min_replicates:
            echoes["replicates"] += f"; the rule needs at least {rule.min_replicates}"

    result = None
    if not errors and not line_errors:
        try:
            result = sm.standardize(
                tit, std, [sm.Replicate(r.mass_g, r.volume_ml, blank) for r in lines],
                purity_percent=purity, rule=rule, nominal_molar=nominal)
        except InvalidInput as err:
            name, line = _model_field(err, lines)
            if line is not None and name == "replicates":
                line_errors = line_errors + (LineError(line, str(err)),)
            else:
                errors[name] = str(err)
        except CarboyError as err:
            errors["general"] = str(err)
        except Exception as err:  # noqa: BLE001 - shown in place, never as a traceback
            errors["general"] = f"the computation failed ({type(err).__name__}: {err})"
    return Outcome(generation, state, result, errors, echoes, frozenset(missing), lines,
                   line_errors, bid, bottle if bid is not None else None, bottle_error,
                   tit, std, (time.perf_counter() - started) * 1000.0)


# -- the result as text ----------------------------------------------------------------

def fmt_molar(value: float) -> str:
    """A molarity as shown: five significant figures (``0.099943``)."""
    return f"{value:.5g}"


def rule_text(rule, origin: str = "") -> str:
    """``rule (default): RSD ≤ 0.2 %, ≥ 3 replicates, no outlier (Grubbs α 0.05)``."""
    where = {"storeroom": " (storeroom)", "default": " (default)"}.get(origin, "")
    return (f"rule{where}: RSD ≤ {rule.max_rsd_percent:g} %, ≥ {rule.min_replicates} "
            f"replicates, no outlier (Grubbs α {rule.alpha:g})")


def short_reasons(result) -> list[str]:
    """Why a result is not accepted, in a few words each (``RSD 0.410 % > 0.2 %``)."""
    rule = result.rule
    out = []
    if result.n < rule.min_replicates:
        out.append(f"only {result.n} replicate{'s' if result.n != 1 else ''} "
                   f"(the rule needs {rule.min_replicates})")
    if result.rsd_percent is not None and result.rsd_percent > rule.max_rsd_percent:
        out.append(f"RSD {result.rsd_percent:.3f} % > {rule.max_rsd_percent:g} %")
    out += [f"replicate {i} is an outlier" for i in result.outliers]
    if not out and result.reasons:
        out.append(result.reasons[0])
    return out


def replicate_rows(result) -> list[tuple[str, str, str, str, str]]:
    """(#, mass g, titre mL, molarity M, mark) per replicate."""
    return [(str(r.index), f"{r.mass_g:.4f}", f"{r.volume_ml:.2f}", fmt_molar(r.molar),
             OUTLIER_MARK if r.outlier else "") for r in result.replicates]


def result_text(result, *, rule_origin: str = "", stale: bool = False) -> Text:
    """The result panel: decision first, then every replicate, the statistics, advice."""
    t = Text()
    if stale:
        t.append("STALE: inputs changed; this is the last good result\n", style="bold italic")
    if result.accepted:
        t.append(ACCEPTED_MARK, style="bold reverse green")
    else:
        t.append(REJECTED_MARK, style="bold reverse red")
    t.append(f"  {fmt_molar(result.mean_molar)} M {result.titrant.key}\n", style="bold")
    for reason in short_reasons(result) if not result.accepted else ():
        t.append(f"  ✗ {reason}\n", style="bold")
    t.append(rule_text(result.rule, rule_origin) + "\n", style="dim")
    t.append(f"vs {result.standard.label}, assay {result.purity_percent:g} %"
             + (" (assumed)" if result.purity_defaulted else ""))
    blank = result.replicates[0].blank_ml if result.replicates else 0.0
    t.append(f", blank {blank:g} mL\n" if blank else "\n")
    rows = replicate_rows(result)
    head = ("#", "mass g", "titre mL", "molarity M")
    widths = [max(len(head[i]), *(len(r[i]) for r in rows)) for i in range(4)]
    t.append(" ".join(h.rjust(w) for h, w in zip(head, widths)) + "\n", style="bold")
    for row in rows:
        t.append(" ".join(c.rjust(w) for c, w in zip(row[:4], widths)))
        if row[4]:
            t.append(f" {row[4]}", style="bold reverse")
        t.append("\n")
    t.append("mean    ", style="bold")
    t.append(f"{fmt_molar(result.mean_molar)} M\n")
    if result.sd_molar is not None:
        t.append("sd      ", style="bold")
        t.append(f"{result.sd_molar:.2g} M\n")
        t.append("RSD     ", style="bold")
        t.append(f"{result.rsd_percent:.3f} %\n")
        t.append("95 % CI ", style="bold")
        t.append(f"± {result.ci95_molar:.2g} M (t {result.t_critical:.3f}, n {result.n})\n")
    test = result.outlier_test
    t.append("Grubbs  ", style="bold")
    if test.get("statistic") is None:
        t.append(f"not possible with n {result.n} (needs 3)\n")
    else:
        flagged = (f"replicate {test['suspect']} flagged" if test.get("suspect")
                   else "none flagged")
        sign = ">" if test.get("suspect") else "≤"
        critical = test.get("critical", test.get("critical_value"))
        t.append(f"G {test['statistic']:.3f} {sign} {critical:.3f} "
                 f"(α {test['alpha']:g}): {flagged}\n")
    if result.deviation_percent is not None:
        t.append("nominal ", style="bold")
        t.append(f"{result.nominal_molar:g} M: mean {result.deviation_percent:+.2f} %\n")
    if result.reasons:
        t.append("Not accepted because\n", style="bold")
        for reason in result.reasons:
            t.append(f"✗ {reason}\n")
    if result.warnings:
        t.append("Warnings\n", style="bold")
        for warning in result.warnings:
            t.append(f"! {warning}\n")
    if result.notes:
        t.append("Notes (with sources)\n", style="bold")
        for note in result.notes:
            t.append(f"· {note}\n", style="dim")
    return t


def cautions_text(tit=None, std=None) -> str:
    """The notes line: the standard's drying, CO2-free water, the titrant's handling."""
    if tit is None or std is None:
        return GENERAL_CAUTION
    parts = [f"⚠ {std.label}: {_brief(std.drying[0].text)}." if std.drying else "⚠"]
    if tit.kind == "base":
        parts.append(f"Use CO2-free water. Keep {tit.key} closed or behind a soda-lime guard "
                     "tube (it takes up CO2 from air).")
    else:
        parts.append(f"Making up {tit.key}: acid into water, never water into acid.")
    parts.append("Eye protection and gloves.")
    return " ".join(parts)


def _method(result) -> str:
    """How the strength was measured, as the journal and the bottle keep it (as the CLI)."""
    return (f"titration against {result.standard.name} "
            f"(n = {len(result.replicates)}, RSD {result.rsd_percent:.3f} %)")


# -- the screen --------------------------------------------------------------------------

class StandardizeScreen(Screen):
    """Standardize a titrant against a primary standard and record it on a bottle."""

    HELP = ("The molarity of a titrant from replicate titrations of a weighed primary "
            "standard (KHP or sulfamic acid for NaOH and KOH; Na2CO3 or Tris for HCl, HNO3, "
            "H2SO4): each replicate, mean, SD, RSD, 95 % CI, Grubbs' outlier test and the "
            "decision against the storeroom's rule. Give a bottle id (#34) as the titrant "
            "and ctrl+s records an accepted mean as its strength, with a journal entry.")

    BINDINGS = [
        Binding("ctrl+s", "record", "Record", id="standardize.record",
                tooltip="Write the accepted mean as the bottle's current strength "
                        "(asks first; journal entry)"),
    ]

    HORIZONTAL_BREAKPOINTS = [(0, "-narrow"), (110, "-wide")]

    DEFAULT_CSS = """
    StandardizeScreen { layout: vertical; }
    StandardizeScreen #sz-main { height: 1fr; }
    StandardizeScreen #sz-form {
        width: 40;
        height: 1fr;
        border-right: vkey $foreground 30%;
        scrollbar-size-vertical: 1;
    }
    StandardizeScreen.-wide #sz-form { width: 52; }
    StandardizeScreen .sz-row { height: 1; }
    StandardizeScreen .sz-row > Label { width: 9; text-style: bold; }
    StandardizeScreen .sz-row > Label.sz-label2 { width: 10; padding-left: 1; }
    StandardizeScreen .sz-row > Input { width: 1fr; }
    StandardizeScreen .sz-echo { height: auto; padding-left: 2; color: $text-muted; }
    StandardizeScreen .sz-echo.-error { color: $text-error; text-style: bold; }
    StandardizeScreen Input.-invalid { text-style: underline; }
    StandardizeScreen #sz-replicates {
        height: 1fr;
        min-height: 6;
        margin-top: 0;
    }
    StandardizeScreen #sz-replicates.-invalid { border: round $error; }
    StandardizeScreen #sz-results { width: 1fr; height: 1fr; padding: 0 1; }
    StandardizeScreen #sz-results.-stale > Static { text-style: dim; }
    StandardizeScreen #sz-status {
        height: auto;
        max-height: 2;
        padding: 0 1;
        background: $boost;
        text-style: bold;
    }
    StandardizeScreen #sz-cautions {
        height: auto;
        max-height: 3;
        padding: 0 1;
        border-left: thick $warning;
    }
    """

    def __init__(self, name: str | None = None, id: str | None = None,  # noqa: A002
                 classes: str | None = None) -> None:
        super().__init__(name=name, id=id, classes=classes)
        self.result = None
        """The last good result (None before the first)."""
        self.result_state: FormState | None = None
        """The inputs that result was computed from."""
        self.outcome: Outcome | None = None
        """The latest outcome shown (good or with errors)."""
        self.stale = False
        self.rule = None
        """The AcceptanceRule in force, once read from the database."""
        self.rule_origin = ""
        self.rule_error = ""
        self.last_journal_id: int | None = None
        self.recorded_state: FormState | None = None
        self._bottles: dict[int, BottleInfo | str] = {}
        self._generation = 0
        self._computing = False
        self._dirty = False
        self._debounce: Timer | None = None
        self._last_change = 0.0
        self._composed = False
        self._recording = False

    # -- layout ----------------------------------------------------------------------
    def compose(self) -> ComposeResult:
        yield ModeBar("standardize")
        with Horizontal(id="sz-main"):
            with VerticalScroll(id="sz-form"):
                with Horizontal(classes="sz-row"):
                    yield Label("Titrant")
                    yield Input(placeholder="NaOH, HCl 0.1 M or #34", id="sz-titrant",
                                compact=True)
                yield Static(Text(NEED_TITRANT, style="dim"), id="echo-titrant",
                             classes="sz-echo")
                with Horizontal(classes="sz-row"):
                    yield Label("Standard")
                    yield Input(placeholder="KHP, Na2CO3, Tris, sulfamic", id="sz-standard",
                                compact=True)
                yield Static(Text(NEED_STANDARD, style="dim"), id="echo-standard",
                             classes="sz-echo")
                with Horizontal(classes="sz-row"):
                    yield Label("Assay %")
                    yield Input(placeholder="100", id="sz-assay", compact=True)
                    yield Label("Blank mL", classes="sz-label2")
                    yield Input("0", id="sz-blank", compact=True)
                yield Static("", id="echo-assay", classes="sz-echo")
                yield Static("", id="echo-blank", classes="sz-echo")
                yield TextArea("", id="sz-replicates", show_line_numbers=True,
                               soft_wrap=False, tab_behavior="focus", placeholder=PLACEHOLDER)
                yield Static(Text(NEED_REPLICATES, style="dim"), id="echo-replicates",
                             classes="sz-echo")
            with VerticalScroll(id="sz-results"):
                yield Static(Text(NO_RESULT, style="dim"), id="sz-result-text")
        yield Static("", id="sz-status", markup=False)
        yield Static(GENERAL_CAUTION, id="sz-cautions", markup=False)
        yield Footer()

    def on_mount(self) -> None:
        area = self.query_one("#sz-replicates", TextArea)
        area.border_title = REPLICATES_TITLE
        for wid in ("echo-blank", "echo-assay"):
            self.query_one(f"#{wid}").display = False
        self.watch(self.app, "data_version", self._data_changed, init=False)
        # children may still be mounting when a mode is switched to very early
        self.call_after_refresh(self._start)

    def _start(self) -> None:
        self._composed = True
        if not self.query_one("#sz-titrant", Input).value:
            self.query_one("#sz-titrant", Input).focus()
        self._set_status("○ no result yet: give the titrant, the standard and the titrations")
        self._load_rule()
        self._inputs_changed()

    # -- public: the app opens a bottle here ----------------------------------------
    def use_bottle(self, bottle_id: int) -> None:
        """Standardize stock bottle ``bottle_id``: it becomes the titrant (and its label
        strength the nominal); the other fields keep what was typed."""
        titrant = self.query_one("#sz-titrant", Input)
        titrant.value = f"#{int(bottle_id)}"
        titrant.cursor_position = len(titrant.value)
        if self.query_one("#sz-standard", Input).value.strip():
            self.query_one("#sz-replicates", TextArea).focus()
        else:
            self.query_one("#sz-standard", Input).focus()
        self._inputs_changed()

    # -- form events -----------------------------------------------------------------
    @on(Input.Changed)
    def _input_changed(self, event: Input.Changed) -> None:
        if event.input.id in INPUT_IDS:
            self._inputs_changed()

    @on(TextArea.Changed, "#sz-replicates")
    def _replicates_changed(self) -> None:
        self._inputs_changed()

    def _form_state(self) -> FormState:
        def text(wid: str) -> str:
            return self.query_one(f"#{wid}", Input).value

        return FormState(titrant=text("sz-titrant"), standard=text("sz-standard"),
                         assay=text("sz-assay"), blank=text("sz-blank"),
                         replicates=self.query_one("#sz-replicates", TextArea).text,
                         rule=self.rule)

    # -- recompute -------------------------------------------------------------------
    def _inputs_changed(self) -> None:
        if not self._composed:
            return
        self._generation += 1
        now = time.monotonic()
        quiet = now - self._last_change >= DEBOUNCE_S
        self._last_change = now
        if self._debounce is not None:
            self._debounce.stop()
            self._debounce = None
        if quiet and not self._computing:
            self._start_compute()
        else:
            self._debounce = self.set_timer(DEBOUNCE_S, self._start_compute)

    def _start_compute(self) -> None:
        self._debounce = None
        if self._computing:
            self._dirty = True
            return
        self._computing = True
        self._compute(self._form_state(), self._generation, dict(self._bottles))

    @work(thread=True, exclusive=True, group="standardize-compute", exit_on_error=False)
    def _compute(self, state: FormState, generation: int,
                 bottles: dict[int, BottleInfo | str]) -> None:
        bottle = error = None
        bid = bottle_id_of(state.titrant)
        if bid is not None:
            known = bottles.get(bid)
            if known is None:
                try:
                    from carboy.store import stock

                    with self.app.open_store() as store:
                        known = BottleInfo.of(stock.get(store, bid, today=self.app.today))
                except Exception as exc:  # noqa: BLE001 - shown in place
                    known = describe(exc)
            if isinstance(known, BottleInfo):
                bottle = known
            else:
                error = known
        try:
            outcome = compute(state, generation, bottle=bottle, bottle_error=error)
        except Exception as exc:  # noqa: BLE001 - compute never raises; belt and braces
            outcome = Outcome(generation, state, errors={"general": describe(exc)})
        self.app.call_from_thread(self._computed, outcome)

    def _computed(self, outcome: Outcome) -> None:
        self._computing = False
        if outcome.bottle_id is not None:
            if outcome.bottle is not None:
                self._bottles[outcome.bottle_id] = outcome.bottle
            elif outcome.bottle_error:
                self._bottles[outcome.bottle_id] = outcome.bottle_error
        if outcome.generation == self._generation:
            self._apply(outcome)
        if self._dirty:
            self._dirty = False
            self._start_compute()

    @work(thread=True, exclusive=True, group="standardize-rule", exit_on_error=False)
    def _load_rule(self) -> None:
        try:
            from carboy.store import rules

            with self.app.open_store() as store:
                loaded = rules.load(store)
            rule = loaded.acceptance()
            origin = ("storeroom" if loaded.max_rsd_percent is not None
                      or loaded.min_replicates is not None else "default")
            from carboy.model.standardization import t_critical

            t_critical(2)  # loads scipy here, so the first result is not slow to come
        except Exception as exc:  # noqa: BLE001 - shown in place
            self.app.call_from_thread(self._rule_loaded, None, "", describe(exc))
            return
        self.app.call_from_thread(self._rule_loaded, rule, origin, "")

    def _rule_loaded(self, rule, origin: str, error: str) -> None:
        self.rule, self.rule_origin, self.rule_error = rule, origin, error
        self._inputs_changed()

    def _data_changed(self, _version: int) -> None:
        """Something was written (here or elsewhere): read the bottle and the rule again."""
        self._bottles.clear()
        self._load_rule()
        self._inputs_changed()

    # -- showing an outcome ------------------------------------------------------------
    def _apply(self, outcome: Outcome) -> None:
        self.outcome = outcome
        for name in FIELDS:
            self._show_field(name, outcome)
        self._show_lines(outcome)
        panel = self.query_one("#sz-results", VerticalScroll)
        text = self.query_one("#sz-result-text", Static)
        if outcome.ok:
            self.result, self.result_state, self.stale = outcome.result, outcome.state, False
            panel.remove_class("-stale")
            text.update(result_text(self.result, rule_origin=self.rule_origin))
        elif self.result is not None:
            self.stale = True
            panel.add_class("-stale")
            text.update(result_text(self.result, rule_origin=self.rule_origin, stale=True))
        else:
            text.update(Text(outcome.errors.get("general") and f"✗ {outcome.errors['general']}"
                             or NO_RESULT, style="dim"))
        self.query_one("#sz-cautions", Static).update(
            cautions_text(outcome.titrant, outcome.standard))
        self._set_status(self._status_text(outcome))

    def _show_field(self, name: str, outcome: Outcome) -> None:
        widget = self.query_one(f"#echo-{name}", Static)
        error = outcome.errors.get(name)
        if name in outcome.missing:
            widget.update(Text(f"○ {error}", style="dim"))
            widget.remove_class("-error")
            error = None
        elif error:
            widget.update(Text(f"✗ {error}"))
            widget.add_class("-error")
        else:
            widget.update(Text(outcome.echoes.get(name, "")))
            widget.remove_class("-error")
        widget.display = bool(error or outcome.echoes.get(name) or name in outcome.missing)
        self.query_one(f"#sz-{name}", Input).set_class(bool(error), "-invalid")

    def _show_lines(self, outcome: Outcome) -> None:
        """Bad lines named under the replicates (and on their frame); the count on the frame."""
        area = self.query_one("#sz-replicates", TextArea)
        echo = self.query_one("#echo-replicates", Static)
        bad = outcome.line_errors
        problem = outcome.errors.get("replicates") or outcome.errors.get("general")
        area.set_class(bool(bad), "-invalid")
        text, error = "", False
        if bad:
            which = ", ".join(str(e.line) for e in bad)
            area.border_subtitle = f"✗ line{'s' if len(bad) > 1 else ''} {which}"
            text, error = "\n".join(f"✗ {e}" for e in bad), True
        elif "replicates" in outcome.missing:
            area.border_subtitle = ""
            text = f"○ {outcome.errors['replicates']}"
        elif problem:
            area.border_subtitle = ""
            text, error = f"✗ {problem}", True
        else:
            said = outcome.echoes.get("replicates", "")
            area.border_subtitle = said.split(";")[0]
            if ";" in said:  # what the frame cannot hold goes below it
                text = "○ " + said.split(";", 1)[1].strip()
        echo.update(Text(text, style="" if error else "dim"))
        echo.set_class(error, "-error")
        echo.display = bool(text)

    def _status_text(self, outcome: Outcome) -> str:
        if outcome.ok:
            r = outcome.result
            if not r.accepted:
                return f"{REJECTED_MARK}: " + "; ".join(short_reasons(r))
            head = f"{ACCEPTED_MARK} {fmt_molar(r.mean_molar)} M {r.titrant.key}, n {r.n}"
            if r.rsd_percent is not None:
                head += f", RSD {r.rsd_percent:.3f} %"
            if self._already_recorded(outcome):
                return (f"{head} · recorded on bottle {outcome.bottle.id} as journal entry "
                        f"#{self.last_journal_id}")
            why = self.record_blocker()
            if why is None:
                return f"{head} · ctrl+s records it on bottle {outcome.bottle.id}"
            return f"{head} · cannot record: {why}"
        bad = sorted((set(outcome.errors) - outcome.missing) - {"general"})
        if outcome.line_errors:
            lines = [str(e.line) for e in outcome.line_errors]
            bad.append(("replicate line " if len(lines) == 1 else "replicate lines ")
                       + ", ".join(lines))
        todo = sorted(outcome.missing)
        parts = ([f"check {', '.join(bad)} (marked ✗)"] if bad else []) + (
            [f"fill in {', '.join(todo)}"] if todo else [])
        if "general" in outcome.errors:
            parts.append(outcome.errors["general"])
        if self.result is not None:
            return f"✗ {'; '.join(parts)}: the result shown is STALE"
        return f"○ no result yet: {'; '.join(parts)}"

    def _set_status(self, text: str) -> None:
        self.query_one("#sz-status", Static).update(text)

    # -- record ------------------------------------------------------------------------
    def _is_current(self) -> bool:
        return (self.outcome is not None and self.outcome.ok and not self._computing
                and self._debounce is None and self.outcome.generation == self._generation
                and self.outcome.state == self._form_state())

    def record_blocker(self) -> str | None:
        """Why the result on screen cannot be recorded now, or None when it can."""
        if self._recording:
            return "recording already under way"
        if self.outcome is None or (not self.outcome.ok and self.result is None):
            return "no result yet: give the titrant, the standard and the titrations"
        if not self.outcome.ok:
            return "the inputs have errors (marked ✗): nothing is recorded from bad input"
        if not self._is_current():
            return "the result is being recomputed; try again in a moment"
        outcome, result = self.outcome, self.outcome.result
        if outcome.bottle is None:
            return "give a bottle id as the titrant (e.g. #34) to record on a bottle"
        if not result.accepted:
            return "not accepted: " + "; ".join(short_reasons(result))
        if outcome.state.rule is None:
            return (f"the storeroom's rule could not be read ({self.rule_error})"
                    if self.rule_error else "the storeroom's rule is still being read")
        if outcome.bottle.status != "in-use":
            return (f"bottle {outcome.bottle.id} is {outcome.bottle.status}: only a bottle in "
                    "use takes a new strength")
        if self._already_recorded(outcome):
            return f"already recorded as journal entry #{self.last_journal_id}"
        return None

    def _already_recorded(self, outcome: Outcome) -> bool:
        return self.last_journal_id is not None and self.recorded_state == outcome.state

    def action_record(self) -> None:
        why = self.record_blocker()
        if why is not None:
            self.notify(f"Cannot record: {why}", severity="warning", timeout=6)
            self._set_status(f"✗ cannot record: {why}")
            return
        outcome = self.outcome
        result, bottle = outcome.result, outcome.bottle
        message = "\n".join([
            f"Bottle {bottle.id} · {bottle.compound_key}, label {bottle.label_text}"
            + (f" · {bottle.location}" if bottle.location else ""),
            f"Strength: {bottle.current_text} → {fmt_molar(result.mean_molar)} M",
            f"By {_method(result)}.",
            f"Accepted under the {rule_text(result.rule, self.rule_origin)}.",
            f"Recorded by {self.app.who}; the journal entry is permanent (a mistake is "
            "corrected by a new standardization).",
        ])

        def done(yes: bool | None) -> None:
            if not yes:
                self._set_status("recording cancelled: nothing was written")
                return
            if self.outcome is not outcome or not self._is_current():
                self._set_status("✗ not recorded: the inputs changed while asking")
                return
            self._recording = True
            self._set_status(f"recording on bottle {bottle.id}…")
            self._record(outcome)

        self.app.push_screen(ConfirmScreen("Record this standardization?", message,
                                           yes_label="Record"), done)

    def snapshot(self, outcome: Outcome) -> dict:
        """What the journal keeps: the inputs as typed and the result as computed."""
        state = outcome.state
        return {
            "inputs": {"titrant": state.titrant, "standard": state.standard,
                       "assay": state.assay, "blank": state.blank,
                       "replicates": state.replicates, "rule_origin": self.rule_origin},
            "standardization": outcome.result.to_dict(),
            "recorded_from": "carboy standardize screen",
        }

    @work(thread=True, exclusive=True, group="standardize-record", exit_on_error=False)
    def _record(self, outcome: Outcome) -> None:
        from carboy.store import stock

        result = outcome.result
        try:
            with self.app.open_store() as store:
                entry = stock.record_standardization(
                    store, outcome.bottle.id, result.mean_molar, method=_method(result),
                    snapshot=self.snapshot(outcome), who=self.app.who)
        except Exception as exc:  # noqa: BLE001 - shown in place
            self.app.call_from_thread(self._record_failed, describe(exc))
            return
        self.app.call_from_thread(self._recorded, outcome, entry)

    def _record_failed(self, message: str) -> None:
        self._recording = False
        self._set_status(f"✗ not recorded: {message}")
        self.notify(f"Not recorded: {message}", severity="error")

    def _recorded(self, outcome: Outcome, entry: int) -> None:
        self._recording = False
        self.last_journal_id = entry
        self.recorded_state = outcome.state
        mean = fmt_molar(outcome.result.mean_molar)
        self.notify(f"Recorded: bottle {outcome.bottle.id} is now {mean} M "
                    f"(journal entry #{entry}).", timeout=6)
        self._set_status(f"✓ recorded: bottle {outcome.bottle.id} is now {mean} M "
                         f"(journal entry #{entry})")
        self.app.refresh_data()
