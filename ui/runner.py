"""The app's one entry point into the engine: validation, derived facts, cached runs.

Engine errors never reach the page as a traceback: invalid input comes back as
the engine's own list of problems, anything unexpected as one plain message.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import streamlit as st

from sim.facts import initial_facts
from sim.results import VoyageResult
from sim.scenario import Scenario, ScenarioError, loads_scenario, parse_scenario
from sim.voyage import simulate


@st.cache_resource(show_spinner="Loading cargo properties…")
def cargo_properties(fluid: str):
    """Build (once per server process) the saturation table of a cargo."""
    from sim.cargo import saturation_table

    return saturation_table(fluid)


@st.cache_data(show_spinner=False, max_entries=200)
def run_toml(toml_text: str) -> VoyageResult:
    """Run a scenario given as TOML text; cached on that text."""
    return simulate(loads_scenario(toml_text, "set-up"))


@dataclass
class Check:
    """Validation of a scenario dict: the scenario, or the problems; facts if valid."""

    scenario: Scenario | None = None
    problems: list[str] = field(default_factory=list)
    facts: dict = field(default_factory=dict)

    @property
    def ok(self) -> bool:
        return self.scenario is not None and not self.problems


def check(data: dict, extra_problems: list[str] | None = None) -> Check:
    """Validate a scenario dict and, if valid, work out its derived facts."""
    out = Check(problems=list(extra_problems or []))
    cargo = data.get("cargo") if isinstance(data.get("cargo"), dict) else {}
    fluid = cargo.get("fluid")
    try:
        if isinstance(fluid, str):
            from sim.cargo import CATALOGUE

            if fluid in CATALOGUE:
                cargo_properties(fluid)
        if isinstance(cargo.get("mole_fractions"), dict) and len(cargo["mole_fractions"]) > 1:
            # a new composition costs about a second (its bubble curve); the engine caches it,
            # and the spinner only shows when it takes that long
            with st.spinner("Working out the mixture's bubble curve…"):
                scenario = parse_scenario(data, "")
        else:
            scenario = parse_scenario(data, "")
    except ScenarioError as exc:
        out.problems.extend(exc.problems)
        return out
    except Exception as exc:  # an engine bug must not show a traceback
        out.problems.append(f"the set-up could not be checked: {type(exc).__name__}: {exc}")
        return out
    if out.problems:
        return out
    out.scenario = scenario
    try:
        out.facts = initial_facts(scenario)
    except Exception as exc:  # facts are a convenience; never block a run on them
        out.facts = {"error": f"{type(exc).__name__}: {exc}"}
    return out


@dataclass
class Outcome:
    """A run: its result, or the problems/error that stopped it."""

    result: VoyageResult | None = None
    problems: list[str] = field(default_factory=list)


def run(toml_text: str) -> Outcome:
    """Run a scenario (TOML text) through the cache, with a spinner; never raises."""
    try:
        with st.spinner("Running the voyage…", show_time=True):
            return Outcome(result=run_toml(toml_text))
    except ScenarioError as exc:
        return Outcome(problems=list(exc.problems))
    except Exception as exc:  # an engine bug must not show a traceback
        return Outcome(problems=[f"the simulation failed: {type(exc).__name__}: {exc}"])
