"""The set-up form: its fields, and conversion between form values and scenario dicts.

Pure functions, no Streamlit. A scenario dict is what a TOML file holds (file
units, keys of ``docs/scenario-format.md``). The form holds

* ``flat``: one value per scalar field, keyed by the dotted parameter name
  (``"tank.fill_pct"``), which is also the widget key; a field may hold None
  where the format lets the value be left out. One entry is not scalar:
  ``"cargo.mole_fractions"``, the mixture's liquid mole fractions as the file
  writes them (``{component: fraction}``, zeros left out), which the set-up
  page edits as a table in mole percent;
* ``legs``: a table with one row per voyage leg;
* ``outages``: one table for the outage windows of all plant.

``dict_from_form(*flat_from_dict(d))`` gives back ``d`` with the format's
defaults written out, so a downloaded set-up always spells every value.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass
from typing import Any

import pandas as pd

from sim.cargo import CATALOGUE
from sim.geometry import SHAPES
from sim.models import DEFAULT_MODEL, MODEL_DESCRIPTIONS, MODELS
from sim.scenario import HEAD_CHOICES, HEADS_SHAPES, MIXTURE_KEYS, SCHEMA


@dataclass(frozen=True)
class Field:
    """One scalar input of the set-up form.

    Attributes
    ----------
    key : str  dotted parameter name; also the widget key
    label : str  label with its unit
    help : str  one line
    kind : str  ``float``, ``int``, ``text``, ``choice`` or ``flag``
    step : float or None  increment of the +/- buttons
    fmt : str or None  printf format of a number input
    blank : str or None  placeholder when the field may be left empty
    """

    key: str
    label: str
    help: str
    kind: str = "float"
    step: float | None = None
    fmt: str | None = None
    blank: str | None = None


def _f(key, label, help, kind="float", step=None, fmt=None, blank=None) -> Field:
    return Field(key, label, help, kind, step, fmt, blank)


_BARG = dict(step=0.01, fmt="%.3f")
_TEMP = dict(step=0.5, fmt="%.1f")

#: Every scalar field, in the order the set-up page shows them.
FIELDS: dict[str, Field] = {f.key: f for f in (
    _f("title", "Scenario title", "Shown on the charts, in the run list and in downloads.", "text"),
    _f("model", "Tank model", "How the cargo inside one tank is modelled (see Methods): "
       + "; ".join(f"{k}: {v}" for k, v in MODEL_DESCRIPTIONS.items()), "choice"),
    _f("cargo.kind", "The cargo is", "A pure cargo from the catalogue, or a mixture given by the "
       "mole fractions of its liquid as loaded (LNG, LPG blends). Mixtures run with the "
       "equilibrium tank model.", "choice"),
    _f("cargo.fluid", "Cargo", "Pure cargo; methane stands in for LNG and propane for LPG.",
       "choice"),
    _f("cargo.label", "Name of the mixture", "Shown on the results and in downloads instead of "
       "the list of components. Optional.", "text", blank="optional, e.g. 'typical LNG'"),
    _f("cargo.price_per_mmbtu", "Price per MMBtu (gross)",
       "Cargo price per million Btu of gross heating value, any currency; gives the value of "
       "the cargo lost. Optional.", step=0.5, fmt="%.2f", blank="none"),
    _f("cargo.price_per_tonne", "Price per tonne",
       "Cargo price per tonne, any currency; used for the value of the cargo lost when no "
       "per-MMBtu price is given or the cargo has no ISO 6976 heating value. Optional.",
       step=10.0, fmt="%.2f", blank="none"),
    _f("mixing.days", "Mixing on days", "Days from departure on which the liquid is stirred "
       "(heavy weather, a cargo pump run), comma-separated, e.g. '4, 9'. Acts on the two-zone "
       "model: the warm surface layer is mixed into the bulk. Empty: never.", "text",
       blank="none"),
    _f("tank.shape", "Tank shape", "Internal shape of each cargo tank (type C tanks are "
       "horizontal cylinders or bilobes; membrane tanks are prismatic).", "choice"),
    _f("tank.diameter_m", "Diameter (m)", "Internal diameter.", step=0.5, fmt="%.2f"),
    _f("tank.length_m", "Length (m)", "Internal length.", step=0.5, fmt="%.2f"),
    _f("tank.width_m", "Width (m)", "Internal width; for a bilobe tank, across both lobes.",
       step=0.5, fmt="%.2f"),
    _f("tank.height_m", "Height (m)", "Internal height.", step=0.5, fmt="%.2f"),
    _f("tank.heads", "Cylinder ends", "End shape of a horizontal cylinder (type C) tank.",
       "choice"),
    _f("tank.count", "Identical tanks", "Number of tanks; they share the ship's plant equally.",
       "int", step=1, fmt="%d"),
    _f("tank.fill_pct", "Fill at departure (% of tank volume)",
       "Liquid volume over tank volume when the voyage starts.", step=0.1, fmt="%.2f"),
    _f("tank.pressure_barg", "Pressure at departure (barg)",
       "The cargo starts saturated (at its boiling point) at this pressure.", **_BARG),
    _f("tank.relief_set_barg", "Relief valve set pressure, MARVS (barg)",
       "Pressure at which the relief valves lift and vent vapour.", **_BARG),
    _f("tank.vacuum_barg", "Vacuum alarm level (barg)",
       "An event is logged if the tank pressure falls below this.", **_BARG),
    _f("tank.wall_thickness_mm", "Wall thickness (mm)",
       "Metal wall thickness, for conduction along the wall in the two-zone model (with the "
       "wall conductivity). Optional: empty leaves wall conduction out.", step=0.5,
       fmt="%.2f", blank="none"),
    _f("tank.wall_conductivity_w_mk", "Wall conductivity (W/m K)",
       "Thermal conductivity of the wall metal at cargo temperature (two-zone model). "
       "Optional.", step=1.0, fmt="%.1f", blank="none"),
    _f("insulation.basis", "Heat ingress given as",
       "A rated boil-off rate (the U-value is worked out from it) or the U-value itself.",
       "choice"),
    _f("insulation.rated_bor_pct_day", "Rated BOR (% of liquid per day)",
       "Boil-off rate the tanks are rated for, at the rating temperatures below.",
       step=0.005, fmt="%.3f"),
    _f("insulation.rated_air_c", "Rating air temperature (°C)",
       "Air temperature the BOR rating refers to.", **_TEMP),
    _f("insulation.rated_sea_c", "Rating sea temperature (°C)",
       "Sea temperature the BOR rating refers to.", **_TEMP),
    _f("insulation.rated_fill_pct", "Rating fill (% of tank volume)",
       "Fill the BOR rating refers to; leave empty to use the fill at departure.",
       step=0.5, fmt="%.1f", blank="fill at departure"),
    _f("insulation.u_w_m2k", "U-value (W/m²K)",
       "Overall heat-transfer coefficient of the insulation, tank surface based.",
       step=0.005, fmt="%.4f"),
    _f("insulation.air_exposed_pct", "Surface facing the air (%)",
       "Share of the tank surface at air temperature; the rest sits at sea temperature.",
       step=5.0, fmt="%.0f"),
    _f("reliquefaction", "Reliquefaction plant fitted",
       "Condenses boil-off and returns it as liquid, holding the tanks at its hold pressure.",
       "flag"),
    _f("reliquefaction.capacity_kg_h", "Plant capacity (kg/h)",
       "Vapour the plant can condense at most, whole ship.", step=50.0, fmt="%.0f"),
    _f("reliquefaction.hold_barg", "Hold pressure (barg)",
       "Tank pressure the plant holds while it has capacity to spare.", **_BARG),
    _f("reliquefaction.specific_power_kwh_kg", "Power use (kWh/kg)",
       "Electrical energy per kg of vapour reliquefied; gives the plant's energy use.", step=0.05,
       fmt="%.3f"),
    _f("oxidiser", "Oxidiser (gas combustion unit) fitted",
       "Burns excess vapour once the tank pressure reaches its start pressure.", "flag"),
    _f("oxidiser.capacity_kg_h", "Oxidiser capacity (kg/h)",
       "Vapour the oxidiser can burn at most, whole ship.", step=50.0, fmt="%.0f"),
    _f("oxidiser.set_barg", "Oxidiser start pressure (barg)",
       "Tank pressure at which the oxidiser starts burning vapour.", **_BARG),
    _f("fuel.floor_barg", "Engines stop drawing gas below (barg)",
       "The engines take tank vapour (leg fuel gas) only above this pressure; leave empty to "
       "use the pressure at departure.", blank="pressure at departure", **_BARG),
)}

#: Choice lists of the choice fields (file names), from the engine's registries.
CHOICES: dict[str, tuple[str, ...]] = {
    "cargo.kind": ("pure", "mixture"),
    "model": tuple(MODELS),
    "cargo.fluid": tuple(CATALOGUE),
    "tank.shape": tuple(SHAPES),
    "tank.heads": tuple(HEAD_CHOICES),
    "insulation.basis": ("rated_bor_pct_day", "u_w_m2k"),
}

DIMENSION_KEYS = ("tank.diameter_m", "tank.length_m", "tank.width_m", "tank.height_m")


def choice_label(key: str, name: str) -> str:
    """Words shown in a drop-down for a file name (``"propane"`` -> ``"Propane (C3H8)"``)."""
    if key == "cargo.fluid" and name in CATALOGUE:
        info = CATALOGUE[name]
        return f"{info.label} ({info.formula})"
    if key == "model":
        return name[:1].upper() + name[1:]  # "two-zone" -> "Two-zone", the term Methods uses
    if key == "insulation.basis":
        return {"rated_bor_pct_day": "Rated BOR", "u_w_m2k": "U-value"}.get(name, name)
    if key == "cargo.kind":
        return {"pure": "One pure cargo", "mixture": "A mixture (mole fractions)"}.get(name, name)
    if key == "tank.shape":
        words = {"horizontal-cylinder": "Horizontal cylinder",
                 "vertical-cylinder": "Vertical cylinder"}
        return words.get(name, name.replace("-", " ").capitalize())
    return name.replace("-", " ").capitalize()


def shape_dimensions(shape: str) -> tuple[str, ...]:
    """Dotted dimension keys a shape needs, in the engine's order."""
    if shape not in SHAPES:
        return ()
    return tuple(f"tank.{k}" for k in SHAPES[shape][1])


