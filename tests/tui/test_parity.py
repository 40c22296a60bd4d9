"""The same input gives the same answer on the command line and in the app.

Each row is typed once: into ``carboy … --json`` and into the function the screen's
worker calls with the form's text.  Good input must give the same numbers; bad input
must be refused by both, for the same field.
"""

from __future__ import annotations

import json
from dataclasses import dataclass
from datetime import date

import pytest

from carboy.model.catalog import default_catalog
from carboy.model.forms.neutralize import NeutralizeFields, split_components
from carboy.model.forms.standardize import StandardizeFields
from carboy.store.db import open_database
from carboy.tui.app.screens import neutralize as nz_screen
from carboy.tui.app.screens import prepare as prep_screen
from carboy.tui.app.screens import standardize as std_screen
from carboy.tui.app.screens.waste_add import understand
from carboy.tui.launch import main

NEUTRALIZE = [
    # components, volume, reagent, target, window, temperature
    ("HCl=0.1M", "1 L", "NaOH=1M", "7", ("6", "9"), "25"),
    ("H2SO4=0.05M NaH2PO4=10mM", "1,5 L", "NaOH@97%", "6,5", ("6", "9"), "30"),
    ("CH3COOH=0.5M", "250 mL", "NaHCO3", "7", ("5.5", "9.5"), "20"),
    ("Na2CO3=0.2M", "500 mL", "HCl=1M", "7", ("6", "9"), "25"),
    ("HF=0.5M", "1 L", "NaOH=50%", "8", ("6", "10"), "25"),
    ("HCl=1M", "abc mL", "NaOH=1M", "7", ("6", "9"), "25"),       # bad volume
    ("HCl=1M", "1 L", "HCl=1M", "7", ("6", "9"), "25"),           # wrong direction
    ("HCl=1M", "1 L", "NaOH=1M", "15", ("6", "9"), "25"),         # bad target
    ("NaF=2 g", "1 L", "NaOH=1M", "7", ("6", "9"), "25"),         # a mass: refused by both
    ("HCl=1M", "1 L", "NaOX=1M", "7", ("6", "9"), "25"),          # unknown reagent
]


def cli(capsys, *argv) -> tuple[int, dict | None, str]:
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, (json.loads(out) if code == 0 and out.strip() else None), err


@pytest.mark.parametrize("row", NEUTRALIZE, ids=[" ".join(r[:3]) for r in NEUTRALIZE])
def test_neutralize_gives_the_same_plan_or_the_same_refusal(capsys, row):
    components, volume, reagent, target, (lo, hi), t_c = row
    code, plan, err = cli(capsys, "neutralize", *split_components(components), "--volume", volume,
                          "--reagent", reagent, "--target", target, "--window", f"{lo}:{hi}",
                          "--temperature", t_c, "--json")
    fields = NeutralizeFields(components=components, volume=volume, reagent=reagent,
                              target=target, window_low=lo, window_high=hi, temperature=t_c)
    outcome = nz_screen.compute(nz_screen.FormState(fields), catalog=default_catalog())
    if code == 0:
        app_plan = outcome.value.to_dict()
        assert outcome.ok
        for key in ("initial_pH", "proton_equivalents_mol", "drain_plan"):
            assert app_plan[key] == plan[key], key
        for dose in ("full", "to_target"):
            assert app_plan[dose]["reagent_mol"] == plan[dose]["reagent_mol"]
        assert [c["code"] for c in app_plan["cautions"]] == [c["code"] for c in plan["cautions"]]
    else:
        assert code == 2 and not outcome.ok
        name, problem = outcome.reading.problems[0]
        assert str(problem) in err, (name, err)


@dataclass
class _App:
    """What the Prepare screen's compute needs of the app."""

    db: object
    today: date = date(2025, 3, 14)
    who: str = "tester"

    def open_store(self):
        return open_database(self.db)


