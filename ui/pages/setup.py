"""Set-up page: choose a starting point, edit every input, see derived facts, run."""

from __future__ import annotations

import tomllib

import streamlit as st

from sim.energy import REFERENCE_TEXT, quality
from sim.presets import MIXTURE_PRESETS
from sim.scenario import ScenarioError, default_scenario_dict, demo_scenarios, loads_scenario
from ui import exports, form, runner, state, widgets
from ui.form import COMPOSITION_COLUMNS, EQUIPMENT, LEG_COLUMNS, OUTAGE_COLUMNS

RESULTS_PAGE = "ui/pages/results.py"


# ---------------------------------------------------------------------------
# Starting points (callbacks: they run before the page is drawn)
# ---------------------------------------------------------------------------


def _load_demo() -> None:
    stem = st.session_state.get("demo")
    path = demo_scenarios().get(stem)
    if path is None:
        state.notice(f"No demo called '{stem}'.", "error")
        return
    st.session_state["_demo_pick"] = stem
    _load_text(path.read_text(encoding="utf-8"), f"demo '{stem}'")


#: Session key counting the files read; each read gives the uploader a new key,
#: so it is empty for the next file (a single-file uploader that still held the
#: last file reported the next one as a removal, and every second file was lost).
UPLOADS_READ = "upload.count"


def _upload_key() -> str:
    count = st.session_state.get(UPLOADS_READ, 0)
    return "upload" if not count else f"upload-{count}"


def _load_upload(key: str) -> None:
    upload = st.session_state.get(key)
    if upload is None:
        return
    st.session_state[UPLOADS_READ] = st.session_state.get(UPLOADS_READ, 0) + 1
    try:
        text = upload.getvalue().decode("utf-8")
    except UnicodeDecodeError as exc:
        state.notice(f"Not loaded: {upload.name} is not UTF-8 text (byte {exc.start}); "
                     "scenario files are UTF-8 TOML.", "error")
        return
    _load_text(text, f"file '{upload.name}'")


def _load_text(text: str, origin: str) -> None:
    """Validate a scenario text; load it into the form only if it is valid."""
    try:
        loads_scenario(text, origin)
    except ScenarioError as exc:
        lines = "\n".join(f"- {p}" for p in exc.problems)
        state.notice(f"**Not loaded: {origin} has {len(exc.problems)} problem"
                     f"{'s' if len(exc.problems) != 1 else ''}.** The set-up below is "
                     f"unchanged.\n\n{lines}", "error")
        return
    except Exception as exc:  # never a traceback, whatever the file holds
        state.notice(f"Not loaded: {origin}: {type(exc).__name__}: {exc}", "error")
        return
    state.put_setup(tomllib.loads(text), origin)
    state.notice(f"Loaded {origin}.", "success")


def _blank() -> None:
    state.put_setup(default_scenario_dict(), "blank start")
    state.notice("Started from a blank set-up (one refrigerated propane tank, one leg).", "info")


def _start_row() -> None:
    demos = list(demo_scenarios())
    with st.container(border=True):
        c_demo, c_file, c_blank = st.columns([5, 5, 2], gap="medium",
                                             vertical_alignment="bottom")
        with c_demo:
            pick, go = st.columns([3, 1], vertical_alignment="bottom")
            if "demo" not in st.session_state:  # show the demo last loaded, after a page switch
                last = st.session_state.get("_demo_pick")
                st.session_state["demo"] = last if last in demos else (demos[0] if demos else None)
            pick.selectbox("Start from a demo", demos, key="demo", placeholder="no demos found",
                           help="Invented ships and voyages that show what the tool does.")
            go.button("Load", key="load_demo", on_click=_load_demo, disabled=not demos,
                      width="stretch")
        key = _upload_key()
        c_file.file_uploader("…or open a scenario file (.toml)", type=["toml"], key=key,
                             on_change=_load_upload, args=(key,),
                             help="A file saved from this app or written by hand; see "
                                  "docs/scenario-format.md.")
        c_blank.button("Blank start", key="blank", on_click=_blank, width="stretch",
                       help="One refrigerated propane tank and one leg, to edit from.")
    st.caption(f"Editing: {st.session_state.get(state.ORIGIN, 'blank start')}")


