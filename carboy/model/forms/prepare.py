"""The preparation form: a source (a concentrate, a solid or a stock bottle), one or more
target molarities, the final volume(s), and what goes on the new bottle.

:func:`read` parses the fields; :func:`plan` turns a request and its source into the
recipes, the new bottles' fields and their labels.  The Prepare screen and ``carboy
prep`` both go through these, so the same text gives the same recipe.  A source that
names a stock bottle (``#23``) comes back as ``bottle_id``; ``carboy.store.preparations``
reads the bottle and records the preparation.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from datetime import date, timedelta

from carboy.errors import InvalidInput
from carboy.model import labels, preparation, quantities, upkeep
from carboy.model.forms import FormReader, Reading, bottle_ref, read_date
from carboy.model.water import check_temperature

NEED_SOURCE = "needed: a concentrate with its strength (H2SO4=96%), a solid (NaOH) or a bottle #id"
NEED_TARGET = "needed: the target molarity, e.g. 1 M or 100 mM"
NEED_VOLUME = "needed: the final volume, e.g. 250 mL or 1 L"
MAX_STEPS = 10
"""A serial dilution longer than this is no storeroom job."""


@dataclass(frozen=True)
class PrepareFields:
    """The form's text as typed.  ``target`` and ``volume`` may hold several values (a
    serial dilution, each step made from the one before); one volume serves every step."""

    source: str = ""
    target: str | tuple[str, ...] = ""
    volume: str | tuple[str, ...] = ""
    purity: str = ""
    temperature: str = "20"
    location: str = ""
    lot: str = ""
    expires: str = ""


@dataclass(frozen=True)
class PrepareRequest:
    """The form read: the source (text already parsed, or a bottle id to read), the steps,
    and the new bottle's place, lot and expiry (None: the storeroom shelf life)."""

    source: preparation.Source | None
    bottle_id: int | None
    targets: tuple[float, ...]
    volumes: tuple[float, ...]
    temperature_c: float
    location: str = ""
    lot: str = ""
    expires: str | None = None


@dataclass(frozen=True)
class Made:
    """What a preparation makes: the recipes and, per step, the new bottle and its label."""

    recipes: tuple
    bottles: tuple[dict, ...]
    labels: tuple


def _texts(value: str | Sequence[str]) -> list[str]:
    if isinstance(value, str):
        return [value] if value.strip() else []
    return [v for v in value if v.strip()]


def read_source(text: str, purity: str, catalog) -> preparation.Source:
    """A source typed as text: ``H2SO4=96%``, ``HCl=12.1M``, ``NaOH``, ``CuSO4·5H2O`` or
    ``NaOH@97%``; ``purity`` (a solid's assay) may be given instead of ``@P``."""
    text = text.strip()
    if "@" in text:
        formula, _, assay = text.partition("@")
        if purity.strip():
            raise InvalidInput("source", text, "give the assay once, either @P or as purity")
        purity, text = assay, formula.strip()
    source = preparation.parse_source(text, catalog=catalog)
    if purity.strip():
        if source.kind != "solid":
            raise InvalidInput("purity", purity, "only a solid has an assay; a solution's "
                               "strength goes after '=', e.g. H2SO4=96%", field="purity")
        source = preparation.solid_source(source.compound, purity_percent=quantities.percent(
            purity, "assay"), catalog=catalog)
    return source


def _steps(form: FormReader, fields: PrepareFields) -> tuple[list[float], list[float]]:
    targets = [form.read("target", quantities.concentration_molar, t, "target concentration")
               for t in _texts(fields.target)]
    volumes = [form.read("volume", quantities.volume_l, v, "final volume")
               for v in _texts(fields.volume)]
    if len(targets) > MAX_STEPS:
        form.fail("target", InvalidInput("target", len(targets),
                                         f"at most {MAX_STEPS} steps in one series"))
    if len(volumes) == 1:
        volumes = volumes * len(targets)
    elif targets and volumes and len(volumes) != len(targets):
        form.fail("volume", InvalidInput("final volume", f"{len(volumes)} volumes",
                                         f"give one, or one per target ({len(targets)})"))
    if None not in targets and targets:
        form.echo("target", "→ " + ", then ".join(f"{t:.4g} M" for t in targets))
    if None not in volumes and volumes:
        form.echo("volume", "→ " + ", ".join(f"{v * 1000:.4g} mL" for v in volumes))
    return targets, volumes


