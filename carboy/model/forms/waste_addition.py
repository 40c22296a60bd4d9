"""The waste-addition form: what went into a container (a compound and its concentration,
or a solid's mass), the volume and a note.

The app's dialog asks for the compound and its amount separately; ``carboy waste add``
takes them as one ``NAME=AMOUNT``.  Both read them here, and the store logs what this
form read (``carboy.store.waste.add``), so a text means the same addition everywhere.
"""

from __future__ import annotations

from dataclasses import dataclass

from carboy.errors import InvalidInput
from carboy.model import quantities
from carboy.model.components import Component, read_component
from carboy.model.forms import FormReader, Reading

MAX_ADDITION_L = 1000.0
"""No single addition is larger than the largest container carboy accepts."""
MAX_NOTE_CHARS = 2000

NEED_COMPOUND = "needed: a formula or name, e.g. HCl"
NEED_AMOUNT = "needed: a concentration, e.g. 1 M (or a solid's mass, e.g. 2 g)"
NEED_VOLUME = "needed for a solution, e.g. 250 mL"


@dataclass(frozen=True)
class AdditionFields:
    """The form's text as typed."""

    compound: str = ""
    amount: str = ""
    volume: str = ""
    note: str = ""

    @classmethod
    def of_component(cls, component: str, volume: str = "", note: str = "") -> AdditionFields:
        """The fields of a ``NAME=AMOUNT`` as typed on the command line."""
        name, sep, amount = (component or "").rpartition("=")
        if not sep:
            name, amount = component or "", ""
        return cls(name.strip(), amount.strip(), volume or "", note or "")


@dataclass(frozen=True)
class Addition:
    """An addition as read: the component, its volume in L (0 for a solid without one)."""

    component: Component
    volume_l: float
    note: str = ""


def read_volume(text: str, *, required: bool) -> float:
    """The volume added in L; a solution needs one, a solid may go without (0)."""
    if not (text or "").strip():
        if required:
            raise InvalidInput("volume", text, "is required for a solution, e.g. '250 mL'",
                               field="volume")
        return 0.0
    volume = quantities.volume_l(text)
    if required and volume <= 0:
        raise InvalidInput("volume", text, "must be greater than zero", field="volume")
    if volume > MAX_ADDITION_L:
        raise InvalidInput("volume", text, f"more than any container holds "
                           f"({MAX_ADDITION_L:g} L)", field="volume")
    return volume


def _amount_echo(component: Component, amount: str) -> str:
    if component.mass_g is not None:
        return f"→ {component.mass_g:g} g of solid (volume optional)"
    if "%" in amount:
        return f"→ {amount.strip()} w/w ≈ {component.conc_molar:.4g} M"
    return f"→ {component.conc_molar:.4g} M"


def read(fields: AdditionFields, catalog) -> Reading[Addition]:
    """Parse the form; every problem is named by its field (compound, amount, volume,
    note)."""
    form = FormReader()
    compound = None
    if form.need("compound", fields.compound, NEED_COMPOUND):
        compound = form.read("compound", catalog.compound, fields.compound.strip())
        if compound is not None:
            form.echo("compound", f"→ {compound.name} ({compound.formula or compound.key})")
    component = None
    if form.need("amount", fields.amount, NEED_AMOUNT) and compound is not None:
        component = form.read("amount", read_component,
                              f"{compound.key}={fields.amount.strip()}", catalog)
        if component is not None:
            form.echo("amount", _amount_echo(component, fields.amount))
    solid = component is not None and component.mass_g is not None
    volume = form.read("volume", read_volume, fields.volume, required=not solid) \
        if (fields.volume or "").strip() or component is not None else None
    if volume:
        form.echo("volume", f"→ {volume:g} L")
    if len(fields.note or "") > MAX_NOTE_CHARS:
        form.fail("note", InvalidInput("note", fields.note[:40] + "...",
                                       f"is too long ({MAX_NOTE_CHARS} characters at most)"))
    if component is None or volume is None:
        return form.done(None)
    return form.done(Addition(component, volume, (fields.note or "").strip()))