# ---------------------------------------------------------------------------
# Mixture composition (callbacks, then the editor)
# ---------------------------------------------------------------------------


def _fill_preset() -> None:
    name = st.session_state.get("cargo.preset")
    if name not in MIXTURE_PRESETS:
        return
    state.set_composition(MIXTURE_PRESETS[name])
    label = st.session_state[state.FORM].get("cargo.label") or ""
    if not label.strip() or label in MIXTURE_PRESETS:  # never overwrite a name of the user's
        st.session_state[state.FORM]["cargo.label"] = name
        st.session_state["cargo.label"] = name
    state.notice(f"Composition filled from '{name}'.", "info")


def _normalise() -> None:
    try:
        state.set_composition(form.normalised(state.pending_composition()))
    except ValueError:
        state.notice("Nothing to scale: give at least one component above 0 %.", "error")


def _quality_preview(fractions: dict) -> None:
    """GCV, Wobbe index and relative density of the liquid as typed (ISO 6976)."""
    total = form.composition_sum_pct(fractions)
    if abs(total - 100.0) > form.SUM_TOLERANCE_PCT:
        st.caption("The heating value shows here once the fractions sum to 100 %.")
        return
    try:
        q = quality({k: v for k, v in fractions.items() if v > 0.0})
    except ValueError as exc:  # e.g. a negative entry: the engine's check names it
        st.caption(f"No heating value: {exc}.")
        return
    if q is None:
        missing = [k for k, v in fractions.items() if v > 0.0 and quality({k: 1.0}) is None]
        st.caption(f"No ISO 6976 heating value for {', '.join(missing)}: energy figures of "
                   "this cargo will read '—'.")
        return
    rows = [("GCV", f"{q['gcv_mj_kg']:.3f} MJ/kg"),
            ("GCV, volume", f"{q['gcv_mj_m3']:.3f} MJ/m³"),
            ("Wobbe index", f"{q['wobbe_mj_m3']:.3f} MJ/m³"),
            ("Relative density", f"{q['relative_density']:.4f}"),
            ("Molar mass", f"{q['molar_mass_kg_kmol']:.3f} kg/kmol")]
    st.markdown("| As loaded | |\n|:--|--:|\n"
                + "\n".join(f"| {a} | {b} |" for a, b in rows))
    st.caption(REFERENCE_TEXT.replace("degC", "°C") + ".")


def _composition():
    """Preset picker, the composition table in mole percent, its sum and quality."""
    a, b, c = st.columns([3, 1, 3], vertical_alignment="bottom")
    preset = a.selectbox("Start from a composition", list(MIXTURE_PRESETS), key="cargo.preset",
                         index=None, placeholder="choose one to fill the table…",
                         help="Invented, representative compositions; the table stays "
                              "editable.")
    b.button("Fill", key="cargo.fill_preset", on_click=_fill_preset, width="stretch",
             disabled=preset is None, help="Replace the table with the chosen composition.")
    slot = widgets.field("cargo.label", c)
    table, side = st.columns([1, 1], gap="medium")
    with table:
        edited = st.data_editor(
            state.composition_base(), key=state.MIX_EDITOR, num_rows="fixed", hide_index=True,
            width="stretch", height=38 + 35 * len(form.COMPONENTS),
            column_config={
                "name": st.column_config.TextColumn(COMPOSITION_COLUMNS["name"][0],
                                                    help=COMPOSITION_COLUMNS["name"][1],
                                                    disabled=True),
                "mol_pct": st.column_config.NumberColumn(
                    COMPOSITION_COLUMNS["mol_pct"][0], help=COMPOSITION_COLUMNS["mol_pct"][1],
                    format="%.4f", step=0.0001),
            })
        state.composition_edited(edited)
    fractions = st.session_state[state.FORM]["cargo.mole_fractions"]
    with side:
        total = form.composition_sum_pct(fractions)
        good = abs(total - 100.0) <= form.SUM_TOLERANCE_PCT
        st.markdown(f"**Sum: {total:.4f} %** " + (":green[:material/check_circle:]" if good
                                                   else ":red[:material/error:]"))
        st.button("Scale to 100 %", key="cargo.normalise", on_click=_normalise,
                  disabled=good or not fractions, width="stretch",
                  help="Scale every entry by the same factor so the sum is 100 %.")
        _quality_preview(fractions)
    return slot


