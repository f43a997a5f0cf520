"""Scenario files: TOML in trade units -> validated :class:`Scenario` in SI.

A scenario file describes one ship (several identical tanks), one cargo and
one voyage made of legs. Trade units live only here; the dataclasses below are
pure SI. See ``docs/scenario-format.md`` for every key.
"""

from __future__ import annotations

import copy
import difflib
import json
import math
import os
import textwrap
import tomllib
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import tomli_w

from . import CAUTION
from .cargo import CATALOGUE, SaturationTable, saturation_table
from .errors import InputError
from .geometry import DEFAULT_HEADS, HEAD_TYPES, SHAPES, make_shape
from .models import DEFAULT_MODEL, MODELS
from .units import (
    P_ATM,
    SECONDS_PER_DAY,
    SECONDS_PER_HOUR,
    barg_to_pa,
    c_to_k,
    k_to_c,
    kg_h_to_kg_s,
    kwh_per_kg_to_j_per_kg,
    pa_to_barg,
)


class ScenarioError(InputError):
    """Invalid scenario: one message per problem, each naming key, value and what is allowed.

    Attributes
    ----------
    problems : list[str]
        One line per problem, e.g. ``"tank.fill_pct = 120: must be above 0
        and below 100 (percent of tank volume)"``.
    """


@dataclass(frozen=True)
class Leg:
    """One leg of the voyage, with its ambient and fuel demand.

    Attributes
    ----------
    name : str
    duration : float  [s]
    air_temperature : float  [K]
    sea_temperature : float  [K]
    fuel_demand : float
        Gas the engines will take from the tanks, whole ship [kg/s].
    start_fill : float or None
        Port call at the start of the leg: cargo is discharged (or loaded) to
        this liquid fraction of tank volume [-]; None: no port call.
    """

    name: str
    duration: float
    air_temperature: float
    sea_temperature: float
    fuel_demand: float = 0.0
    start_fill: float | None = None


@dataclass(frozen=True)
class Outage:
    """A window in which the reliquefaction plant is down.

    Attributes
    ----------
    start : float  time from voyage start [s]
    duration : float  [s]
    """

    start: float
    duration: float

    @property
    def end(self) -> float:
        """End of the outage [s]."""
        return self.start + self.duration


@dataclass(frozen=True)
class Reliquefaction:
    """Reliquefaction plant (whole ship).

    Attributes
    ----------
    capacity : float  vapour it can condense [kg/s]
    hold_pressure : float  pressure it holds the tanks at [Pa]
    specific_power : float  electrical energy per kg condensed [J/kg]
    outages : tuple[Outage, ...]
    """

    capacity: float
    hold_pressure: float
    specific_power: float = 0.0
    outages: tuple[Outage, ...] = ()


@dataclass(frozen=True)
class Oxidiser:
    """Thermal oxidiser / gas combustion unit (whole ship).

    Attributes
    ----------
    capacity : float  vapour it can burn [kg/s]
    set_pressure : float  tank pressure at which it starts [Pa]
    outages : tuple[Outage, ...]
    """

    capacity: float
    set_pressure: float
    outages: tuple[Outage, ...] = ()


@dataclass(frozen=True)
class Insulation:
    """Heat ingress: a U-value, or a rated boil-off rate to calibrate one from.

    Exactly one of ``u_value`` and ``rated_bor`` is set.

    Attributes
    ----------
    u_value : float or None  overall heat-transfer coefficient [W/(m^2 K)]
    air_exposed_fraction : float  share of the tank surface following the air temperature [-]
    rated_bor : float or None  rated boil-off, fraction of cargo mass per second [1/s]
    rated_air_temperature : float  [K]
    rated_sea_temperature : float  [K]
    rated_fill : float or None  fill the rating refers to [-]; None: the initial fill
    """

    u_value: float | None
    air_exposed_fraction: float
    rated_bor: float | None = None
    rated_air_temperature: float = 318.15
    rated_sea_temperature: float = 305.15
    rated_fill: float | None = None


@dataclass(frozen=True)
class TankSpec:
    """The cargo tanks (all identical) and their initial condition.

    Attributes
    ----------
    shape : object  a shape from :mod:`sim.geometry`
    count : int  number of identical tanks [-]
    fill : float  initial liquid volume / tank volume [-]
    pressure : float  initial pressure, cargo saturated at it [Pa]
    relief_set_pressure : float  [Pa]
    vacuum_pressure : float  pressure below which a vacuum warning is raised [Pa]
    wall_thickness : float  metal wall thickness [m]; 0: no conduction along the wall
    wall_conductivity : float  wall thermal conductivity at cargo temperature [W/(m K)];
        0: no conduction along the wall (used by the two-zone model only)
    """

    shape: object
    count: int
    fill: float
    pressure: float
    relief_set_pressure: float
    vacuum_pressure: float
    wall_thickness: float = 0.0
    wall_conductivity: float = 0.0


@dataclass(frozen=True)
class Scenario:
    """A validated scenario, all SI.

    Attributes
    ----------
    title : str
    model : str  name in :data:`sim.models.MODELS`
    cargo : str  name in :data:`sim.cargo.CATALOGUE`, or a mixture's label
    tank : TankSpec
    insulation : Insulation
    legs : tuple[Leg, ...]
    reliquefaction : Reliquefaction or None
    oxidiser : Oxidiser or None
    fuel_floor_pressure : float
        The engines stop drawing tank vapour below this pressure [Pa].
    fuel_outages : tuple[Outage, ...]
        Windows in which the engines take no gas (e.g. running on oil).
    mixing_times : tuple[float, ...]
        Times the liquid is mixed (heavy weather, cargo pump) [s]; acts on
        tank models with a stratified liquid.
    mole_fractions : tuple of (component, mole fraction) or None
        Liquid composition of a mixture cargo as loaded [-], None for a pure
        cargo (then ``cargo`` is the catalogue name; for a mixture it is the
        label).
    price_per_mmbtu, price_per_tonne : float or None
        Cargo price for the value of cargo lost (any currency).
    raw : dict
        The scenario as written (trade units), for saving it back.
    """

    title: str
    model: str
    cargo: str
    tank: TankSpec
    insulation: Insulation
    legs: tuple[Leg, ...]
    reliquefaction: Reliquefaction | None
    oxidiser: Oxidiser | None
    fuel_floor_pressure: float
    fuel_outages: tuple[Outage, ...] = ()
    mixing_times: tuple[float, ...] = ()
    mole_fractions: tuple[tuple[str, float], ...] | None = None
    price_per_mmbtu: float | None = None
    price_per_tonne: float | None = None
    raw: dict = field(default_factory=dict, compare=False, repr=False)

    @property
    def duration(self) -> float:
        """Whole voyage [s]."""
        return sum(leg.duration for leg in self.legs)


# ---------------------------------------------------------------------------
# The format: every key, its type, range and meaning
# ---------------------------------------------------------------------------

#: Gauge pressure of a perfect vacuum [barg]; every pressure must lie above it.
ABSOLUTE_ZERO_BARG = -P_ATM / 1e5

#: Folder of the demo scenarios shipped with the repository.
SCENARIO_DIR = Path(__file__).resolve().parent.parent / "scenarios"

#: Default vacuum warning level [barg].
DEFAULT_VACUUM_BARG = -0.05

#: Largest size of any number in a scenario file (file units). Far above any
#: real tank, rate, time or price, far below where products of them overflow
#: to inf in the run (a tank of 1e300 m gives an infinite cargo mass).
MAX_NUMBER = 1e12

#: Longest voyage, all legs together [days]. The run keeps hourly rows, so its
#: time and memory grow with the voyage; ten years covers any voyage and the
#: longest holding-time horizon of ``size``.
MAX_VOYAGE_DAYS = 3650.0

#: Most identical tanks in one scenario.
MAX_TANKS = 1000

#: Longest title, label or leg name [characters]: it heads charts and tables.
MAX_TEXT = 200

#: Liquid fraction at which a tank counts as liquid-full [-]: a vapour space of
#: a ten-thousandth of the tank (0.1 m3 in 1000 m3) cushions nothing. The run
#: stops there (event ``liquid-full``); a fill at or above it is refused.
LIQUID_FULL_FILL = 1.0 - 1e-4
#: Liquid fraction below which the heel counts as exhausted [-]: the tank
#: models need liquid to stay saturated. The run stops there (event
#: ``heel-exhausted``); a fill at or below it is refused.
HEEL_EMPTY_FILL = 1e-4


