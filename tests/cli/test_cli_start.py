"""Start-up: a command builds only its own parser and loads only what it needs; the stock
list's count and ``#ID`` search from the command line; the journal in time order.

(The start-up times themselves are tests/benchmarks/bench_start.py's.)"""

from __future__ import annotations

import json
import os
import subprocess
import sys

import pytest

from carboy.tui.cli import main as cli_main
from carboy.tui.launch import main

HEAVY = ("carboy.store", "sqlite_utils", "pandas", "textual", "carboy.tui.app",
         "carboy.tui.cli.stock", "carboy.tui.cli.journal", "carboy.tui.cli.prep")


def _loaded_by(*argv: str, among: tuple[str, ...] = HEAVY, site: bool = True) -> list[str]:
    """The modules named by (or under) ``among`` that the command ``argv`` loads; with
    ``site`` False the command runs without the site module (this process's path given
    instead), so that no .pth file of the environment loads a module before carboy."""
    code = ("import sys, io, contextlib\nfrom carboy.tui.launch import main\n"
            "with contextlib.redirect_stdout(io.StringIO()): status = main(sys.argv[1:])\n"
            "assert status == 0, status\n"
            f"print(' '.join(sorted(m for m in sys.modules if m.startswith({among!r}))))")
    env = dict(os.environ, PYTHONPATH=os.pathsep.join(p for p in sys.path if p))
    done = subprocess.run([sys.executable, *(() if site else ("-S",)), "-c", code, *argv],
                          capture_output=True, text=True, timeout=60,
                          env=None if site else env)
    assert done.returncode == 0, done.stderr
    return done.stdout.split()


@pytest.mark.parametrize("argv", [
    ("ph", "HCl=0.1M"),
    ("neutralize", "H2SO4=0.5M", "--volume", "250mL", "--reagent", "NaOH=2M"),
])
def test_a_calculation_loads_neither_the_store_nor_other_commands(argv):
    """Nor pandas, which sqlite-utils would import when it is installed: the cold start
    of `carboy ph` and `carboy neutralize` pays only for what they compute."""
    assert _loaded_by(*argv) == []


METAL_MODULES = ("carboy.model.metal_data", "carboy.model.metals", "carboy.model.metal_doses",
                 "carboy.model.pitzer_metals",
                 "carboy.model.metal_salts", "carboy.model.metal_complexes",
                 "carboy.model.solver.metal_terms", "carboy.model.solver.single_metals")


@pytest.mark.parametrize(("argv", "metals"), [
    (("neutralize", "H2SO4=0.5M", "--volume", "250mL", "--reagent", "NaOH=2M"), False),
    (("ph", "HCl=0.1M", "NaCl=0.1M"), False),
    (("ph", "ZnCl2=0.01M"), True),
])
def test_the_metal_modules_load_only_for_a_modelled_metal(argv, metals):
    loaded = set(_loaded_by(*argv, among=METAL_MODULES))
    if metals:
        assert {"carboy.model.metal_data", "carboy.model.solver.metal_terms"} <= loaded
    else:
        assert loaded == set()


BATCH_PATHS = ("carboy.model.pitzer_scalar", "carboy.model.pitzer_sums", "carboy.model.etheta",
               "carboy.model.pitzer", "carboy.model.pitzer_data", "carboy.model.solver.pitzer_batch",
               "carboy.model.solver.pitzer_one", "carboy.model.solver.bracketed",
               "carboy.model.solver.coupled", "carboy.model.solver.single_pairs")


def test_one_davies_solution_loads_neither_the_pitzer_nor_the_batch_paths():
    """`carboy ph` of a dilute solution settles on the plain-Python path (auto: Davies);
    the Pitzer and vectorized paths load when a command first takes them."""
    assert [m for m in _loaded_by("ph", "H2SO4=0.05M", among=BATCH_PATHS)
            if m in BATCH_PATHS] == []
    assert set(_loaded_by("ph", "H2SO4=1M", among=BATCH_PATHS)) >= {
        "carboy.model.pitzer_scalar", "carboy.model.solver.pitzer_one"}


LAZY_ON_A_PLAN = ("carboy.model.co2_loss", "carboy.model.solver.bracketed",
                  "carboy.model.speciation_one", "carboy.model.user_compounds")


