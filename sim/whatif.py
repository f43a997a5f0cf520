"""What-if edits on scenario dictionaries (trade units, as in the TOML file).

These functions never modify their input; they return an edited deep copy
that goes through the same validation as any scenario file.
"""

from __future__ import annotations

import copy

#: Which pressure-control sinks a failure takes out.
FAILURES = {
    "reliquefaction": ("reliquefaction",),
    "all": ("fuel", "reliquefaction", "oxidiser"),
}


def voyage_days(data: dict) -> float:
    """Total length of the voyage in a scenario dictionary [days]."""
    return float(sum(leg.get("days", 0.0) for leg in data.get("leg", [])))


def fail_control(
    data: dict, start_day: float, which: str = "reliquefaction", hours: float | None = None
) -> dict:
    """Scenario in which pressure control fails at ``start_day``.

    Parameters
    ----------
    data : dict
        Scenario as read from TOML.
    start_day : float
        Time of the failure from voyage start [days].
    which : str
        ``"reliquefaction"`` (the plant trips) or ``"all"`` (engines stop
        taking gas, plant and oxidiser trip: only the relief valves remain).
    hours : float, optional
        Length of the failure [h]; by default until the end of the voyage.

    Returns
    -------
    dict
        Edited copy with outage windows added (``[[fuel.outage]]``,
        ``[[reliquefaction.outage]]``, ``[[oxidiser.outage]]``) and the title
        marked as a what-if.
    """
    if which not in FAILURES:
        raise ValueError(f"what-if failure {which!r} unknown; allowed: {', '.join(FAILURES)}")
    out = copy.deepcopy(data)
    total = voyage_days(out)
    if hours is None:
        hours = max((total - start_day) * 24.0, 0.0)
    window = {"start_day": float(start_day), "hours": float(hours)}
    for key in FAILURES[which]:
        if key == "fuel":
            if not any(leg.get("fuel_kg_h", 0.0) > 0 for leg in out.get("leg", [])):
                continue
            out.setdefault("fuel", {})
        elif key not in out:
            continue
        out[key].setdefault("outage", []).append(dict(window))
    words = (
        "reliquefaction plant fails" if which == "reliquefaction" else "all pressure control fails"
    )
    out["title"] = f"{out.get('title', 'Scenario')} | what-if: {words} at day {start_day:g}"
    return out
