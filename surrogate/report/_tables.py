"""The report's tables: pandas frames with unit-suffixed columns, built from a :class:`CampaignRecord`.

Pure functions (no drawing, no files).  A column whose values carry a unit names
it (``wavelength_nm``, ``solver_time_total_s``); per-target columns take the
target's own name, which carries its unit (``resonance_nm_median``,
``spot_area_nm2_upper``); ratios, fractions and z-scores are dimensionless [-].
"""

from __future__ import annotations

import math
from datetime import datetime

import numpy as np
import pandas as pd

__all__ = [
    "target_unit",
    "spec_table",
    "counts_table",
    "compute_table",
    "runs_table",
    "provenance_table",
    "material_table",
    "solver_table",
    "designs_table",
    "cv_table",
    "versions_table",
    "fronts_table",
    "front_points_table",
    "top_candidates",
    "verification_table",
    "refine_table",
    "primary_objective",
    "campaign_wavelengths_nm",
]


def target_unit(name):
    """The unit a name's suffix states: ``nm2`` -> "nm²", ``nm`` -> "nm", ``s`` -> "s", ``deg``; else "-"."""
    for suffix, unit in (("_nm2", "nm²"), ("_nm", "nm"), ("_deg", "deg"), ("_s", "s")):
        if name.endswith(suffix):
            return unit
    return "-"


def _text(value):
    if isinstance(value, float):
        return format(value, ".6g")
    if isinstance(value, (list, tuple)):
        return "[" + ", ".join(_text(v) for v in value) + "]"
    return str(value)


def spec_table(spec):
    """The campaign as stored: one row per setting (bounds and fixed values one row per parameter)."""
    rows = [(k, _text(v)) for k, v in sorted(spec.items()) if k not in ("bounds", "fixed")]
    rows += [(f"bounds: {n}", f"[{lo:g}, {hi:g}]") for n, (lo, hi) in spec.get("bounds", {}).items()]
    rows += [(f"fixed: {n}", _text(v)) for n, v in spec.get("fixed", {}).items()]
    return pd.DataFrame(rows, columns=["setting", "value"])


def counts_table(counts):
    """Designs per status (every status, zeros included) and the total."""
    rows = list(counts.items()) + [("total", sum(counts.values()))]
    return pd.DataFrame(rows, columns=["status", "n_designs"])


def compute_table(results):
    """Solver time of the finished designs [s]: total, mean, median, maximum."""
    t = np.array([r["elapsed_s"] for r in results], float)
    if t.size == 0:
        return pd.DataFrame({"quantity": ["n_finished"], "value": [0.0]})
    rows = [("n_finished", float(t.size)), ("solver_time_total_s", float(t.sum())),
            ("solver_time_total_h", float(t.sum() / 3600.0)), ("solver_time_mean_s", float(t.mean())),
            ("solver_time_median_s", float(np.median(t))), ("solver_time_max_s", float(t.max()))]
    return pd.DataFrame(rows, columns=["quantity", "value"])


def _seconds_between(start, end):
    if not start or not end:
        return math.nan
    return (datetime.fromisoformat(end) - datetime.fromisoformat(start)).total_seconds()


def runs_table(runs):
    """Logged runs with their wall time [s] (NaN while unfinished)."""
    cols = ["run_id", "command", "code_version", "started_utc", "finished_utc", "wall_time_s"]
    rows = [[r["run_id"], r["command"], r["code_version"], r["started_utc"], r["finished_utc"] or "",
             _seconds_between(r["started_utc"], r["finished_utc"])] for r in runs]
    return pd.DataFrame(rows, columns=cols)


def provenance_table(record, *, report_version):
    """Code versions (store, runs, model, this report) and the dataset fingerprint."""
    rows = [("store file", record.store_path), ("store created_utc", record.meta.get("created_utc") or ""),
            ("store code_version", record.meta.get("code_version") or ""),
            ("run code_versions", ", ".join(sorted({r["code_version"] for r in record.runs})) or "no runs logged"),
            ("report code_version", report_version), ("dataset fingerprint (SHA-256)", record.fingerprint)]
    if record.bundle is not None:
        card = record.bundle.card
        rows += [("model version", f"v{record.bundle.version:04d}"), ("model code_version", card.get("code_version")),
                 ("model trained on fingerprint", card["store"]["fingerprint"]),
                 ("model is current", "yes" if not record.bundle.stale else "no (stale: newer results in the store)")]
    return pd.DataFrame(rows, columns=["item", "value"])


def campaign_wavelengths_nm(spec):
    """The campaign's wavelength grid [nm] with the laser added, and a note on where it came from."""
    from .._validation import parse_wavelength_range

    laser = spec.get("laser_nm")
    if spec.get("wavelengths_nm"):
        wl = parse_wavelength_range(spec["wavelengths_nm"])
        note = f"the campaign's wavelengths_nm = {spec['wavelengths_nm']}"
        if laser is not None:
            wl = np.union1d(wl, [float(laser)])
            note += f" plus the laser {float(laser):g} nm"
        return wl, note
    if laser is None:
        return np.array([]), "the campaign states neither wavelengths_nm nor laser_nm"
    return np.array([float(laser)]), "the campaign states no wavelengths_nm; the laser wavelength only"