# ---------------------------------------------------------------------------
# Input groups
# ---------------------------------------------------------------------------


def _group(title: str, note: str | None = None):
    box = st.container(border=True)
    box.markdown(f"##### {title}")
    if note:
        box.caption(note)
    return box


def _inputs() -> dict:
    """Draw every input; return slots for problem messages by field key."""
    slots = {}

    with _group("Cargo"):
        slots["title"] = widgets.field("title")
        state.seed("cargo.kind")
        st.radio(form.FIELDS["cargo.kind"].label, form.CHOICES["cargo.kind"], key="cargo.kind",
                 help=form.FIELDS["cargo.kind"].help, horizontal=True,
                 format_func=lambda n: form.choice_label("cargo.kind", n))
        state.remember("cargo.kind")
        if st.session_state[state.FORM]["cargo.kind"] == "mixture":
            slots["cargo.label"] = _composition()
            slots["cargo.mole_fractions"] = st.empty()
            a, b, _ = st.columns(3)
        else:
            a, b, c = st.columns(3)
            slots["cargo.fluid"] = widgets.field("cargo.fluid", a)
            a, b = b, c
        slots["cargo.price_per_mmbtu"] = widgets.field("cargo.price_per_mmbtu", a)
        slots["cargo.price_per_tonne"] = widgets.field("cargo.price_per_tonne", b)

    with _group("Tanks"):
        a, b = st.columns(2)
        slots["model"] = widgets.field("model", a)
        slots["mixing.days"] = widgets.field("mixing.days", b)
        a, b, c = st.columns(3)
        slots["tank.shape"] = widgets.field("tank.shape", a)
        slots["tank.count"] = widgets.field("tank.count", b)
        shape = st.session_state.get("tank.shape")
        if shape in form.HEADS_SHAPES:
            slots["tank.heads"] = widgets.field("tank.heads", c)
        dims = form.shape_dimensions(shape or "")
        if dims:
            cols = st.columns(3)
            for i, key in enumerate(dims):
                slots[key] = widgets.field(key, cols[i % 3])
        a, b = st.columns(2)
        slots["tank.fill_pct"] = widgets.field("tank.fill_pct", a)
        slots["tank.pressure_barg"] = widgets.field("tank.pressure_barg", b)
        a, b = st.columns(2)
        slots["tank.relief_set_barg"] = widgets.field("tank.relief_set_barg", a)
        slots["tank.vacuum_barg"] = widgets.field("tank.vacuum_barg", b)
        if st.session_state.get("model") == "two-zone":
            a, b = st.columns(2)
            slots["tank.wall_thickness_mm"] = widgets.field("tank.wall_thickness_mm", a)
            slots["tank.wall_conductivity_w_mk"] = widgets.field("tank.wall_conductivity_w_mk", b)

    with _group("Insulation", "Heat flows in through the tank surface: U-value × area × "
                "(ambient − cargo temperature), air and sea parts separately."):
        state.seed("insulation.basis")
        st.radio(form.FIELDS["insulation.basis"].label, form.CHOICES["insulation.basis"],
                 key="insulation.basis", help=form.FIELDS["insulation.basis"].help,
                 horizontal=True,
                 format_func=lambda n: form.choice_label("insulation.basis", n))
        state.remember("insulation.basis")
        slots["insulation.basis"] = st.empty()
        if st.session_state[state.FORM]["insulation.basis"] == "u_w_m2k":
            a, b = st.columns(2)
            slots["insulation.u_w_m2k"] = widgets.field("insulation.u_w_m2k", a)
            slots["insulation.air_exposed_pct"] = widgets.field("insulation.air_exposed_pct", b)
        else:
            a, b, c = st.columns(3)
            slots["insulation.rated_bor_pct_day"] = widgets.field("insulation.rated_bor_pct_day", a)
            slots["insulation.rated_air_c"] = widgets.field("insulation.rated_air_c", b)
            slots["insulation.rated_sea_c"] = widgets.field("insulation.rated_sea_c", c)
            a, b, _ = st.columns(3)
            slots["insulation.rated_fill_pct"] = widgets.field("insulation.rated_fill_pct", a)
            slots["insulation.air_exposed_pct"] = widgets.field("insulation.air_exposed_pct", b)

    with _group("Voyage legs", "One row per leg, in order. Add a row at the bottom of the "
                "table; select rows to delete them."):
        base = state.table_base(state.LEG_EDITOR)
        edited = st.data_editor(
            base, key=state.LEG_EDITOR, num_rows="dynamic", hide_index=True,
            width="stretch", placeholder="—",
            column_config={
                "name": st.column_config.TextColumn(LEG_COLUMNS["name"][0],
                                                    help=LEG_COLUMNS["name"][1], width="medium"),
                **{col: st.column_config.NumberColumn(words, help=text, format="%.2f",
                                                      default=0.0 if col == "fuel_kg_h" else None)
                   for col, (words, text) in LEG_COLUMNS.items() if col != "name"},
            },
        )
        state.table_edited(state.LEG_EDITOR, edited)
        lengths = edited["days"] if len(edited) else []
        if len(lengths) and all(d is not None and d == d and d > 0 for d in lengths):
            st.caption(f"Voyage length: {sum(lengths):g} days in {len(edited)} leg"
                       f"{'s' if len(edited) != 1 else ''}.")
        else:  # a leg without a length (or a bad one, reported below) has no total
            st.caption(f"{len(edited)} leg{'s' if len(edited) != 1 else ''}; the voyage length "
                       "shows once every leg has its days.")
        slots["leg"] = st.empty()

    with _group("Pressure control", "Vapour is taken off in order of set pressure: engines "
                "(fuel gas), then the reliquefaction plant, then the oxidiser; the relief "
                "valves lift last, at MARVS."):
        a, b = st.columns(2)
        slots["fuel.floor_barg"] = widgets.field("fuel.floor_barg", a)
        b.caption("Fuel gas demand is set per leg in the table above.")
        slots["reliquefaction"] = widgets.field("reliquefaction")
        if st.session_state.get("reliquefaction"):
            a, b, c = st.columns(3)
            slots["reliquefaction.capacity_kg_h"] = widgets.field("reliquefaction.capacity_kg_h", a)
            slots["reliquefaction.hold_barg"] = widgets.field("reliquefaction.hold_barg", b)
            slots["reliquefaction.specific_power_kwh_kg"] = widgets.field(
                "reliquefaction.specific_power_kwh_kg", c)
        slots["oxidiser"] = widgets.field("oxidiser")
        if st.session_state.get("oxidiser"):
            a, b, _ = st.columns(3)
            slots["oxidiser.capacity_kg_h"] = widgets.field("oxidiser.capacity_kg_h", a)
            slots["oxidiser.set_barg"] = widgets.field("oxidiser.set_barg", b)
        st.markdown("**Plant outages**")
        st.caption("Windows in which a plant is out of service. The What-if page adds one for you.")
        base = state.table_base(state.OUTAGE_EDITOR)
        edited = st.data_editor(
            base, key=state.OUTAGE_EDITOR, num_rows="dynamic", hide_index=True,
            width="stretch", placeholder="—",
            column_config={
                "equipment": st.column_config.SelectboxColumn(
                    OUTAGE_COLUMNS["equipment"][0], help=OUTAGE_COLUMNS["equipment"][1],
                    options=list(EQUIPMENT), format_func=lambda k: EQUIPMENT.get(k, k),
                    width="medium"),
                "start_day": st.column_config.NumberColumn(
                    OUTAGE_COLUMNS["start_day"][0], help=OUTAGE_COLUMNS["start_day"][1],
                    format="%.2f"),
                "hours": st.column_config.NumberColumn(
                    OUTAGE_COLUMNS["hours"][0], help=OUTAGE_COLUMNS["hours"][1], format="%.1f"),
            },
        )
        state.table_edited(state.OUTAGE_EDITOR, edited)
        slots["outage"] = st.empty()
    return slots


