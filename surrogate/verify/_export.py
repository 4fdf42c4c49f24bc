"""Candidate export: geometry as STL and everything known about the design as JSON.

For verification in another full-wave tool.  The geometry is the family's shape
voxelised at ``mesh_spacing_nm`` (default 1 nm, finer than any campaign lattice),
as a closed surface (see :mod:`._mesh`); coordinates in nm, in the family's frame:
the long axis along x, the hotspot on +x (tip families) or at the origin (gap
families), illumination along -z with the field along x.
"""

from __future__ import annotations

import csv
import json
from pathlib import Path

from .._validation import check_int, check_real
from ..errors import InvalidParameterError

__all__ = ["export_candidates", "DEFAULT_MESH_SPACING_NM"]

#: Voxel size of exported meshes [nm].
DEFAULT_MESH_SPACING_NM = 1.0

_CAUTION = ("Predicted values come from a statistical surrogate of coupled-dipole simulations; they are models, "
            "not measurements. Verify with a full-wave simulation before fabrication.")


def export_candidates(store_path, out_dir, *, top=10, front_id=None, mesh_spacing_nm=DEFAULT_MESH_SPACING_NM):
    """Write the first ``top`` designs of a front as ``<design_id>.stl`` + ``<design_id>.json``.

    Parameters
    ----------
    store_path : str or pathlib.Path
        Opened read-only.
    out_dir : str or pathlib.Path
        Created if missing; an index ``candidates.csv`` is written beside the files.
    top : int, default 10
    front_id : int or None
        Default the newest front.
    mesh_spacing_nm : float, default 1

    Returns
    -------
    list of dict
        One row per candidate (as in ``candidates.csv``).
    """
    from ..campaign import Store
    from ..campaign import design_id as content_id
    from ..shapes import get_family
    from ._mesh import mesh_volume, voxel_surface, write_stl
    from ._queue import _latest_front, _round_params

    top = check_int("top", top, low=1, high=10_000)
    mesh_spacing_nm = check_real("mesh_spacing_nm", mesh_spacing_nm, low=0.05, high=100.0, unit="nm")
    out_dir = Path(out_dir)
    with Store.open(store_path, readonly=True) as store:
        front = _latest_front(store, front_id)
        points = store.front_points(front["front_id"])
        spec = store.spec
        verified = {v["design_id"]: v for v in store.verifications()}
    family = get_family(spec["family"])
    out_dir.mkdir(parents=True, exist_ok=True)
    rows = []
    seen = set()
    for p in points:
        if len(rows) == top:
            break
        params = _round_params(p["params"], spec)
        did = content_id(params)
        if did in seen:  # fronts recorded before the search merged designs closer than the 0.01 nm rounding
            continue
        seen.add(did)
        rank = len(rows)
        try:
            sites = family.sites(params, mesh_spacing_nm)
        except InvalidParameterError as exc:
            raise InvalidParameterError(f"mesh_spacing_nm {mesh_spacing_nm:g} nm cannot mesh design {did}: {exc}") from None
        tri, nor = voxel_surface(sites.indices, sites.spacing_nm, sites.origin_nm)
        stl = write_stl(out_dir / f"{did}.stl", tri, nor, header=f"surrogate {spec['family']} {did}, units nm")
        volume = mesh_volume(tri)
        record = {
            "design_id": did, "rank": rank, "front_id": front["front_id"], "point_index": p["point_index"],
            "family": spec["family"], "parameters": params, "material": spec.get("material"),
            "medium_index": spec.get("medium_index"), "laser_nm": spec.get("laser_nm"),
            "model_version": front["model_version"], "predictions": p["predictions"], "trust_flags": p["flags"],
            "robustness": p["robustness"], "verification": verified.get(did),
            "mesh": {"file": stl.name, "format": "binary STL", "unit": "nm", "voxel_nm": mesh_spacing_nm,
                     "n_triangles": int(len(tri)), "volume_nm3": volume,
                     "ideal_volume_nm3": float(family.ideal_volume_nm3(params)),
                     "frame": "long axis x; illumination along -z, field along x"},
            "caution": _CAUTION,
        }
        tmp = out_dir / f"{did}.json.partial"
        tmp.write_text(json.dumps(record, indent=2, sort_keys=True))
        tmp.replace(out_dir / f"{did}.json")
        row = {"rank": rank, "design_id": did, **{k: v for k, v in params.items()},
               "trust_flags": ",".join(dict.fromkeys(f["flag"] for f in p["flags"])),
               "verified": did in verified, "stl": stl.name, "n_triangles": int(len(tri)), "volume_nm3": volume}
        for t, pred in p["predictions"].items():
            row[f"{t}_median"] = pred["median"]
        rows.append(row)
    with open(out_dir / "candidates.csv", "w", newline="") as fh:
        writer = csv.DictWriter(fh, fieldnames=list(rows[0]))
        writer.writeheader()
        writer.writerows(rows)
    return rows
