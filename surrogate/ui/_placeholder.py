"""A first page: the material catalogue, until the design pages land."""

from __future__ import annotations


def placeholder_page():
    """Render the material catalogue with streamlit."""
    import pandas as pd
    import streamlit as st

    from ..catalog import list_materials

    st.set_page_config(page_title="Antenna surrogate", layout="wide")
    st.title("Antenna surrogate")
    st.write(
        "The design pages (Pareto front, training data, models, verification queue) are not built yet. "
        "Available optical materials:"
    )
    st.dataframe(pd.DataFrame(list_materials()), hide_index=True)