def _usable_fill(check, path: str, fill_pct: float | None) -> float | None:
    """Refuse a fill at the liquid-full or heel-exhausted line; return it otherwise."""
    if fill_pct is None:
        return None
    full, empty = 100.0 * LIQUID_FULL_FILL, 100.0 * HEEL_EMPTY_FILL
    if fill_pct >= full:
        why = (f"a tank this full is liquid-full (vapour space under "
               f"{100.0 - full:.2g} % of its volume)")
    elif fill_pct <= empty:
        why = f"a tank this empty has no heel left (liquid under {empty:.2g} % of its volume)"
    else:
        return fill_pct
    check.add(f"{path} = {_num(fill_pct)}: {why}; must be above {empty:.2g} and below "
              f"{_num(full)} (percent of tank volume)")
    return None


@dataclass(frozen=True)
class KeySpec:
    """One key of the scenario format: type, allowed range, default and meaning.

    Attributes
    ----------
    name : str
        Key as written in the file.
    meaning : str
        Short description including the unit; shown in hints.
    kind : str
        ``"number"`` (int or float), ``"integer"``, ``"string"`` or ``"choice"``
        (a string from a named list).
    low, high : float or None
        Range limits in file units; None for no limit.
    low_included, high_included : bool
        Whether the limits themselves are allowed.
    unit : str
        Unit text shown in range messages, e.g. ``"days"``.
    required : bool
        The key must be given.
    default : object
        Value used when the key is absent (file units); None when there is
        none or when it derives from another key (see the format document).
    """

    name: str
    meaning: str
    kind: str = "number"
    low: float | None = None
    high: float | None = None
    low_included: bool = False
    high_included: bool = False
    unit: str = ""
    required: bool = False
    default: object = None

    def range_text(self) -> str:
        """The allowed range in words, e.g. ``above 0 and below 100 (percent ...)``."""
        unit = f" ({self.unit})" if self.unit else ""
        if self.kind == "integer":
            low = "" if self.low is None else f", at least {_num(self.low)}"
            return f"a whole number{low}{unit}"
        if self.low is not None and self.high is not None:
            if self.low_included and self.high_included:
                return f"between {_num(self.low)} and {_num(self.high)}{unit}"
            low = "at or above" if self.low_included else "above"
            high = "at or below" if self.high_included else "below"
            return f"{low} {_num(self.low)} and {high} {_num(self.high)}{unit}"
        if self.low is not None:
            low = "at or above" if self.low_included else "above"
            return f"a number {low} {_num(self.low)}{unit}"
        if self.high is not None:
            high = "at or below" if self.high_included else "below"
            return f"a number {high} {_num(self.high)}{unit}"
        return f"a number{unit}"

    def in_range(self, x: float | int) -> bool:
        """True if ``x`` (file units) lies in the allowed range."""
        if self.low is not None and (x < self.low or (x == self.low and not self.low_included)):
            return False
        if self.high is not None and (x > self.high or (x == self.high and not self.high_included)):
            return False
        return True


def _pressure_key(name: str, meaning: str, **kw) -> KeySpec:
    return KeySpec(name, meaning, low=ABSOLUTE_ZERO_BARG,
                   unit="barg; -1.01325 barg is a perfect vacuum", **kw)


_DIMENSION_MEANINGS = {
    "diameter_m": "internal diameter [m]",
    "length_m": "internal length [m]",
    "width_m": "internal width (bilobe: across both lobes) [m]",
    "height_m": "internal height [m]",
}
#: Dimension keys of all shapes, in the order the format document lists them.
DIMENSION_KEYS: tuple[str, ...] = tuple(_DIMENSION_MEANINGS) + tuple(
    sorted({k for _, keys in SHAPES.values() for k in keys} - set(_DIMENSION_MEANINGS))
)
#: Shapes that take the optional ``heads`` key, and the values it may have.
HEADS_SHAPES = ("horizontal-cylinder",)
HEAD_CHOICES = tuple(HEAD_TYPES)

_AIR = dict(low=-60.0, high=60.0, low_included=True, high_included=True, unit="degC")
_SEA = dict(low=-2.0, high=40.0, low_included=True, high_included=True, unit="degC")
_PERCENT_OPEN = dict(low=0.0, high=100.0, unit="percent of tank volume")
_RATE = dict(low=0.0, low_included=True, unit="kg/h, whole ship")


def _specs(*specs: KeySpec) -> dict[str, KeySpec]:
    return {s.name: s for s in specs}


def _outage_specs(what: str) -> dict[str, KeySpec]:
    return _specs(
        KeySpec("start_day", f"{what} outage start, days from voyage start", low=0.0,
                low_included=True, unit="days from voyage start", required=True),
        KeySpec("hours", f"{what} outage duration in hours", low=0.0, unit="hours",
                required=True),
    )


#: Every table of the format (``""`` is the top level) and its keys.
SCHEMA: dict[str, dict[str, KeySpec]] = {
    "": _specs(
        KeySpec("title", "scenario title", kind="string", required=True),
        KeySpec("model", "tank model name", kind="choice", default=DEFAULT_MODEL),
    ),
    "cargo": _specs(
        KeySpec("fluid", "cargo name from the catalogue (or give [cargo.mole_fractions])",
                kind="choice"),
        KeySpec("label", "name shown for a mixture cargo", kind="string"),
        KeySpec("price_per_mmbtu", "cargo price per MMBtu (gross), any currency, for the "
                "value of cargo lost", low=0.0, low_included=True, unit="per MMBtu"),
        KeySpec("price_per_tonne", "cargo price per tonne, any currency, for the value of "
                "cargo lost", low=0.0, low_included=True, unit="per tonne"),
    ),
    "tank": _specs(
        KeySpec("shape", "tank shape name", kind="choice", required=True),
        *(KeySpec(k, _DIMENSION_MEANINGS.get(k, "dimension [m]"), low=0.0, unit="metres")
          for k in DIMENSION_KEYS),
        KeySpec("heads", "head shape of a horizontal cylinder", kind="choice",
                default=DEFAULT_HEADS),
        KeySpec("count", "number of identical tanks", kind="integer", low=1.0,
                low_included=True, unit="identical tanks", default=1),
        KeySpec("fill_pct", "initial liquid volume in percent of tank volume", required=True,
                **_PERCENT_OPEN),
        _pressure_key("pressure_barg", "initial gauge pressure in bar, cargo saturated at it",
                      required=True),
        _pressure_key("relief_set_barg", "relief valve set pressure (MARVS), gauge, bar",
                      required=True),
        _pressure_key("vacuum_barg", "vacuum warning level, gauge pressure in bar",
                      default=DEFAULT_VACUUM_BARG),
        KeySpec("wall_thickness_mm", "metal tank wall thickness in mm, for conduction along "
                "the wall (two-zone model; give with wall_conductivity_w_mk)", low=0.0,
                unit="mm"),
        KeySpec("wall_conductivity_w_mk", "thermal conductivity of the tank wall at cargo "
                "temperature in W/(m K) (two-zone model; give with wall_thickness_mm)",
                low=0.0, unit="W/(m K)"),
    ),
    "insulation": _specs(
        KeySpec("u_w_m2k", "overall heat-transfer coefficient in W/(m2 K)", low=0.0,
                unit="W/(m2 K)"),
        KeySpec("air_exposed_pct", "share of the tank surface following the air temperature, "
                "percent", low=0.0, high=100.0, low_included=True, high_included=True,
                unit="percent of tank surface", default=100.0),
        KeySpec("rated_bor_pct_day", "rated boil-off in percent of the liquid cargo per day",
                low=0.0, high=100.0, unit="percent per day"),
        KeySpec("rated_air_c", "air temperature of the boil-off rating in degC",
                default=45.0, **_AIR),
        KeySpec("rated_sea_c", "sea temperature of the boil-off rating in degC",
                default=32.0, **_SEA),
        KeySpec("rated_fill_pct", "fill the boil-off rating refers to, percent of tank volume",
                **_PERCENT_OPEN),
    ),
    "leg": _specs(
        KeySpec("name", "leg name", kind="string"),
        KeySpec("days", "leg duration in days", low=0.0, unit="days", required=True),
        KeySpec("air_c", "air temperature in degC", required=True, **_AIR),
        KeySpec("sea_c", "sea temperature in degC", required=True, **_SEA),
        KeySpec("fuel_kg_h", "gas the engines take from the tanks, kg/h, whole ship",
                default=0.0, **_RATE),
        KeySpec("start_fill_pct", "port call at the start of the leg: discharge (or load) to "
                "this fill, percent of tank volume; the heel is what stays on board",
                **_PERCENT_OPEN),
    ),
    "reliquefaction": _specs(
        KeySpec("capacity_kg_h", "vapour the plant can condense, kg/h, whole ship",
                required=True, **_RATE),
        _pressure_key("hold_barg", "pressure the plant holds, gauge, bar", required=True),
        KeySpec("specific_power_kwh_kg", "electrical energy per kg reliquefied, kWh/kg",
                low=0.0, low_included=True, unit="kWh/kg", default=0.0),
    ),
    "reliquefaction.outage": _outage_specs("plant"),
    "oxidiser": _specs(
        KeySpec("capacity_kg_h", "vapour the oxidiser can burn, kg/h, whole ship",
                required=True, **_RATE),
        _pressure_key("set_barg", "pressure at which the oxidiser starts, gauge, bar",
                      required=True),
    ),
    "oxidiser.outage": _outage_specs("oxidiser"),
    "fuel": _specs(
        _pressure_key("floor_barg", "gauge pressure below which the engines stop drawing "
                      "tank vapour (default: tank.pressure_barg)"),
    ),
    "fuel.outage": _outage_specs("gas burning"),
    "mixing": _specs(
        KeySpec("day", "time the liquid is mixed (heavy weather, cargo pump started), days "
                "from voyage start; acts on tank models with a stratified liquid",
                low=0.0, low_included=True, unit="days", required=True),
    ),
}

