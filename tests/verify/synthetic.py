"""A cheap stand-in for the design solve: the rod test bed's closed forms with noise (not physics).

The figures are those of tests/search/helpers.py (our own smooth closed forms), times a
lattice factor ``1 + 0.02 spacing_nm`` (an error linear in the spacing, so the d -> 0
estimate has a known answer) and a deterministic 2 % lognormal noise seeded by the
design's content hash (same inputs, same outputs).
"""

from __future__ import annotations

import hashlib
import json

import numpy as np

from tests.search.helpers import LASER_NM, ROD_BOUNDS, ROD_FIXED, add_rod_results, rod_designs, rod_figures

from surrogate.campaign import Store

NOISE = 0.02
LATTICE_SLOPE_PER_NM = 0.02


def noisy_figures(params, spacing_nm=2.0):
    key = json.dumps({k: round(float(v), 2) for k, v in sorted(params.items())}).encode()
    rng = np.random.default_rng(int(hashlib.sha256(key).hexdigest()[:8], 16))
    f = rod_figures(params)
    lattice = 1.0 + LATTICE_SLOPE_PER_NM * spacing_nm
    out = dict(f)
    for k in ("enhancement_at_laser", "heat_per_enhancement_nm2", "spot_area_nm2"):
        out[k] = float(f[k] * lattice * np.exp(NOISE * rng.standard_normal()))
    out["resonance_nm"] = float(f["resonance_nm"] * lattice + 2.0 * rng.standard_normal())
    return out


def rod_task(spec, params):
    """Top-level task for the runners: synthetic figures at the spec's spacing."""
    figures = noisy_figures(params, spec["spacing_nm"])
    figures["converged"] = params["width_nm"] < spec.get("diverge_above_width_nm", 1e9)
    spectrum = [{"wavelength_nm": LASER_NM, "c_ext_nm2": 1.0, "c_abs_nm2": 0.5, "c_sca_nm2": 0.5,
                 "enhancement": figures["enhancement_at_laser"], "converged": figures["converged"], "n_iter": 5,
                 "residual": 1e-6}]
    return {"figures": figures, "solver": {"spacing_nm": spec["spacing_nm"]}, "spectrum": spectrum, "field_map": None}


def make_store(path, n=30, seed=5, **extra_spec):
    """A rod store with ``n`` noisy synthetic designs at spacing 2 nm (no model yet)."""
    spec = {"name": "rod-verify", "family": "rod", "bounds": ROD_BOUNDS, "fixed": ROD_FIXED, "laser_nm": LASER_NM,
            "seed": seed, "material": "gold", "medium_index": 1.0, "spacing_nm": 2.0, **extra_spec}
    store = Store.create(path, spec=spec, code_version="test")
    add_rod_results(store, rod_designs(n, seed), lambda p: {**noisy_figures(p, 2.0), "converged": True})
    return store
