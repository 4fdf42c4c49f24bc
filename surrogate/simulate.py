"""One design: shape family + parameters + materials + wavelengths -> coupled-dipole spectra.

This module joins the core rooms (shapes, materials, solver); nothing below it
knows about the others.
"""

from __future__ import annotations

import os
from dataclasses import dataclass, field

import numpy as np

from ._validation import check_positive_array, check_real
from .catalog import get_material
from .errors import InvalidParameterError, InvalidTypeError, LatticeTooLargeError
from .shapes import get_family
from .solver import (
    Incidence,
    Lattice,
    SolverSettings,
    estimate_zero_spacing,
    memory_estimate_bytes,
    solve_sweep,
)

__all__ = ["simulate", "check_memory", "check_settings", "SimulationResult", "default_memory_limit_bytes", "REFINE_FACTORS", "SPECTRUM_COLUMNS"]

#: Spacings solved under refinement, as multiples of the requested (finest) spacing.  Six
#: spacings (cost 2.18x the finest solve) halve the median error bar of four (1.93x) and
#: let the outlier check work (benchmarks/bench_refine_coverage.py, README).
REFINE_FACTORS = (1.0, 1.25, 1.5, 1.75, 2.0, 2.5)

#: Column order of a spectrum table (CSV and printed).
SPECTRUM_COLUMNS = ("wavelength_nm", "c_ext_nm2", "c_abs_nm2", "c_sca_nm2", "converged", "n_iter", "residual")
_REFINED_COLUMNS = (
    "c_ext_limit_nm2",
    "c_ext_limit_error_nm2",
    "c_ext_limit_method",
    "c_abs_limit_nm2",
    "c_abs_limit_error_nm2",
    "c_abs_limit_method",
    "c_sca_limit_nm2",
    "c_sca_limit_error_nm2",
    "c_sca_limit_method",
)


def default_memory_limit_bytes():
    """Half of this machine's physical memory [bytes] (the default lattice memory limit)."""
    try:
        return int(0.5 * os.sysconf("SC_PAGE_SIZE") * os.sysconf("SC_PHYS_PAGES"))
    except (ValueError, OSError, AttributeError):  # pragma: no cover - non-POSIX
        return 8 * 1024**3


@dataclass(frozen=True)
class SimulationResult:
    """Spectra of one design.

    Attributes
    ----------
    family : str
    params : dict
        Validated geometric parameters [nm or deg].
    materials : dict
        Region name -> material record (name, source, interpolation, range).
    medium_index : float
        Real refractive index of the host [-].
    spacing_nm : float
        Lattice spacing of the finest solve [nm] (after any volume-preserving rescale).
    n_dipoles : int
        Dipoles of the finest solve.
    polarizability, method : str
    wavelength_nm : ndarray, shape (W,)
    c_ext_nm2, c_abs_nm2, c_sca_nm2 : ndarray, shape (W,)
        Cross sections of the finest solve [nm^2].
    converged : ndarray of bool, shape (W,)
    n_iter : ndarray of int, shape (W,)
    residual : ndarray, shape (W,)
        True relative residual ||b - A x|| / ||b|| [-].
    refined : dict or None
        Under refinement: ``spacings_nm`` and, per cross section and wavelength, the
        zero-spacing estimate, its error bar [nm^2] and how it was made
        (``"extrapolated"`` in the asymptotic regime, else ``"bounded"``), keys as in
        ``_REFINED_COLUMNS`` (see :func:`surrogate.solver.estimate_zero_spacing`).
    solutions : tuple
        The solver's per-wavelength solutions of the finest lattice (for fields).
    lattice : Lattice
        The finest lattice.
    settings : SolverSettings
        The solver settings used.
    incidence : Incidence
        The incident plane wave.
    part_names : tuple of str
        The parts of the finest lattice (antenna parts such as ``disk`` and ``peg``,
        then ``substrate``, ``medium_layer``).
    c_abs_by_part_nm2 : dict
        Part name -> absorption cross section of that part per wavelength [nm^2],
        shape (W,); the parts sum to ``c_abs_nm2``.
    sites : ShapeSites
        The finest lattice's sites with their region and part labels.
    """

    family: str
    params: dict
    materials: dict
    medium_index: float
    spacing_nm: float
    n_dipoles: int
    polarizability: str
    method: str
    wavelength_nm: np.ndarray
    c_ext_nm2: np.ndarray
    c_abs_nm2: np.ndarray
    c_sca_nm2: np.ndarray
    converged: np.ndarray
    n_iter: np.ndarray
    residual: np.ndarray
    refined: dict | None = None
    solutions: tuple = field(default=(), repr=False)
    lattice: object = field(default=None, repr=False)
    settings: SolverSettings = field(default_factory=SolverSettings)
    incidence: Incidence = field(default_factory=Incidence)
    part_names: tuple = ()
    c_abs_by_part_nm2: dict = field(default_factory=dict, repr=False)
    sites: object = field(default=None, repr=False)

    @property
    def all_converged(self):
        return bool(np.all(self.converged))

    def rows(self):
        """The spectrum as a list of dicts with unit-suffixed keys (``SPECTRUM_COLUMNS`` order)."""
        out = []
        for i, wl in enumerate(self.wavelength_nm):
            row = {
                "wavelength_nm": float(wl),
                "c_ext_nm2": float(self.c_ext_nm2[i]),
                "c_abs_nm2": float(self.c_abs_nm2[i]),
                "c_sca_nm2": float(self.c_sca_nm2[i]),
                "converged": bool(self.converged[i]),
                "n_iter": int(self.n_iter[i]),
                "residual": float(self.residual[i]),
            }
            if self.refined is not None:
                for key in _REFINED_COLUMNS:
                    v = self.refined[key][i]
                    row[key] = str(v) if key.endswith("_method") else float(v)
            out.append(row)
        return out

    @property
    def columns(self):
        return SPECTRUM_COLUMNS + (_REFINED_COLUMNS if self.refined is not None else ())


