"""Small SI scenarios built directly from the dataclasses (no file parsing), and the
helpers several test files share (scenario problems, app metrics and charts)."""

import json

import pytest

from sim.geometry import Prismatic, Sphere
from sim.scenario import (
    Insulation,
    Leg,
    Outage,
    Oxidiser,
    Reliquefaction,
    Scenario,
    ScenarioError,
    TankSpec,
    parse_scenario,
)
from sim.units import SECONDS_PER_DAY, barg_to_pa, c_to_k


def closed_tank(
    cargo="propane",
    fill=0.6,
    pressure_barg=0.1,
    relief_barg=2.0,
    u_value=0.5,
    air_c=30.0,
    sea_c=30.0,
    days=20.0,
    diameter=12.0,
    count=1,
    vacuum_barg=-0.5,
):
    """A sphere with no pressure control but its relief valve."""
    tank = TankSpec(
        Sphere(diameter),
        count,
        fill,
        barg_to_pa(pressure_barg),
        barg_to_pa(relief_barg),
        barg_to_pa(vacuum_barg),
    )
    legs = (Leg("only leg", days * SECONDS_PER_DAY, c_to_k(air_c), c_to_k(sea_c), 0.0),)
    return Scenario(
        "closed tank",
        "equilibrium",
        cargo,
        tank,
        Insulation(u_value, 1.0),
        legs,
        None,
        None,
        barg_to_pa(pressure_barg),
    )


def controlled_ship(outage=True):
    """Four prismatic methane tanks with fuel, reliquefaction, oxidiser and relief."""
    tank = TankSpec(
        Prismatic(40.0, 35.0, 25.0), 4, 0.98, barg_to_pa(0.10), barg_to_pa(0.25), barg_to_pa(-0.05)
    )
    day = SECONDS_PER_DAY
    legs = (
        Leg("slow", 3 * day, c_to_k(35), c_to_k(30), 2500 / 3600),
        Leg("hot", 6 * day, c_to_k(45), c_to_k(32), 900 / 3600),
        Leg("cool", 4 * day, c_to_k(10), c_to_k(8), 3000 / 3600),
    )
    outages = (Outage(4 * day, 48 * 3600.0),) if outage else ()
    rl = Reliquefaction(2000 / 3600, barg_to_pa(0.13), 0.8 * 3.6e6, outages)
    ox = Oxidiser(800 / 3600, barg_to_pa(0.20))
    ins = Insulation(
        None,
        0.8,
        rated_bor=0.001 / day,
        rated_air_temperature=c_to_k(45),
        rated_sea_temperature=c_to_k(32),
    )
    return Scenario(
        "controlled ship", "equilibrium", "methane", tank, ins, legs, rl, ox, barg_to_pa(0.10)
    )


def problems_of(data: dict) -> list[str]:
    """Every problem the loader reports for a scenario dict (it must report some)."""
    with pytest.raises(ScenarioError) as info:
        parse_scenario(data)
    return info.value.problems


def only_problem(data: dict) -> str:
    problems = problems_of(data)
    assert len(problems) == 1, problems
    return problems[0]


def metric(at, label: str) -> str:
    """The value of the app's metric with this label (AppTest)."""
    for item in at.metric:
        if item.label == label:
            return item.value
    raise AssertionError(f"no metric {label!r}; have {[m.label for m in at.metric]}")


def figure(at, key: str) -> dict:
    """The plotly figure of the app's chart with this key, as a dict (AppTest)."""
    for element in at.get("plotly_chart"):
        if getattr(element, "key", None) == key:
            return json.loads(element.proto.spec)
    raise AssertionError(f"no chart with key {key!r}")


def run_whatif(at, which: str, day: float, hours: float | None = None) -> None:
    """On the app's What-if page: make ``which`` fail on ``day`` and run both voyages."""
    at.switch_page("ui/pages/whatif.py").run()
    at.radio(key="whatif.which").set_value(which)
    at.number_input(key="whatif.start_day").set_value(day)
    at.number_input(key="whatif.hours").set_value(hours)
    at.button(key="whatif.run").click().run()