def test_a_plan_without_carbonate_loads_neither_the_co2_loss_nor_the_guaranteed_path():
    """Sulfuric acid with NaOH (auto: Pitzer) loads no co2_loss (carbonate only), no
    solver/bracketed (the titration's inverse takes its secant step from solver/mixing)
    no speciation_one (the float paths' fields; one Pitzer point has its own) and no
    user_compounds (the catalog loads it when a user compound is made)."""
    assert _loaded_by("neutralize", "H2SO4=0.5M", "--volume", "250mL", "--reagent", "NaOH=2M",
                      among=LAZY_ON_A_PLAN) == []
    assert "carboy.model.co2_loss" in _loaded_by(
        "neutralize", "HCl=0.5M", "--volume", "250mL", "--reagent", "Na2CO3=1M",
        among=LAZY_ON_A_PLAN)


AVOIDABLE = ("pathlib", "importlib.resources", "zipfile", "tempfile", "molmass", "hashlib")
"""Modules a calculation has no use for, each a few ms of a cold start (molmass: the
packaged formulas' masses are shipped, see carboy.model.molar_masses; hashlib: the data
mirrors' digest is a CRC-32)."""


@pytest.mark.parametrize("argv", [
    ("ph", "HCl=0.1M"),
    ("neutralize", "H2SO4=0.5M", "--volume", "250mL", "--reagent", "NaOH=2M"),
])
def test_a_calculation_reads_its_data_files_without_importlib_resources(argv):
    """Nor pathlib (the error log's, loaded when it is written).  Run without the site
    module: an environment's .pth files may load them before carboy starts."""
    assert _loaded_by(*argv, among=AVOIDABLE, site=False) == []


@pytest.mark.parametrize(("argv", "named"), [
    (["ph", "HCl=1"], "ph"),
    (["--db", "ph", "stock", "list"], "stock"),
    (["--demo", "journal", "list"], "journal"),
    (["--db=x.db", "waste", "list"], "waste"),
    (["--help"], None),
    (["-h", "ph"], None),
    (["phx"], None),
    ([], None),
])
def test_the_command_named_is_found_among_the_global_options(argv, named):
    assert cli_main.command_named(argv) == named


def test_only_the_named_command_is_built_and_every_one_without_a_name():
    def commands(parser):
        sub = next(a for a in parser._actions if a.dest == "command")
        return list(sub.choices)

    assert commands(cli_main.build_parser(["ph", "HCl=1"])) == ["ph"]
    assert commands(cli_main.build_parser(["--help"])) == list(cli_main.COMMANDS)
    assert commands(cli_main.build_parser()) == list(cli_main.COMMANDS)


def test_a_wrong_command_name_still_lists_every_command(capsys):
    assert main(["stok", "list"]) == 2
    err = capsys.readouterr().err
    assert "invalid choice" in err and "stock" in err and "neutralize" in err


@pytest.fixture
def demo_db(copy_demo):
    return str(copy_demo())


def _json(capsys, *argv):
    code = main([*argv, "--json"])
    out, err = capsys.readouterr()
    assert code == 0, err
    return json.loads(out)


def test_stock_list_counts_and_finds_by_id_and_by_common_name(capsys, demo_db):
    got = _json(capsys, "stock", "list", "--db", demo_db, "--limit", "1000")
    assert got["total_exact"] is True and got["total"] == len(got["bottles"]) > 0
    one = _json(capsys, "stock", "list", "--db", demo_db, "--search", "#7")
    assert [b["id"] for b in one["bottles"]] == [7] and one["total"] == 1
    vitriol = _json(capsys, "stock", "list", "--db", demo_db, "--search", "oil of vitriol")
    assert vitriol["bottles"] and {b["compound_key"] for b in vitriol["bottles"]} == {"H2SO4"}
    code = main(["stock", "list", "--db", demo_db, "--search", "caustic soda"])
    out = capsys.readouterr().out
    assert code == 0 and "NaOH" in out and out.rstrip().splitlines()[-1].endswith("bottles")


def test_journal_list_is_in_time_order(capsys, demo_db):
    entries = _json(capsys, "journal", "list", "--db", demo_db, "--limit", "100")
    times = [e["recorded_at"] for e in entries]
    assert times == sorted(times, reverse=True)
    assert [e["id"] for e in entries] != sorted((e["id"] for e in entries), reverse=True)


def test_a_count_that_stopped_says_more_than():
    from carboy.store.stock import Count
    from carboy.tui.wording import tally

    assert tally(Count(1234)) == "1,234"
    assert tally(Count(10_000, exact=False)) == "more than 10,000"
    assert tally(Count(1), "bottle") == "1 bottle"
    assert tally(Count(10_000, exact=False), "bottle") == "more than 10,000 bottles"


