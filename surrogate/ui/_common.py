"""Shared page parts: the store chooser in the sidebar and the helpful states (what to run next)."""

from __future__ import annotations

import os

import streamlit as st

from .._paths import outside_project
from ..errors import SurrogateError
from ._data import STORE_ENV, store_path, store_view

__all__ = ["page_store", "need_designs", "note_being_written", "fmt"]


def fmt(value, spec=".4g"):
    """A number for people: ``-`` for None or NaN."""
    try:
        v = float(value)
    except (TypeError, ValueError):
        return "-"
    return "-" if v != v else format(v, spec)


def _upgrade(view):
    from ..campaign import Store

    try:
        Store.open(view.path).close()  # opening writable migrates an older schema in one transaction
    except SurrogateError as exc:
        st.session_state["upgrade_error"] = f"The store could not be upgraded: {exc}"


def page_store():
    """Render the sidebar store field; return a readable :class:`StoreView`, or None after a helpful state."""
    current = store_path()
    with st.sidebar:
        typed = st.text_input("Store file", value=str(current) if current else "", key="store_field",
                              help="A campaign store (.sqlite) made by 'surrogate generate'.")
        if typed and typed != (str(current) if current else ""):
            refused = "" if typed == os.environ.get(STORE_ENV) else outside_project(typed, what="a store typed here")
            if refused:
                # a path typed into the app stays inside the project's data folders; any other
                # store is opened by giving it on the command line (surrogate app STORE)
                st.error(f"{refused}; to open another store, start the app with `surrogate app STORE`.")
            else:
                st.session_state["store_path"] = typed
                current = store_path()
    if current is None:
        st.info("No store chosen. Start the app with `surrogate app STORE`, run `surrogate demo` for the demo "
                "store, or type the path of a campaign store in the sidebar.")
        return None
    view = store_view(current)
    if view.error:
        if view.old_schema:
            st.warning(f"{view.error}. The app needs the newer layout (it adds the verification queue; "
                       "nothing stored is changed).")
            st.button("Upgrade the store", key="upgrade_store", on_click=_upgrade, args=(view,))
            if st.session_state.get("upgrade_error"):
                st.error(st.session_state.pop("upgrade_error"))
        elif not current.exists():
            st.error(f"Store file {current} does not exist. Make one with `surrogate generate CAMPAIGN.toml` "
                     "or check the path.")
        else:
            st.error(f"Store file {current} cannot be read: {view.error}")
        return None
    with st.sidebar:
        st.caption(f"{view.n_designs} designs, {view.n_finished} finished, {len(view.fronts)} fronts")
    return view


def need_designs(view):
    """Show the empty-store state and return False when the store holds no design yet."""
    if view.n_designs == 0:
        st.info(f"The store {view.path.name} holds no designs yet. Run `surrogate generate CAMPAIGN.toml` "
                "to simulate a training set.")
        return False
    return True


def note_being_written(view):
    """A note when a campaign is writing the store (the pages show what is committed)."""
    if view.being_written:
        c = view.counts
        st.info(f"A campaign is writing this store ({c.get('running', 0)} running, {c.get('pending', 0)} pending). "
                "The page shows the designs committed so far; reload the page to see newer ones.")