# ---------------------------------------------------------------------------
# Facts, problems, run
# ---------------------------------------------------------------------------


def _facts_table(facts: dict, data: dict) -> str:
    mixture = len(data.get("cargo", {}).get("mole_fractions") or {}) > 1
    tank = data.get("tank", {})
    count = int(tank.get("count", 1))
    fill = float(tank.get("fill_pct", 0.0))
    legs = data.get("leg", [])
    days = sum(float(leg.get("days", 0.0)) for leg in legs)
    each = f"{facts['tank_volume_m3']:,.0f} m³"
    rows = [
        ("Tank volume", each if count == 1 else f"{count} × {each}"),
        ("Cargo on board", f"{facts['initial_cargo_t']:,.0f} t"),
        ("Bubble point at departure pressure" if mixture else
         "Boiling point at departure pressure", f"{facts['boiling_point_c']:.2f} °C"),
        ("Liquid density", f"{facts['liquid_density_kg_m3']:.1f} kg/m³"),
        ("IGC loading limit", f"{facts['loading_limit_pct']:.2f} %"),
        ("Fill at departure", f"{fill:.2f} %"),
        ("U-value", f"{facts['u_value_w_m2k']:.4f} W/m²K"),
        ("Heat in, first leg", f"{facts['heat_in_kw']:,.1f} kW"),
        ("BOR if vented, first leg", f"{facts['equivalent_bor_pct_day']:.4f} %/day"),
        ("Voyage", f"{days:g} days, {len(legs)} leg{'s' if len(legs) != 1 else ''}"),
    ]
    body = "\n".join(f"| {a} | {b} |" for a, b in rows)
    return "| At departure | |\n|:--|--:|\n" + body