# ---------------------------------------------------------------------------
# Mixture composition: file fractions <-> the editor's table in mole percent
# ---------------------------------------------------------------------------

#: Components a mixture may hold, in the order the editor lists them (the engine's list).
COMPONENTS: tuple[str, ...] = tuple(MIXTURE_KEYS)
#: Composition table columns -> (heading, help).
COMPOSITION_COLUMNS = {
    "name": ("Component", "Components the engine can mix; leave at 0 what the cargo lacks."),
    "mol_pct": ("mol %", "Mole percent of the liquid as loaded; the file stores the fraction "
                "(percent ÷ 100)."),
}
#: Largest |sum - 100| [mol %] the engine accepts (it checks the fractions to 1e-6).
SUM_TOLERANCE_PCT = 1e-4


def component_words(name: str) -> str:
    """``"n-butane"`` -> ``"n-Butane (C4H10)"`` from the catalogue."""
    info = CATALOGUE.get(name)
    return f"{info.label} ({info.formula})" if info else name


def composition_frame(fractions: dict | None) -> pd.DataFrame:
    """The editor's table: one row per component (index = file name), mole percent.

    Percent is rounded to 10 decimals so that a fraction typed in a file
    (``0.915``) comes back from :func:`fractions_from_frame` as the same float.
    """
    fractions = fractions or {}
    rows = {name: {"name": component_words(name),
                   "mol_pct": round(100.0 * float(fractions.get(name, 0.0)), 10)}
            for name in COMPONENTS}
    frame = pd.DataFrame.from_dict(rows, orient="index", columns=list(COMPOSITION_COLUMNS))
    frame.index.name = "component"
    frame["name"] = frame["name"].astype(object)
    frame["mol_pct"] = frame["mol_pct"].astype(float)
    return frame


