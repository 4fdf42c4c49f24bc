"""Streamlit entry point: routes to page functions that live in the package.

Run with ``streamlit run app.py``.  The pages (Pareto front, training data,
models, verification queue) land with the app; until then this shows the
available materials so the entry point is exercised.
"""

from surrogate.ui import placeholder_page

placeholder_page()
