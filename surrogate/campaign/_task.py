"""The unit of work of a campaign: evaluate one design with the campaign's settings.

Runs in a worker process; returns plain data for :meth:`Store.record_result`.
"""

from __future__ import annotations

import numpy as np

from .._validation import parse_wavelength_range

__all__ = ["evaluate_design"]


def evaluate_design(spec, params):
    """Evaluate ``params`` under campaign ``spec`` (a :meth:`CampaignSpec.to_dict` dict).

    Returns
    -------
    dict
        ``figures``, ``solver``, ``spectrum`` and ``field_map`` for the store.
    """
    from .. import design

    from ..solver import Incidence, SolverSettings
    from ._spec import ADDED_SPEC_DEFAULTS

    spec = {**ADDED_SPEC_DEFAULTS, **spec}  # an older store's spec lacks the newer keys
    wl = parse_wavelength_range(spec["wavelengths_nm"], name="solver.wavelengths_nm")
    settings = SolverSettings(
        polarizability=spec["polarizability"], tol=spec["tol"], max_iter=spec["max_iter"], dtype=spec["dtype"],
        preconditioner=spec["preconditioner"],
    )
    incidence = Incidence(spec["incidence_polar_deg"], spec["incidence_azimuth_deg"], spec["polarization_deg"])
    ev = design.evaluate_design(
        spec["family"], params, laser_nm=spec["laser_nm"], wavelengths_nm=wl, spacing_nm=spec["spacing_nm"],
        hotspot_offset_nm=spec["hotspot_offset_nm"] if _tip_family(spec["family"]) else None,
        material=spec["material"], medium_index=spec["medium_index"], settings=settings, incidence=incidence,
    )
    sim = ev.simulation
    solver = {
        "spacing_nm": sim.spacing_nm,
        "n_dipoles": sim.n_dipoles,
        "polarizability": sim.polarizability,
        "method": sim.method,
        "materials": sim.materials,
        "medium_index": sim.medium_index,
        "hotspot_nm": [float(v) for v in ev.hotspot_nm],
        "wavelengths_solved": int(sim.wavelength_nm.size),
        "dtype": sim.solutions[0].dtype if sim.solutions else sim.settings.dtype,  # "auto" resolved
        "preconditioner": sim.solutions[0].preconditioner if sim.solutions else sim.settings.preconditioner,
        "incidence": sim.incidence.to_dict(),
    }
    figures = {k: (float(v) if isinstance(v, (float, np.floating)) else v) for k, v in ev.figures.items()}
    y, z, inten = ev.field_map
    return {
        "figures": figures,
        "solver": solver,
        "spectrum": ev.spectrum_rows(),
        "field_map": (ev.laser_nm, y, z, inten),  # NaN where a point is too close to a dipole
    }


def _tip_family(name):
    from ..shapes import get_family

    return get_family(name).hotspot_kind == "tip"

