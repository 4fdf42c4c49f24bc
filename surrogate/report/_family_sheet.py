"""Drawings of every shape family with example parameters (the README's family gallery)."""

from __future__ import annotations

from pathlib import Path

from ._figures import draw_outline

__all__ = ["EXAMPLE_PARAMETERS", "draw_family_gallery"]

#: Example designs used for the drawings (illustrations only).
EXAMPLE_PARAMETERS = {
    "sphere": {"diameter_nm": 40.0},
    "coated-sphere": {"core_diameter_nm": 30.0, "shell_thickness_nm": 6.0},
    "box": {"length_nm": 200.0, "width_nm": 40.0, "thickness_nm": 40.0},
    "rod": {"length_nm": 120.0, "width_nm": 40.0, "thickness_nm": 30.0, "end_radius_nm": 15.0},
    "gap-dimer": {"arm_length_nm": 80.0, "width_nm": 30.0, "thickness_nm": 30.0, "gap_nm": 10.0},
    "bowtie": {"arm_length_nm": 80.0, "flare_angle_deg": 60.0, "thickness_nm": 30.0, "gap_nm": 10.0, "tip_radius_nm": 5.0},
    "disk-peg": {"disk_diameter_nm": 160.0, "peg_length_nm": 30.0, "peg_width_nm": 30.0, "thickness_nm": 30.0},
}


def draw_family_gallery(folder):
    """Write ``<folder>/<family>.png`` for every family; return the paths."""
    from ..shapes import FAMILIES

    folder = Path(folder)
    paths = []
    for name, fam in FAMILIES.items():
        params = EXAMPLE_PARAMETERS[name]
        label = f"{name}: " + ", ".join(f"{k} = {v:g}" for k, v in params.items())
        path = folder / f"{name}.png"
        draw_outline(fam.drawing_outline(params), path, title=label)
        paths.append(path)
    return paths
