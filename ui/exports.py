"""Contents of the app's downloads. Pure functions, no Streamlit.

The scenario TOML, the time-series CSV and the summary JSON are exactly what
the engine writes (the CLI writes the same files); charts are offered as one
self-contained HTML page and, where kaleido and a Chromium are present, as PNG.
"""

from __future__ import annotations

import html
import importlib.util
import os
import re
import shutil
from collections.abc import Mapping

import plotly.graph_objects as go
import plotly.io as pio

from sim import CAUTION
from sim.results import VoyageResult, summary_json, timeseries_csv
from sim.scenario import scenario_to_toml


def setup_toml(data: dict) -> str:
    """The set-up as a scenario file (loads back through the same validation)."""
    return scenario_to_toml(data)


def file_stem(title: str, fallback: str = "scenario") -> str:
    """A safe file-name stem from a title: lower case, words joined by hyphens."""
    stem = re.sub(r"[^a-z0-9]+", "-", str(title).lower()).strip("-")
    return stem[:60].rstrip("-") or fallback


def result_csv(result: VoyageResult) -> str:
    """``timeseries.csv`` as the command line writes it."""
    return timeseries_csv(result)


def result_json(result: VoyageResult) -> str:
    """``summary.json`` as the command line writes it."""
    return summary_json(result)


def comparison_csv(frame) -> str:
    """The comparison table (figures × runs) as CSV, the caution in the first line's one cell.

    Not a ``#`` comment: the run labels in the header start with ``#``. Read it back
    with ``pandas.read_csv(path, skiprows=1, index_col=0)``.
    """
    caution = "Caution: " + CAUTION
    return '"' + caution.replace('"', '""') + '"\n' + frame.to_csv(float_format="%.6g")


def charts_html(figures: Mapping[str, go.Figure], title: str) -> str:
    """One self-contained HTML page holding every chart (plotly.js embedded once, works offline)."""
    parts = []
    for i, fig in enumerate(figures.values()):
        parts.append(pio.to_html(fig, full_html=False, include_plotlyjs=(i == 0),
                                 config={"displaylogo": False}))
    head = html.escape(title)
    return (
        "<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\">"
        f"<title>{head}</title>"
        "<style>body{font-family:Helvetica,Arial,sans-serif;margin:24px;color:#23313b}"
        "p.caution{border-left:4px solid #b58b24;padding:6px 12px;background:#faf6ea}</style>"
        f"</head><body><h1>{head}</h1><p class=\"caution\">{html.escape(CAUTION)}</p>\n"
        + "\n".join(parts) + "\n</body></html>\n"
    )


def _chromium() -> str | None:
    for candidate in (os.environ.get("BROWSER_PATH"), "/usr/bin/chromium",
                      shutil.which("chromium"), shutil.which("google-chrome")):
        if candidate and os.path.exists(candidate):
            return candidate
    return None


def png_available() -> bool:
    """True when kaleido is installed and a Chromium it can drive is on this machine."""
    return importlib.util.find_spec("kaleido") is not None and _chromium() is not None


def chart_png(fig: go.Figure, width: int = 1100, height: int | None = None) -> bytes:
    """A chart as PNG through kaleido (starts a headless Chromium: several seconds)."""
    browser = _chromium()
    if browser and not os.environ.get("BROWSER_PATH"):
        os.environ["BROWSER_PATH"] = browser
    return fig.to_image(format="png", width=width, height=height or fig.layout.height or 400,
                        scale=2)
