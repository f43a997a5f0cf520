"""Session state: the set-up being edited, and the runs kept for comparison.

Streamlit forgets a widget's value when the widget is not drawn (another page,
a hidden field), so the set-up lives in plain session keys of its own:

* ``_form``: scalar field values by dotted parameter name (the widget keys);
* ``_legs`` / ``_outages``: the current tables, and ``*_base`` the tables the
  editors were opened with (an editor keeps only its edits to that base);
* ``_mix_base``: the composition table its editor was opened with (the
  composition itself is ``_form["cargo.mole_fractions"]``);
* ``runs``: kept runs by id, in the order they were made.

Widgets are seeded from these keys whenever they are drawn afresh.
"""

from __future__ import annotations

import hashlib
from dataclasses import dataclass

import pandas as pd
import streamlit as st

from sim.results import VoyageResult
from sim.scenario import default_scenario_dict, demo_scenarios, load_scenario

from . import form

FORM, LEGS, LEGS_BASE = "_form", "_legs", "_legs_base"
OUTAGES, OUTAGES_BASE = "_outages", "_outages_base"
RUNS, ORIGIN, NOTICE = "runs", "_origin", "_notice"
#: Widget keys of the editable tables (the parameter names of the tables).
LEG_EDITOR, OUTAGE_EDITOR = "leg", "outage"
MIX_EDITOR, MIX_BASE = "cargo.mole_fractions", "_mix_base"


@dataclass
class Run:
    """A run kept in the session."""

    id: str
    number: int
    title: str
    kind: str  # "set-up" or "what-if"
    toml: str
    data: dict
    result: VoyageResult

    @property
    def label(self) -> str:
        """Short, unique name: number, then the what-if first (it is what tells runs apart)."""
        title = self.title
        if " | what-if: " in title:
            base, what = title.split(" | what-if: ", 1)
            title = f"what-if: {what} ({base})"
        title = title if len(title) <= 60 else title[:59] + "…"
        return f"#{self.number} {title}"


def first_demo() -> tuple[dict, str]:
    """The set-up a new session starts from: the first demo, else the blank start."""
    import tomllib

    for stem, path in demo_scenarios().items():
        try:
            load_scenario(path)
            return tomllib.loads(path.read_text(encoding="utf-8")), f"demo '{stem}'"
        except Exception:  # a broken demo file must not stop the app from starting
            continue
    return default_scenario_dict(), "blank start"


def init() -> None:
    """Create the session keys on first use."""
    ss = st.session_state
    if FORM not in ss:
        data, origin = first_demo()
        put_setup(data, origin)
    ss.setdefault(RUNS, {})


def put_setup(data: dict, origin: str) -> None:
    """Replace the set-up with a scenario dict; widgets reseed on their next draw.

    Call before the set-up widgets are drawn in this run (e.g. in a callback).
    """
    ss = st.session_state
    flat, legs, outages = form.flat_from_dict(data)
    ss[FORM] = flat
    ss[LEGS] = ss[LEGS_BASE] = legs
    ss[OUTAGES] = ss[OUTAGES_BASE] = outages
    ss[ORIGIN] = origin
    for key in list(form.FIELDS) + [LEG_EDITOR, OUTAGE_EDITOR, MIX_EDITOR]:
        if key in ss:
            del ss[key]


def setup_dict() -> tuple[dict, list[str]]:
    """The set-up as a scenario dict, and problems only the form can see."""
    ss = st.session_state
    return form.dict_from_form(ss[FORM], ss[LEGS], ss[OUTAGES])


def seed(key: str) -> None:
    """Give a widget its remembered value if it is being drawn afresh."""
    ss = st.session_state
    if key not in ss:
        ss[key] = ss[FORM].get(key)


def remember(key: str) -> None:
    """Copy a drawn widget's value into the set-up."""
    ss = st.session_state
    if key in ss:
        ss[FORM][key] = ss[key]


def table_base(editor_key: str) -> pd.DataFrame:
    """The table an editor is drawn on: the current table if the editor opens afresh."""
    ss = st.session_state
    current, base = (LEGS, LEGS_BASE) if editor_key == LEG_EDITOR else (OUTAGES, OUTAGES_BASE)
    if editor_key not in ss:
        ss[base] = ss[current]
    return ss[base]


def table_edited(editor_key: str, frame: pd.DataFrame) -> None:
    """Store the table an editor returned."""
    ss = st.session_state
    ss[LEGS if editor_key == LEG_EDITOR else OUTAGES] = frame


def composition_base() -> pd.DataFrame:
    """The table the composition editor is drawn on (rebuilt when the editor opens afresh)."""
    ss = st.session_state
    if MIX_EDITOR not in ss or MIX_BASE not in ss:
        ss[MIX_BASE] = form.composition_frame(ss[FORM].get("cargo.mole_fractions"))
    return ss[MIX_BASE]


def composition_edited(frame: pd.DataFrame) -> None:
    """Store the composition the editor returned (as file fractions).

    Only rows the user changed are converted back from percent, so a fraction
    loaded from a file with more digits than the table shows stays exactly as
    written.
    """
    ss = st.session_state
    before = ss[FORM].get("cargo.mole_fractions") or {}
    base = ss.get(MIX_BASE)
    if base is None:
        ss[FORM]["cargo.mole_fractions"] = form.fractions_from_frame(frame)
        return
    typed = form.fractions_from_frame(frame)
    out = {}
    for name in frame.index:
        old, new = base.at[name, "mol_pct"], frame.at[name, "mol_pct"]
        same = (pd.isna(old) and pd.isna(new)) or old == new
        if same and name in before:
            out[name] = before[name]
        elif name in typed:
            out[name] = typed[name]
    ss[FORM]["cargo.mole_fractions"] = out


def pending_composition() -> dict[str, float]:
    """The composition with the editor's latest edits, for callbacks (they run before it draws)."""
    ss = st.session_state
    if MIX_EDITOR in ss and MIX_BASE in ss:
        return form.fractions_from_frame(form.apply_edits(ss[MIX_BASE], ss[MIX_EDITOR]))
    return dict(ss[FORM].get("cargo.mole_fractions") or {})


def set_composition(fractions: dict[str, float]) -> None:
    """Replace the composition; the editor redraws from it. Call from a callback."""
    ss = st.session_state
    ss[FORM]["cargo.mole_fractions"] = dict(fractions)
    for key in (MIX_EDITOR, MIX_BASE):
        if key in ss:
            del ss[key]


def run_id(toml_text: str) -> str:
    return hashlib.sha1(toml_text.encode("utf-8")).hexdigest()[:12]


def runs() -> dict[str, Run]:
    return st.session_state.setdefault(RUNS, {})


def keep_run(toml_text: str, data: dict, result: VoyageResult, kind: str) -> Run:
    """Keep a run in the session (the same set-up run twice is kept once)."""
    kept = runs()
    rid = run_id(toml_text)
    if rid not in kept:
        number = max((r.number for r in kept.values()), default=0) + 1
        kept[rid] = Run(rid, number, str(data.get("title", "untitled")), kind, toml_text,
                        data, result)
    return kept[rid]


def forget_runs(ids) -> None:
    kept = runs()
    for rid in ids:
        kept.pop(rid, None)


def notice(text: str | None = None, kind: str = "success"):
    """Set (with text) or pop (without) a one-shot message for the next draw."""
    ss = st.session_state
    if text is None:
        return ss.pop(NOTICE, None)
    ss[NOTICE] = (kind, text)
    return None
