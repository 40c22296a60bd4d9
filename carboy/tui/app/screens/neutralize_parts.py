"""The Neutralize screen's parts: the sample and reagent choosers' options, the container
summary, the plan summary with the metals, and the messages its workers post."""

from __future__ import annotations

from textual.message import Message

from carboy.model.forms.neutralize import ContainerSample, conc_text
from carboy.store.statuses import ContainerStatus
from carboy.tui.wording import volume

TYPED = "typed"
TYPED_TITLE = "components typed in"



def sample_options(containers, choices) -> list[tuple[str, str]]:
    """The sample chooser: typed components, every container, bottles that can be a sample."""
    return ([(TYPED_TITLE, TYPED)]
            + [(f"waste {label} ({ContainerStatus(status).words})", f"c:{label}")
               for label, status in containers]
            + [(f"bottle {c.title}", f"b:{c.bottle_id}") for c in choices if c.kind == "sample"])


def reagent_options(choices, direction: str | None) -> tuple[list[tuple[str, str]], tuple]:
    """The reagent chooser: bottles of bases (or acids, or both while the direction is
    unknown), and the kinds offered."""
    kinds = {"base": ("base",), "acid": ("acid",)}.get(direction or "", ("base", "acid"))
    return [(c.title, f"r:{c.bottle_id}") for c in choices if c.kind in kinds], kinds


def container_summary(c: ContainerSample) -> str:
    """The lines under the sample chooser when a container is loaded."""
    comp = ", ".join(f"{k} {conc_text(n / c.volume_l)}" for k, n in c.moles.items()
                     if c.volume_l > 0)
    status = ContainerStatus(c.status)
    head = (f"{c.label} · {status.words} · {volume(c.volume_l)} of {volume(c.capacity_l)} · "
            f"{c.location}")
    if not ContainerStatus(c.status).can_record_neutralization:
        head += f"\n{c.label} is {status.state}: no neutralization can be recorded for it"
    return head + "\n" + (comp or "(no additions recorded)")


def window_values(old, new, boxes) -> list[str]:
    """The window fields' text under the disposal rules ``new``: a field still showing the
    old rules' edge (or the form's default) takes the new edge; one a person typed stays."""
    from carboy.model.forms.neutralize import DEFAULTS

    was = old.window if old is not None else (float(DEFAULTS["window_low"]),
                                             float(DEFAULTS["window_high"]))
    out = []
    for box, before, now, default in zip(boxes, was, new.window,
                                         (DEFAULTS["window_low"], DEFAULTS["window_high"])):
        typed = box.value.strip()
        out.append(f"{now:g}" if typed in (f"{before:g}", default) else box.value)
    return out


# -- messages ------------------------------------------------------------------------------

class ChoicesLoaded(Message):
    def __init__(self, choices, containers, catalog, error: str = "", *,
                 profile=None) -> None:
        super().__init__()
        self.choices, self.containers, self.catalog = choices, containers, catalog
        self.error = error
        self.profile = profile
        """The storeroom's disposal rules (None when they could not be read)."""


class ContainerLoaded(Message):
    def __init__(self, label: str, info: ContainerSample | None, catalog,
                 error: str = "") -> None:
        super().__init__()
        self.label, self.info, self.catalog, self.error = label, info, catalog, error


class Recorded(Message):
    def __init__(self, label: str, entry_id: int | None, measured_ph, error: str = "", *,
                 warnings: tuple[str, ...] = ()) -> None:
        super().__init__()
        self.label, self.entry_id, self.measured_ph = label, entry_id, measured_ph
        self.error = error
        self.warnings = warnings
