"""Figures (PNG) and, later, HTML reports.  An I/O edge: writes files, never prints."""

from ._figures import draw_field_map, draw_outline, draw_sites, draw_spectrum

__all__ = ["draw_sites", "draw_field_map", "draw_spectrum", "draw_outline"]
