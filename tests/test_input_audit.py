"""Bad input found by an audit of the loader and the command line: each case once.

Every test feeds one kind of bad input and checks the contract: exit code 2
(or a ScenarioError / SweepError / SizingError) with a message that names the
key or option and the value, never a traceback, a hang or a file left behind.
A run that fails for a reason other than input is exit 1 with a message.

Values are test values chosen to be out of range or absurd; no physical
numbers are asserted. Nothing here runs a voyage: the tests stay at the
loader and at the option checks that come before any run.
"""

from __future__ import annotations

import math

import pytest
from cases import only_problem, problems_of

from sim import sizing, sweep
from sim.cli import main
from sim.scenario import (
    MAX_NUMBER,
    MAX_TANKS,
    MAX_VOYAGE_DAYS,
    ScenarioError,
    default_scenario_dict,
    demo_scenarios,
    load_scenario,
    loads_scenario,
    parse_scenario,
    scenario_to_toml,
    set_key,
)


def write(tmp_path, data: dict, name: str = "case.toml"):
    path = tmp_path / name
    path.write_text(scenario_to_toml(data), encoding="utf-8")
    return path


def no_traceback(err: str) -> None:
    assert "Traceback" not in err, err


# ---------------------------------------------------------------------------
# Absurdly large numbers: rejected at the key, before they overflow in a run
# ---------------------------------------------------------------------------


@pytest.mark.parametrize("key", [
    "tank.length_m",  # 1e300 m: a finite volume, an infinite cargo mass (traceback in run)
    "leg.0.days",  # 1e300 days: the run never ended
    "leg.0.fuel_kg_h",
    "cargo.price_per_tonne",  # 1e306 per tonne: value_lost was inf
    "reliquefaction.specific_power_kwh_kg",  # 1e300 kWh/kg: infinite plant energy
])
def test_number_beyond_the_size_limit_names_key_and_value(key):
    d = default_scenario_dict()
    d["reliquefaction"] = {"capacity_kg_h": 100.0, "hold_barg": 0.12}
    text = only_problem(set_key(d, key, 1e300))
    path = key.replace("leg.0.", "leg[1].")
    assert text.startswith(f"{path} = 1e+300: too large"), text
    assert "at most 1e+12" in text


def test_size_limit_still_allows_the_limit_itself():
    d = set_key(default_scenario_dict(), "leg.0.fuel_kg_h", MAX_NUMBER)
    assert parse_scenario(d).legs[0].fuel_demand == pytest.approx(MAX_NUMBER / 3600.0)


def test_voyage_longer_than_ten_years_is_bad_input():
    one = set_key(default_scenario_dict(), "leg.0.days", 1e9)
    text = only_problem(one)
    assert "leg[1].days = 1000000000.0" in text and "at most 3650 days" in text
    many = default_scenario_dict()
    many["leg"] = [dict(many["leg"][0], days=3000.0) for _ in range(2)]
    text = only_problem(many)
    assert "the 2 legs add up to 6000 days" in text and "at most 3650 days" in text
    ok = set_key(default_scenario_dict(), "leg.0.days", MAX_VOYAGE_DAYS)
    assert parse_scenario(ok).duration == MAX_VOYAGE_DAYS * 86400.0


def test_outages_are_not_checked_against_a_rejected_voyage():
    d = set_key(default_scenario_dict(), "leg.0.days", 5000.0)
    d["reliquefaction"] = {"capacity_kg_h": 100.0, "hold_barg": 0.12,
                           "outage": [{"start_day": 4000.0, "hours": 5.0}]}
    assert "at most 3650 days" in only_problem(d)


@pytest.mark.parametrize("count", [MAX_TANKS + 1, 10**30, 10**400],
                         ids=["limit+1", "1e30", "1e400"])
def test_tank_count_beyond_the_limit(count):
    # 10**400 used to raise OverflowError (int too large to convert to float)
    text = only_problem(set_key(default_scenario_dict(), "tank.count", count))
    assert text.startswith("tank.count = ") and f"at most {MAX_TANKS}" in text
    assert str(count)[:20] in text


def test_integer_of_more_than_4300_digits_in_the_file():
    text = scenario_to_toml(default_scenario_dict()).replace("count = 1", "count = 1" + "0" * 5000)
    with pytest.raises(ScenarioError) as info:
        loads_scenario(text)
    assert "more than 4300 digits" in str(info.value)


def test_dimensions_that_underflow_to_no_volume_are_named():
    d = default_scenario_dict()
    d["tank"].update(length_m=1e-200, width_m=1e-200, height_m=1e-200)
    text = only_problem(d)
    assert "length_m = 1e-200" in text and "height_m = 1e-200" in text
    assert "volume of 0.0 m3" in text


# ---------------------------------------------------------------------------
# A rated boil-off with a rated ambient no warmer than the cargo
# ---------------------------------------------------------------------------


