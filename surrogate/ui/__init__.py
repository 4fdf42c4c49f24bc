"""Page functions for ``app.py`` (the app file only routes)."""

from ._placeholder import placeholder_page

__all__ = ["placeholder_page"]
