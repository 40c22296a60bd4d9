"""The neutralization form: a sample, a reagent, a target pH and window, a temperature.

The sample is either components typed with a volume (``H2SO4=0.05M NaH2PO4=10mM`` in
``250 mL``) or a stored waste container, whose contents the store reads
(:class:`ContainerSample`).  :func:`read` parses the fields; :func:`evaluate` also
plans, so the Neutralize screen and ``carboy neutralize`` give the same answer for the
same input.

A waste holding cyanide or sulfide is never planned towards acid: the planner raises
:class:`~carboy.errors.HazardRefused` with the reason and what to do instead
(:func:`carboy.model.cautions.refuse_plan`, in its start step).  Every plan carries the
waste's own cautions and the drain verdict of the container's stream and the
compatibility rules (:func:`carboy.model.cautions.amend`, the planner's last step), for
which :func:`plan` passes the compounds and the container's stream.
"""

from __future__ import annotations

import time
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field

from carboy.errors import (
    CarboyError,
    InvalidInput,
    Refused,
    TemperatureOutOfRange,
    UnknownCompound,
)
from carboy.model import cautions, quantities
from carboy.model.components import read_component
from carboy.model.forms import FormReader, Reading, read_ph, read_window
from carboy.model.mixture import Mixture
from carboy.model.reagents import Reagent, parse_reagent
from carboy.model.water import check_temperature

DEFAULTS = {"target": "7.0", "window_low": "6.0", "window_high": "9.0",
            "temperature": "25 °C"}
ACTIVITY_CHOICES = ("auto", "pitzer", "davies", "ideal")
FIELDS = ("components", "volume", "temperature", "reagent", "target", "window")

NEED_COMPONENTS = ("needed: the components, e.g. H2SO4=0.05M NaH2PO4=10mM, or a waste "
                   "container")
NEED_VOLUME = "needed: the sample's volume, e.g. 250 mL or 1,5 L"
NEED_REAGENT = "needed: pick a stock bottle or type e.g. NaOH=1M or NaHCO3"


@dataclass(frozen=True)
class NeutralizeFields:
    """The form's text as typed (nothing parsed yet).

    ``components`` is one text (split at spaces, commas or semicolons) or a sequence of
    ``NAME=CONC`` items (as on the command line).
    """

    components: str | tuple[str, ...] = ""
    volume: str = ""
    reagent: str = ""
    target: str = DEFAULTS["target"]
    window_low: str = DEFAULTS["window_low"]
    window_high: str = DEFAULTS["window_high"]
    temperature: str = DEFAULTS["temperature"]
    activity: str = "auto"


@dataclass(frozen=True, eq=False)
class RecordedPlan:
    """The inputs of the plan last recorded for a container (a ``planned`` one), so that
    opening it again shows that plan, not an empty form.  ``fields`` holds only the form
    fields the record gives, as text (``reagent``, ``target``, ``window_low``, ...)."""

    entry_id: int
    recorded_at: str
    recorded_by: str
    fields: Mapping[str, str]

    def heading(self) -> str:
        return (f"plan of entry #{self.entry_id} ({self.recorded_at[:10]}, "
                f"{self.recorded_by}) loaded")


def recorded_fields(snapshot: Mapping) -> dict[str, str]:
    """The form fields a neutralization entry's snapshot records (``plan.inputs``):
    reagent, target pH, window edges, temperature and activity model, each only when the
    record holds it as text or a number (an older or foreign record gives fewer)."""
    plan = snapshot.get("plan") if isinstance(snapshot, Mapping) else None
    inputs = plan.get("inputs") if isinstance(plan, Mapping) else None
    if not isinstance(inputs, Mapping):
        return {}
    window = inputs.get("window")
    edges = window if isinstance(window, (list, tuple)) and len(window) == 2 else (None, None)
    found = {"reagent": inputs.get("reagent"), "target": inputs.get("target_pH"),
             "window_low": edges[0], "window_high": edges[1],
             "temperature": inputs.get("temperature"), "activity": inputs.get("activity")}
    out = {name: f"{value:g}" if isinstance(value, float) else str(value)
           for name, value in found.items()
           if isinstance(value, (str, int, float)) and not isinstance(value, bool)
           and str(value).strip()}
    if out.get("activity") not in ACTIVITY_CHOICES:
        out.pop("activity", None)
    return out


