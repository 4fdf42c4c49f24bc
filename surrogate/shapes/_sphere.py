"""Spheres (homogeneous and core-shell) on a cubic lattice, for validation against Mie theory."""

from __future__ import annotations

import numpy as np

from ._family import Parameter, ShapeFamily, ShapeSites, centred_axis
from ._outline import Dimension, Outline, circle
from ._rules import relation_rule

__all__ = ["Sphere", "CoatedSphere"]


def _ball_count(radius_nm, spacing_nm):
    # The sphere is inscribed in a cube of round(D / d) cells a side, cell centres at
    # (i - (n - 1) / 2) d: for an even count no site sits alone on a pole.
    return max(1, int(round(2.0 * radius_nm / spacing_nm)))


def _ball_sites(radius_nm, spacing_nm):
    count = _ball_count(radius_nm, spacing_nm)
    axis, offset = centred_axis(count)
    i, j, k = np.meshgrid(axis, axis, axis, indexing="ij")
    idx = np.stack([i.ravel(), j.ravel(), k.ravel()], axis=1)
    r = (idx + offset) * spacing_nm
    inside = np.einsum("ij,ij->i", r, r) <= radius_nm**2 * (1 + 1e-12)
    return idx[inside], r[inside], np.full(3, offset * spacing_nm)


def _ball_extent(radius_nm, spacing_nm):
    """Planes per axis holding a site of :func:`_ball_sites` (same test, no site array) [-]."""
    count = _ball_count(radius_nm, spacing_nm)
    axis, offset = centred_axis(count)
    u = (axis + offset) * spacing_nm
    # the site of a plane nearest the centre has both other coordinates at their smallest |value|
    v = 0.0 if count % 2 else spacing_nm / 2
    n = int(np.count_nonzero(u**2 + 2 * v**2 <= radius_nm**2 * (1 + 1e-12)))
    return (n, n, n)


def _ball_outline(radii, regions, default_offset_nm):
    top = tuple((reg, circle(0.0, 0.0, r)) for r, reg in zip(radii, regions))
    a = max(radii)
    return Outline(top=top, side=top, dimensions=(), hotspot_nm=(a + default_offset_nm, 0.0, 0.0))


class Sphere(ShapeFamily):
    """A sphere centred on the origin.

    The occupied sites are the lattice points inside the sphere.  With
    ``preserve_volume`` (default) the spacing is then rescaled so that the
    dipole volume N d^3 equals the sphere's volume, the usual practice for
    spheres in the coupled-dipole method (Draine & Flatau, JOSA A 11, 1491
    (1994), the effective-radius convention).
    """

    name = "sphere"
    description = "a sphere, for validation against Mie theory"
    parameters = (Parameter("diameter_nm", "nm", 2.0, 400.0, "sphere diameter [nm]"),)

    def __init__(self, *, preserve_volume=True):
        self.preserve_volume = bool(preserve_volume)

    def ideal_volume_nm3(self, params):
        return 4.0 / 3.0 * np.pi * (params["diameter_nm"] / 2.0) ** 3

    def _bounding_grid_shape(self, params, spacing_nm):
        return _ball_extent(params["diameter_nm"] / 2.0, spacing_nm)

    def drawing_outline(self, params, *, substrate=None, medium_layer=None):
        clean = self.validate(params)
        self._check_surroundings(clean, substrate, medium_layer)
        a = clean["diameter_nm"] / 2
        o = _ball_outline((a,), ("antenna",), self.default_hotspot_offset_nm)
        dims = (Dimension("diameter_nm", "top", (-a, 0.0), (a, 0.0)),)
        return Outline(o.top, o.side, dims, o.hotspot_nm)

    def _sites(self, params, spacing_nm):
        a = params["diameter_nm"] / 2.0
        idx, _, origin = _ball_sites(a, spacing_nm)
        volume = 4.0 / 3.0 * np.pi * a**3
        d = (volume / idx.shape[0]) ** (1.0 / 3.0) if self.preserve_volume else spacing_nm
        origin = origin * (d / spacing_nm)
        return ShapeSites(idx, d, origin, np.zeros(idx.shape[0], dtype=np.int64), ("antenna",), volume)


class CoatedSphere(ShapeFamily):
    """A core of one material in a concentric shell of another (regions ``core``, ``shell``).

    Sites with |r| <= core radius are core; the rest inside the outer radius are
    shell.  Volume preservation rescales d to the outer volume.
    """

    name = "coated-sphere"
    description = "a core-shell sphere (two materials), for validation against coated-sphere Mie theory"
    parameters = (
        Parameter("core_diameter_nm", "nm", 2.0, 400.0, "core diameter [nm]"),
        Parameter("shell_thickness_nm", "nm", 1.0, 200.0, "shell thickness [nm]"),
    )

    def __init__(self, *, preserve_volume=True):
        self.preserve_volume = bool(preserve_volume)

    @property
    def rules(self):
        return (
            relation_rule(
                "outer-diameter-limit",
                "shell_thickness_nm",
                "core_diameter_nm + 2 shell_thickness_nm <= 400 nm",
                lambda p: (
                    p["core_diameter_nm"] + 2 * p["shell_thickness_nm"] <= 400.0,
                    f"<= (400 nm - core_diameter_nm) / 2 = {(400.0 - p['core_diameter_nm']) / 2:g} nm",
                ),
                reads=("core_diameter_nm",),
            ),
        )

    def ideal_volume_nm3(self, params):
        return 4.0 / 3.0 * np.pi * (params["core_diameter_nm"] / 2.0 + params["shell_thickness_nm"]) ** 3

    def _bounding_grid_shape(self, params, spacing_nm):
        return _ball_extent(params["core_diameter_nm"] / 2.0 + params["shell_thickness_nm"], spacing_nm)

    def drawing_outline(self, params, *, substrate=None, medium_layer=None):
        clean = self.validate(params)
        self._check_surroundings(clean, substrate, medium_layer)
        a_core = clean["core_diameter_nm"] / 2
        a_out = a_core + clean["shell_thickness_nm"]
        o = _ball_outline((a_out, a_core), ("shell", "core"), self.default_hotspot_offset_nm)
        dims = (
            Dimension("core_diameter_nm", "top", (-a_core, 0.0), (a_core, 0.0)),
            Dimension("shell_thickness_nm", "side", (a_core, 0.0), (a_out, 0.0)),
        )
        return Outline(o.top, o.side, dims, o.hotspot_nm)

    def _sites(self, params, spacing_nm):
        a_core = params["core_diameter_nm"] / 2.0
        a_out = a_core + params["shell_thickness_nm"]
        idx, r, origin = _ball_sites(a_out, spacing_nm)
        volume = 4.0 / 3.0 * np.pi * a_out**3
        scale = ((volume / idx.shape[0]) ** (1.0 / 3.0) / spacing_nm) if self.preserve_volume else 1.0
        # the core boundary scales with the lattice so core and shell keep their volume ratio
        region = (np.einsum("ij,ij->i", r * scale, r * scale) > a_core**2).astype(np.int64)
        return ShapeSites(idx, spacing_nm * scale, origin * scale, region, ("core", "shell"), volume)
