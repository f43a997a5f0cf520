"""Browser app for the voyage boil-off simulator (Streamlit + plotly).

Pages live in :mod:`ui.pages`, one module each. Everything else here is a
plain helper: :mod:`ui.form` (set-up fields and scenario dicts), :mod:`ui.charts`
(plotly figures from results), :mod:`ui.headline` (headline figures and the
comparison table), :mod:`ui.exports` (download contents), :mod:`ui.state`
(session state) and :mod:`ui.runner` (the cached run entry point). Only the
pages, :mod:`ui.state`, :mod:`ui.runner` and :mod:`ui.widgets` import Streamlit.
"""