def test_rated_ambient_colder_than_the_cargo_is_bad_input():
    # used to pass the loader and raise ValueError in validate, run and sweep
    d = default_scenario_dict()
    d["insulation"].update(rated_air_c=-60.0, rated_sea_c=-2.0)
    text = only_problem(d)
    for part in ("insulation.rated_air_c = -60.0", "insulation.rated_sea_c = -2.0",
                 "air_exposed_pct = 100 (the default)", "tank.pressure_barg = 0.1",
                 "must be warmer than the cargo"):
        assert part in text, text


def test_rated_ambient_check_leaves_a_u_value_alone():
    d = default_scenario_dict()
    d["insulation"] = {"u_w_m2k": 0.1}
    d["leg"][0].update(air_c=-60.0, sea_c=-2.0)  # cold legs are fine: heat flows out
    parse_scenario(d)


def test_cli_validate_rated_ambient(tmp_path, capsys):
    d = default_scenario_dict()
    d["insulation"].update(rated_air_c=-60.0, rated_sea_c=-2.0)
    assert main(["validate", str(write(tmp_path, d))]) == 2
    err = capsys.readouterr().err
    no_traceback(err)
    assert "insulation.rated_air_c = -60.0" in err


# ---------------------------------------------------------------------------
# Files
# ---------------------------------------------------------------------------


def test_byte_order_mark_is_accepted(tmp_path):
    path = tmp_path / "bom.toml"
    path.write_bytes(b"\xef\xbb\xbf" + scenario_to_toml(default_scenario_dict()).encode())
    assert load_scenario(path).title == default_scenario_dict()["title"]


# ---------------------------------------------------------------------------
# run: a failed simulation and bad --out
# ---------------------------------------------------------------------------


def _no_run(*args, **kwargs):
    raise AssertionError("the simulation must not start")


def test_cli_run_simulation_exception_is_exit_1_without_files(tmp_path, capsys, monkeypatch):
    import sim.voyage

    def broken(scenario, progress=None):
        raise ValueError("f(a) and f(b) must have different signs")

    monkeypatch.setattr(sim.voyage, "simulate", broken)
    out = tmp_path / "out"
    assert main(["run", str(write(tmp_path, default_scenario_dict())), "--out", str(out)]) == 1
    err = capsys.readouterr().err
    no_traceback(err)
    assert "simulation failed: ValueError: f(a) and f(b)" in err
    assert not out.exists()


@pytest.mark.parametrize("command", ["run", "size", "sweep"])
def test_cli_empty_out_is_bad_input(tmp_path, capsys, monkeypatch, command):
    # --out "" used to write the output files into the current folder
    import sim.voyage

    monkeypatch.setattr(sim.voyage, "simulate", _no_run)
    path = write(tmp_path, default_scenario_dict())
    work = tmp_path / "cwd"
    work.mkdir()
    monkeypatch.chdir(work)
    extra = ["--vary", "tank.fill_pct=90"] if command == "sweep" else []
    assert main([command, str(path), *extra, "--out", ""]) == 2
    err = capsys.readouterr().err
    no_traceback(err)
    assert "--out ''" in err and "output folder" in err
    assert list(work.iterdir()) == []


@pytest.mark.parametrize("inside", [False, True])
def test_cli_out_on_a_file_fails_before_the_run(tmp_path, capsys, monkeypatch, inside):
    import sim.voyage

    monkeypatch.setattr(sim.voyage, "simulate", _no_run)
    blocker = tmp_path / "taken"
    blocker.write_text("not a folder")
    out = blocker / "sub" if inside else blocker
    path = write(tmp_path, default_scenario_dict())
    assert main(["run", str(path), "--out", str(out)]) == 2
    err = capsys.readouterr().err
    no_traceback(err)
    assert f"--out {out}" in err and "not a folder" in err
    assert blocker.read_text() == "not a folder"


def test_cli_unexpected_error_is_a_message(tmp_path, capsys, monkeypatch):
    import sim.facts

    def broken(scenario):
        raise ZeroDivisionError("float division by zero")

    monkeypatch.setattr(sim.facts, "initial_facts", broken)
    assert main(["validate", str(write(tmp_path, default_scenario_dict()))]) == 1
    err = capsys.readouterr().err
    no_traceback(err)
    assert "validate failed: ZeroDivisionError" in err


# ---------------------------------------------------------------------------
# sweep: ranges, seeds, keys
# ---------------------------------------------------------------------------


@pytest.mark.parametrize("text", ["1:1e999999999:1", "1:2:1e-999999999"])
def test_range_with_enormous_exponents(text):
    # used to raise decimal.Overflow
    with pytest.raises(sweep.SweepError) as info:
        sweep.expand_range(text, "tank.fill_pct")
    assert f"tank.fill_pct={text}" in str(info.value) and "at most 200000" in str(info.value)


def test_range_with_a_huge_but_finite_count_is_not_expanded():
    with pytest.raises(sweep.SweepError) as info:
        sweep.expand_range("1:1e999999:1", "tank.fill_pct")
    assert "about 1.00E+999999 values" in str(info.value)


def test_cli_sweep_range_overflow(tmp_path, capsys):
    path = write(tmp_path, default_scenario_dict())
    code = main(["sweep", str(path), "--vary", "tank.fill_pct=1:1e999999999:1",
                 "--out", str(tmp_path / "out")])
    assert code == 2
    err = capsys.readouterr().err
    no_traceback(err)
    assert "--vary tank.fill_pct=1:1e999999999:1" in err


