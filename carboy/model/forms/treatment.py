"""The treatment record form: what was really done to a waste container.

A treatment is recorded as it happened: the reagent (a stock bottle ``#7``, or a reagent
not taken from a bottle, ``NaOH=2M``), the amount actually added (in all, and per stage
where given), the pH after each stage, after the CO2 vented and at the end, the final
volume and temperature, who did it and the route taken.  ``carboy waste treat`` and the
app's record dialog read it here; :func:`carboy.store.treatments.record_treatment`
writes it.  Every reading is checked (a pH from 0 to 14, positive amounts), each
problem named by its field.

The same readers serve a correction (:mod:`carboy.model.forms.correction`).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import asdict, dataclass

from carboy.errors import InvalidInput
from carboy.model import quantities
from carboy.model.disposal_rules import ROUTE_DRAIN, ROUTES
from carboy.model.forms import FormReader, Reading, bottle_ref, read_ph
from carboy.model.reagents import parse_reagent
from carboy.model.water import check_temperature

FIELDS = ("bottle", "reagent", "added", "stage_added", "stage_ph", "vented_ph", "final_ph",
          "final_volume", "temperature", "route", "performed_by", "note")
MAX_AMOUNT_L = 1000.0
MAX_AMOUNT_G = 100_000.0
STAGE_TOLERANCE = 0.02
"""The stages' amounts may differ from the total by this fraction (rounding on the bench)."""
MAX_STAGES = 50
NEED_REAGENT = "needed: the stock bottle it came from (e.g. #7), or a reagent not from a bottle"
NEED_ADDED = "needed: how much was added in all, e.g. 2.5 L or 120 g"
NEED_PH = "needed: the final pH measured, e.g. 7,2"


@dataclass(frozen=True)
class TreatmentFields:
    """The form's text as typed (nothing parsed yet)."""

    bottle: str = ""
    reagent: str = ""
    added: str = ""
    stage_added: tuple[str, ...] = ()
    stage_ph: tuple[str, ...] = ()
    vented_ph: str = ""
    final_ph: str = ""
    final_volume: str = ""
    temperature: str = ""
    route: str = ROUTE_DRAIN
    performed_by: str = ""
    note: str = ""


@dataclass(frozen=True)
class Amount:
    """An amount added: litres of a solution or grams of a solid."""

    value: float
    unit: str
    """``L`` or ``g``."""
    text: str = ""


@dataclass(frozen=True)
class TreatmentReadings:
    """The treatment as read: the bottle the reagent came from, or ``reagent_text`` for
    one not from a bottle (with a bottle, a reagent named too must be the bottle's)."""

    bottle_id: int | None
    reagent_text: str | None
    added: Amount
    stage_added: tuple[float, ...]
    stage_ph: tuple[float, ...]
    vented_ph: float | None
    final_ph: float
    final_volume_l: float | None
    temperature_c: float | None
    route: str
    performed_by: str = ""
    note: str = ""

    def to_dict(self) -> dict:
        d = asdict(self)
        d["added"] = {"value": self.added.value, "unit": self.added.unit,
                      "text": self.added.text}
        return d


def read_amount(text: str, what: str = "amount added", *, field_name: str = "added") -> Amount:
    """``'2.5 L'``, ``'250 mL'`` (a solution) or ``'120 g'`` (a solid), above zero."""
    raw = (text or "").strip()
    kind = quantities.unit_kind(raw)
    if kind == "mass":
        value, unit, most = quantities.mass_g(raw, what=what), "g", MAX_AMOUNT_G
    elif kind == "volume":
        value, unit, most = quantities.volume_l(raw, what=what), "L", MAX_AMOUNT_L
    else:
        raise InvalidInput(what, text, "expected a volume (e.g. 2.5 L) or a mass (e.g. "
                           "120 g)", field=field_name)
    if not math.isfinite(value) or value <= 0:
        raise InvalidInput(what, text, "must be greater than zero", field=field_name)
    if value > most:
        raise InvalidInput(what, text, f"more than carboy accepts ({most:g} {unit})",
                           field=field_name)
    return Amount(value, unit, raw)


def read_final_volume(text: str) -> float:
    """The final volume measured, L (above zero)."""
    value = quantities.volume_l(text, what="final volume")
    if not value > 0 or value > MAX_AMOUNT_L:
        raise InvalidInput("final volume", text, f"expected above 0 and at most "
                           f"{MAX_AMOUNT_L:g} L", field="final_volume")
    return value


def read_temperature(text: str) -> float:
    """A temperature measured, °C (0–100)."""
    value = quantities.temperature_c(text, what="temperature")
    check_temperature(value)
    return value