def material_table(spec):
    """Optical constants of the campaign's antenna material on its wavelengths.

    Returns
    -------
    frame : DataFrame
        Columns wavelength_nm, n, k, eps_real, eps_imag ([-]; eps = (n + i k)^2).
    description : dict
        The material's own record (name, kind, source, interpolation, range [nm]).
    note : str
        Where the wavelengths came from.
    """
    from ..catalog import get_material

    material = get_material(spec["material"])
    wl, note = campaign_wavelengths_nm(spec)
    nk = np.atleast_1d(material.refractive_index(wl)) if wl.size else np.array([], complex)
    eps = nk**2
    frame = pd.DataFrame({"wavelength_nm": wl, "n": nk.real, "k": nk.imag, "eps_real": eps.real, "eps_imag": eps.imag})
    return frame, material.describe(), note


def _summary(values):
    distinct = []
    for v in values:
        if v not in distinct:
            distinct.append(v)
    if len(distinct) == 1:
        return _text(distinct[0])
    if all(isinstance(v, (int, float)) and not isinstance(v, bool) for v in distinct):
        return f"{_text(min(distinct))} to {_text(max(distinct))} ({len(distinct)} distinct values)"
    return "; ".join(_text(v) for v in distinct)


def solver_table(spec, results):
    """Solver settings: the campaign's, then what the finished designs' records say (distinct values)."""
    rows = [(f"campaign: {k}", _text(spec[k])) for k in ("spacing_nm", "polarizability", "tol", "max_iter",
                                                          "medium_index", "hotspot_offset_nm") if k in spec]
    keys = []
    for r in results:
        keys += [k for k in r["solver"] if k not in keys and k not in ("materials", "hotspot_nm")]
    for k in keys:
        rows.append((f"results: {k}", _summary([r["solver"].get(k) for r in results if k in r["solver"]])))
    mats = []
    for r in results:
        for region, m in (r["solver"].get("materials") or {}).items():
            text = f"{region}: {m.get('name')} ({m.get('kind')}; {m.get('interpolation')})"
            if text not in mats:
                mats.append(text)
    if mats:
        rows.append(("results: materials", "; ".join(mats)))
    res = [r["figures"].get("worst_residual") for r in results if r["figures"].get("worst_residual") is not None]
    if res:
        rows.append(("results: worst relative residual", _text(float(max(res)))))
    return pd.DataFrame(rows, columns=["setting", "value"])


def designs_table(designs, results, targets):
    """Every design: id, source, status, parameters, the targets' solver values and solver time [s]."""
    by_id = {r["design_id"]: r for r in results}
    rows = []
    for d in designs:
        row = {"design_id": d["design_id"], "source": d["source"], "status": getattr(d["status"], "value", d["status"])}
        row.update(d["params"])
        r = by_id.get(d["design_id"])
        for t in targets:
            row[t] = r["figures"].get(t, math.nan) if r else math.nan
        row["solver_time_s"] = r["elapsed_s"] if r else math.nan
        rows.append(row)
    return pd.DataFrame(rows)


def cv_table(card):
    """Cross-validated accuracy per target from a model card (RMSE, MAE in the unit column)."""
    cols = ["target", "unit", "transform", "n_designs", "r2_model_space", "r2_physical", "rmse_in_unit",
            "mae_in_unit", "coverage_68", "coverage_95", "coverage_95_recalibrated", "msll", "interval_scale"]
    rows = []
    for t, info in card["targets"].items():
        cv = info.get("cv") or {}
        rows.append([t, target_unit(t), info["transform"], info["n_designs"], cv.get("r2", math.nan),
                     cv.get("r2_physical", math.nan), cv.get("rmse", math.nan), cv.get("mae", math.nan),
                     cv.get("coverage_68", math.nan), cv.get("coverage_95", math.nan),
                     cv.get("coverage_95_recalibrated", math.nan), cv.get("msll", math.nan), info["interval_scale"]])
    return pd.DataFrame(rows, columns=cols)


def versions_table(versions):
    """Every model version: created, designs, current or stale, training time [s], 95 % coverage per target."""
    rows = []
    for v in versions:
        if "error" in v:
            rows.append({"version": v["version"], "created_utc": "", "n_designs": math.nan, "current": v["error"]})
            continue
        row = {"version": v["version"], "created_utc": v["created_utc"], "n_designs": v["n_designs"],
               "current": "yes" if v["current"] else "no", "training_time_s": v["training_time_s"]}
        for t, m in v["targets"].items():
            row[f"{t}_r2"] = m.get("r2")
        rows.append(row)
    return pd.DataFrame(rows)


