"""Small drawing helpers shared by the pages."""

from __future__ import annotations

import functools

import streamlit as st

from sim import CAUTION

from . import form, state


def caution() -> None:
    """The safety caution, shown at the top of every page."""
    st.caption(f":material/warning: **Caution.** {CAUTION}")


def field(key: str, where=None, **kwargs):
    """Draw one set-up field (widget key = parameter name); return a slot for its problem."""
    where = where or st.container()
    spec = form.FIELDS[key]
    state.seed(key)
    if spec.kind in ("float", "int"):
        where.number_input(spec.label, key=key, value=None, step=spec.step, format=spec.fmt,
                           help=spec.help, placeholder=spec.blank or "required", **kwargs)
    elif spec.kind == "text":
        where.text_input(spec.label, key=key, help=spec.help, placeholder=spec.blank or "",
                         **kwargs)
    elif spec.kind == "choice":
        where.selectbox(spec.label, form.CHOICES[key], key=key, help=spec.help,
                        format_func=functools.partial(form.choice_label, key),
                        placeholder="choose…", **kwargs)
    elif spec.kind == "flag":
        where.toggle(spec.label, key=key, help=spec.help, **kwargs)
    state.remember(key)
    return where.empty()


def problem_list(problems: list[str], head: str, setup: bool = False) -> None:
    """All problems in one box, each on its own line.

    ``setup=True``: problems of the set-up, worded with the form's labels (see
    :func:`ui.form.explain`).
    """
    if setup:
        problems = [form.explain(p) for p in problems]
    lines = "\n".join(f"- {p}" for p in problems)
    st.error(f"**{head}**\n\n{lines}", icon=":material/error:")


def show_notice() -> None:
    """Show (once) a message left by a callback."""
    item = state.notice()
    if item:
        kind, text = item
        {"success": st.success, "error": st.error, "info": st.info}.get(kind, st.info)(text)


def headline_grid(summary: dict, per_row: int = 3) -> None:
    """The headline figures of a run as metric cards, a few per row."""
    from .headline import headlines

    items = headlines(summary)
    for start in range(0, len(items), per_row):
        cols = st.columns(per_row)
        for col, item in zip(cols, items[start:start + per_row], strict=False):
            with col.container(border=True):
                st.metric(item.label, item.value, help=item.help)
                st.caption(item.note)


def energy_grid(summary: dict) -> None:
    """Energy loaded, lost, delivered and the value lost, one row of metric cards."""
    from .headline import energy_headlines

    items = energy_headlines(summary)
    for col, item in zip(st.columns(len(items)), items, strict=True):
        with col.container(border=True):
            st.metric(item.label, item.value, help=item.help)
            st.caption(item.note)
    if summary.get("energy_reference"):
        st.caption(f"Energy as gross heating value: {summary['energy_reference']}."
                   .replace("degC", "°C"))


def status_banner(result) -> None:
    """Say plainly when a run did not reach the end of the voyage."""
    if result.status == "completed":
        return
    days = result.summary.get("simulated_days", 0.0)
    text = f"The run {result.status} on day {days:.2f}: {result.message}."
    (st.error if result.status == "failed" else st.warning)(text, icon=":material/report:")


def plot_side_by_side(figures: dict, *names: str, prefix: str = "chart") -> None:
    """Charts ``figures[name]`` in equal columns, keyed ``<prefix>.<name>``."""
    for column, name in zip(st.columns(len(names)), names, strict=True):
        with column:
            plot(figures[name], f"{prefix}.{name}")


def plot(fig, key: str) -> None:
    """A plotly chart with the toolbar trimmed (its camera button saves a PNG)."""
    st.plotly_chart(fig, key=key, theme=None,
                    config={"displaylogo": False,
                            "toImageButtonOptions": {"format": "png", "scale": 2}})
