"""Streamlit entry point: routes to the page functions of :mod:`surrogate.ui`.

Start it with ``surrogate app STORE`` (or ``surrogate demo``); the store path reaches
the pages through the ``SURROGATE_STORE`` environment variable.
"""

import streamlit as st

from surrogate.ui import front_page, models_page, queue_page, training_page

st.set_page_config(page_title="Antenna surrogate", layout="wide")
st.navigation([
    st.Page(front_page, title="Front", url_path="front", default=True),
    st.Page(training_page, title="Training data", url_path="training-data"),
    st.Page(models_page, title="Models", url_path="models"),
    st.Page(queue_page, title="Queue", url_path="queue"),
]).run()