def fronts_table(fronts):
    """Recorded fronts: id, created, model version, trials, feasible, points, hypervolume (model space)."""
    cols = ["front_id", "created_utc", "model_version", "objectives", "n_trials", "n_feasible", "n_points",
            "hypervolume_model_space"]
    rows = [[f["front_id"], f["created_utc"], f["model_version"],
             ", ".join(f"{o['direction']} {o['target']}" for o in f["objectives"]), f["n_trials"], f["n_feasible"],
             f["n_points"], f["hypervolume"]] for f in fronts]
    return pd.DataFrame(rows, columns=cols)


def _flag_text(flags):
    return "; ".join(f"{f['flag']}{' (' + f['target'] + ')' if f.get('target') else ''}" for f in flags)


def front_points_table(points):
    """Every front point: parameters, each target's median and 95 % interval, robustness, trust flags."""
    rows = []
    for p in points:
        row = {"point_index": p["point_index"]}
        row.update(p["params"])
        for t, pred in p["predictions"].items():
            for k in ("median", "lower", "upper"):
                row[f"{t}_{k}"] = pred.get(k, math.nan)
        row.update(p["robustness"])
        row["n_flags"] = len(p["flags"])
        row["trust_flags"] = _flag_text(p["flags"]) or "none"
        row["flag_reasons"] = " | ".join(f["reason"] for f in p["flags"])
        rows.append(row)
    return pd.DataFrame(rows)


def primary_objective(front):
    """The front's first objective ``(target, direction)``; the default one without a front."""
    if front is None:
        return "enhancement_at_laser", "maximize"
    o = front["objectives"][0]
    return o["target"], o["direction"]


def top_candidates(front, points, n):
    """The ``n`` best front points: fewest trust flags first, then the first objective's predicted median."""
    if not points:
        return pd.DataFrame()
    target, direction = primary_objective(front)
    sign = -1.0 if direction == "maximize" else 1.0
    frame = front_points_table(points)
    frame["_key"] = sign * frame[f"{target}_median"]
    frame = frame.sort_values(["n_flags", "_key"], kind="stable").drop(columns="_key").head(n)
    frame.insert(0, "rank", range(1, len(frame) + 1))
    return frame.drop(columns=["flag_reasons"]).reset_index(drop=True)


def verification_table(verifications, queue):
    """Predicted against simulated per verified design and target; the error in predicted-sigma units."""
    entries = {q["entry_id"]: q for q in (queue or [])}
    rows = []
    for v in verifications:
        q = entries.get(v["entry_id"], {})
        row = {"entry_id": v["entry_id"], "design_id": v["design_id"], "reason": q.get("reason", ""),
               "front_id": q.get("front_id"), "model_version": q.get("model_version"), "spacing_nm": v["spacing_nm"]}
        for t, c in (v.get("comparison") or {}).items():
            row[f"{t}_median"] = c.get("median")
            row[f"{t}_lower"] = c.get("lower")
            row[f"{t}_upper"] = c.get("upper")
            row[f"{t}_simulated"] = c.get("simulated")
            row[f"{t}_z_sigma"] = c.get("z_sigma")
            row[f"{t}_inside"] = c.get("inside")
        fine = v.get("fine")
        if fine:
            row["fine_spacing_nm"] = v.get("fine_spacing_nm")
            if "error" in fine:
                row["fine_note"] = fine["error"]
            for t in v.get("comparison") or {}:
                d = (fine.get("discretization") or {}).get(t)
                if d is not None:
                    row[f"{t}_fine"] = d["fine"]
                    row[f"{t}_fine_relative_change"] = d["relative_change"]
        row["finished_utc"] = v.get("finished_utc", "")
        rows.append(row)
    return pd.DataFrame(rows)


def refine_table(rounds):
    """Per refine round: front, model version, verified designs, simulated hypervolume, error per target.

    Per target over the round's newly simulated designs: ``n``, the RMSE of the median in
    model space (log space [-] for log targets, the target's unit otherwise), the mean
    |z| [sigma] and the interval coverage [-].
    """
    rows = []
    for r in rounds:
        row = {"round": r["round"], "front_id": r.get("front_id"), "model_version": r.get("model_version"),
               "n_verified": r["n_verified"], "hypervolume_simulated": r.get("hypervolume_simulated")}
        for t, m in r["metrics"].get("targets", {}).items():
            row[f"{t}_n"] = m.get("n")
            row[f"{t}_rmse_model_space"] = m.get("rmse_model_space")
            row[f"{t}_mean_abs_z_sigma"] = m.get("mean_abs_z")
            row[f"{t}_coverage"] = m.get("coverage")
        row["new_model_version"] = r["metrics"].get("new_model_version")
        rows.append(row)
    return pd.DataFrame(rows)
