"""Command line: the fixed contract (files, keys, columns, exit codes)."""

import csv
import doctest
import json

import pytest

import sim.geometry
import sim.igc
from sim.cli import main
from sim.scenario import demo_scenarios

SUMMARY_KEYS = {
    "time_to_relief_h",
    "max_pressure_barg",
    "final_pressure_barg",
    "final_liquid_temp_c",
    "final_fill_pct",
    "initial_cargo_t",
    "final_cargo_t",
    "boil_off_t",
    "vented_t",
    "reliquefied_t",
    "fuel_t",
    "oxidised_t",
    "cargo_loss_t",
    "mean_bor_pct_day",
    "reliquefaction_energy_kwh",
    "events",
}
CSV_COLUMNS = [
    "time_h",
    "pressure_barg",
    "liquid_temp_c",
    "fill_pct",
    "cargo_t",
    "heat_in_kw",
    "boil_off_kg_h",
    "vented_kg_h",
    "reliquefied_kg_h",
    "fuel_kg_h",
    "oxidised_kg_h",
]


@pytest.mark.parametrize("name", sorted(demo_scenarios()))
def test_every_demo_runs_through_the_cli(name, tmp_path, capsys):
    path = demo_scenarios()[name]
    assert main(["validate", str(path)]) == 0
    assert main(["run", str(path), "--out", str(tmp_path)]) == 0
    out = capsys.readouterr().out
    assert "IGC Code" in out  # the caution is printed
    summary = json.loads((tmp_path / "summary.json").read_text())
    assert SUMMARY_KEYS <= set(summary)
    for event in summary["events"]:
        assert set(event) == {"time_h", "kind", "detail"}
    with open(tmp_path / "timeseries.csv", newline="") as fh:
        rows = list(csv.DictReader(fh))
    assert set(CSV_COLUMNS) <= set(rows[0])
    times = [float(r["time_h"]) for r in rows]
    assert times == sorted(times)
    # hourly or finer rows
    assert max(b - a for a, b in zip(times, times[1:])) <= 1.0 + 1e-9
    # mass balance in the files: on board at the start, less delivered, plus loaded,
    # less lost (fuel + oxidiser + vented) is what is on board at the end
    lost = (summary["initial_cargo_t"] - summary["final_cargo_t"] - summary["delivered_t"]
            + summary["loaded_t"])
    assert lost == pytest.approx(summary["fuel_t"] + summary["oxidised_t"] + summary["vented_t"],
                                 rel=1e-6, abs=1e-6)
    assert summary["status"] in ("completed", "stopped")
    # the model's warnings (correlations out of range, property fall-backs) reach the
    # console as well as summary.json
    for warning in summary["model_warnings"]:
        assert f"warning: {warning}" in out


def test_bad_scenario_exit_code_and_message(tmp_path, capsys):
    bad = tmp_path / "bad.toml"
    text = (
        demo_scenarios()["lpg-refrigerated-laden"]
        .read_text()
        .replace("fill_pct = 97.4", "fill_pct = 120.0")
    )
    assert "fill_pct = 120.0" in text
    bad.write_text(text)
    out_dir = tmp_path / "out"
    assert main(["run", str(bad), "--out", str(out_dir)]) == 2
    err = capsys.readouterr().err
    assert "tank.fill_pct = 120" in err and "100" in err
    assert not out_dir.exists() or not any(out_dir.iterdir())  # nothing half-written


def test_unknown_key_and_missing_file(tmp_path, capsys):
    bad = tmp_path / "bad.toml"
    bad.write_text(
        demo_scenarios()["lpg-refrigerated-laden"]
        .read_text()
        .replace("pressure_barg = 0.1", "pressure_bar = 0.1", 1)
    )
    assert main(["validate", str(bad)]) == 2
    err = capsys.readouterr().err
    assert "tank.pressure_bar" in err and "pressure_barg" in err
    assert main(["validate", str(tmp_path / "nope.toml")]) == 2
    assert "nope.toml" in capsys.readouterr().err


def test_cargo_listing(capsys):
    assert main(["cargoes"]) == 0
    out = capsys.readouterr().out
    for name in ("methane", "propane", "ammonia", "carbon-dioxide", "parahydrogen"):
        assert name in out
    assert "sublimes" in out  # CO2 has no liquid at one atmosphere


@pytest.mark.parametrize("module", [sim.igc, sim.geometry])
def test_docstring_examples(module):
    failures, tried = doctest.testmod(module)
    assert tried > 0 and failures == 0


def test_validate_notes_a_fill_that_looks_like_a_fraction(tmp_path, capsys):
    from sim.scenario import default_scenario_dict, scenario_to_toml, set_key

    path = tmp_path / "heel.toml"
    path.write_text(scenario_to_toml(set_key(default_scenario_dict(), "tank.fill_pct", 0.97)))
    assert main(["validate", str(path)]) == 0  # a heel is a real case: not refused
    assert "e.g. 97, not 0.97" in capsys.readouterr().out
    path.write_text(scenario_to_toml(default_scenario_dict()))
    assert main(["validate", str(path)]) == 0
    assert "is a heel" not in capsys.readouterr().out
