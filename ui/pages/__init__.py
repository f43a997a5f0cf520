"""App pages, one module each; ``app.py`` lists them.

Each page runs its ``render()`` when Streamlit runs the file.
"""