def fractions_from_frame(frame: pd.DataFrame) -> dict[str, float]:
    """``{component: fraction}`` from the editor's table; blank and 0 % rows left out.

    Negative entries are kept so the engine's check names them.
    """
    out = {}
    for name, pct in frame["mol_pct"].items():
        if _blank(pct) or float(pct) == 0.0:
            continue
        out[str(name)] = round(float(pct) / 100.0, 12)
    return out


def composition_sum_pct(fractions: dict) -> float:
    """Sum of the mole fractions in percent."""
    return 100.0 * math.fsum(float(x) for x in fractions.values())


def normalised(fractions: dict) -> dict[str, float]:
    """Fractions scaled to sum to 1 (to 10 decimals; the rounding rest goes to the largest).

    Raises ValueError when there is nothing positive to scale.
    """
    positive = {k: float(v) for k, v in fractions.items() if float(v) > 0.0}
    total = math.fsum(positive.values())
    if total <= 0.0:
        raise ValueError("no component above 0 %")
    out = {k: round(v / total, 10) for k, v in positive.items()}
    largest = max(out, key=out.get)
    out[largest] = round(out[largest] + (1.0 - math.fsum(out.values())), 10)
    return out


def apply_edits(base: pd.DataFrame, edits: dict | None) -> pd.DataFrame:
    """A fixed-row table with a data editor's pending cell edits applied.

    ``edits`` is the editor's session value (``{"edited_rows": {row: {col: value}}}``);
    used by callbacks, which run before the editor hands back its table.
    """
    out = base.copy()
    for row, changes in ((edits or {}).get("edited_rows") or {}).items():
        for col, value in changes.items():
            if col in out.columns:
                out.iloc[int(row), out.columns.get_loc(col)] = value
    return out


