"""The verification loop: queue candidates, re-simulate them, judge the surrogate, refine, export.

* :mod:`._queue`   queue entries with the prediction they will be judged against
* :mod:`._verify`  re-simulation of queued designs, predicted vs simulated, finer-lattice check
* :mod:`._refine`  search -> queue -> verify -> retrain rounds
* :mod:`._mesh`    closed voxel-surface meshes and binary STL
* :mod:`._export`  candidate geometry (STL) and data (JSON) for other solvers
"""

from ..campaign import QueueState
from ._export import DEFAULT_MESH_SPACING_NM, export_candidates
from ._mesh import mesh_volume, voxel_surface, write_stl
from ._queue import COVERAGE, REASONS, QueueReport, enqueue, prediction_record, rank_uncertain
from ._refine import RefineRound, refine_store, round_metrics, simulated_front_hypervolume
from ._verify import VerifyReport, compare, discretization, verify_store

__all__ = [
    "QueueState",
    "QueueReport",
    "REASONS",
    "COVERAGE",
    "enqueue",
    "prediction_record",
    "rank_uncertain",
    "VerifyReport",
    "verify_store",
    "compare",
    "discretization",
    "RefineRound",
    "refine_store",
    "round_metrics",
    "simulated_front_hypervolume",
    "voxel_surface",
    "write_stl",
    "mesh_volume",
    "export_candidates",
    "DEFAULT_MESH_SPACING_NM",
]
