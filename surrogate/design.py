"""Evaluate one design: spectra, hotspot enhancement, the hotspot field map and the figures of merit.

This joins :mod:`surrogate.simulate` (shape + materials + solver) with the
family's hotspot and observation plane and :mod:`surrogate.merit`.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from ._validation import check_positive_array, check_real
from .errors import InvalidParameterError
from .merit import figures_of_merit
from .shapes import check_observation_clearance, get_family, observation_clearance
from .simulate import SimulationResult, check_memory, check_settings, simulate
from .solver import near_field

__all__ = ["evaluate_design", "DesignEvaluation", "map_grid_for", "LASER_FIGURES"]

#: Figures that need a laser wavelength (NaN when none is given).
LASER_FIGURES = (
    "enhancement_at_laser",
    "c_abs_at_laser_nm2",
    "c_ext_at_laser_nm2",
    "heat_per_enhancement_nm2",
    "spot_fwhm_y_nm",
    "spot_fwhm_z_nm",
    "spot_area_nm2",
)


@dataclass(frozen=True)
class DesignEvaluation:
    """Everything one design's sweep yields.

    Attributes
    ----------
    simulation : SimulationResult
        Cross sections and solver records per wavelength.
    enhancement : ndarray, shape (W,)
        |E|^2 / |E0|^2 at the hotspot per wavelength [-].
    hotspot_nm : ndarray, shape (3,)
        The hotspot [nm].
    laser_nm : float
        Laser wavelength [nm] (one of the sweep's wavelengths).
    field_map : tuple (y_nm, z_nm, intensity)
        |E|^2 / |E0|^2 on the observation plane at the laser wavelength; intensity has
        shape (Ny, Nz); coordinates are offsets from the hotspot [nm].
    figures : dict
        One row of figures of merit (see :mod:`surrogate.merit`).
    clearance_nm : float
        Distance from the hotspot to the nearest dipole [nm].
    """

    simulation: SimulationResult
    enhancement: np.ndarray
    hotspot_nm: np.ndarray
    laser_nm: float
    field_map: tuple = field(repr=False)
    figures: dict = field(default_factory=dict)
    clearance_nm: float = math.nan

    def spectrum_rows(self):
        """Spectrum rows with the enhancement column (store and CSV layout)."""
        rows = self.simulation.rows()
        for row, e in zip(rows, self.enhancement):
            row["enhancement"] = float(e)
        return rows


def map_grid_for(family, params, spacing_nm):
    """Half width and step [nm] of the hotspot map: wide enough for the spot to fall to half.

    The half width is 2.5 times the largest in-plane feature size of the design (its
    width or thickness parameters), at least 30 nm; the step is half the lattice spacing,
    at least 0.5 nm.  Common practice, no source: the near-field spot of a tip or a gap
    is comparable to the feature that makes it.
    """
    sizes = [v for k, v in params.items() if k.endswith(("width_nm", "thickness_nm", "gap_nm"))]
    half = max(30.0, 2.5 * max(sizes)) if sizes else 30.0
    return min(half, 400.0), max(0.5, spacing_nm / 2.0)


def evaluate_design(
    family,
    params,
    *,
    laser_nm,
    wavelengths_nm,
    spacing_nm,
    hotspot_offset_nm=None,
    material="gold",
    region_materials=None,
    medium_index=1.0,
    settings=None,
    incidence=None,
    substrate=None,
    medium_layer=None,
    map_half_width_nm=None,
    map_step_nm=None,
    refine=False,
    progress=None,
):
    """Solve one design and compute its figures of merit.

    Parameters
    ----------
    family : str
        Shape family name.
    params : mapping
        Geometric parameters (unit-suffixed names).
    laser_nm : float or None
        Laser vacuum wavelength [nm]; added to the sweep if it is not on it.  Without
        one the laser figures (``LASER_FIGURES``) are NaN and no map is made.
    wavelengths_nm : array_like, shape (W,)
        Sweep wavelengths [nm].
    spacing_nm : float
        Lattice spacing [nm].
    hotspot_offset_nm : float, optional
        Distance of the hotspot beyond the tip [nm] (tip families; default the family's).
    map_half_width_nm, map_step_nm : float, optional
        Observation-plane map extent and step [nm] (default :func:`map_grid_for`).
    Others
        As in :func:`surrogate.simulate.simulate`.

    Returns
    -------
    DesignEvaluation

    Raises
    ------
    InvalidParameterError
        Also when the hotspot lies closer than two lattice spacings to a dipole
        (coupled-dipole near fields there are not trustworthy).
    """
    fam = get_family(family)
    clean = dict(fam.validate(params))
    d = check_real("spacing_nm", spacing_nm, low=0.05, high=100.0, unit="nm")
    wl = check_positive_array("wavelengths_nm", wavelengths_nm, unit="nm")
    if laser_nm is None:
        laser = None
    else:
        laser = check_real("laser_nm", laser_nm, low=100.0, high=1e5, unit="nm")
        if laser < wl.min() or laser > wl.max():
            raise InvalidParameterError(
                f"laser_nm must lie inside the sweep [{wl.min():g}, {wl.max():g}] nm; got {laser:g}"
            )
        wl = np.concatenate([wl, [laser]])
    wl = np.unique(wl)
    surroundings = {k: v for k, v in (("substrate", substrate), ("medium_layer", medium_layer)) if v is not None}
    settings = check_settings(settings)
    # refuse an oversized lattice before any site array exists (the hotspot is found on the sites)
    check_memory(fam, clean, d, surroundings=surroundings, settings=settings)
    plane = fam.observation_plane(clean, d, hotspot_offset_nm=hotspot_offset_nm, **surroundings)
    hotspot = np.asarray(plane.point_nm, dtype=float)
    half, step = map_grid_for(fam, clean, d)
    half = half if map_half_width_nm is None else map_half_width_nm
    step = step if map_step_nm is None else map_step_nm
    u, v, points = plane.grid_nm(half_width_nm=half, step_nm=step)

    sites = fam.sites(clean, d, **surroundings)
    clearance = check_observation_clearance(hotspot, sites)  # before any solve
    sim = simulate(
        fam.name, clean, wavelengths_nm=wl, spacing_nm=d, material=material, region_materials=region_materials,
        medium_index=medium_index, settings=settings, incidence=incidence,
        substrate=substrate, medium_layer=medium_layer, refine=refine, progress=progress,
    )
    enhancement = np.array([
        float(np.sum(np.abs(near_field(sol, sim.lattice, hotspot[None, :])[0]) ** 2)) for sol in sim.solutions
    ])
    if laser is None:
        figures = figures_of_merit(
            wl, enhancement, sim.c_ext_nm2, sim.c_abs_nm2, laser_nm=float(wl[0]),
            converged=sim.converged, residual=sim.residual, n_iter=sim.n_iter, spot=None,
        )
        for key in LASER_FIGURES:
            figures[key] = math.nan
        figures["hotspot_clearance_nm"] = clearance.distance_nm
        return DesignEvaluation(
            simulation=sim, enhancement=enhancement, hotspot_nm=hotspot, laser_nm=math.nan,
            field_map=None, figures=figures, clearance_nm=clearance.distance_nm,
        )
    k = int(np.flatnonzero(np.isclose(wl, laser))[0])
    flat = points.reshape(-1, 3)
    trusted = observation_clearance(flat, sites).trusted  # map points too close to a dipole stay NaN
    intensity = np.full(flat.shape[0], np.nan)
    if trusted.any():
        e = near_field(sim.solutions[k], sim.lattice, flat[trusted])
        intensity[trusted] = np.sum(np.abs(e) ** 2, axis=1)
    intensity = intensity.reshape(u.size, v.size)
    spot_map = np.where(np.isfinite(intensity), intensity, 0.0)
    figures = figures_of_merit(
        wl, enhancement, sim.c_ext_nm2, sim.c_abs_nm2, laser_nm=laser,
        converged=sim.converged, residual=sim.residual, n_iter=sim.n_iter, spot=(u, v, spot_map),
    )
    figures = {k2: (float(v2) if isinstance(v2, np.floating) else v2) for k2, v2 in figures.items()}
    figures["hotspot_clearance_nm"] = clearance.distance_nm
    return DesignEvaluation(
        simulation=sim, enhancement=enhancement, hotspot_nm=hotspot, laser_nm=laser,
        field_map=(u, v, intensity), figures=figures, clearance_nm=clearance.distance_nm,
    )