#: Tables inside tables: where they live, how they are written, what they hold.
_SUBTABLES: dict[str, dict[str, tuple[str, str]]] = {
    "": {
        "cargo": ("table", "the cargo"),
        "tank": ("table", "tank shape, size and initial condition"),
        "insulation": ("table", "heat ingress"),
        "leg": ("array", "voyage legs"),
        "reliquefaction": ("table", "reliquefaction plant"),
        "oxidiser": ("table", "thermal oxidiser / gas combustion unit"),
        "fuel": ("table", "fuel gas settings"),
        "mixing": ("array", "times the liquid is mixed"),
    },
    "cargo": {"mole_fractions": ("table", "mole fractions of a mixture cargo")},
    "reliquefaction": {"outage": ("array", "plant outages")},
    "oxidiser": {"outage": ("array", "oxidiser outages")},
    "fuel": {"outage": ("array", "windows in which the engines take no gas")},
}

#: Canonical order of the top-level keys when a scenario is written out.
_TOP_ORDER = ("title", "model", "cargo", "tank", "insulation", "leg", "reliquefaction",
              "oxidiser", "fuel", "mixing")


# ---------------------------------------------------------------------------
# Message helpers
# ---------------------------------------------------------------------------


def _num(x: float) -> str:
    """A limit or computed number, short: 100 not 100.0."""
    x = float(x)
    return str(int(x)) if x.is_integer() and abs(x) < 1e15 else repr(x)


def _show(value: Any) -> str:
    """A value as it would look in a TOML file, cut short if long."""
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, str):
        text = json.dumps(value, ensure_ascii=False)
    elif isinstance(value, float):
        if math.isnan(value):
            text = "nan"
        elif math.isinf(value):
            text = "inf" if value > 0 else "-inf"
        else:
            text = repr(value)
    elif isinstance(value, int):
        text = str(value)
    elif isinstance(value, dict):
        text = "{" + ", ".join(f"{k} = {_show(v)}" for k, v in value.items()) + "}"
    elif isinstance(value, (list, tuple)):
        text = "[" + ", ".join(_show(v) for v in value) + "]"
    else:
        text = str(value)
    return text if len(text) <= 60 else text[:57] + "..."


def _kind(value: Any) -> str:
    """What a wrong value is, in TOML words."""
    if isinstance(value, bool):
        return "true/false"
    if isinstance(value, str):
        return "a string"
    if isinstance(value, dict):
        return "a table"
    if isinstance(value, (list, tuple)):
        return "an array"
    if isinstance(value, (int, float)):
        return "a number"
    if value is None:
        return "None (no value)"
    return f"a {type(value).__name__}"


def _join(prefix: str, key: str) -> str:
    return f"{prefix}.{key}" if prefix else str(key)


def _floor2(x: float) -> str:
    return f"{math.floor(x * 100.0 + 1e-9) / 100.0:.2f}"


def _ceil2(x: float) -> str:
    return f"{math.ceil(x * 100.0 - 1e-9) / 100.0:.2f}"


def _bar(pa: float) -> str:
    bar = pa / 1e5
    return f"{bar:.1f}" if bar >= 10.0 else f"{bar:.3g}"


#: Other names for catalogue cargoes, for hints only (methane stands in for LNG,
#: propane for LPG).
_CARGO_ALIASES = {
    "lng": "methane", "ch4": "methane", "c2h6": "ethane", "ethene": "ethylene",
    "c2h4": "ethylene", "lpg": "propane", "c3h8": "propane", "propene": "propylene",
    "c3h6": "propylene", "butane": "n-butane", "iso-butane": "isobutane",
    "but-1-ene": "1-butene", "nh3": "ammonia", "co2": "carbon-dioxide", "n2": "nitrogen",
    "h2": "hydrogen", "lh2": "parahydrogen", "para-hydrogen": "parahydrogen",
}

#: Other names people use for a key, for hints only.
_ALIASES = {
    "u": "u_w_m2k", "u_value": "u_w_m2k", "k_value": "u_w_m2k", "u_w_m2_k": "u_w_m2k",
    "bor": "rated_bor_pct_day", "bor_pct": "rated_bor_pct_day",
    "boil_off_rate": "rated_bor_pct_day", "marvs": "relief_set_barg",
    "marvs_barg": "relief_set_barg", "relief_barg": "relief_set_barg",
    "set_pressure_barg": "relief_set_barg", "duration": "days", "length_days": "days",
    "tanks": "count", "number": "count", "cargo": "fluid", "fill": "fill_pct",
    "level_pct": "fill_pct", "capacity_t_h": "capacity_kg_h", "capacity_t_d": "capacity_kg_h",
}


def _suggest(key: str, table: str) -> str:
    """Hint for an unknown key: the closest allowed key, or where the key belongs."""
    allowed = {name: spec.meaning for name, spec in SCHEMA[table].items()}
    allowed.update({name: what for name, (_, what) in _SUBTABLES.get(table, {}).items()})
    key = str(key)
    if _ALIASES.get(key.lower()) in allowed:
        name = _ALIASES[key.lower()]
        return f" (did you mean {name}? {allowed[name]})"
    # A key that exists verbatim in another table was most likely misplaced.
    homes = [t for t, keys in SCHEMA.items() if key in keys and t != table]
    if homes:
        where = _or(_table_label(t) for t in homes)
        meaning = f": {SCHEMA[homes[0]][key].meaning}" if len(homes) == 1 else ""
        return f" (it belongs in {where}{meaning})"
    homes = [_join(t, key) for t, subs in _SUBTABLES.items() if key in subs and t != table]
    if homes:
        return f" (did you mean {_or(_table_label(t) for t in homes)}?)"
    match = difflib.get_close_matches(key, allowed, n=1, cutoff=0.6)
    if not match:
        match = difflib.get_close_matches(key.lower(), allowed, n=1, cutoff=0.6)
    if not match:  # e.g. duration_days -> days, diameter -> diameter_m
        match = [a for a in allowed if len(key) >= 3 and len(a) >= 3 and (a in key or key in a)]
    if match:
        return f" (did you mean {match[0]}? {allowed[match[0]]})"
    return "; allowed: " + ", ".join(allowed)


def _or(items) -> str:
    items = list(items)
    return items[0] if len(items) == 1 else ", ".join(items[:-1]) + " or " + items[-1]


def _table_label(table: str) -> str:
    if table == "":
        return "the top level"
    if table in ("leg", "mixing") or table.endswith(".outage"):
        return f"[[{table}]]"
    return f"[{table}]"


# ---------------------------------------------------------------------------
# The checker: reads values, collects every problem
# ---------------------------------------------------------------------------

_ABSENT = object()


