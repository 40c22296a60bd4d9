"""The correction form: why an entry was wrong, and the values that replace its own.

A correction never edits anything: it is a new journal entry that points at the one it
corrects and carries the corrected values, which the store applies through the same
rules as the original (``carboy.store.corrections``).  Which values an entry takes
depends on what it recorded: a treatment its readings and the amount added, a
preparation the amount drawn, any entry about a bottle the amount left in it.  This form
only reads them (every reading checked as on the treatment form).
"""

from __future__ import annotations

from dataclasses import asdict, dataclass

from carboy.model.forms import FormReader, Reading, read_ph
from carboy.model.forms.treatment import (
    Amount,
    read_amount,
    read_final_volume,
    read_readings,
    read_temperature,
)

FIELDS = ("reason", "final_ph", "vented_ph", "stage_ph", "final_volume", "temperature",
          "added", "used", "amount_left")
NEED_REASON = "needed: say what was wrong (the journal keeps it)"
MAX_REASON_CHARS = 2000


@dataclass(frozen=True)
class CorrectionFields:
    """The form's text as typed; empty means "unchanged"."""

    reason: str = ""
    final_ph: str = ""
    vented_ph: str = ""
    stage_ph: tuple[str, ...] = ()
    final_volume: str = ""
    temperature: str = ""
    added: str = ""
    used: str = ""
    amount_left: str = ""


@dataclass(frozen=True)
class CorrectionValues:
    """The corrected values as read (None or empty: unchanged)."""

    reason: str
    final_ph: float | None = None
    vented_ph: float | None = None
    stage_ph: tuple[float, ...] = ()
    final_volume_l: float | None = None
    temperature_c: float | None = None
    added: Amount | None = None
    used: Amount | None = None
    amount_left: Amount | None = None

    def given(self) -> dict:
        """The values given, by field name (what the correction changes)."""
        out = {}
        for name, value in asdict(self).items():
            if name != "reason" and value not in (None, ()):
                out[name] = value
        return out

    @property
    def readings(self) -> dict:
        """The readings among them, under the names a treatment keeps them."""
        keys = ("final_ph", "vented_ph", "stage_ph", "final_volume_l", "temperature_c")
        return {k: v for k, v in self.given().items() if k in keys}


def read(fields: CorrectionFields) -> Reading[CorrectionValues]:
    """Parse the form; every problem is named by its field (see :data:`FIELDS`)."""
    form = FormReader()
    reason = " ".join((fields.reason or "").split())
    if form.need("reason", reason, NEED_REASON) and len(reason) > MAX_REASON_CHARS:
        form.fail("reason", f"too long ({MAX_REASON_CHARS} characters at most)")
    final = form.read("final_ph", read_ph, fields.final_ph, "final pH",
                      field_name="final_ph") if fields.final_ph.strip() else None
    stages, vented = read_readings(form, fields.stage_ph, fields.vented_ph)

    def optional(name: str, reader, text: str, *args, **kw):
        return form.read(name, reader, text, *args, **kw) if (text or "").strip() else None

    volume = optional("final_volume", read_final_volume, fields.final_volume)
    temperature = optional("temperature", read_temperature, fields.temperature)
    added = optional("added", read_amount, fields.added)
    used = optional("used", read_amount, fields.used, "amount drawn", field_name="used")
    left = optional("amount_left", _read_left, fields.amount_left)
    value = CorrectionValues(reason, final, vented, stages or (), volume, temperature, added,
                             used, left)
    return form.done(value)


def _read_left(text: str) -> Amount:
    """An amount left in a bottle: zero allowed (an empty bottle)."""
    if (text or "").strip() in ("0", "0 L", "0 g", "0 mL", "empty"):
        unit = "g" if text.strip().endswith("g") else "L"
        return Amount(0.0, unit, text.strip())
    return read_amount(text, "amount left", field_name="amount_left")