def test_the_app_reads_only_the_global_options():
    """`carboy --demo` (no command word) builds the parser with one light subcommand
    and loads no other command module; a command word or --help still builds its own."""
    from carboy.tui.launch import _parser

    def commands(parser):
        return list(next(a for a in parser._actions if a.dest == "command").choices)

    assert commands(_parser(["--demo"])) == [launch_light()]
    assert commands(_parser(["--db", "x.db"])) == [launch_light()]
    assert commands(_parser(["--demo", "stock", "list"])) == ["stock"]
    assert commands(_parser(["--demo", "--help"])) == list(cli_main.COMMANDS)
    assert commands(_parser(["--demo", "stok"])) == list(cli_main.COMMANDS)
    code = ("import sys\nfrom carboy.tui.launch import _parser\n"
            "_parser(['--demo']).parse_args(['--demo'])\n"
            "print(' '.join(sorted(m for m in sys.modules if m.startswith('carboy.tui.cli.'))))")
    loaded = set(_printed_by(code))
    assert not loaded & (set(cli_main.SUBCOMMAND_MODULES) - {f"carboy.tui.cli.{launch_light()}"})


def launch_light() -> str:
    from carboy.tui import launch

    return launch._LIGHT_COMMAND


def test_the_collector_is_held_off_while_the_app_starts(monkeypatch):
    """The app resumes it after its first frame; if the app never gets that far, carboy
    resumes it as the app returns."""
    import gc

    from carboy.tui import launch

    seen = []
    monkeypatch.setattr(launch, "_open_app", lambda args: seen.append(gc.isenabled()) or 0)
    assert gc.isenabled()
    assert launch.open_app(object()) == 0
    assert seen == [False] and gc.isenabled()



def test_a_command_freezes_what_its_imports_made_only_in_its_own_process():
    """Run as the program (no argv given), the command's imports are frozen out of the
    collector's walks and the collector is on again; called with argv (the tests), the
    caller's collector is left alone."""
    import gc

    code = ("import gc, io, sys, contextlib\nfrom carboy.tui.launch import main\n"
            "sys.argv = ['carboy', 'ph', 'HCl=0.1M']\nbefore = gc.get_freeze_count()\n"
            "with contextlib.redirect_stdout(io.StringIO()): status = main()\n"
            "print(status, before, gc.get_freeze_count() > before + 10000, gc.isenabled())")
    assert _printed_by(code) == ["0", "0", "True", "True"]
    frozen = gc.get_freeze_count()
    assert main(["ph", "HCl=0.1M"]) == 0
    assert gc.get_freeze_count() == frozen and gc.isenabled()


@pytest.mark.parametrize("given", [None, "30"])
def test_the_app_draws_at_120_frames_a_second_unless_told_otherwise(monkeypatch, given):
    import os
    import types

    from carboy.tui import launch
    from carboy.tui.app import app

    monkeypatch.setenv("TEXTUAL_FPS", "placeholder")  # restored (or removed) afterwards
    if given is None:
        monkeypatch.delenv("TEXTUAL_FPS")
    else:
        monkeypatch.setenv("TEXTUAL_FPS", given)
    monkeypatch.setattr(app, "run", lambda **kw: int(os.environ["TEXTUAL_FPS"]))
    assert launch._open_app(types.SimpleNamespace(demo=True)) == int(given or 120)


def test_the_command_asks_for_one_blas_thread_before_numpy_loads():
    """carboy makes no BLAS calls: OpenBLAS's thread pool only costs a cold start CPU.
    The launcher asks for one thread before anything imports numpy, and leaves a
    setting the user made."""
    code = ("import os, sys, io, contextlib\n"
            "os.environ.pop('OPENBLAS_NUM_THREADS', None)\n"
            "os.environ['MKL_NUM_THREADS'] = '3'\n"
            "from carboy.tui.launch import main\n"
            "assert 'numpy' not in sys.modules\n"
            "with contextlib.redirect_stdout(io.StringIO()): status = main(['ph', 'HCl=0.1M'])\n"
            "assert status == 0, status\n"
            "print(os.environ['OPENBLAS_NUM_THREADS'], os.environ['MKL_NUM_THREADS'])")
    assert _printed_by(code) == ["1", "3"]


def _printed_by(code: str) -> list[str]:
    """The words ``code`` prints, run in a new Python."""
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                          timeout=60)
    assert done.returncode == 0, done.stderr
    return done.stdout.split()