# ---------------------------------------------------------------------------
# Tables: voyage legs and plant outages
# ---------------------------------------------------------------------------

#: Leg table columns -> (heading with unit, help).
LEG_COLUMNS = {
    "name": ("Leg", "Name shown on the charts and in the event list."),
    "days": ("Days", "Length of the leg in days."),
    "air_c": ("Air °C", "Air temperature during the leg."),
    "sea_c": ("Sea °C", "Sea temperature during the leg."),
    "fuel_kg_h": ("Fuel gas kg/h", "Gas the engines take from the tanks, whole ship."),
    "start_fill_pct": ("Port call: fill %", "Optional port call at the start of the leg: "
                       "discharge (or load) to this fill, % of tank volume; the heel is what "
                       "stays on board for a ballast leg. Empty: no port call."),
}

#: Plant that can have outage windows -> words for the outage table.
EQUIPMENT = {
    "reliquefaction": "Reliquefaction plant",
    "oxidiser": "Oxidiser",
    "fuel": "Engines (no gas burning)",
}

#: Outage table columns -> (heading with unit, help).
OUTAGE_COLUMNS = {
    "equipment": ("Out of service", "Which plant is out of service."),
    "start_day": ("From day", "Start of the outage, days from departure."),
    "hours": ("Hours", "Length of the outage in hours."),
}