class _Checker:
    """Reads typed values out of the input dict and collects problems."""

    def __init__(self) -> None:
        self.problems: list[str] = []

    def add(self, text: str) -> None:
        self.problems.append(text)

    # -- structure ---------------------------------------------------------
    def unknown_keys(self, data: dict, prefix: str, table: str) -> None:
        """Report keys of ``data`` that the format does not know."""
        known = set(SCHEMA[table]) | set(_SUBTABLES.get(table, {}))
        for key, value in data.items():
            if key in known:
                continue
            path = _join(prefix, str(key))
            if isinstance(value, dict):
                what = f"table [{path}]"
            elif isinstance(value, list) and value and all(isinstance(v, dict) for v in value):
                what = f"table [[{path}]]"
            else:
                what = f"key {path}"
            self.add(f"unknown {what}{_suggest(str(key), table)}")

    def table(self, data: dict, key: str, prefix: str, required: bool) -> dict | None:
        """A sub-table ``[key]``; None if absent or wrong."""
        path = _join(prefix, key)
        value = data.get(key, _ABSENT)
        if value is _ABSENT:
            if required:
                self.add(f"{path}: the [{path}] table is required ({_SUBTABLES[prefix][key][1]})")
            return None
        if isinstance(value, dict):
            return value
        if isinstance(value, list) and value and all(isinstance(v, dict) for v in value):
            self.add(f"{path} must be a single [{path}] table, not an array [[{path}]]")
        else:
            self.add(f"{path} = {_show(value)}: must be a table [{path}], not {_kind(value)}")
        return None

    def array(self, data: dict, key: str, prefix: str) -> list[dict] | None:
        """An array of tables ``[[key]]``; None if absent; bad items reported and skipped."""
        path = _join(prefix, key)
        value = data.get(key, _ABSENT)
        if value is _ABSENT:
            return None
        if isinstance(value, dict):
            self.add(f"{path} must be an array of tables: write each one as [[{path}]], "
                     f"not [{path}]")
            return None
        if not isinstance(value, list):
            self.add(f"{path} = {_show(value)}: must be an array of tables [[{path}]], "
                     f"not {_kind(value)}")
            return None
        return value

    # -- values --------------------------------------------------------------
    def number(self, data: dict, prefix: str, spec: KeySpec) -> float | None:
        """A number in range; its default if absent; None if missing or bad."""
        path = _join(prefix, spec.name)
        value = data.get(spec.name, _ABSENT)
        if value is _ABSENT:
            if spec.required:
                self.add(f"{path} is required: {spec.meaning}; {spec.range_text()}")
                return None
            return None if spec.default is None else float(spec.default)
        if isinstance(value, bool) or not isinstance(value, (int, float)):
            hint = ""
            if isinstance(value, str):
                try:
                    if math.isfinite(float(value)):
                        hint = f" (write {value.strip()} without quotes)"
                except ValueError:
                    pass
            self.add(f"{path} = {_show(value)}: must be a number, not {_kind(value)}{hint}; "
                     f"allowed: {spec.range_text()}")
            return None
        try:
            x = float(value)
        except OverflowError:
            x = math.inf
        if not math.isfinite(x):
            self.add(f"{path} = {_show(value)}: must be a finite number; "
                     f"allowed: {spec.range_text()}")
            return None
        if not spec.in_range(x):
            self.add(f"{path} = {_show(value)}: must be {spec.range_text()}")
            return None
        if abs(x) > MAX_NUMBER:
            self.add(f"{path} = {_show(value)}: too large; allowed: {spec.range_text()}, "
                     f"at most {MAX_NUMBER:g} in size")
            return None
        return x

    def integer(self, data: dict, prefix: str, spec: KeySpec) -> int | None:
        """A whole number in range; its default if absent; None if bad."""
        path = _join(prefix, spec.name)
        value = data.get(spec.name, _ABSENT)
        if value is _ABSENT:
            if spec.required:
                self.add(f"{path} is required: {spec.meaning}; {spec.range_text()}")
                return None
            return spec.default
        if isinstance(value, bool) or not isinstance(value, int):
            kind = _kind(value)
            if isinstance(value, float):
                kind = "a decimal number"
                if math.isfinite(value) and value.is_integer():
                    kind += f" (write {int(value)})"
            self.add(f"{path} = {_show(value)}: must be {spec.range_text()}, not {kind}")
            return None
        if not spec.in_range(value):  # an int compares exactly, however large
            self.add(f"{path} = {_show(value)}: must be {spec.range_text()}")
            return None
        return value

    def string(self, data: dict, prefix: str, spec: KeySpec) -> str | None:
        """A non-empty string; its default if absent; None if missing or bad."""
        path = _join(prefix, spec.name)
        value = data.get(spec.name, _ABSENT)
        if value is _ABSENT:
            if spec.required:
                self.add(f"{path} is required: {spec.meaning} (a string in quotes)")
            return spec.default
        if not isinstance(value, str):
            self.add(f"{path} = {_show(value)}: must be a string in quotes, not {_kind(value)}")
            return None
        if not value.strip():
            self.add(f"{path} = {_show(value)}: must not be empty")
            return None
        if any(ord(c) < 32 or ord(c) == 127 for c in value):
            self.add(f"{path} = {value!r}: must be one line of text, without line breaks, tabs "
                     "or other control characters")
            return None
        if len(value) > MAX_TEXT:
            self.add(f"{path} = {_show(value[:40])}...: {len(value)} characters; at most "
                     f"{MAX_TEXT}")
            return None
        return value

    def choice(self, data: dict, prefix: str, spec: KeySpec, allowed, what: str,
               aliases: dict[str, str] | None = None, fuzzy: bool = True) -> str | None:
        """A name from ``allowed``; its default if absent; None if missing or bad.

        A hint is given for a name that differs only in case, spaces or
        underscores, for a name in ``aliases``, and (if ``fuzzy``) for a
        close spelling.
        """
        path = _join(prefix, spec.name)
        allowed = list(allowed)
        names = ", ".join(allowed)
        value = data.get(spec.name, _ABSENT)
        if value is _ABSENT:
            if spec.required:
                self.add(f"{path} is required: {spec.meaning}; allowed: {names}")
            return spec.default
        if not isinstance(value, str):
            self.add(f"{path} = {_show(value)}: must be a {what} name in quotes, not "
                     f"{_kind(value)}; allowed: {names}")
            return None
        if value not in allowed:
            plain = value.strip().lower().replace(" ", "-").replace("_", "-")
            close = [plain] if plain in allowed else []
            if not close and aliases and aliases.get(plain) in allowed:
                close = [aliases[plain]]
            if not close and fuzzy:
                close = difflib.get_close_matches(plain, allowed, n=1, cutoff=0.6)
            hint = f' (did you mean "{close[0]}"?)' if close else ""
            self.add(f"{path} = {_show(value)}: unknown {what}{hint}; allowed: {names}")
            return None
        return value

    def value(self, data: dict, prefix: str, spec: KeySpec):
        """Dispatch on the spec's kind (numbers and integers and strings only)."""
        if spec.kind == "integer":
            return self.integer(data, prefix, spec)
        if spec.kind == "string":
            return self.string(data, prefix, spec)
        return self.number(data, prefix, spec)

    # -- cargo pressure range -------------------------------------------------
    def saturation(self, path: str, raw: Any, barg: float, table: SaturationTable) -> bool:
        """Check a pressure lies where the cargo can be liquid; report if not."""
        pressure = barg_to_pa(barg)
        cargo = table.cargo.label[0].lower() + table.cargo.label[1:]
        if pressure > table.pressure_max and not math.isfinite(table.temperature_critical):
            self.add(
                f"{path} = {_show(raw)}: above the highest pressure covered for {cargo} "
                f"(its bubble point at {_bar(table.pressure_max)} bar abs, "
                f"{k_to_c(table.temperature_max):.1f} degC); the highest usable pressure is "
                f"{_floor2(pa_to_barg(table.pressure_max))} barg"
            )
            return False
        if pressure > table.pressure_max:
            self.add(
                f"{path} = {_show(raw)}: {cargo} has no liquid above its critical point "
                f"({k_to_c(table.temperature_critical):.1f} degC, "
                f"{_bar(table.pressure_critical)} bar abs); the highest usable pressure is "
                f"{_floor2(pa_to_barg(table.pressure_max))} barg"
            )
            return False
        if pressure < table.pressure_min:
            lowest = _ceil2(pa_to_barg(table.pressure_min))
            if table.pressure_min <= table.pressure_triple * 1.001:
                self.add(
                    f"{path} = {_show(raw)}: {cargo} has no liquid below the triple point "
                    f"({_bar(table.pressure_triple)} bar abs, "
                    f"{k_to_c(table.temperature_triple):.1f} degC): solid "
                    f"{table.cargo.formula} would form; the lowest usable pressure is "
                    f"{lowest} barg"
                )
            elif not math.isfinite(table.temperature_critical):  # a mixture's table
                self.add(
                    f"{path} = {_show(raw)}: below the lowest pressure covered for {cargo} "
                    f"(its bubble point at {_bar(table.pressure_min)} bar abs, "
                    f"{k_to_c(table.temperature_min):.1f} degC); the lowest usable pressure is "
                    f"{lowest} barg"
                )
            else:
                self.add(
                    f"{path} = {_show(raw)}: below the lowest pressure covered for {cargo} "
                    f"({_bar(table.pressure_min)} bar abs, "
                    f"{k_to_c(table.temperature_min):.1f} degC, deep vacuum); the lowest "
                    f"usable pressure is {lowest} barg"
                )
            return False
        return True