def _water_temperature(text: str) -> float:
    """The water's temperature, within the range the model covers (0–100 °C)."""
    return check_temperature(quantities.temperature_c(text, "water temperature"))


def read(fields: PrepareFields, catalog) -> Reading[PrepareRequest]:
    """Parse the form; every problem is named by its field."""
    form = FormReader()
    source, bottle_id = None, None
    if form.need("source", fields.source, NEED_SOURCE):
        bottle_id = form.read("source", bottle_ref, fields.source)
        if bottle_id is None and not form.failed("source"):
            source = form.read("source", read_source, fields.source, fields.purity, catalog)
            if source is not None:
                form.echo("source", f"→ {source.label}")
        elif bottle_id is not None and fields.purity.strip():
            form.fail("purity", InvalidInput("purity", fields.purity,
                                             "a bottle's own assay or strength is used"))
    has_target = form.need("target", "".join(_texts(fields.target)), NEED_TARGET)
    has_volume = form.need("volume", "".join(_texts(fields.volume)), NEED_VOLUME)
    targets, volumes = _steps(form, fields) if has_target and has_volume else ([], [])
    t_c = form.read("temperature", _water_temperature, fields.temperature or "20")
    expires = form.read("expires", read_date, fields.expires, "expiry date") \
        if fields.expires.strip() else None
    if fields.location.strip():
        form.echo("location", "→ " + fields.location.strip())
    if form.failed() or (source is None and bottle_id is None):
        return form.done(None)
    return form.done(PrepareRequest(source, bottle_id, tuple(targets), tuple(volumes), t_c,
                                    fields.location.strip(), fields.lot.strip(), expires))


def amount_used(recipe, unit: str) -> str:
    """What a recipe draws from a bottle kept in ``unit`` (``L`` or ``g``), as text."""
    if unit == "g" or recipe.stock_volume_ml is None:
        return f"{recipe.stock_mass_g:.6g} g"
    return f"{recipe.stock_volume_ml:.6g} mL"


def new_bottle_fields(recipe, today: date, *, location: str = "", lot: str = "",
                      expires: str | None = None) -> dict:
    """The stock-bottle fields of what a recipe makes; expiry defaults to the storeroom
    shelf life of the compound."""
    expires = expires or (today + timedelta(
        days=upkeep.shelf_life_days(recipe.source.compound.key))).isoformat()
    return {"compound": recipe.source.compound.key,
            "label_strength": f"{recipe.target_molar:.6g} M",
            "container_size": f"{recipe.final_volume_ml:.6g} mL",
            "location": location, "lot": lot, "received_on": today.isoformat(),
            "opened_on": today.isoformat(), "expires_on": expires,
            "notes": f"prepared from {recipe.source.label}"}


def label_for(recipe, fields: dict, prepared_by: str):
    """The label of the bottle a recipe makes, from its fields (see new_bottle_fields)."""
    return labels.make_label(
        recipe.source.compound, conc_text=f"{recipe.target_molar:.4g} M",
        mass_percent=recipe.final_mass_percent, prepared_on=fields["received_on"],
        prepared_by=prepared_by, expires_on=fields["expires_on"], lot=fields["lot"] or None,
        source_text=recipe.source.label)


def plan(source: preparation.Source, request: PrepareRequest, *, today: date,
         prepared_by: str) -> Made:
    """The recipes from ``source`` (the request's, or its bottle's), with the new bottles
    and their labels."""
    if len(request.targets) == 1:
        recipes = (preparation.plan_recipe(source, request.targets[0], request.volumes[0],
                                           temperature_c=request.temperature_c),)
    else:
        recipes = tuple(preparation.plan_series(source, list(request.targets),
                                                list(request.volumes)))
    bottles = tuple(new_bottle_fields(r, today, location=request.location, lot=request.lot,
                                      expires=request.expires) for r in recipes)
    made_labels = tuple(label_for(r, b, prepared_by) for r, b in zip(recipes, bottles))
    return Made(recipes, bottles, made_labels)