def legs_frame(legs: list[dict] | None) -> pd.DataFrame:
    """Leg table for the editor from ``[[leg]]`` entries."""
    rows = []
    for leg in legs or []:
        rows.append({
            "name": str(leg.get("name", "")),
            "days": _number_or_none(leg.get("days")),
            "air_c": _number_or_none(leg.get("air_c")),
            "sea_c": _number_or_none(leg.get("sea_c")),
            "fuel_kg_h": _number_or_none(leg.get("fuel_kg_h", SCHEMA["leg"]["fuel_kg_h"].default)),
            "start_fill_pct": _number_or_none(leg.get("start_fill_pct")),
        })
    frame = pd.DataFrame(rows, columns=list(LEG_COLUMNS))
    frame["name"] = frame["name"].astype(object)
    for col in ("days", "air_c", "sea_c", "fuel_kg_h", "start_fill_pct"):
        frame[col] = frame[col].astype(float)
    return frame


def outages_frame(data: dict) -> pd.DataFrame:
    """One outage table for all plant, from the ``[[<plant>.outage]]`` arrays."""
    rows = []
    for equipment in EQUIPMENT:
        table = data.get(equipment)
        if not isinstance(table, dict):
            continue
        for item in table.get("outage", []) or []:
            if isinstance(item, dict):
                rows.append({"equipment": equipment,
                             "start_day": _number_or_none(item.get("start_day")),
                             "hours": _number_or_none(item.get("hours"))})
    frame = pd.DataFrame(rows, columns=list(OUTAGE_COLUMNS))
    frame["equipment"] = frame["equipment"].astype(object)
    for col in ("start_day", "hours"):
        frame[col] = frame[col].astype(float)
    return frame


def _number_or_none(value: Any) -> float | None:
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        return None
    return float(value)


def _blank(value: Any) -> bool:
    if value is None:
        return True
    if isinstance(value, float) and math.isnan(value):
        return True
    if isinstance(value, str) and not value.strip():
        return True
    try:
        return bool(pd.isna(value))
    except (TypeError, ValueError):
        return False


def _plain(value: Any) -> Any:
    """A TOML-writable Python value from a table cell (numpy numbers -> int/float)."""
    if hasattr(value, "item"):
        value = value.item()
    if isinstance(value, float) and value.is_integer() and abs(value) < 1e15:
        return float(value)
    return value


# ---------------------------------------------------------------------------
# dict -> form
# ---------------------------------------------------------------------------


def _default(table: str, key: str) -> Any:
    spec = SCHEMA.get(table, {}).get(key)
    return None if spec is None else spec.default