# ---------------------------------------------------------------------------
# Parsing
# ---------------------------------------------------------------------------


def parse_scenario(data: dict, source: str = "") -> Scenario:
    """Validate a scenario dict (trade units, as read from TOML) and convert it to SI.

    Parameters
    ----------
    data : dict
        The scenario as nested dicts and lists, keys and units as in
        ``docs/scenario-format.md``.
    source : str, optional
        Where the data came from (file name), shown in the error.

    Returns
    -------
    Scenario
        Validated scenario, all SI; ``raw`` holds a deep copy of ``data``.

    Raises
    ------
    ScenarioError
        Listing every problem found, each naming the dotted key, the value
        and what is allowed. Bad input never raises anything else.
    """
    check = _Checker()
    if not isinstance(data, dict):
        raise ScenarioError(f"a scenario must be a table of keys, not {_kind(data)}", source)
    check.unknown_keys(data, "", "")

    top = SCHEMA[""]
    title = check.string(data, "", top["title"])
    model = check.choice(data, "", top["model"], MODELS, "model")

    # -- cargo ---------------------------------------------------------------
    fluid, fractions, table, prices = _parse_cargo(check, data, model)
    tank_spec, tank_values = _parse_tank(check, data, table)
    insulation = _parse_insulation(check, data)
    if not _rating_is_warmer(check, data, insulation, tank_spec, table):
        insulation = None
    legs = _parse_legs(check, data)
    voyage_days = None
    if legs is not None and all(leg is not None for leg in legs):
        voyage_days = sum(leg.duration for leg in legs) / SECONDS_PER_DAY
    relief = tank_values.get("relief_set_barg")
    reliquefaction = _parse_reliquefaction(check, data, table, relief, voyage_days)
    oxidiser = _parse_oxidiser(check, data, table, relief, voyage_days)
    fuel_floor, fuel_outages = _parse_fuel(check, data, relief,
                                           tank_values.get("pressure_barg"), voyage_days)
    mixing_times = _parse_mixing(check, data, voyage_days)

    if check.problems:
        raise ScenarioError(check.problems, source)
    return Scenario(
        title=title,
        model=model,
        cargo=fluid,
        tank=tank_spec,
        insulation=insulation,
        legs=tuple(legs),
        reliquefaction=reliquefaction,
        oxidiser=oxidiser,
        fuel_floor_pressure=fuel_floor,
        fuel_outages=fuel_outages,
        mixing_times=mixing_times,
        mole_fractions=fractions,
        price_per_mmbtu=prices[0],
        price_per_tonne=prices[1],
        raw=copy.deepcopy(data),
    )


#: Components a mixture cargo may list under [cargo.mole_fractions].
MIXTURE_KEYS = ("methane", "ethane", "propane", "n-butane", "isobutane", "n-pentane",
                "isopentane", "nitrogen", "carbon-dioxide", "ethylene", "propylene")


def _parse_cargo(check: _Checker, data: dict, model: str | None):
    """The [cargo] table -> (name or label, mole fractions or None, table, prices)."""
    cargo = check.table(data, "cargo", "", required=True)
    if cargo is None:
        return None, None, None, (None, None)
    spec = SCHEMA["cargo"]
    check.unknown_keys(cargo, "cargo", "cargo")
    prices = (check.number(cargo, "cargo", spec["price_per_mmbtu"]),
              check.number(cargo, "cargo", spec["price_per_tonne"]))
    label = check.string(cargo, "cargo", spec["label"]) if "label" in cargo else None
    raw_fractions = cargo.get("mole_fractions", _ABSENT)
    if raw_fractions is _ABSENT:
        if "fluid" not in cargo:
            check.add("cargo.fluid is required (or a [cargo.mole_fractions] table for a "
                      f"mixture); allowed fluids: {', '.join(CATALOGUE)}")
            return None, None, None, prices
        # No spelling guesses for cargoes: a near name is a different chemical.
        fluid = check.choice(cargo, "cargo", spec["fluid"], CATALOGUE, "cargo",
                             aliases=_CARGO_ALIASES, fuzzy=False)
        return fluid, None, (saturation_table(fluid) if fluid else None), prices
    if "fluid" in cargo:
        check.add(f"cargo.fluid = {_show(cargo['fluid'])} and [cargo.mole_fractions] both "
                  "given: give one (a fluid for a pure cargo, mole fractions for a mixture)")
        return None, None, None, prices
    fractions = _parse_fractions(check, raw_fractions)
    if fractions is None:
        return None, None, None, prices
    if len(fractions) == 1:
        # a single component is the pure-cargo path
        name = fractions[0][0]
        return name, None, saturation_table(name), prices
    if model is not None and model != "equilibrium":
        check.add(f'model = "{model}": mixture cargoes run with the equilibrium model only; '
                  'use model = "equilibrium" or a pure cargo')
        return None, None, None, prices
    from .mixture import EquilibriumError
    from .mixture_table import loaded_mixture_tables

    try:
        table = loaded_mixture_tables(fractions)[1]
    except (EquilibriumError, ValueError) as exc:
        check.add(f"cargo.mole_fractions: the bubble curve of this mixture could not be "
                  f"computed ({exc})")
        return None, None, None, prices
    text = label or "mixture (" + ", ".join(f"{c} {100 * f:.3g} %" for c, f in fractions) + ")"
    return text, fractions, table, prices


def _parse_fractions(check: _Checker, value) -> tuple[tuple[str, float], ...] | None:
    """[cargo.mole_fractions] -> ((name, fraction), ...) without zeros, or None."""
    allowed = ", ".join(MIXTURE_KEYS)
    if not isinstance(value, dict):
        check.add(f"cargo.mole_fractions = {_show(value)}: must be a table "
                  f"[cargo.mole_fractions] of component = mole fraction; components: {allowed}")
        return None
    if not value:
        check.add(f"[cargo.mole_fractions] is empty: list at least one of {allowed}")
        return None
    out, ok = [], True
    for key, x in value.items():
        path = f"cargo.mole_fractions.{key}"
        if key not in MIXTURE_KEYS:
            plain = str(key).strip().lower().replace(" ", "-").replace("_", "-")
            hint = f' (did you mean "{plain}"?)' if plain in MIXTURE_KEYS else ""
            check.add(f"{path}: unknown component{hint}; allowed: {allowed}")
            ok = False
            continue
        if isinstance(x, bool) or not isinstance(x, (int, float)) or not math.isfinite(x):
            check.add(f"{path} = {_show(x)}: must be a number from 0 to 1 (mole fraction)")
            ok = False
            continue
        if not 0.0 <= x <= 1.0:
            check.add(f"{path} = {_show(x)}: must be from 0 to 1 (mole fraction)")
            ok = False
            continue
        if x > 0.0:
            out.append((str(key), float(x)))
    if not ok:
        return None
    total = math.fsum(x for _, x in out)
    if abs(total - 1.0) > 1e-6:
        check.add(f"[cargo.mole_fractions] sum to {total:.9g}: mole fractions must sum to 1 "
                  "within 1e-6")
        return None
    return tuple((name, x / total) for name, x in out)


def cargo_table(scenario: Scenario) -> SaturationTable:
    """Saturation table of the scenario's cargo: the catalogue table of a pure cargo, or
    the bubble-curve table of a mixture as loaded (pseudo-pure; see
    :func:`sim.mixture_table.loaded_mixture_tables`)."""
    if scenario.mole_fractions is None:
        return saturation_table(scenario.cargo)
    from .mixture_table import loaded_mixture_tables

    return loaded_mixture_tables(scenario.mole_fractions)[1]


