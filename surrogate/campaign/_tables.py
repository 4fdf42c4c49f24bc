"""Wide (one row per design) and long (one row per design and wavelength) tables of a store."""

from __future__ import annotations

import pandas as pd

__all__ = ["wide_table", "long_table"]


def wide_table(store):
    """Designs with their status, parameters and figures of merit (unit-suffixed columns)."""
    results = {r["design_id"]: r for r in store.results()}
    rows = []
    for d in store.designs():
        row = {"design_id": d["design_id"], "seq": d["seq"], "source": d["source"], "status": d["status"].value,
               "message": d["message"]}
        row.update(d["params"])
        r = results.get(d["design_id"])
        if r is not None:
            row.update(r["figures"])
            row["elapsed_s"] = r["elapsed_s"]
        rows.append(row)
    return pd.DataFrame(rows)


def long_table(store):
    """Spectra of every finished design."""
    frames = []
    for r in store.results():
        spec = pd.DataFrame(store.spectrum(r["design_id"]))
        spec.insert(0, "design_id", r["design_id"])
        frames.append(spec)
    if not frames:
        return pd.DataFrame(columns=["design_id", "wavelength_nm", "c_ext_nm2", "c_abs_nm2", "c_sca_nm2",
                                     "enhancement", "converged", "n_iter", "residual"])
    out = pd.concat(frames, ignore_index=True)
    out["converged"] = out["converged"].astype(bool)
    return out