def flat_from_dict(data: dict) -> tuple[dict, pd.DataFrame, pd.DataFrame]:
    """Form values (flat fields, legs table, outages table) from a scenario dict.

    Values the format fills by default are written out so the form shows them;
    values whose default follows another field (rating fill, fuel floor) stay
    None. Anything of the wrong type becomes None, which validation reports.
    """
    def table(name):
        value = data.get(name)
        return value if isinstance(value, dict) else {}

    def number(value):
        return _number_or_none(value)

    tank, ins, cargo = table("tank"), table("insulation"), table("cargo")
    rl, ox, fuel = table("reliquefaction"), table("oxidiser"), table("fuel")
    mixture = isinstance(cargo.get("mole_fractions"), dict)
    fractions = {str(k): float(v) for k, v in (cargo.get("mole_fractions") or {}).items()
                 if str(k) in COMPONENTS and _number_or_none(v) is not None and v != 0} \
        if mixture else {}
    fluid = cargo.get("fluid")
    if mixture and fractions:
        # the pure-cargo picker starts on the main component, should the user switch back
        fluid = max(fractions, key=fractions.get)
    elif not mixture and fluid in COMPONENTS:
        # the mixture table starts as this cargo alone, should the user switch to a mixture
        fractions = {fluid: 1.0}
    flat: dict[str, Any] = {
        "title": data.get("title") if isinstance(data.get("title"), str) else "",
        "model": data.get("model", DEFAULT_MODEL),
        "cargo.kind": "mixture" if mixture else "pure",
        "cargo.fluid": fluid,
        "cargo.label": cargo.get("label") if isinstance(cargo.get("label"), str) else "",
        "cargo.price_per_mmbtu": number(cargo.get("price_per_mmbtu")),
        "cargo.price_per_tonne": number(cargo.get("price_per_tonne")),
        "cargo.mole_fractions": fractions,
        "tank.shape": tank.get("shape"),
        "tank.heads": tank.get("heads", _default("tank", "heads")),
        "tank.count": tank.get("count", _default("tank", "count")),
        "insulation.basis": "u_w_m2k" if "u_w_m2k" in ins else "rated_bor_pct_day",
        "reliquefaction": bool(rl),
        "oxidiser": bool(ox),
        "mixing.days": ", ".join(
            f"{item.get('day')}" for item in (data.get("mixing") or [])
            if isinstance(item, dict)),
    }
    for key in DIMENSION_KEYS:
        flat[key] = number(tank.get(key.split(".", 1)[1]))
    for key in ("fill_pct", "pressure_barg", "relief_set_barg"):
        flat[f"tank.{key}"] = number(tank.get(key))
    flat["tank.vacuum_barg"] = number(tank.get("vacuum_barg", _default("tank", "vacuum_barg")))
    for key in ("wall_thickness_mm", "wall_conductivity_w_mk"):
        flat[f"tank.{key}"] = number(tank.get(key))
    for key in ("rated_bor_pct_day", "u_w_m2k", "rated_fill_pct"):
        flat[f"insulation.{key}"] = number(ins.get(key))
    for key in ("air_exposed_pct", "rated_air_c", "rated_sea_c"):
        flat[f"insulation.{key}"] = number(ins.get(key, _default("insulation", key)))
    flat["reliquefaction.capacity_kg_h"] = number(rl.get("capacity_kg_h"))
    flat["reliquefaction.hold_barg"] = number(rl.get("hold_barg"))
    flat["reliquefaction.specific_power_kwh_kg"] = number(rl.get(
        "specific_power_kwh_kg", _default("reliquefaction", "specific_power_kwh_kg")))
    flat["oxidiser.capacity_kg_h"] = number(ox.get("capacity_kg_h"))
    flat["oxidiser.set_barg"] = number(ox.get("set_barg"))
    flat["fuel.floor_barg"] = number(fuel.get("floor_barg"))
    if not isinstance(flat["tank.count"], int) or isinstance(flat["tank.count"], bool):
        count = number(flat["tank.count"])
        flat["tank.count"] = int(count) if count is not None and count.is_integer() else None
    for key in ("model", "cargo.fluid", "tank.shape", "tank.heads"):
        if flat[key] not in CHOICES[key]:
            flat[key] = None
    legs = data.get("leg") if isinstance(data.get("leg"), list) else []
    return flat, legs_frame([x for x in legs if isinstance(x, dict)]), outages_frame(data)


# ---------------------------------------------------------------------------
# form -> dict
# ---------------------------------------------------------------------------


