"""Voyage boil-off and pressure-rise simulator: the browser app.

Run with ``streamlit run app.py``. Pages live in ``ui/pages/``; this file only
sets up the page, the navigation and the caution every page shows.
"""

from pathlib import Path

import streamlit as st

from ui import widgets

# a local icon: a Material icon as page icon is fetched from a font server,
# which an offline ship's network cannot reach
st.set_page_config(page_title="Boil-off voyage simulator",
                   page_icon=str(Path(__file__).parent / "ui" / "icon.png"), layout="wide")

PAGES = [
    st.Page("ui/pages/setup.py", title="Set-up", icon=":material/tune:", default=True),
    st.Page("ui/pages/results.py", title="Results", icon=":material/monitoring:"),
    st.Page("ui/pages/whatif.py", title="What-if", icon=":material/crisis_alert:"),
    st.Page("ui/pages/compare.py", title="Compare", icon=":material/stacked_line_chart:"),
    st.Page("ui/pages/sizing.py", title="Sizing", icon=":material/calculate:"),
    st.Page("ui/pages/sweep.py", title="Sweeps", icon=":material/grid_on:"),
    st.Page("ui/pages/methods.py", title="Methods", icon=":material/menu_book:"),
]

page = st.navigation(PAGES, position="top")
widgets.caution()
page.run()