def _lattice_for(family, params, spacing_nm, surroundings):
    sites = family.sites(params, spacing_nm, **surroundings)
    lattice = Lattice(sites.indices, sites.spacing_nm, material_index=sites.region, origin_nm=sites.origin_nm)
    return sites, lattice


class _GridBound:
    """The bounding box of a shape's lattice, for a memory estimate made before any site exists."""

    def __init__(self, grid_shape):
        self.grid_shape = tuple(int(c) for c in grid_shape)
        self.n_dipoles = int(np.prod(self.grid_shape, dtype=np.int64))  # an upper bound


def check_memory(family, params, spacing_nm, *, surroundings=None, settings=None):
    """Refuse a design whose lattice would need more than the limit, before allocating it.

    The estimate assumes every cell of the shape's bounding box is occupied and counts
    the preconditioner whenever the settings may use it (an upper bound), with the
    solver's own accounting (:func:`memory_estimate_bytes`).  ``settings``: the
    :class:`SolverSettings` of the solves (default as :func:`check_settings`).

    Raises
    ------
    LatticeTooLargeError
        With the estimate and the limit in GiB and the remedy.
    """
    surroundings = surroundings or {}
    settings = check_settings(settings)
    limit = settings.memory_limit_bytes
    grid = family.bounding_grid_shape(params, spacing_nm, **surroundings)
    need = memory_estimate_bytes(
        _GridBound(grid), settings.numpy_dtype, method=settings.method,
        preconditioner="circulant" if settings.may_precondition else "none",
    )
    if need > limit:
        raise LatticeTooLargeError(
            f"lattice of {family.name} at spacing_nm={spacing_nm:g} (bounding grid {grid[0]}x{grid[1]}x{grid[2]}) "
            f"would need about {need / 2**30:.2f} GiB; the limit is {limit / 2**30:.2f} GiB; use a larger spacing_nm"
        )
    return need