def dict_from_form(flat: dict, legs: pd.DataFrame, outages: pd.DataFrame) -> tuple[dict, list[str]]:
    """Scenario dict from form values, and problems only the form can see.

    Empty fields are left out (validation then names what is required);
    dimensions the chosen shape does not use, and plant that is not fitted,
    are left out too. Fully empty table rows are skipped.

    Returns
    -------
    (dict, list[str])
        The scenario dict (file units) and form-level problems, each naming
        the table row and what to do (e.g. an outage of plant not fitted).
    """
    problems: list[str] = []

    def put(target: dict, name: str, key: str):
        value = flat.get(key)
        if not _blank(value):
            target[name] = _plain(value)

    data: dict[str, Any] = {}
    put(data, "title", "title")
    put(data, "model", "model")
    cargo: dict[str, Any] = {}
    if flat.get("cargo.kind") == "mixture":
        put(cargo, "label", "cargo.label")
        put(cargo, "price_per_mmbtu", "cargo.price_per_mmbtu")
        put(cargo, "price_per_tonne", "cargo.price_per_tonne")
        cargo["mole_fractions"] = {k: _plain(v) for k, v in
                                   (flat.get("cargo.mole_fractions") or {}).items()}
    else:
        put(cargo, "fluid", "cargo.fluid")
        put(cargo, "price_per_mmbtu", "cargo.price_per_mmbtu")
        put(cargo, "price_per_tonne", "cargo.price_per_tonne")
    data["cargo"] = cargo

    tank: dict[str, Any] = {}
    put(tank, "shape", "tank.shape")
    for key in shape_dimensions(flat.get("tank.shape") or ""):
        put(tank, key.split(".", 1)[1], key)
    if flat.get("tank.shape") in HEADS_SHAPES:
        put(tank, "heads", "tank.heads")
    count = flat.get("tank.count")
    if not _blank(count):
        tank["count"] = int(count) if float(count).is_integer() else float(count)
    for key in ("fill_pct", "pressure_barg", "relief_set_barg", "vacuum_barg",
                "wall_thickness_mm", "wall_conductivity_w_mk"):
        put(tank, key, f"tank.{key}")
    data["tank"] = tank

    ins: dict[str, Any] = {}
    if flat.get("insulation.basis") == "u_w_m2k":
        put(ins, "u_w_m2k", "insulation.u_w_m2k")
        put(ins, "air_exposed_pct", "insulation.air_exposed_pct")
    else:
        for key in ("rated_bor_pct_day", "air_exposed_pct", "rated_air_c", "rated_sea_c",
                    "rated_fill_pct"):
            put(ins, key, f"insulation.{key}")
    data["insulation"] = ins

    data["leg"] = _legs_from_frame(legs)

    outage_rows = _outages_from_frame(outages, problems)
    for plant in ("reliquefaction", "oxidiser"):
        if flat.get(plant):
            table: dict[str, Any] = {}
            for key, f in FIELDS.items():
                if key.startswith(plant + ".") and f.kind != "flag":
                    put(table, key.split(".", 1)[1], key)
            if outage_rows[plant]:
                table["outage"] = outage_rows[plant]
            data[plant] = table
        elif outage_rows[plant]:
            problems.append(
                f"Outages: {EQUIPMENT[plant].lower()} outage on day "
                f"{outage_rows[plant][0].get('start_day', '?')} but no {EQUIPMENT[plant].lower()} "
                f"is fitted; tick '{FIELDS[plant].label}' or delete the row")
    fuel: dict[str, Any] = {}
    put(fuel, "floor_barg", "fuel.floor_barg")
    if outage_rows["fuel"]:
        fuel["outage"] = outage_rows["fuel"]
    if fuel:
        data["fuel"] = fuel
    mixing = _mixing_from_text(flat.get("mixing.days"), problems)
    if mixing:
        data["mixing"] = mixing
    return data, problems


def _mixing_from_text(text, problems: list[str]) -> list[dict]:
    """``"4, 9"`` -> ``[{"day": 4.0}, {"day": 9.0}]``; bad entries become problems."""
    out = []
    for part in str(text or "").replace(";", ",").split(","):
        part = part.strip()
        if not part:
            continue
        try:
            day = float(part)
        except ValueError:
            problems.append(f"Mixing on days: {part!r} is not a number of days; "
                            "write days separated by commas, e.g. '4, 9'")
            continue
        out.append({"day": int(day) if day.is_integer() and "." not in part else day})
    return out


def _legs_from_frame(legs: pd.DataFrame) -> list[dict]:
    out = []
    for _, row in legs.iterrows():
        cells = {col: row.get(col) for col in LEG_COLUMNS}
        if all(_blank(v) for v in cells.values()):
            continue
        leg = {}
        for col, value in cells.items():
            if not _blank(value):
                leg[col] = str(value) if col == "name" else _plain(value)
        out.append(leg)
    return out