def read_route(text: str) -> str:
    value = (text or ROUTE_DRAIN).strip().lower().replace(" ", "-")
    if value == "licensed":
        value = "licensed-disposal"
    if value not in ROUTES:
        raise InvalidInput("route", text, "expected " + " or ".join(ROUTES), field="route")
    return value


def read_readings(form: FormReader, stage_ph: Sequence[str], vented: str,
                  ) -> tuple[tuple[float, ...] | None, float | None]:
    """The stage pH readings and the pH after venting (None: not given or unreadable)."""
    stages: list[float] = []
    if len(stage_ph) > MAX_STAGES:
        form.fail("stage_ph", InvalidInput("stage pH readings", len(stage_ph),
                                           f"at most {MAX_STAGES}", field="stage_ph"))
    for n, text in enumerate(stage_ph[:MAX_STAGES], 1):
        ph = form.read("stage_ph", read_ph, text, f"pH after stage {n}",
                       field_name="stage_ph")
        if ph is None:
            return None, None
        stages.append(ph)
    vented_ph = form.read("vented_ph", read_ph, vented, "pH after venting",
                          field_name="vented_ph") if (vented or "").strip() else None
    return tuple(stages), vented_ph


def _stage_amounts(form: FormReader, fields: TreatmentFields, added: Amount | None,
                   ) -> tuple[float, ...]:
    out = []
    for n, text in enumerate(fields.stage_added[:MAX_STAGES], 1):
        amount = form.read("stage_added", read_amount, text, f"amount of stage {n}",
                           field_name="stage_added")
        if amount is None:
            return ()
        if added is not None and amount.unit != added.unit:
            form.fail("stage_added", InvalidInput(f"amount of stage {n}", text,
                                                  f"must be in {added.unit}, as the total",
                                                  field="stage_added"))
            return ()
        out.append(amount.value)
    if out and added is not None and abs(sum(out) - added.value) > STAGE_TOLERANCE * added.value:
        form.fail("stage_added", InvalidInput(
            "stage amounts", " + ".join(fields.stage_added),
            f"add up to {sum(out):.4g} {added.unit}, not the {added.value:.4g} {added.unit} "
            "added in all", field="stage_added"))
    return tuple(out)


def _reagent(form: FormReader, fields: TreatmentFields, catalog) -> tuple[int | None, str | None]:
    has_bottle, has_reagent = bool(fields.bottle.strip()), bool(fields.reagent.strip())
    if not has_bottle and not form.need("bottle", fields.reagent, NEED_REAGENT):
        return None, None
    bid = None
    if has_bottle:
        bid = form.read("bottle", bottle_ref, fields.bottle)
        if bid is None and "bottle" not in form.reading.errors:
            form.fail("bottle", InvalidInput("bottle", fields.bottle, "expected a bottle id "
                                             "such as #7", field="bottle"))
    if not has_reagent:
        return bid, None
    reagent = form.read("reagent", parse_reagent, fields.reagent, catalog)
    return bid, (reagent.text if reagent is not None else None)


def read(fields: TreatmentFields, catalog=None) -> Reading[TreatmentReadings]:
    """Parse the form; every problem is named by its field (see :data:`FIELDS`)."""
    form = FormReader()
    final = form.read("final_ph", read_ph, fields.final_ph, "final pH", field_name="final_ph") \
        if form.need("final_ph", fields.final_ph, NEED_PH) else None
    bottle_id, reagent_text = _reagent(form, fields, catalog)
    added = form.read("added", read_amount, fields.added) \
        if form.need("added", fields.added, NEED_ADDED) else None
    if added is not None and reagent_text is not None and bottle_id is None:
        solid = parse_reagent(reagent_text, catalog).is_solid
        if solid != (added.unit == "g"):
            form.fail("added", InvalidInput("amount added", fields.added,
                                            "a solid reagent is weighed (g), a solution "
                                            "measured (L, mL)", field="added"))
    stage_added = _stage_amounts(form, fields, added)
    stages, vented = read_readings(form, fields.stage_ph, fields.vented_ph)
    volume = form.read("final_volume", read_final_volume, fields.final_volume) \
        if fields.final_volume.strip() else None
    temperature = form.read("temperature", read_temperature, fields.temperature) \
        if fields.temperature.strip() else None
    route = form.read("route", read_route, fields.route)
    if len(fields.note or "") > 2000 or len(fields.performed_by or "") > 200:
        form.fail("note", "too long (2000 characters at most)")
    value = None
    if added is not None and final is not None and route is not None and stages is not None:
        value = TreatmentReadings(bottle_id, reagent_text, added, stage_added, stages, vented,
                                  final, volume, temperature, route,
                                  " ".join((fields.performed_by or "").split()),
                                  (fields.note or "").strip())
    return form.done(value)
