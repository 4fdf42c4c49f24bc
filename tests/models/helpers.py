"""Synthetic campaign stores with analytic figures of merit (no solver involved).

Branin function (Dixon & Szego, Towards Global Optimisation 2, 1978; the form and
constants as given by Forrester, Sobester & Keane, Engineering Design via
Surrogate Modelling, Wiley 2008, appendix A):

    f(x1, x2) = (x2 - 5.1 x1^2 / (4 pi^2) + 5 x1 / pi - 6)^2 + 10 (1 - 1 / (8 pi)) cos x1 + 10,
    x1 in [-5, 10], x2 in [0, 15]; global minimum 0.397887 at (-pi, 12.275), (pi, 2.275), (9.42478, 2.475).

Forrester function (Forrester, Sobester & Keane 2008, sec. 1.4 and appendix A):

    f(x) = (6 x - 2)^2 sin(12 x - 4),  x in [0, 1].
"""

from __future__ import annotations

import numpy as np
from scipy.stats import qmc

from surrogate.campaign import Store

BRANIN_BOUNDS = {"x1_nm": [-5.0, 10.0], "x2_nm": [0.0, 15.0]}
BRANIN_MINIMA = [(-np.pi, 12.275), (np.pi, 2.275), (9.42478, 2.475)]
BRANIN_MINIMUM = 0.397887


def branin(x1, x2):
    b, c, t = 5.1 / (4 * np.pi**2), 5 / np.pi, 1 / (8 * np.pi)
    return (x2 - b * x1**2 + c * x1 - 6) ** 2 + 10 * (1 - t) * np.cos(x1) + 10


def forrester(x):
    return (6 * x - 2) ** 2 * np.sin(12 * x - 4)


def branin_figures(params):
    """Figures of merit built from the Branin function of (x1_nm, x2_nm) (positive ones via exp)."""
    x1, x2 = params["x1_nm"], params["x2_nm"]
    f = float(branin(x1, x2))
    return {
        "resonance_nm": 600.0 + f,  # identity target: Branin shifted
        "resonance_resolved": True,
        "enhancement_at_laser": float(np.exp(5.0 - f / 60.0)),  # log target: log is affine in Branin
        "heat_per_enhancement_nm2": float(np.exp(0.1 * x1 - 0.05 * x2)),
        "spot_area_nm2": 300.0 + 20.0 * x1 + 4.0 * x2,
        "converged": True,
    }


def unit_lhs(n, d, seed):
    return qmc.LatinHypercube(d=d, rng=np.random.default_rng(seed)).random(n)


def branin_designs(n, seed, *, prefix="d"):
    u = unit_lhs(n, 2, seed)
    x1 = -5.0 + 15.0 * u[:, 0]
    x2 = 15.0 * u[:, 1]
    return [(f"{prefix}{seed}-{i:04d}", {"x1_nm": float(a), "x2_nm": float(b), "thickness_nm": 40.0})
            for i, (a, b) in enumerate(zip(x1, x2))]


def _spectrum(converged):
    return [{"wavelength_nm": 830.0, "c_ext_nm2": 1.0, "c_abs_nm2": 0.5, "c_sca_nm2": 0.5, "enhancement": 2.0,
             "converged": converged, "n_iter": 10, "residual": 1e-6}]


def make_store(path, designs, *, figures=branin_figures, not_converged=(), edit=None, seed=7):
    """Create a store holding ``designs``, each finished with ``figures(params)``.

    ``not_converged`` ids get converged False; ``edit(design_id, figures)`` may change a row.
    """
    spec = {"name": "analytic", "family": "box", "bounds": BRANIN_BOUNDS, "fixed": {"thickness_nm": 40.0},
            "laser_nm": 830.0, "seed": seed, "material": "gold", "medium_index": 1.0}
    store = Store.create(path, spec=spec, code_version="test")
    add_results(store, designs, figures=figures, not_converged=not_converged, edit=edit)
    return store


def add_results(store, designs, *, figures=branin_figures, not_converged=(), edit=None):
    store.add_designs(designs)
    for design_id, params in designs:
        fig = figures(params)
        if design_id in not_converged:
            fig = dict(fig, converged=False)
        if edit is not None:
            fig = edit(design_id, fig)
        store.record_result(design_id, figures=fig, solver={"spacing_nm": 2.0}, spectrum=_spectrum(fig["converged"]),
                            elapsed_s=0.01)