def _parse_tank(check: _Checker, data: dict, table: SaturationTable | None):
    """The [tank] table -> (TankSpec or None, dict of valid file values)."""
    values: dict[str, Any] = {}
    tank = check.table(data, "tank", "", required=True)
    if tank is None:
        return None, values
    spec = SCHEMA["tank"]
    check.unknown_keys(tank, "tank", "tank")
    shape_name = check.choice(tank, "tank", spec["shape"], SHAPES, "shape")

    dims: dict[str, float] = {}
    dims_ok = True
    for key in DIMENSION_KEYS:
        if key in tank:
            x = check.number(tank, "tank", spec[key])
            if x is None:
                dims_ok = False
            else:
                dims[key] = x
    heads = None
    if "heads" in tank:
        heads = check.choice(tank, "tank", spec["heads"], HEAD_CHOICES, "head shape")
        dims_ok = dims_ok and heads is not None

    shape = None
    if shape_name is not None:
        needed = SHAPES[shape_name][1]
        for key in needed:
            if key not in tank:
                check.add(f'tank: shape "{shape_name}" needs {key} '
                          f"({_DIMENSION_MEANINGS.get(key, 'dimension [m]')})")
                dims_ok = False
        for key in DIMENSION_KEYS:
            if key in tank and key not in needed:
                check.add(f'tank.{key} is not used by shape "{shape_name}" '
                          f"(it takes {', '.join(needed)})")
                dims_ok = False
        if "heads" in tank and shape_name not in HEADS_SHAPES:
            check.add(f'tank.heads is not used by shape "{shape_name}" '
                      f"(only by {', '.join(HEADS_SHAPES)})")
            dims_ok = False
        if dims_ok:
            kwargs: dict[str, Any] = dict(dims)
            if heads is not None:
                kwargs["heads"] = heads
            try:
                shape = make_shape(shape_name, **kwargs)
                volume = shape.volume()
                if not (math.isfinite(volume) and volume > 0.0):
                    given = ", ".join(f"{k} = {_show(tank[k])}" for k in needed)
                    check.add(f"tank: {given} give a volume of {volume!r} m3; the dimensions "
                              "must give a tank of some size (above 0 m3)")
                    shape = None
            except (ValueError, TypeError, ArithmeticError) as exc:
                text = str(exc)
                check.add(text if text.startswith("tank.") else f"tank: {text}")

    count = check.integer(tank, "tank", spec["count"])
    if count is not None and count > MAX_TANKS:
        check.add(f"tank.count = {_show(count)}: must be {spec['count'].range_text()}, "
                  f"at most {MAX_TANKS}")
        count = None
    fill = _usable_fill(check, "tank.fill_pct", check.number(tank, "tank", spec["fill_pct"]))
    pressure = check.number(tank, "tank", spec["pressure_barg"])
    relief = check.number(tank, "tank", spec["relief_set_barg"])
    vacuum = check.number(tank, "tank", spec["vacuum_barg"])

    if table is not None:
        if pressure is not None and not check.saturation(
                "tank.pressure_barg", tank["pressure_barg"], pressure, table):
            pressure = None
        if relief is not None and not check.saturation(
                "tank.relief_set_barg", tank["relief_set_barg"], relief, table):
            relief = None
    if pressure is not None and relief is not None and relief < pressure:
        check.add(f"tank.relief_set_barg = {_show(tank['relief_set_barg'])} is below "
                  f"tank.pressure_barg = {_show(tank['pressure_barg'])}: the relief set pressure "
                  "must be at or above the initial pressure")
        relief = None
    if pressure is not None and vacuum is not None and not vacuum < pressure:
        given = _show(tank["vacuum_barg"]) if "vacuum_barg" in tank \
            else f"{_num(vacuum)} (the default)"
        check.add(f"tank.vacuum_barg = {given} must be below tank.pressure_barg = "
                  f"{_show(tank['pressure_barg'])}: the vacuum warning level lies under the "
                  "initial pressure")

    # Conduction along the wall needs both numbers; neither: no wall conduction.
    wall_keys = ("wall_thickness_mm", "wall_conductivity_w_mk")
    wall = [0.0, 0.0]
    for i, key in enumerate(wall_keys):
        if key in tank:
            wall[i] = check.number(tank, "tank", spec[key])
            other = wall_keys[1 - i]
            if other not in tank:
                check.add(f"tank.{key} = {_show(tank[key])} needs tank.{other} as well "
                          "(conduction along the wall takes both the thickness and the "
                          "conductivity; give both or neither)")
                wall[i] = None

    values.update(pressure_barg=pressure, relief_set_barg=relief)
    if None in (shape, count, fill, pressure, relief, vacuum, *wall):
        return None, values
    return TankSpec(
        shape=shape,
        count=count,
        fill=fill / 100.0,
        pressure=barg_to_pa(pressure),
        relief_set_pressure=barg_to_pa(relief),
        vacuum_pressure=barg_to_pa(vacuum),
        wall_thickness=wall[0] / 1000.0,
        wall_conductivity=wall[1],
    ), values


def _parse_insulation(check: _Checker, data: dict) -> Insulation | None:
    ins = check.table(data, "insulation", "", required=True)
    if ins is None:
        return None
    spec = SCHEMA["insulation"]
    check.unknown_keys(ins, "insulation", "insulation")
    values = {key: check.number(ins, "insulation", s) for key, s in spec.items()}
    has_u, has_bor = "u_w_m2k" in ins, "rated_bor_pct_day" in ins
    if has_u and has_bor:
        check.add("insulation: give either u_w_m2k or rated_bor_pct_day, not both")
        return None
    if not has_u and not has_bor:
        check.add("insulation: one of u_w_m2k (W/(m2 K)) or rated_bor_pct_day "
                  "(percent per day) is required")
        return None
    if has_u:
        unused = [k for k in ("rated_air_c", "rated_sea_c", "rated_fill_pct") if k in ins]
        for key in unused:
            check.add(f"insulation.{key} is not used with u_w_m2k "
                      "(it belongs to a rated_bor_pct_day rating)")
        if unused:
            return None
    if any(values[k] is None for k in ("air_exposed_pct", "rated_air_c", "rated_sea_c")):
        return None
    if has_u and values["u_w_m2k"] is None or has_bor and values["rated_bor_pct_day"] is None:
        return None
    if "rated_fill_pct" in ins and values["rated_fill_pct"] is None:
        return None
    return Insulation(
        u_value=values["u_w_m2k"],
        air_exposed_fraction=values["air_exposed_pct"] / 100.0,
        rated_bor=None if not has_bor else values["rated_bor_pct_day"] / 100.0 / SECONDS_PER_DAY,
        rated_air_temperature=c_to_k(values["rated_air_c"]),
        rated_sea_temperature=c_to_k(values["rated_sea_c"]),
        rated_fill=None if values["rated_fill_pct"] is None else values["rated_fill_pct"] / 100.0,
    )


def _rating_is_warmer(check: _Checker, data: dict, insulation: Insulation | None,
                      tank: TankSpec | None, table: SaturationTable | None) -> bool:
    """A rated boil-off needs a rated ambient warmer than the cargo; report if not.

    The calibration (:func:`sim.heat.u_value_from_rated_bor`) divides by the
    area-weighted temperature difference between the rated ambient and the
    cargo at its initial pressure; at or below zero there is nothing to divide.
    """
    if insulation is None or insulation.rated_bor is None or tank is None or table is None:
        return True
    cargo_t = table.temperature(tank.pressure)
    f = insulation.air_exposed_fraction
    ambient = f * insulation.rated_air_temperature + (1.0 - f) * insulation.rated_sea_temperature
    if ambient > cargo_t:
        return True
    ins, spec = data["insulation"], SCHEMA["insulation"]

    def given(key: str) -> str:
        return _show(ins[key]) if key in ins else f"{_num(spec[key].default)} (the default)"

    check.add(f"insulation.rated_air_c = {given('rated_air_c')}, insulation.rated_sea_c = "
              f"{given('rated_sea_c')} with air_exposed_pct = {given('air_exposed_pct')}: the "
              f"rated ambient ({k_to_c(ambient):.2f} degC, area-weighted) must be warmer than "
              f"the cargo at tank.pressure_barg = {_show(data['tank']['pressure_barg'])} "
              f"({k_to_c(cargo_t):.2f} degC), or rated_bor_pct_day cannot be calibrated")
    return False


