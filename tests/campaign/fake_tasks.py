"""Cheap stand-ins for the design solve, to test the runners' bookkeeping (not physics)."""

import os
import time

import numpy as np


def quick(spec, params):
    x = float(sum(params.values()))
    time.sleep(float(os.environ.get("FAKE_TASK_SLEEP_S", "0")))
    if x < 0:
        raise ValueError(f"negative design {x}")
    converged = x < 1000
    figures = {"resonance_nm": 700.0 + x, "enhancement_at_laser": x, "converged": converged}
    spectrum = [{"wavelength_nm": 800.0, "c_ext_nm2": x, "c_abs_nm2": x / 2, "c_sca_nm2": x / 2,
                 "enhancement": x, "converged": converged, "n_iter": 3, "residual": 1e-7}]
    y = np.linspace(-5.0, 5.0, 3)
    return {"figures": figures, "solver": {"pid": os.getpid()}, "spectrum": spectrum,
            "field_map": (800.0, y, y, np.full((3, 3), x))}


def die_once(spec, params):
    """Kills its own worker process the first time it sees the marker file."""
    marker = os.environ.get("FAKE_TASK_DIE_MARKER")
    if marker and params.get("a_nm") == 3.0 and not os.path.exists(marker):
        open(marker, "w").close()
        os._exit(9)
    return quick(spec, params)


def always_die_on_three(spec, params):
    if params.get("a_nm") == 3.0:
        os._exit(9)
    return quick(spec, params)