def test_negative_seed(tmp_path, capsys, monkeypatch):
    # numpy refused it with a traceback after the options were accepted
    import sim.voyage

    monkeypatch.setattr(sim.voyage, "simulate", _no_run)
    path = write(tmp_path, default_scenario_dict())
    code = main(["sweep", str(path), "--sample", "tank.fill_pct=uniform:90:95", "--cases", "2",
                 "--seed", "-1", "--out", str(tmp_path / "out")])
    assert code == 2
    err = capsys.readouterr().err
    no_traceback(err)
    assert "--seed -1: must be a whole number at or above 0" in err
    dist = sweep.Distribution("tank.fill_pct", "uniform", (90.0, 95.0))
    with pytest.raises(sweep.SweepError, match="--seed -1"):
        sweep.sample_cases([dist], 2, seed=-1)


def test_incomplete_key_lists_the_keys_of_the_array():
    with pytest.raises(sweep.SweepError) as info:
        sweep.key_spec(default_scenario_dict(), "leg.*")
    text = str(info.value)
    assert "leg.*: incomplete key" in text and "days, air_c, sea_c" in text


def test_sweep_case_with_an_endless_voyage_is_invalid_not_run():
    d = default_scenario_dict()
    row = sweep.run_case(d, [("leg.*.days", 1e9)])
    assert row["status"] == "invalid" and "at most 3650 days" in row["error"]


# ---------------------------------------------------------------------------
# size: options that made infinities or tracebacks
# ---------------------------------------------------------------------------


@pytest.fixture(scope="module")
def no_control():
    return load_scenario(demo_scenarios()["propane-type-c-no-control"]).raw


def test_margin_beyond_the_limit(no_control):
    # --margin-pct 1e308 gave an infinite design capacity (null in sizing.json)
    with pytest.raises(sizing.SizingError) as info:
        sizing.size_plant(no_control, margin_pct=1e308, curves=False)
    assert "--margin-pct 1e+308" in str(info.value) and "at most 1000" in str(info.value)


@pytest.mark.parametrize("unit", [5e-324, 1e-300])
def test_unit_too_small_for_a_plant(no_control, unit):
    # 5e-324 kg/h divided by 3600 is 0: ZeroDivisionError; 1e-300 gave 1e303 units
    with pytest.raises(sizing.SizingError) as info:
        sizing.size_plant(no_control, unit_kg_h=unit, curves=False)
    text = str(info.value)
    assert f"--unit-kg-h {unit:g}" in text and "at most 1000 units" in text


def test_cli_size_spare_units_beyond_the_limit(tmp_path, capsys):
    # 10**400 stand-by units raised OverflowError (int too large to convert to float)
    path = demo_scenarios()["propane-type-c-no-control"]
    out = tmp_path / "out"
    code = main(["size", str(path), "--unit-kg-h", "100", "--spare-units", "1" + "0" * 400,
                 "--no-curves", "--out", str(out)])
    assert code == 2
    err = capsys.readouterr().err
    no_traceback(err)
    assert "--spare-units 1000" in err and "below 1000" in err
    assert not out.exists()


def test_limits_are_finite_and_ordered():
    # guards against a limit edited into something that no longer protects
    assert math.isfinite(MAX_NUMBER) and MAX_NUMBER * 1e12 * 1e12 < 1e300
    assert 365.0 <= MAX_VOYAGE_DAYS <= 36500.0 and 1 <= MAX_TANKS <= 10_000


@pytest.mark.parametrize("value, words", [
    (99.99, "liquid-full"),
    (99.999, "liquid-full"),
    (0.01, "no heel left"),
    (1e-6, "no heel left"),
])
def test_fill_at_the_liquid_full_or_heel_exhausted_line_is_refused(value, words):
    """A brim-full or empty tank: the run would stop at once (the two-zone model crawled
    for minutes instead); the message names the key, the value and the usable range."""
    data = default_scenario_dict()
    data["tank"]["fill_pct"] = value
    problems = problems_of(data)
    assert any(p.startswith(f"tank.fill_pct = {value:g}") and words in p
               and "above 0.01 and below 99.99" in p for p in problems), problems


def test_port_call_fill_at_the_liquid_full_line_is_refused():
    data = default_scenario_dict()
    data["leg"].append(dict(data["leg"][0], start_fill_pct=99.995))
    problems = problems_of(data)
    assert any(p.startswith("leg[2].start_fill_pct = 99.995") and "liquid-full" in p
               for p in problems), problems


@pytest.mark.parametrize("value, words", [
    ("two\nlines", "one line of text"),
    ("tab\there", "one line of text"),
    ("nul\x00", "one line of text"),
    ("x" * 201, "201 characters; at most 200"),
])
def test_title_must_be_one_short_line(value, words):
    """A title heads charts, tables and the console: no line breaks or control
    characters (they were printed as they came), and not a page long."""
    data = default_scenario_dict()
    data["title"] = value
    problem = only_problem(data)
    assert problem.startswith("title = ") and words in problem, problem
