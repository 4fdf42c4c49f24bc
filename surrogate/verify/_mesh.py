"""Closed triangle meshes of a voxelised shape and binary STL files.

The mesh is the outer surface of the union of the cubes (side d, centred on the
lattice sites): every cube face whose neighbour across it is empty becomes two
triangles, wound counter-clockwise seen from outside, so the normals point out and
the surface is closed for any site set (every edge is crossed as often in each
direction).  It is also manifold (each edge shared by exactly two triangles, what
mesh tools call watertight) unless two cubes touch only along an edge or at a
corner, which the shape families' solid, convex-like parts do not produce.  Its
volume is exactly ``n_sites d^3``.  Binary STL: 80-byte header, uint32 count,
per triangle a float32 normal, three float32 vertices and a uint16 attribute
(the open STL format; coordinates here in nm, which the header states).
"""

from __future__ import annotations

import struct
from pathlib import Path

import numpy as np

__all__ = ["voxel_surface", "write_stl", "mesh_volume"]

# corners of the unit square in the (b, c) plane, counter-clockwise seen from +a (e_b x e_c = e_a)
_SQUARE = np.array([[-0.5, -0.5], [0.5, -0.5], [0.5, 0.5], [-0.5, 0.5]])


def voxel_surface(indices, spacing_nm, origin_nm=(0.0, 0.0, 0.0)):
    """Triangles of the outer surface of the cubes at integer lattice ``indices``.

    Parameters
    ----------
    indices : ndarray of int, shape (n, 3)
        Occupied sites (lattice units).
    spacing_nm : float
        Cube side d [nm].
    origin_nm : sequence of 3 float
        Position of index (0, 0, 0) [nm].

    Returns
    -------
    triangles : ndarray, shape (m, 3, 3)
        Vertices [nm]; m = 2 x the number of exposed faces.
    normals : ndarray, shape (m, 3)
        Outward unit normals.
    """
    idx = np.asarray(indices, dtype=np.int64)
    if idx.ndim != 2 or idx.shape[1] != 3 or len(idx) == 0:
        raise ValueError(f"indices must have shape (n, 3) with n >= 1; got {idx.shape}")
    lo = idx.min(axis=0) - 1
    grid = np.zeros(tuple(idx.max(axis=0) - lo + 2), dtype=bool)
    local = idx - lo
    grid[local[:, 0], local[:, 1], local[:, 2]] = True
    tris, normals = [], []
    for a in range(3):
        b, c = (a + 1) % 3, (a + 2) % 3
        for sign in (1, -1):
            neighbour = np.roll(grid, -sign, axis=a)  # the padding keeps the roll from wrapping a site
            face = np.argwhere(grid & ~neighbour).astype(float)
            if face.size == 0:
                continue
            corners = np.empty((len(face), 4, 3))
            corners[:, :, a] = face[:, None, a] + 0.5 * sign
            square = _SQUARE if sign > 0 else _SQUARE[::-1]
            corners[:, :, b] = face[:, None, b] + square[None, :, 0]
            corners[:, :, c] = face[:, None, c] + square[None, :, 1]
            tris.append(corners[:, [0, 1, 2]])
            tris.append(corners[:, [0, 2, 3]])
            n = np.zeros(3)
            n[a] = sign
            normals.append(np.tile(n, (2 * len(face), 1)))
    triangles = (np.concatenate(tris) + lo) * float(spacing_nm) + np.asarray(origin_nm, dtype=float)
    return triangles, np.concatenate(normals)


def mesh_volume(triangles):
    """Enclosed volume of a closed, outward-wound mesh (divergence theorem) [unit^3]."""
    t = np.asarray(triangles, dtype=float)
    return float(np.einsum("ij,ij->i", t[:, 0], np.cross(t[:, 1], t[:, 2])).sum() / 6.0)


def write_stl(path, triangles, normals, *, header="surrogate antenna mesh, units nm"):
    """Write a binary STL file atomically (a temporary file, then a rename)."""
    path = Path(path)
    tri = np.asarray(triangles, dtype="<f4")
    nor = np.asarray(normals, dtype="<f4")
    record = np.zeros(len(tri), dtype=[("n", "<f4", 3), ("v", "<f4", (3, 3)), ("attr", "<u2")])
    record["n"], record["v"] = nor, tri
    tmp = path.with_name(path.name + ".partial")
    with open(tmp, "wb") as fh:
        fh.write(header.encode("ascii", "replace")[:80].ljust(80, b" "))
        fh.write(struct.pack("<I", len(tri)))
        fh.write(record.tobytes())
    tmp.replace(path)
    return path