def simulate(
    family,
    params,
    *,
    wavelengths_nm,
    spacing_nm,
    material="gold",
    region_materials=None,
    medium_index=1.0,
    settings=None,
    incidence=None,
    refine=False,
    substrate=None,
    medium_layer=None,
    progress=None,
):
    """Solve one design over a wavelength sweep.

    Parameters
    ----------
    family : str
        Shape family name (``sphere``, ``coated-sphere``, ``box``).
    params : mapping
        Geometric parameters with unit-suffixed names, e.g. ``{"diameter_nm": 40}``.
    wavelengths_nm : array_like, shape (W,)
        Vacuum wavelengths [nm].
    spacing_nm : float
        Lattice spacing d [nm]; under ``refine`` the finest of the spacings solved.
    material : str or Material
        Material of every region not named in ``region_materials`` (default gold,
        Johnson & Christy).
    region_materials : mapping, optional
        Region name -> material, e.g. ``{"core": "gold", "shell": 1.45}``.
    medium_index : float
        Real refractive index of the host medium [-], in [1, 4].
    settings : SolverSettings, optional
        Polarizability (default FCD), Krylov method, tolerance, iteration cap, precision
        and memory limit (default half the physical memory) of every solve.
    incidence : Incidence, optional
        The incident plane wave (default: normal incidence along -z, field along x).
    refine : bool
        Also solve at ``REFINE_FACTORS`` times the spacing and estimate each cross
        section at d -> 0 with an error bar, extrapolating only when the values are
        in the asymptotic regime.
    substrate, medium_layer : SubstrateSlab, MediumLayer, optional
        Surroundings of a film family (regions ``substrate`` and ``medium_layer``; give
        their materials in ``region_materials``).
    progress : callable(done, total), optional
        Called after each wavelength solve.

    Returns
    -------
    SimulationResult
    """
    fam = get_family(family)
    clean = dict(fam.validate(params))
    wl = check_positive_array("wavelengths_nm", wavelengths_nm, unit="nm")
    d = check_real("spacing_nm", spacing_nm, low=0.05, high=100.0, unit="nm")
    n_host = check_real("medium_index", medium_index, low=1.0, high=4.0)
    settings = check_settings(settings)
    if settings.method == "direct":
        raise InvalidParameterError("method must be one of cocg, bicgstab, gmres for a design; got 'direct'")
    incidence = Incidence() if incidence is None else incidence
    if not isinstance(incidence, Incidence):
        raise InvalidTypeError(f"incidence must be a surrogate.solver.Incidence; got {type(incidence).__name__}")

    surroundings = {k: v for k, v in (("substrate", substrate), ("medium_layer", medium_layer)) if v is not None}
    spacings = [d * f for f in REFINE_FACTORS] if refine else [d]
    check_memory(fam, clean, d, surroundings=surroundings, settings=settings)  # finest = largest
    built = [_lattice_for(fam, clean, s, surroundings) for s in spacings]
    region_names = built[0][0].region_names
    overrides = dict(region_materials or {})
    unknown = [r for r in overrides if r not in region_names]
    if unknown:
        raise InvalidParameterError(f"region_materials keys must be among {', '.join(region_names)}; got {unknown[0]!r}")
    mats = {r: get_material(overrides.get(r, material)) for r in region_names}
    eps = np.stack([np.atleast_1d(mats[r].permittivity(wl)) for r in region_names], axis=1)  # (W, M)

    total = len(spacings) * wl.size
    done = [0]

    def tick(*_):
        done[0] += 1
        if progress is not None:
            progress(done[0], total)

    per_spacing = []
    for sites, lattice in built:
        sols = solve_sweep(
            lattice, eps, wl, n_host=n_host, e_direction=incidence.e_direction, k_direction=incidence.k_direction,
            settings=settings, progress=tick,
        )
        per_spacing.append((sites, lattice, sols))

    sites0, lattice0, sols0 = per_spacing[0]

    def arr(sols, name, dtype=float):
        return np.array([getattr(s, name) for s in sols], dtype=dtype)

    refined = None
    if refine:
        used = np.array([s.spacing_nm for s, _, _ in per_spacing])
        refined = {"spacings_nm": used.tolist()}
        for name in ("c_ext", "c_abs", "c_sca"):
            values = np.array([arr(sols, f"{name}_nm2") for _, _, sols in per_spacing])  # (S, W)
            est = [estimate_zero_spacing(used, values[:, i]) for i in range(wl.size)]
            refined[f"{name}_limit_nm2"] = np.array([e.value for e in est])
            refined[f"{name}_limit_error_nm2"] = np.array([e.error for e in est])
            refined[f"{name}_limit_method"] = np.array([e.method for e in est])
        conv_all = np.all([arr(sols, "converged", bool) for _, _, sols in per_spacing], axis=0)
    by_part = {
        name: np.array([float(np.sum(s.c_abs_site_nm2[sites0.part == i])) for s in sols0])
        for i, name in enumerate(sites0.part_names)
    }
    return SimulationResult(
        family=fam.name,
        params=clean,
        materials={r: m.describe() for r, m in mats.items()},
        medium_index=n_host,
        spacing_nm=float(sites0.spacing_nm),
        n_dipoles=int(sites0.n_sites),
        polarizability=settings.polarizability,
        method=settings.method,
        wavelength_nm=wl,
        c_ext_nm2=arr(sols0, "c_ext_nm2"),
        c_abs_nm2=arr(sols0, "c_abs_nm2"),
        c_sca_nm2=arr(sols0, "c_sca_nm2"),
        converged=conv_all if refine else arr(sols0, "converged", bool),
        n_iter=arr(sols0, "n_iter", int),
        residual=arr(sols0, "residual"),
        refined=refined,
        solutions=tuple(sols0),
        lattice=lattice0,
        settings=settings,
        incidence=incidence,
        part_names=tuple(sites0.part_names),
        c_abs_by_part_nm2=by_part,
        sites=sites0,
    )


def check_settings(settings):
    # simulate's memory default is half the machine (a bare solve's is 80 %).
    if settings is None:
        settings = SolverSettings()
    elif not isinstance(settings, SolverSettings):
        raise InvalidTypeError(f"settings must be a surrogate.solver.SolverSettings; got {type(settings).__name__}")
    if settings.memory_limit_bytes is None:
        settings = settings.replace(memory_limit_bytes=default_memory_limit_bytes())
    return settings