PREPARE = [
    ("H2SO4=96%", "1 M", "1 L"),
    ("HCl=12.1M", "0,1 M", "250 mL"),
    ("CuSO4·5H2O", "0.1 M", "250 mL"),
    ("NaOH@98%", "0.5 M", "1 L"),
    ("H2SO4=96%", "1 M", "1 q"),          # bad volume
    ("Unobtainium=2M", "1 M", "1 L"),     # unknown compound
    ("HCl=12.1M", "20 M", "1 L"),         # stronger than the source
]


@pytest.mark.parametrize("row", PREPARE, ids=[" ".join(r) for r in PREPARE])
def test_prepare_gives_the_same_recipe_or_the_same_refusal(capsys, demo_db, row):
    source, target, volume = row
    code, recipe, err = cli(capsys, "--db", str(demo_db), "prep", "--from", source, "--target",
                            target, "--volume", volume, "--json")
    outcome = prep_screen.compute({"source": source, "target": target, "volume": volume,
                                   "location": ""}, 1, _App(demo_db))
    if code == 0:
        assert outcome.recipe is not None
        mine = outcome.recipe.to_dict()
        for key in ("stock_volume_ml", "stock_mass_g", "water_ml", "heat_released_kj"):
            assert mine[key] == recipe[key], key
    else:
        assert code == 2 and outcome.recipe is None and outcome.errors


STANDARDIZE = [
    ("NaOH", "KHP", "", [("0.5106", "25.02"), ("0.5098", "24.97"), ("0.5112", "25.05")]),
    ("HCl", "Na2CO3", "99.95", [("0.2650", "24.95"), ("0.2644", "24.90"),
                                ("0.2655", "25.01")]),
    ("NaOH", "KHP", "", [("0.5106", "25.02"), ("0.5098", "24,9x")]),   # a bad titre
    ("HCl", "KHP", "", [("0.5106", "25.02"), ("0.5098", "24.97")]),    # unsuited standard
]


@pytest.mark.parametrize("row", STANDARDIZE, ids=[" ".join(r[:2]) for r in STANDARDIZE])
def test_standardize_gives_the_same_molarity_or_the_same_refusal(capsys, row):
    titrant, standard, assay, pairs = row
    argv = ["standardize", "--titrant", titrant, "--standard", standard, "--json"]
    argv += ["--purity", assay] if assay else []
    for m, v in pairs:
        argv += ["--mass", m, "--volume", v]
    code, result, err = cli(capsys, *argv)
    fields = StandardizeFields(titrant=titrant, standard=standard, assay=assay,
                               replicates="\n".join(f"{m} {v}" for m, v in pairs))
    outcome = std_screen.compute(std_screen.FormState(fields))
    if code in (0, 1):
        assert outcome.ok
        assert outcome.value.mean_molar == result["mean_molar"]
        assert outcome.value.accepted == result["accepted"]
    else:
        assert code == 2 and not outcome.ok


ADDITIONS = [
    ("HCl", "1 M", "2 L", True),
    ("H2SO4", "10 %w/w", "250 mL", True),
    ("NaCl", "2 g", "", True),           # a solid by mass (OA-02 takes acids and neutral salts)
    ("HCl", "1 M", "", False),            # a solution needs a volume
    ("Unobtainium", "1 M", "1 L", False),
    ("HCl", "1 q", "1 L", False),
]


@pytest.mark.parametrize("row", ADDITIONS, ids=[" ".join(r[:3]) for r in ADDITIONS])
def test_a_waste_addition_is_read_the_same(capsys, demo_db, row):
    compound, amount, volume, good = row
    argv = ["--db", str(demo_db), "waste", "add", "OA-02", f"{compound}={amount}", "--json"]
    argv += ["--volume", volume] if volume else []
    code, _, _ = cli(capsys, *argv)
    echo = understand(default_catalog(), compound, amount, volume)
    assert (code == 0) is good
    assert (not echo.errors) is good