@dataclass(frozen=True, eq=False)
class ContainerSample:
    """A stored waste container's contents, as the store reads them for planning."""

    label: str
    status: str
    volume_l: float
    capacity_l: float
    location: str
    moles: Mapping[str, float]
    hazards: frozenset[str]
    notes: str = ""
    contents: Mapping[str, float] = field(default_factory=dict)
    """Mol of each compound logged (compound key -> mol)."""
    stream: str | None = None
    material: str | None = None
    recorded: RecordedPlan | None = None
    """The plan last recorded for a ``planned`` container (None otherwise)."""


@dataclass(frozen=True, eq=False, repr=False)
class NeutralizeRequest:
    """Everything the planner needs, read and checked."""

    mixture: Mixture
    hazards: frozenset[str]
    reagent: Reagent
    target_pH: float
    window: tuple[float, float]
    activity: str
    temperature_c: float
    container: ContainerSample | None = None
    compounds: Mapping[str, float] = field(default_factory=dict)
    """Mol of each compound in the sample (typed, or logged into the container)."""


@dataclass(eq=False, repr=False)
class PlanReading(Reading):
    """A reading whose value is the plan; ``direction`` ('base' or 'acid') is known as soon
    as the sample and target are, even while another field is wrong."""

    direction: str | None = None
    request: NeutralizeRequest | None = None
    elapsed_ms: float = 0.0
    disposal: object | None = None
    """The plan under the storeroom's disposal rules
    (:class:`~carboy.model.disposal_rules.DisposalPlan`), when a profile was given."""


def conc_text(molar: float) -> str:
    """``0.05`` -> ``'50 mM'``; ``0.5`` -> ``'0.5 M'``."""
    if molar < 0.1:
        return f"{molar * 1000:.3g} mM"
    return f"{molar:.3g} M"


def split_components(text: str) -> list[str]:
    """``'H2SO4=0.05 M, NaH2PO4=10mM'`` -> ``['H2SO4=0.05 M', 'NaH2PO4=10mM']``.

    Components are separated by commas, semicolons or spaces; a unit typed after a
    space stays with its number, and a name of several words with its ``=``.
    """
    words = text.replace(";", " ").replace(",", " , ").split()
    items: list[str] = []
    pending = ""
    for word in words:
        if word == ",":
            # a decimal comma sits between digits: "0,05" was split into "0 , 05"
            if items and items[-1][-1:].isdigit():
                items[-1] += ","
            continue
        if items and items[-1].endswith(","):
            items[-1] += word
            continue
        if "=" in word:
            items.append((pending + " " + word).strip())
            pending = ""
        elif items and (items[-1][-1:].isdigit() or items[-1].endswith(".")):
            items[-1] += " " + word
        else:
            pending = (pending + " " + word).strip()
    if pending:
        items.append(pending)
    return items


def _items(components: str | Sequence[str]) -> list[str]:
    if isinstance(components, str):
        return split_components(components)
    return [c for c in components if c.strip()]


def _typed_sample(form: FormReader, fields: NeutralizeFields, t_c: float, catalog):
    """(mixture, hazards, compounds in mol) of a typed sample, or None with the fields'
    errors recorded."""
    items = _items(fields.components)
    if not items:
        form.need("components", "", NEED_COMPONENTS)
    has_volume = form.need("volume", fields.volume, NEED_VOLUME)
    if not items:
        return None
    volume = form.read("volume", quantities.volume_l, fields.volume, "volume") \
        if has_volume else None
    if volume is not None and volume <= 0:
        form.fail("volume", InvalidInput("volume", fields.volume, "must be greater than zero"))
        volume = None
    parsed, hazards, echo = [], set(), []
    for item in items:
        if quantities.unit_kind(item.rpartition("=")[2]) == "mass":
            form.fail("components", InvalidInput(
                "component", item, "is a mass: a typed sample takes concentrations (e.g. "
                "NaF=0.05M); log a solid into a waste container and plan the container"))
            return None
        comp = form.read("components", read_component, item, catalog, allow_mass=False)
        if comp is None:
            return None
        parsed.append((comp.compound, comp.conc_molar))
        hazards |= comp.compound.hazards
        echo.append(f"{comp.compound.key} {conc_text(comp.conc_molar)}")
    if volume is None:
        return None
    form.echo("components", "understood: " + " · ".join(echo) + f" in {volume:g} L")
    form.echo("volume", f"understood: {volume:g} L")
    mixture = Mixture.from_compounds(parsed, volume_l=volume, temperature_c=t_c)
    compounds: dict[str, float] = {}
    for compound, conc in parsed:
        compounds[compound.key] = compounds.get(compound.key, 0.0) + conc * volume
    return mixture, frozenset(hazards), compounds


