"""Every compatibility rule as a stored container and an addition, in both directions.

Shared by the store, command-line and app tests of the refusal at logging.  A record is
(rule, direction, stream, material, what the container already holds, the addition):
direction ``a`` means the compound added matches the rule's side ``a`` and the container
its side ``b``; ``b`` the reverse.  A side made only of container facts (a stream, a
material) can never be the addition's side, so that direction has no record;
``possible_directions`` says which exist and the tests check the table against it.
Volumes and strengths are invented, of the size a storeroom logs.
"""

from __future__ import annotations

from dataclasses import dataclass

from carboy.model import compatibility


@dataclass(frozen=True)
class Case:
    rule: str
    direction: str
    stream: str
    held: tuple[tuple[str, str | None], ...]
    """(component, volume) already logged (a solid's volume may be None)."""
    component: str
    volume: str | None
    material: str | None = None

    @property
    def id(self) -> str:
        return f"{self.rule}-{self.direction}-{self.component.split('=')[0]}"

    @property
    def severity(self) -> str:
        return next(r.severity for r in compatibility.rules() if r.id == self.rule)


CASES = (
    Case("cyanide-acid", "a", "acid", (("HCl=0.1M", "1 L"),), "NaCN=0.1M", "500 mL"),
    Case("cyanide-acid", "b", "cyanide_sulfide", (("NaCN=0.1M", "1 L"), ("NaOH=0.1M", "1 L")),
         "HCl=1M", "100 mL"),
    Case("sulfide-acid", "a", "acid", (("H2SO4=0.1M", "1 L"),), "Na2S=0.1M", "100 mL"),
    Case("sulfide-acid", "b", "cyanide_sulfide", (("Na2S=0.1M", "1 L"),), "H3PO4=0.1M",
         "100 mL"),
    Case("hypochlorite-acid", "a", "acid", (("HCl=0.1M", "1 L"),), "NaOCl=0.1M", "100 mL"),
    Case("hypochlorite-acid", "b", "alkaline", (("NaOCl=0.1M", "1 L"),), "HNO3=0.1M",
         "100 mL"),
    Case("hypochlorite-ammonium", "a", "alkaline", (("NH4Cl=0.1M", "1 L"),), "NaOCl=0.1M",
         "100 mL"),
    Case("hypochlorite-ammonium", "b", "alkaline", (("Ca(OCl)2=0.05M", "1 L"),), "NH3=1M",
         "100 mL"),
    Case("azide-acid", "a", "acid", (("HCl=0.1M", "1 L"),), "NaN3=0.1M", "100 mL"),
    Case("azide-acid", "b", "mixed", (("NaN3=0.1M", "1 L"),), "HCl=0.1M", "100 mL"),
    Case("oxidizing-acid-organic", "a", "acid", (("CH3COOH=1M", "1 L"),), "HNO3=2M", "1 L"),
    Case("oxidizing-acid-organic", "b", "oxidizing_acid", (("HNO3=1M", "1 L"),),
         "HCOOH=0.5M", "200 mL"),
    Case("sulfuric-acid-formate-oxalate", "a", "acid", (("HCOOH=1M", "1 L"),), "H2SO4=18M",
         "100 mL"),
    Case("sulfuric-acid-formate-oxalate", "b", "acid", (("H2SO4=16M", "1 L"),),
         "H2C2O4=0.1M", "100 mL"),
    Case("azide-heavy-metal", "a", "heavy_metal", (("CuSO4=0.1M", "1 L"),), "NaN3=0.1M",
         "100 mL"),
    Case("azide-heavy-metal", "b", "mixed", (("NaN3=0.1M", "1 L"),), "Pb(NO3)2=0.1M",
         "100 mL"),
    Case("concentrated-acid-water-reactive", "a", "mixed", (("AlCl3=10 g", None),),
         "H2SO4=18M", "100 mL"),
    Case("concentrated-acid-water-reactive", "b", "mixed", (("HCl=6M", "1 L"),), "AlCl3=5 g",
         None),
    Case("hf-glass", "a", "acid", (("HCl=0.1M", "1 L"),), "HF=1M", "100 mL", "glass"),
    Case("acid-into-alkaline-stream", "a", "alkaline", (("NaOH=0.1M", "1 L"),), "HCl=0.1M",
         "100 mL"),
    Case("base-into-acid-stream", "a", "acid", (("HCl=0.1M", "1 L"),), "NaOH=0.1M", "100 mL"),
    Case("no-drain-into-drain-stream", "a", "acid", (("HCl=0.1M", "1 L"),), "CuSO4=0.1M",
         "100 mL"),
    Case("acid-water-reactive", "a", "mixed", (("AlCl3=10 g", None),), "HCl=1M", "100 mL"),
    Case("acid-water-reactive", "b", "mixed", (("HCl=1M", "1 L"),), "AlCl3=5 g", None),
)

IDS = [c.id for c in CASES]
GASES = frozenset(r.id for r in compatibility.rules() if r.gas)


def possible_directions() -> set[tuple[str, str]]:
    """(rule, direction) pairs in which an addition can match (see the docstring)."""
    container_only = {"streams", "drain_stream", "materials"}
    out = set()
    for rule in compatibility.rules():
        for name, side in (("a", rule.a), ("b", rule.b)):
            if any(not set(alt) & container_only for alt in side):
                out.add((rule.id, name))
    return out


def prepare(store, case: Case, label: str = "T-1") -> str:
    """Open the case's container and log what it already holds; returns the label."""
    from carboy.store import waste

    waste.new_container(store, label, stream=case.stream, material=case.material)
    for component, volume in case.held:
        waste.add(store, label, component, volume)
    return label


def counts(store) -> tuple[int, int]:
    """(additions, journal entries) in the database: what a refusal must leave alone."""
    return (store.scalar("SELECT count(*) FROM waste_additions"),
            store.scalar("SELECT count(*) FROM journal_entries"))