def _parse_legs(check: _Checker, data: dict) -> list[Leg | None] | None:
    items = check.array(data, "leg", "")
    if items is None:
        if "leg" not in data:
            check.add("leg: at least one [[leg]] is required (voyage legs)")
        return None
    if not items:
        check.add("leg: at least one [[leg]] is required (voyage legs)")
        return None
    spec = SCHEMA["leg"]
    legs: list[Leg | None] = []
    for number, item in enumerate(items, start=1):
        prefix = f"leg[{number}]"
        if not isinstance(item, dict):
            check.add(f"{prefix} = {_show(item)}: must be a table ([[leg]] with days, air_c, "
                      f"sea_c), not {_kind(item)}")
            legs.append(None)
            continue
        check.unknown_keys(item, prefix, "leg")
        v = {key: check.value(item, prefix, s) for key, s in spec.items()}
        v["start_fill_pct"] = _usable_fill(check, f"{prefix}.start_fill_pct", v["start_fill_pct"])
        if any(v[k] is None for k in ("days", "air_c", "sea_c", "fuel_kg_h")) or any(
                k in item and v[k] is None for k in ("name", "start_fill_pct")):
            legs.append(None)
            continue
        legs.append(Leg(
            name=v["name"] if v["name"] is not None else f"Leg {number}",
            duration=v["days"] * SECONDS_PER_DAY,
            air_temperature=c_to_k(v["air_c"]),
            sea_temperature=c_to_k(v["sea_c"]),
            fuel_demand=kg_h_to_kg_s(v["fuel_kg_h"]),
            start_fill=None if v["start_fill_pct"] is None else v["start_fill_pct"] / 100.0,
        ))
    if all(leg is not None for leg in legs):
        total = math.fsum(leg.duration for leg in legs) / SECONDS_PER_DAY
        if total > MAX_VOYAGE_DAYS * (1.0 + 1e-12):
            longest = max(range(len(legs)), key=lambda i: legs[i].duration)
            days = _show(items[longest]["days"])
            what = (f"leg[{longest + 1}].days = {days}" if len(legs) == 1
                    else f"leg: the {len(legs)} legs add up to {_num(round(total, 6))} days "
                    f"(longest leg[{longest + 1}].days = {days})")
            check.add(f"{what}: the voyage may last at most {_num(MAX_VOYAGE_DAYS)} days "
                      "(ten years) in all")
            return [None]
    return legs


def _below_relief(check: _Checker, path: str, raw: Any, barg: float | None,
                  relief: float | None, what: str) -> bool:
    if barg is None or relief is None or barg < relief:
        return True
    check.add(f"{path} = {_show(raw)} must be below tank.relief_set_barg = {_num(relief)} "
              f"({what})")
    return False


def _parse_reliquefaction(check: _Checker, data: dict, table: SaturationTable | None,
                          relief: float | None, voyage_days: float | None):
    rl = check.table(data, "reliquefaction", "", required=False)
    if rl is None:
        return None
    spec = SCHEMA["reliquefaction"]
    check.unknown_keys(rl, "reliquefaction", "reliquefaction")
    capacity = check.number(rl, "reliquefaction", spec["capacity_kg_h"])
    hold = check.number(rl, "reliquefaction", spec["hold_barg"])
    power = check.number(rl, "reliquefaction", spec["specific_power_kwh_kg"])
    if hold is not None and table is not None and not check.saturation(
            "reliquefaction.hold_barg", rl["hold_barg"], hold, table):
        hold = None
    if not _below_relief(check, "reliquefaction.hold_barg", rl.get("hold_barg"), hold, relief,
                         "the plant holds the tanks below the relief valve"):
        hold = None

    outages = _parse_outages(check, rl, "reliquefaction", voyage_days)
    if None in (capacity, hold, power, outages):
        return None
    return Reliquefaction(
        capacity=kg_h_to_kg_s(capacity),
        hold_pressure=barg_to_pa(hold),
        specific_power=kwh_per_kg_to_j_per_kg(power),
        outages=outages,
    )


def _parse_outages(check: _Checker, parent: dict, prefix: str,
                   voyage_days: float | None) -> tuple[Outage, ...] | None:
    """``[[<prefix>.outage]]`` entries, sorted by start; None if any is bad."""
    table = f"{prefix}.outage"
    items = check.array(parent, "outage", prefix)
    if items is None:
        return None if "outage" in parent else ()
    spec = SCHEMA[table]
    outages: list[Outage] = []
    ok = True
    for number, item in enumerate(items, start=1):
        path = f"{table}[{number}]"
        if not isinstance(item, dict):
            check.add(f"{path} = {_show(item)}: must be a table ([[{table}]] with start_day, "
                      f"hours), not {_kind(item)}")
            ok = False
            continue
        check.unknown_keys(item, path, table)
        start = check.number(item, path, spec["start_day"])
        hours = check.number(item, path, spec["hours"])
        if start is not None and voyage_days is not None and start >= voyage_days:
            word = "at" if start == voyage_days else "after"
            check.add(f"{path}.start_day = {_show(item['start_day'])} is {word} the voyage "
                      f"end ({_num(round(voyage_days, 6))} days)")
            start = None
        if start is None or hours is None:
            ok = False
            continue
        outages.append(Outage(start * SECONDS_PER_DAY, hours * SECONDS_PER_HOUR))
    if not ok:
        return None
    return tuple(sorted(outages, key=lambda o: (o.start, o.duration)))


def _parse_oxidiser(check: _Checker, data: dict, table: SaturationTable | None,
                    relief: float | None, voyage_days: float | None) -> Oxidiser | None:
    ox = check.table(data, "oxidiser", "", required=False)
    if ox is None:
        return None
    spec = SCHEMA["oxidiser"]
    check.unknown_keys(ox, "oxidiser", "oxidiser")
    capacity = check.number(ox, "oxidiser", spec["capacity_kg_h"])
    setp = check.number(ox, "oxidiser", spec["set_barg"])
    if setp is not None and table is not None and not check.saturation(
            "oxidiser.set_barg", ox["set_barg"], setp, table):
        setp = None
    if not _below_relief(check, "oxidiser.set_barg", ox.get("set_barg"), setp, relief,
                         "the oxidiser must start before the relief valve lifts"):
        setp = None
    outages = _parse_outages(check, ox, "oxidiser", voyage_days)
    if capacity is None or setp is None or outages is None:
        return None
    return Oxidiser(capacity=kg_h_to_kg_s(capacity), set_pressure=barg_to_pa(setp),
                    outages=outages)


def _parse_fuel(check: _Checker, data: dict, relief: float | None, pressure: float | None,
                voyage_days: float | None) -> tuple[float | None, tuple[Outage, ...]]:
    """The [fuel] table -> (floor pressure [Pa] or None if bad, outages)."""
    default = None if pressure is None else barg_to_pa(pressure)
    fuel = check.table(data, "fuel", "", required=False)
    if fuel is None:
        return default, ()
    check.unknown_keys(fuel, "fuel", "fuel")
    outages = _parse_outages(check, fuel, "fuel", voyage_days) or ()
    if "floor_barg" not in fuel:
        return default, outages
    floor = check.number(fuel, "fuel", SCHEMA["fuel"]["floor_barg"])
    if not _below_relief(check, "fuel.floor_barg", fuel.get("floor_barg"), floor, relief,
                         "the engines must be able to draw vapour below the relief valve"):
        floor = None
    return (None if floor is None else barg_to_pa(floor)), outages


def _parse_mixing(check: _Checker, data: dict, voyage_days: float | None) -> tuple[float, ...]:
    """``[[mixing]]`` entries -> sorted times [s] (empty if absent or bad)."""
    items = check.array(data, "mixing", "")
    if items is None:
        return ()
    times = []
    for number, item in enumerate(items, start=1):
        path = f"mixing[{number}]"
        if not isinstance(item, dict):
            check.add(f"{path} = {_show(item)}: must be a table ([[mixing]] with day), "
                      f"not {_kind(item)}")
            continue
        check.unknown_keys(item, path, "mixing")
        day = check.number(item, path, SCHEMA["mixing"]["day"])
        if day is not None and voyage_days is not None and day >= voyage_days:
            check.add(f"{path}.day = {_show(item['day'])} is at or after the voyage end "
                      f"({_num(round(voyage_days, 6))} days)")
            continue
        if day is not None:
            times.append(day * SECONDS_PER_DAY)
    return tuple(sorted(times))


# ---------------------------------------------------------------------------
# Files and text
# ---------------------------------------------------------------------------


def loads_scenario(text: str, source: str = "<text>") -> Scenario:
    """Parse and validate a scenario from TOML text.

    Parameters
    ----------
    text : str
        TOML text.
    source : str, optional
        Name shown in error messages.

    Returns
    -------
    Scenario
        Validated scenario, all SI.

    Raises
    ------
    ScenarioError
        On a TOML syntax error (with the parser's line and column) or any
        invalid key.
    """
    if not isinstance(text, str):
        raise ScenarioError(f"scenario text must be a string, not {_kind(text)}", source)
    if text.startswith("\ufeff"):  # a byte-order mark, as some Windows editors write
        text = text[1:]
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise ScenarioError(f"TOML syntax error: {exc}", source) from None
    except ValueError as exc:  # Python refuses integers of more than 4300 digits
        why = str(exc)
        if "digits" in why:
            why = ("a whole number has more than 4300 digits; no key takes a number that long "
                   f"(at most {MAX_NUMBER:g} in size)")
        raise ScenarioError(f"not readable as TOML: {why}", source) from None
    return parse_scenario(data, source)