def _temperature(text: str) -> float:
    """A temperature the model covers (0–100 °C)."""
    t_c = quantities.temperature_c(text or DEFAULTS["temperature"])
    check_temperature(t_c)
    return t_c


@dataclass(eq=False, repr=False)
class _Parts:
    """What could be read of each field (None where it could not)."""

    t_c: float | None = None
    sample: tuple[Mixture, frozenset[str], Mapping[str, float]] | None = None
    reagent: Reagent | None = None
    target: float | None = None
    window: tuple[float, float] | None = None


def _read_parts(form: FormReader, fields: NeutralizeFields, catalog,
                container: ContainerSample | None) -> _Parts:
    parts = _Parts()
    parts.t_c = form.read("temperature", _temperature, fields.temperature)
    if parts.t_c is not None:
        form.echo("temperature", f"understood: {parts.t_c:g} °C")
    t_c = 25.0 if parts.t_c is None else parts.t_c
    unknown = sorted(set(container.moles) - set(catalog.systems) - set(catalog.ions)) \
        if container is not None else []
    if unknown:
        form.fail("sample", InvalidInput("waste container", container.label,
                                         f"holds {', '.join(unknown)}, which the catalog does "
                                         "not know"))
    elif container is not None and container.volume_l <= 0:
        form.fail("sample", InvalidInput("waste container", container.label, "has no recorded "
                                         "volume yet: log an addition with its volume first"))
    elif container is not None:
        parts.sample = (Mixture.from_moles(dict(container.moles), container.volume_l,
                                           temperature_c=t_c), container.hazards,
                        dict(container.contents))
    else:
        parts.sample = _typed_sample(form, fields, t_c, catalog)
    if form.need("reagent", fields.reagent, NEED_REAGENT):
        parts.reagent = form.read("reagent", parse_reagent, fields.reagent, catalog)
        if parts.reagent is not None:
            form.echo("reagent", f"understood: {parts.reagent.describe()}")
    parts.target = form.read("target", read_ph, fields.target, "target pH",
                             field_name="target")
    if parts.target is not None:
        form.echo("target", f"understood: pH {parts.target:g}")
    parts.window = form.read("window", read_window, fields.window_low, fields.window_high)
    if parts.window is not None:
        lo, hi = parts.window
        form.echo("window", f"window pH {lo:g}–{hi:g}; local rules set the real one")
    if fields.activity not in ACTIVITY_CHOICES:
        form.fail("activity", InvalidInput("activity model", fields.activity,
                                           f"choose one of {', '.join(ACTIVITY_CHOICES)}"))
    return parts


def _request(parts: _Parts, fields: NeutralizeFields,
             container: ContainerSample | None) -> NeutralizeRequest | None:
    if None in (parts.sample, parts.reagent, parts.target, parts.window, parts.t_c):
        return None
    return NeutralizeRequest(parts.sample[0], parts.sample[1], parts.reagent, parts.target,
                             parts.window, fields.activity, parts.t_c, container,
                             parts.sample[2])


def read(fields: NeutralizeFields, catalog, container: ContainerSample | None = None,
         ) -> Reading[NeutralizeRequest]:
    """Parse the form; every problem is named by its field."""
    form = FormReader()
    parts = _read_parts(form, fields, catalog, container)
    return form.done(_request(parts, fields, container))


def safe_temperature(profile) -> tuple[float | None, str]:
    """The safe temperature a plan keeps the batch under, and whose it is: the disposal
    profile's (:class:`~carboy.model.disposal_profile.DisposalProfile`) when there is one,
    else carboy's default (None)."""
    if profile is None:
        return None, ""
    from carboy.model.disposal_profile import STOREROOM

    whose = ("the storeroom's disposal rules"
             if profile.origin.get("max_temperature_c") == STOREROOM
             else "carboy's placeholder disposal rules")
    return float(profile.max_temperature_c), whose


