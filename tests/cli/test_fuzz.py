"""Fuzzing: every subcommand and every quantity reader, with hostile text.

Seeded (``derandomize``), so a run is repeatable; about 2,400 examples in all, run
in-process through :func:`carboy.tui.launch.main`.  Every call must end with exit
status 0, 1 or 2, print no traceback and no "unexpected error", and return within
:data:`SECONDS_PER_CALL`.  Files are only ever written under the test's own directory.
"""

from __future__ import annotations

import time

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from carboy.errors import CarboyError
from carboy.model import quantities
from carboy.model.components import read_component
from carboy.model.forms import bottle_ref, read_date, read_measured_ph, read_number, read_ph
from carboy.model.text import read_label
from carboy.store import demo, readers
from carboy.tui import launch
from carboy.tui.launch import main

FZ = "\x00F\x00"
"""Where a template takes the fuzzed text (NUL, which no argument can hold)."""
SECONDS_PER_CALL = 5.0
"""Bound on one call (generous: a loaded two-core machine; typical calls take 10-50 ms)."""

NASTY = [
    "", " ", "0", "-1", "1e999", "nan", "inf", "99999999999999999999", "1" * 5000,
    "１２", "١٢", "𝟏", "1_000", "0x10", "1,5", "1.000,5", "1 L**0", "1 pi*L", "1 percent*L",
    "1 mol/L*10**10**10", "1 mL*9**9**9", "1 mol/L/0", "1 ((M)", "HCl=1 mol/L/0",
    "HCl=1 ((M)", "HCl=", "=1", "=1+1", "@SUM(A1)", "\t=1", "+1", "'", '"', "\\", "%", "%%",
    "#", "#1", "# 1", "MA-01", "HCl", "NaOH=1M", "1 M", "250 mL", "2 kg", "37 %w/w",
    "2025-02-30", "2025-01-01", "\x1b]52;c;AAAA\x07", "\x1b[2J", "\u202eevil", "a\u200bb",
    "\u00a0", "\ufeff", "\ud800", "../../etc/passwd", "/dev/null", "-", "--", "--help",
    "x" * 100_000,
]
"""Values from the issue's findings and their neighbours."""

fuzz_text = st.one_of(
    st.sampled_from(NASTY),
    st.text(max_size=40),
    st.text(alphabet="0123456789.,eE+-*/()% LMmgkNn°Cµ=#@\t", max_size=24),
    st.builds(lambda a, b: a + b, st.sampled_from(["HCl=", "H2SO4=", "NaOH=", "1 ", "#"]),
              st.text(alphabet="0123456789.,eE+-*/()% LMmgk", max_size=16)),
).filter(lambda s: "\x00" not in s)  # a real argument cannot hold NUL

CLI_EXAMPLES = 400
READER_EXAMPLES = 1800
FUZZ = settings(derandomize=True, deadline=None, database=None,
                suppress_health_check=[HealthCheck.too_slow, HealthCheck.filter_too_much,
                                       HealthCheck.function_scoped_fixture,
                                       HealthCheck.data_too_large, HealthCheck.large_base_example])


@pytest.fixture(scope="module")
def storeroom(tmp_path_factory):
    """A demo database the fuzzed commands may read and write (one per module)."""
    return str(demo.create_demo_database(tmp_path_factory.mktemp("fuzz") / "demo.db"))