def load_scenario(path: str | os.PathLike) -> Scenario:
    """Read, validate and convert a scenario file.

    Parameters
    ----------
    path : str or path-like
        A TOML file (UTF-8).

    Returns
    -------
    Scenario
        Validated scenario, all SI.

    Raises
    ------
    ScenarioError
        If the file is missing or unreadable, is not valid TOML (the message
        gives the line and column), or fails validation. ``source`` is the path.
    """
    source = str(path)
    try:
        raw = Path(path).read_bytes()
    except FileNotFoundError:
        near = Path(source + ".toml")
        hint = f" (did you mean {near}?)" if near.is_file() else ""
        raise ScenarioError("file not found" + hint, source) from None
    except IsADirectoryError:
        raise ScenarioError("is a folder, not a scenario file", source) from None
    except PermissionError:
        raise ScenarioError("cannot read the file: permission denied", source) from None
    except OSError as exc:
        raise ScenarioError(f"cannot read the file: {exc.strerror or exc}", source) from None
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError as exc:
        raise ScenarioError(f"not UTF-8 text (byte {exc.start}); TOML files must be UTF-8",
                            source) from None
    return loads_scenario(text, source)


def _ordered(value: Any, table: str) -> Any:
    """Copy of a scenario dict with keys in the order the format document uses."""
    if not isinstance(value, dict):
        return value
    order = list(_TOP_ORDER) if table == "" else list(SCHEMA.get(table, {}))
    order += list(_SUBTABLES.get(table, {}))
    keys = [k for k in order if k in value] + [k for k in value if k not in order]
    out = {}
    for key in keys:
        sub = _join(table, key) if table else key
        item = value[key]
        if isinstance(item, list):
            out[key] = [_ordered(x, sub) for x in item]
        else:
            out[key] = _ordered(item, sub)
    return out


def _toml_key(part: str) -> str:
    """A key part, bare if TOML allows, else quoted."""
    part = str(part)
    if part and all(c.isascii() and (c.isalnum() or c in "-_") for c in part):
        return part
    return json.dumps(part, ensure_ascii=False)


def _is_array_of_tables(value: Any) -> bool:
    return isinstance(value, list) and bool(value) and all(isinstance(v, dict) for v in value)


def _emit(table: dict, path: list[str], header: str | None, out: list[str]) -> None:
    """Append one table as TOML: its plain keys, then sub-tables and arrays of tables.

    Arrays of tables are always written as ``[[name]]`` blocks (``tomli_w``
    would put short ones inline, which reads worse in a scenario file).
    """
    plain = {k: v for k, v in table.items()
             if not isinstance(v, dict) and not _is_array_of_tables(v)}
    chunk = (header + "\n" if header else "") + (tomli_w.dumps(plain) if plain else "")
    if chunk:
        out.append(chunk)
    for key, value in table.items():
        sub = [*path, _toml_key(key)]
        if isinstance(value, dict):
            _emit(value, sub, f"[{'.'.join(sub)}]", out)
        elif _is_array_of_tables(value):
            for item in value:
                _emit(item, sub, f"[[{'.'.join(sub)}]]", out)


def _header() -> str:
    lines = ["Scenario for the sim package; format in docs/scenario-format.md."]
    lines += textwrap.wrap(CAUTION, width=76)
    return "".join(f"# {line}\n" for line in lines) + "\n"


def scenario_to_toml(data: dict) -> str:
    """Write a scenario dict (file units) as TOML text.

    Keys come out in the order of the format document, arrays of tables as
    ``[[leg]]`` blocks, under a comment header with the usual caution.
    ``tomllib.loads(scenario_to_toml(d)) == d`` for any dict of TOML values.
    The dict is not validated.

    Parameters
    ----------
    data : dict
        Scenario as nested dicts and lists (file keys and units).

    Returns
    -------
    str
        TOML text.

    Raises
    ------
    ScenarioError
        If the dict holds something TOML cannot represent (None, objects).
    """
    if not isinstance(data, dict):
        raise ScenarioError(f"a scenario must be a table of keys, not {_kind(data)}")
    chunks: list[str] = []
    try:
        _emit(_ordered(data, ""), [], None, chunks)
        body = "\n".join(chunks)
    except (TypeError, ValueError) as exc:
        raise ScenarioError(f"cannot write as TOML: {exc}") from None
    return _header() + body


#: Alias of :func:`scenario_to_toml`, the counterpart of :func:`loads_scenario`.
dumps_scenario = scenario_to_toml


def default_scenario_dict() -> dict:
    """A valid blank-start scenario: one refrigerated propane tank, one leg.

    The fill (97 %) stays just under the IGC loading limit for 0.10 barg
    loading and a 0.25 barg relief setting (about 97.4 %).

    Returns
    -------
    dict
        A new dict (file keys and units) each call; safe to modify.
    """
    return {
        "title": "New scenario: refrigerated propane",
        "model": DEFAULT_MODEL,
        "cargo": {"fluid": "propane"},
        "tank": {
            "shape": "prismatic",
            "length_m": 30.0,
            "width_m": 25.0,
            "height_m": 20.0,
            "count": 1,
            "fill_pct": 97.0,
            "pressure_barg": 0.1,
            "relief_set_barg": 0.25,
        },
        "insulation": {"rated_bor_pct_day": 0.1},
        "leg": [{"name": "Leg 1", "days": 10.0, "air_c": 25.0, "sea_c": 20.0}],
    }


def demo_scenarios() -> dict[str, Path]:
    """The demo scenario files shipped in the repository's ``scenarios/`` folder.

    Returns
    -------
    dict[str, pathlib.Path]
        File stem -> path, sorted by stem; empty if the folder is missing.
    """
    if not SCENARIO_DIR.is_dir():
        return {}
    return {p.stem: p for p in sorted(SCENARIO_DIR.glob("*.toml"), key=lambda p: p.stem)}


def set_key(data: dict, dotted_key: str, value: Any) -> dict:
    """Copy of a scenario dict with one key replaced, addressed by a dotted path.

    Parts are table keys, or 0-based indexes into arrays of tables:
    ``"tank.fill_pct"``, ``"leg.0.days"`` (first leg), ``"leg.-1.air_c"``
    (last leg), ``"reliquefaction.outage.0.hours"``. Missing tables on the
    way are created (``"oxidiser.capacity_kg_h"`` on a scenario without an
    oxidiser makes an incomplete [oxidiser] that validation will report).
    The input is not changed; the result is not validated.

    Parameters
    ----------
    data : dict
        Scenario dict (file keys and units).
    dotted_key : str
        Path of the key to set.
    value : object
        New value (file units).

    Returns
    -------
    dict
        A deep copy of ``data`` with the key set.

    Raises
    ------
    ScenarioError
        For an empty part, an index that is not an integer or out of range, or
        a path that runs through a value that is not a table or array.
    """
    parts = str(dotted_key).split(".")
    if any(p == "" for p in parts):
        raise ScenarioError(f"set_key: bad key {dotted_key!r}")
    out = copy.deepcopy(data)
    node: Any = out
    for depth, part in enumerate(parts):
        last = depth == len(parts) - 1
        where = ".".join(parts[:depth]) or "the top level"
        if isinstance(node, list):
            try:
                index = int(part)
            except ValueError:
                raise ScenarioError(f"set_key {dotted_key}: {where} is an array; "
                                    f"{part!r} is not an index") from None
            if not -len(node) <= index < len(node):
                raise ScenarioError(f"set_key {dotted_key}: {where} has {len(node)} "
                                    f"entries; index {index} is out of range") from None
            if last:
                node[index] = value
            else:
                node = node[index]
        elif isinstance(node, dict):
            if last:
                node[part] = value
            elif part not in node and parts[depth + 1].lstrip("-").isdigit():
                # an index into an array of tables that is not there: never a table
                # keyed "0", which validation would then call a bad [[...]] array
                name = ".".join(parts[: depth + 1])
                raise ScenarioError(f"set_key {dotted_key}: there is no {name} array, so "
                                    f"index {parts[depth + 1]} is out of range; add the "
                                    f"[[{name}]] entries first")
            else:
                node = node.setdefault(part, {})
        else:
            raise ScenarioError(f"set_key {dotted_key}: {where} = {_show(node)} is not a table "
                                "or array")
    return out
