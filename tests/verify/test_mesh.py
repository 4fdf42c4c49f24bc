"""Exported meshes are closed, outward-wound and hold the discretised volume.

Outside references: trimesh (a general-purpose mesh library from the package registry)
judges watertightness, winding and volume of the STL files we write; the sphere volume
4/3 pi r^3 and the box volume are exact geometry.
"""

import json
import math

import numpy as np
import pytest
import trimesh
from hypothesis import given, settings
from hypothesis import strategies as st

from surrogate.campaign import Store
from surrogate.report._family_sheet import EXAMPLE_PARAMETERS
from surrogate.shapes import get_family
from surrogate.verify import export_candidates, mesh_volume, voxel_surface, write_stl


def _load(path):
    return trimesh.load_mesh(str(path), file_type="stl", process=True)


@settings(max_examples=40, deadline=None)
@given(st.lists(st.tuples(*(st.integers(0, 4),) * 3), min_size=1, max_size=30, unique=True))
def test_any_site_set_gives_a_closed_outward_surface(tmp_path_factory, sites):
    idx = np.array(sites)
    tri, nor = voxel_surface(idx, 2.0, (1.0, -3.0, 0.5))
    # closed and consistently wound: every edge is crossed as often in one direction as in the
    # other (cubes touching only along an edge make that edge non-manifold, but still closed)
    key = np.round(tri * 4).astype(np.int64)
    edges = np.concatenate([key[:, [0, 1]], key[:, [1, 2]], key[:, [2, 0]]])
    forward = {tuple(e.ravel()) for e in edges}
    counts = {}
    for e in edges:
        counts[tuple(e.ravel())] = counts.get(tuple(e.ravel()), 0) + 1
    for e, n in counts.items():
        assert counts.get(e[3:] + e[:3], 0) == n
    assert forward
    # outward normals agree with the winding
    cross = np.cross(tri[:, 1] - tri[:, 0], tri[:, 2] - tri[:, 0])
    assert np.all(np.einsum("ij,ij->i", cross, nor) > 0)
    path = write_stl(tmp_path_factory.mktemp("m") / "s.stl", tri, nor)
    mesh = _load(path)
    assert mesh.volume == pytest.approx(len(idx) * 8.0, rel=1e-6)  # n d^3, positive: normals point out
    assert mesh_volume(tri) == pytest.approx(len(idx) * 8.0, rel=1e-9)


@pytest.mark.parametrize("diameter_nm", [30.0, 60.0])
def test_sphere_mesh_volume_approaches_the_exact_sphere(tmp_path, diameter_nm):
    fam = get_family("sphere")
    sites = fam.sites({"diameter_nm": diameter_nm}, 0.5)
    tri, nor = voxel_surface(sites.indices, sites.spacing_nm, sites.origin_nm)
    mesh = _load(write_stl(tmp_path / "s.stl", tri, nor))
    exact = math.pi / 6 * diameter_nm**3
    # measured: within 0.5 % at d = 0.5 nm (voxel centres inside the sphere)
    assert mesh.volume == pytest.approx(exact, rel=0.01)
    assert mesh.is_watertight
    # centred on the origin, extent the diameter (to one voxel)
    assert np.allclose(mesh.bounds.mean(axis=0), 0.0, atol=0.5)
    assert np.allclose(mesh.extents, diameter_nm, atol=0.5)


def test_export_writes_stl_json_and_index(store_copy, tmp_path):
    out = tmp_path / "candidates"
    rows = export_candidates(store_copy, out, top=2, mesh_spacing_nm=2.0)
    assert len(rows) == 2
    with Store.open(store_copy, readonly=True) as store:
        points = store.front_points(store.fronts()[-1]["front_id"])[:2]
        spec = store.spec
    fam = get_family(spec["family"])
    for row, point in zip(rows, points):
        record = json.loads((out / f"{row['design_id']}.json").read_text())
        assert record["predictions"] == point["predictions"]
        assert record["parameters"]["length_nm"] == pytest.approx(point["params"]["length_nm"], abs=0.005)
        mesh = _load(out / row["stl"])
        assert mesh.is_watertight
        n_sites = fam.sites(record["parameters"], 2.0).n_sites
        assert mesh.volume == pytest.approx(n_sites * 8.0, rel=1e-5)
        assert record["mesh"]["unit"] == "nm" and "verify" in record["caution"].lower()
    assert (out / "candidates.csv").read_text().splitlines()[0].startswith("rank,design_id")


@pytest.mark.parametrize("family", sorted(EXAMPLE_PARAMETERS))
def test_every_family_meshes_watertight_with_its_volume(tmp_path, family):
    fam = get_family(family)
    params = EXAMPLE_PARAMETERS[family]
    sites = fam.sites(params, 1.0)
    tri, nor = voxel_surface(sites.indices, sites.spacing_nm, sites.origin_nm)
    mesh = _load(write_stl(tmp_path / "f.stl", tri, nor))
    assert mesh.is_watertight and mesh.is_winding_consistent
    # measured at 1 nm: volume / ideal volume 1.000-1.002 over the families
    assert mesh.volume == pytest.approx(fam.ideal_volume_nm3(params), rel=0.01)