def _outages_from_frame(outages: pd.DataFrame, problems: list[str]) -> dict[str, list[dict]]:
    rows: dict[str, list[dict]] = {k: [] for k in EQUIPMENT}
    for number, (_, row) in enumerate(outages.iterrows(), start=1):
        cells = {col: row.get(col) for col in OUTAGE_COLUMNS}
        if all(_blank(v) for v in cells.values()):
            continue
        equipment = cells["equipment"]
        if _blank(equipment) or equipment not in EQUIPMENT:
            problems.append(f"Outages, row {number}: choose which plant is out of service "
                            f"({', '.join(EQUIPMENT.values())})")
            continue
        item = {}
        for col in ("start_day", "hours"):
            if not _blank(cells[col]):
                item[col] = _plain(cells[col])
        rows[equipment].append(item)
    return rows


def field_of_problem(problem: str) -> str | None:
    """The form field or table a validation message is about, or None.

    ``"tank.fill_pct = 120: ..."`` -> ``"tank.fill_pct"``; ``"leg[2].days ..."``
    -> ``"leg"``; ``"reliquefaction.outage[1].hours ..."`` -> ``"outage"``.
    """
    head = problem.split(" ", 1)[0].rstrip(":")
    if head.startswith("leg[") or head == "leg":
        return "leg"
    if ".outage" in head or head.startswith("Outages"):
        return "outage"
    if head.startswith("mixing") or problem.startswith("Mixing on days"):
        return "mixing.days"
    if "cargo.mole_fractions" in head:
        return "cargo.mole_fractions"
    if head.startswith("insulation") and head.rstrip(":") == "insulation":
        return "insulation.basis"
    if head in FIELDS:
        return head
    return None


def _number_words(text: str) -> str:
    """A mole fraction as the engine prints it (``"0.9"``) in mole percent (``"90"``)."""
    try:
        return f"{100.0 * float(text):.9g}"
    except ValueError:
        return text


def explain(problem: str) -> str:
    """A validation message with the form's own words in front.

    The engine names file keys (``tank.fill_pct = 120.0: ...``, ``leg[2].days``,
    mole fractions from 0 to 1), and the same message reaches the command line;
    the form shows labels, table rows and mole percent. So the message is kept
    as the engine wrote it (``degC`` shown as °C), led by the field's label in
    bold, and a mole fraction is restated in the table's mole percent.
    """
    text = problem.replace("degC", "°C")
    match = re.match(r"\[cargo\.mole_fractions\] sum to (\S+): ", text)
    if match:
        return (f"**Composition** — {text}. The table sums to {_number_words(match[1])} mol %: "
                "correct an entry, or press 'Scale to 100 %'")
    match = re.match(r"cargo\.mole_fractions\.([\w-]+) = (\S+): must be (?:a number )?from 0 "
                     r"to 1 \(mole fraction\)", text)
    if match:
        return (f"**Composition, {component_words(match[1])}** — {text}; in the table that "
                f"is {_number_words(match[2])} mol % (allowed: 0 to 100)")
    if text.startswith("leg: at least one"):
        return f"**Voyage legs** — {text}: add a row to the table"
    match = re.match(r"leg\[(\d+)\]\.(\w+)", text)
    if match:
        column = LEG_COLUMNS.get(match[2], (match[2],))[0]
        return f"**Voyage legs, row {match[1]}, {column}** — {text}"
    match = re.match(r"(\w+)\.outage\[(\d+)\]\.(\w+)", text)
    if match and match[1] in EQUIPMENT:
        column = OUTAGE_COLUMNS.get(match[3], (match[3],))[0]
        return (f"**Plant outages, {EQUIPMENT[match[1]].lower()} outage {match[2]}, "
                f"{column}** — {text}")
    # the form's own checks, already in its words
    for start, words in (("Mixing on days", "Mixing on days"), ("Outages", "Plant outages")):
        if text.startswith(start):
            return f"**{words}** — {text[len(start):].lstrip(':, ')}"
    head = text.split(" ", 1)[0].rstrip(":")
    if head in FIELDS and FIELDS[head].kind != "flag":
        return f"**{FIELDS[head].label.split(' (', 1)[0]}** — {text}"
    return text