def _templates(db: str, out: str) -> list[list[str]]:
    """One argv per way text reaches carboy; :data:`FZ` is where the fuzzed text goes."""
    three = ["--mass", "0.5", "--volume", "25", "--mass", "0.5", "--volume", "25"]
    nz = ["neutralize", "HCl=0.1M", "--volume", "1 L", "--reagent", "NaOH=1M"]
    prep = ["prep", "--from", "HCl=1M", "--target", "0.1M", "--volume", "100 mL"]
    std = ["standardize", "--titrant", "NaOH", "--standard", "KHP"]
    return [
        [FZ], ["--db", FZ, "waste", "list"],
        ["ph", FZ], ["ph", "HCl=" + FZ], ["ph", "HCl=0.1M", "--temperature", FZ],
        ["neutralize", FZ, "--volume", "1 L", "--reagent", "NaOH=1M"],
        [*nz[:3], FZ, *nz[4:]], [*nz[:5], FZ], [*nz, "--target", FZ],
        [*nz, "--window", FZ], [*nz, "--temperature", FZ],
        ["neutralize", "--waste", FZ, "--reagent", "NaOH=1M", "--db", db],
        ["prep", "--from", FZ, "--target", "0.1M", "--volume", "1 L"],
        [*prep[:4], FZ, *prep[5:]], [*prep[:6], FZ],
        ["prep", "--from", "NaOH", "--target", "0.1M", "--volume", "1 L", "--purity", FZ],
        [*prep, "--temperature", FZ], [*prep, "--expires", FZ, "--record", "--db", db],
        [*prep, "--record", "--by", FZ, "--lot", FZ, "--location", FZ, "--db", db],
        ["prep", "--from", FZ, "--target", "0.1M", "--volume", "1 L", "--db", db],
        [*std, "--mass", FZ, "--volume", "25", "--mass", "0.5", "--volume", "25"],
        [*std, "--mass", "0.5", "--volume", FZ, *three],
        [*std, *three, "--mass", "0.5", "--volume", "25", "--blank", FZ],
        [*std, *three, "--mass", "0.5", "--volume", "25", "--purity", FZ],
        [*std, *three, "--mass", "0.5", "--volume", "25", "--max-rsd", FZ],
        [*std, *three, "--mass", "0.5", "--volume", "25", "--min-replicates", FZ],
        ["standardize", "--titrant", FZ, "--standard", "KHP", *three],
        ["standardize", "--bottle", FZ, "--standard", "KHP", *three, "--dry-run", "--db", db],
        ["stock", "list", "--search", FZ, "--db", db], ["stock", "list", "--after", FZ,
                                                         "--db", db],
        ["stock", "list", "--limit", FZ, "--db", db], ["stock", "show", FZ, "--db", db],
        ["stock", "add", FZ, "1 M", "--size", "1 L", "--db", db],
        ["stock", "add", "HCl", FZ, "--size", "1 L", "--db", db],
        ["stock", "add", "HCl", "1 M", "--size", FZ, "--db", db],
        ["stock", "add", "HCl", "1 M", "--size", "1 L", "--left", FZ, "--db", db],
        ["stock", "add", "HCl", "1 M", "--size", "1 L", "--location", FZ, "--lot", FZ,
         "--notes", FZ, "--db", db],
        ["stock", "add", "HCl", "1 M", "--size", "1 L", "--every", FZ, "--db", db],
        ["stock", "add", "HCl", "1 M", "--size", "1 L", "--expires", FZ, "--received", FZ,
         "--db", db],
        ["stock", "import", f"{out}/{FZ}", "--db", db],
        ["stock", "label", FZ, "--pdf", f"{out}/label.pdf", "--db", db],
        ["stock", "check", "--storeroom", FZ, "--db", db],
        ["rules", "--recheck", FZ, "--db", db], ["rules", "--recheck", "NaOH=" + FZ, "--db", db],
        ["rules", "--max-rsd", FZ, "--db", db], ["rules", "--min-replicates", FZ, "--db", db],
        ["waste", "new", FZ, "--db", db], ["waste", "new", "W-" + FZ, "--capacity", FZ,
                                            "--location", FZ, "--db", db],
        ["waste", "add", FZ, "HCl=1M", "--volume", "1 mL", "--db", db],
        ["waste", "add", "MA-01", FZ, "--volume", "1 mL", "--db", db],
        ["waste", "add", "MA-01", "HCl=0.1M", "--volume", FZ, "--note", FZ, "--db", db],
        ["waste", "show", FZ, "--db", db],
        ["waste", "record", FZ, "--pdf", f"{out}/record.pdf", "--db", db],
        ["journal", "list", "--since", FZ, "--db", db],
        ["journal", "list", "--limit", FZ, "--db", db],
        ["journal", "show", FZ, "--db", db],
        ["journal", "export", "--format", "csv", "--since", FZ, "--db", db],
        ["journal", "verify", "--head", FZ, "--db", db],
        ["init", f"{out}/{FZ}"],
    ]


def _call(argv: list[str], capsys) -> None:
    started = time.perf_counter()
    code = main(argv)
    spent = time.perf_counter() - started
    out, err = capsys.readouterr()
    assert code in (0, 1, 2), (argv, code, err[-300:])
    assert "Traceback" not in err and "unexpected error" not in err, (argv, err[-300:])
    assert "\x1b" not in out and "\x1b" not in err, argv
    assert spent < SECONDS_PER_CALL, (argv, spent)


@settings(FUZZ, max_examples=CLI_EXAMPLES)
@given(template=st.integers(min_value=0), text=fuzz_text)
def test_every_subcommand_survives_hostile_text(storeroom, tmp_path_factory, capsys,
                                                monkeypatch, template, text):
    out = str(tmp_path_factory.getbasetemp() / "fuzz-out")
    monkeypatch.chdir(tmp_path_factory.getbasetemp())
    monkeypatch.setenv("XDG_STATE_HOME", out)
    monkeypatch.setenv("CARBOY_DB", f"{out}/default.db")
    monkeypatch.setattr(launch, "open_app", lambda args: 0)  # no subcommand: not the app here
    templates = _templates(storeroom, out)
    argv = templates[template % len(templates)]
    path_safe = text.replace("/", "_") or "_"  # files go under the test's directory only
    _call([a.replace(f"{out}/{FZ}", f"{out}/{path_safe}").replace(FZ, text) for a in argv],
          capsys)


READERS = [
    lambda t: quantities.parse(t, "volume"),
    lambda t: quantities.parse(t, "concentration", default_unit="M"),
    lambda t: quantities.parse(t, "mass"),
    lambda t: quantities.parse(t, "percent", default_unit="%"),
    lambda t: quantities.parse(t, "temperature", default_unit="°C"),
    quantities.unit_kind, quantities.plain_number,
    lambda t: read_component(t), lambda t: read_component("HCl=" + t),
    lambda t: readers.parse_strength(t), lambda t: readers.parse_amount(t),
    lambda t: readers.parse_whole(t, "id", field="id"), lambda t: readers.parse_date(t, "d"),
    lambda t: read_number(t, "n"), read_ph, read_measured_ph, read_date, bottle_ref,
    lambda t: read_label(t, "label"),
]


@settings(FUZZ, max_examples=READER_EXAMPLES)
@given(reader=st.integers(min_value=0), text=fuzz_text)
def test_every_quantity_reader_refuses_or_reads(reader, text):
    read = READERS[reader % len(READERS)]
    started = time.perf_counter()
    try:
        value = read(text)
    except CarboyError as err:
        assert len(str(err)) < 600
    else:
        if isinstance(value, float):
            assert value == value and abs(value) != float("inf")
    assert time.perf_counter() - started < SECONDS_PER_CALL / 10


@pytest.mark.parametrize("text", ["1 pi*L", "1 percent*L", "١ L", "1 L**0",
                                  "1 mol/L*10**10**10", "1 mL*9**9**9", "1 L/0", "1 ((L)"])
def test_unit_text_is_never_evaluated(text):
    with pytest.raises(CarboyError):
        quantities.volume_l(text)