def _side(check: runner.Check, data: dict) -> None:
    with st.container(border=True):
        st.markdown("##### Before you run")
        if check.ok and "error" not in check.facts:
            st.markdown(_facts_table(check.facts, data))
            fill = float(data["tank"]["fill_pct"])
            if fill > check.facts["loading_limit_pct"] + 1e-9:
                st.warning(f"The fill at departure ({fill:.2f} %) is above the IGC loading "
                           f"limit ({check.facts['loading_limit_pct']:.2f} %) for this relief "
                           "setting. The run will still go ahead and log it.",
                           icon=":material/warning:")
        elif check.ok:
            st.caption(f"Derived facts unavailable: {check.facts['error']}")
        else:
            widgets.problem_list(check.problems, "Fix these before running:", setup=True)

        text = exports.setup_toml(data) if check.ok else None
        clicked = st.button("Run the voyage", key="run", type="primary", disabled=not check.ok,
                            width="stretch", icon=":material/play_arrow:")
        st.download_button("Save set-up (.toml)", data=text or "", key="download_toml",
                           file_name=f"{exports.file_stem(data.get('title', ''))}.toml",
                           mime="application/toml", disabled=text is None,
                           width="stretch", icon=":material/download:",
                           help="The set-up as a scenario file; open it again here or run it "
                                "from the command line.")
    if clicked and text is not None:
        outcome = runner.run(text)
        if outcome.result is None:
            widgets.problem_list(outcome.problems, "The run did not complete:")
            return
        kept = state.keep_run(text, data, outcome.result, "set-up")
        st.session_state["results.run"] = kept.id
        st.switch_page(RESULTS_PAGE)


def render() -> None:
    state.init()
    st.title("Voyage set-up")
    widgets.show_notice()
    _start_row()
    left, right = st.columns([12, 7], gap="large")
    with left:
        slots = _inputs()
    data, form_problems = state.setup_dict()
    check = runner.check(data, form_problems)
    by_field: dict[str, list[str]] = {}
    for problem in check.problems:
        by_field.setdefault(form.field_of_problem(problem), []).append(problem)
    for key, problems in by_field.items():
        if key in slots:
            slots[key].error("\n\n".join(form.explain(p) for p in problems),
                             icon=":material/error:")
    with right:
        _side(check, data)


if __name__ == "__main__":
    render()