def plan(request: NeutralizeRequest, catalog, *, curve_points: int | None = None,
         profile=None):
    """The neutralization plan of a read request (see :func:`carboy.model.planner`), with
    the waste's own cautions and drain verdict (the planner applies
    :func:`carboy.model.cautions.amend` to the compounds and the container's stream).
    Under a disposal ``profile`` the batch is kept under the profile's safe temperature
    (:func:`safe_temperature`).

    Raises :class:`~carboy.errors.HazardRefused` for a cyanide or sulfide waste that the plan
    would acidify (no dose, stages or curve are computed).
    """
    from carboy.model.planner import plan_neutralization

    extra = {} if curve_points is None else {"curve_points": curve_points}
    safe_c, safe_from = safe_temperature(profile)
    if safe_c is not None:
        extra |= {"safe_temperature_c": safe_c, "safe_from": safe_from}
    box = request.container
    waste = cautions.Sample(dict(request.compounds), box.stream if box else None,
                            box.material if box else None)
    return plan_neutralization(
        request.mixture, request.reagent, target_pH=request.target_pH, window=request.window,
        activity=request.activity, catalog=catalog, hazards=request.hazards, waste=waste,
        **extra)


def _field_of(err: CarboyError, container: ContainerSample | None = None) -> str:
    """The field a planner error belongs to (the planner's ``sample`` is the typed
    components, or the container)."""
    if isinstance(err, TemperatureOutOfRange):
        return "temperature"
    if isinstance(err, UnknownCompound):
        return "reagent"
    if isinstance(err, InvalidInput):
        if err.field == "sample" and container is None:
            return "components"
        return err.field or "plan"
    return "plan"


def _initial_ph(mixture: Mixture, activity: str, catalog) -> float:
    from carboy.model.speciation import speciate

    return float(speciate(mixture, activity=activity, catalog=catalog).pH)


def _direction(mixture: Mixture, target: float, activity: str, catalog) -> str | None:
    try:
        ph0 = _initial_ph(mixture, activity, catalog)
    except CarboyError:
        return None
    return "base" if ph0 < target else "acid"


def evaluate(fields: NeutralizeFields, catalog, container: ContainerSample | None = None,
             *, curve_points: int | None = None, profile=None) -> PlanReading:
    """Read the form and plan; never raises (every problem comes back by field).

    With ``profile`` (a :class:`~carboy.model.disposal_profile.DisposalProfile`) the
    reading also carries the plan under the storeroom's rules (``disposal``)."""
    started = time.perf_counter()
    form = FormReader()
    parts = _read_parts(form, fields, catalog, container)
    request = _request(parts, fields, container)
    base = form.done(request)
    out = PlanReading(None, base.errors, base.echoes, base.missing, base.problems)
    if base.ok:
        out.request = request
        try:
            result = plan(request, catalog, curve_points=curve_points, profile=profile)
            out.value, out.direction = result, result.direction
            if profile is not None:
                from carboy.model.disposal_rules import apply

                out.disposal = apply(result, profile, container,
                                     compounds=request.compounds, catalog=catalog)
        except CarboyError as err:
            name = _field_of(err, container)
            out.errors[name] = str(err) if name != "plan" or isinstance(err, Refused) else \
                f"the planner could not finish: {err}"
            out.problems.append((name, err))
        except Exception as err:  # noqa: BLE001 - shown in place, never as a traceback
            out.errors["plan"] = f"the planner failed ({type(err).__name__}: {err})"
    if out.direction is None and parts.sample is not None and parts.target is not None:
        out.direction = _direction(parts.sample[0], parts.target, fields.activity, catalog)
    out.elapsed_ms = (time.perf_counter() - started) * 1000.0
    return out


def snapshot(fields: NeutralizeFields, plan_, *, container_label: str | None,
             reagent_bottle_id: int | None, recorded_from: str, disposal=None) -> dict:
    """What the journal keeps of a neutralization: the inputs as typed, the plan as
    computed then (a later catalog change never rewrites it), and the plan under the
    storeroom's disposal rules when there is one."""
    out = {
        "inputs": {
            "container": container_label,
            "reagent": fields.reagent, "reagent_bottle_id": reagent_bottle_id,
            "target_pH": fields.target, "window": [fields.window_low, fields.window_high],
            "temperature": fields.temperature, "activity": fields.activity,
        },
        "plan": plan_.to_dict(),
        "recorded_from": recorded_from,
    }
    if disposal is not None:
        out["disposal"] = disposal.to_dict()
    return out
