"""Solve the coupled-dipole equations on a lattice: one wavelength or a sweep.

The coupled-dipole equations (Purcell & Pennypacker, ApJ 186, 705 (1973);
Draine, ApJ 333, 848 (1988)) for dipoles ``P_j`` at sites ``r_j`` are

    alpha_j^-1 P_j - sum_{k != j} G(r_j - r_k) P_k = E_inc(r_j),

i.e. ``A P = E_inc`` with ``A = diag(alpha^-1) - G``, complex symmetric.  With
``D = diag(sqrt(alpha))`` the scaled system ``(I - D G D) y = D E_inc``,
``P = D y``, stays complex symmetric and has unit diagonal; COCG solves it.
The host medium enters through ``eps / n_host^2`` and ``k = 2 pi n_host / lambda``.
"""

from __future__ import annotations

import time
import warnings
from dataclasses import dataclass

import numpy as np
from threadpoolctl import threadpool_limits

from .._validation import check_real
from ..errors import InvalidParameterError, InvalidTypeError, LatticeTooLargeError, NotConvergedWarning
from ._green import dense_interaction_matrix
from ._interaction import FFTInteraction
from ._krylov import krylov_solve
from ._lattice import Lattice
from ._memory import default_memory_limit_bytes, memory_estimate_bytes
from ._observables import cross_sections, incident_field
from ._polarizability import polarizability
from ._precondition import SHIFTS, CirculantPreconditioner, circulant_pays
from ._settings import SOLVE_METHODS, SolverSettings

__all__ = ["DipoleSolution", "solve", "solve_sweep", "solve_polarizations", "SOLVE_METHODS"]

_DTYPES = {np.dtype(np.complex128): "complex128", np.dtype(np.complex64): "complex64"}


@dataclass(frozen=True, eq=False)
class DipoleSolution:
    """Result of one coupled-dipole solve.

    Attributes
    ----------
    wavelength_nm : float
        Vacuum wavelength [nm].
    polarization : ndarray of complex, shape (N, 3)
        Dipole moments [nm^3 x E0] for an incident amplitude ``E0 = 1``.
    c_ext_nm2, c_abs_nm2, c_sca_nm2 : float
        Extinction, absorption and scattering (``c_ext - c_abs``) cross
        sections in the host [nm^2].
    converged : bool
        Whether the true relative residual is at most ``tol``.
    n_iter : int
        Krylov iterations (0 for the direct solve).
    residual : float
        True relative residual ``||E_inc - A P|| / ||E_inc||`` [-].
    method, polarizability : str
        Solver and polarizability prescription used.
    matvecs : int
        Interaction products applied (including the true-residual checks).
    elapsed_s : float
        Wall time of the solve [s], tensor set-up included.
    stop_reason : str
        ``"tol"``, ``"max_iter"``, ``"breakdown"``, ``"stagnation"`` or ``"direct"``.
    n_host : float
        Host refractive index [-].
    k_direction : ndarray of float, shape (3,)
        Unit propagation direction.
    e_direction : ndarray of complex, shape (3,)
        Unit polarization vector.
    eps : ndarray of complex, shape (M,)
        Permittivities per material as given (relative to vacuum) [-].
    alpha_nm3 : ndarray of complex, shape (M,)
        Cell polarizability per material [nm^3].
    spacing_nm : float
        Lattice spacing [nm].
    tol : float
        Requested tolerance [-].
    dtype : str
        ``"complex128"`` or ``"complex64"``.
    equivalent_radius_nm : float
        Radius of the sphere with the lattice's volume [nm]; the efficiencies
        divide by ``pi a_eq^2``.
    preconditioner : str
        Preconditioner used: ``"none"`` or ``"circulant"`` (what ``"auto"``
        resolved to).
    c_abs_site_nm2 : ndarray of float, shape (N,)
        Absorption cross section of each site [nm^2] (absorbed power per unit
        incident irradiance, by site); sums to ``c_abs_nm2``.
    settings : SolverSettings
        The settings of the solve.
    """

    wavelength_nm: float
    polarization: np.ndarray
    c_ext_nm2: float
    c_abs_nm2: float
    c_sca_nm2: float
    converged: bool
    n_iter: int
    residual: float
    method: str
    polarizability: str
    matvecs: int
    elapsed_s: float
    stop_reason: str
    n_host: float
    k_direction: np.ndarray
    e_direction: np.ndarray
    eps: np.ndarray
    alpha_nm3: np.ndarray
    spacing_nm: float
    tol: float
    dtype: str
    equivalent_radius_nm: float
    c_abs_site_nm2: np.ndarray = None
    settings: SolverSettings = None
    preconditioner: str = "none"

    @property
    def k_per_nm(self) -> float:
        """Host wavenumber ``2 pi n_host / lambda`` [1/nm]."""
        return 2.0 * np.pi * self.n_host / self.wavelength_nm

    @property
    def q_ext(self) -> float:
        """Extinction efficiency ``c_ext / (pi a_eq^2)`` [-]."""
        return self.c_ext_nm2 / (np.pi * self.equivalent_radius_nm**2)

    @property
    def q_abs(self) -> float:
        """Absorption efficiency ``c_abs / (pi a_eq^2)`` [-]."""
        return self.c_abs_nm2 / (np.pi * self.equivalent_radius_nm**2)

    @property
    def q_sca(self) -> float:
        """Scattering efficiency ``c_sca / (pi a_eq^2)`` [-]."""
        return self.c_sca_nm2 / (np.pi * self.equivalent_radius_nm**2)


# -- validation ---------------------------------------------------------------
def _unit_vector(name, value, *, allow_complex):
    try:
        v = np.asarray(value, dtype=complex if allow_complex else float).reshape(-1)
    except (TypeError, ValueError):
        raise InvalidTypeError(f"{name} must be 3 numbers; got {value!r}") from None
    if v.shape != (3,) or not np.all(np.isfinite(v)):
        raise InvalidParameterError(f"{name} must be 3 finite numbers; got {value!r}")
    norm = float(np.sqrt(np.sum(np.abs(v) ** 2)))
    if norm == 0:
        raise InvalidParameterError(f"{name} must be a non-zero vector; got {value!r}")
    return v / norm


def _check_eps(eps, n_materials, name="eps"):
    try:
        e = np.asarray(eps, dtype=complex).reshape(-1)
    except (TypeError, ValueError):
        raise InvalidTypeError(f"{name} must be an array of complex permittivities; got {eps!r}") from None
    if e.size < n_materials:
        raise InvalidParameterError(f"{name} must be an array of at least {n_materials} permittivities (one per material); got {e.size}")
    if not np.all(np.isfinite(e)):
        raise InvalidParameterError(f"{name} must be finite; got {e[~np.isfinite(e)][0]!r}")
    if np.any(e.imag < 0):
        raise InvalidParameterError(f"{name} must have imaginary part >= 0 (exp(-i omega t) convention); got {e[e.imag < 0][0]!r}")
    return e


def _settings_from(settings, overrides):
    # One SolverSettings per call: the given one (default SolverSettings()) with any
    # keyword overrides applied and validated (library convenience, e.g. polarizability="ldr").
    if settings is None:
        settings = SolverSettings()
    elif not isinstance(settings, SolverSettings):
        raise InvalidTypeError(f"settings must be a surrogate.solver.SolverSettings; got {type(settings).__name__}")
    return settings.replace(**overrides)


def _resolve_preconditioner(lattice, settings):
    # "auto": the circulant where the measured rule says it saves time (circulant_pays).
    if settings.preconditioner == "auto":
        on = settings.method == "cocg" and circulant_pays(lattice.grid_shape, lattice.n_dipoles, settings.polarizability)
        return "circulant" if on else "none"
    return settings.preconditioner


def _check_common(lattice, n_host, e_direction, k_direction, settings):
    if not isinstance(lattice, Lattice):
        raise InvalidTypeError(f"lattice must be a surrogate.solver.Lattice; got {type(lattice).__name__}")
    n_host = check_real("n_host", n_host, low=0.0, low_open=True)
    kdir = _unit_vector("k_direction", k_direction, allow_complex=False)
    edir = _unit_vector("e_direction", e_direction, allow_complex=True)
    if abs(np.dot(kdir, edir)) > 1e-9:
        raise InvalidParameterError(f"e_direction must be perpendicular to k_direction; got e.k = {abs(np.dot(kdir, edir)):.3g}")
    limit = default_memory_limit_bytes() if settings.memory_limit_bytes is None else settings.memory_limit_bytes
    pc = _resolve_preconditioner(lattice, settings)
    est = memory_estimate_bytes(lattice, settings.numpy_dtype, method=settings.method, preconditioner=pc)
    if est > limit:
        raise LatticeTooLargeError(
            f"lattice of {lattice.n_dipoles} dipoles needs about {est / 2**30:.2f} GiB, over the limit of "
            f"{limit / 2**30:.2f} GiB; use a larger spacing_nm or raise memory_limit_bytes"
        )
    return n_host, kdir, edir, pc


def _check_wavelength(lattice, wavelength_nm, n_host, kind):
    wl = check_real("wavelength_nm", wavelength_nm, low=0.0, low_open=True, unit="nm")
    kd = 2.0 * np.pi * n_host / wl * lattice.spacing_nm
    if kind == "fcd" and kd >= np.pi:
        raise InvalidParameterError(
            f"spacing_nm must be below half the wavelength in the host for FCD (k d < pi); got k d = {kd:.3g}"
        )
    return wl


# -- the solve ----------------------------------------------------------------
class _System:
    """Scaled system of one lattice at one wavelength (shared by polarizations)."""

    def __init__(self, lattice, eps, wavelength_nm, n_host, settings, s_factor, preconditioner="none"):
        self.lattice = lattice
        self.settings = settings
        self.preconditioner = preconditioner
        self.pc = None
        self.kind = kind = settings.polarizability
        self.k = 2.0 * np.pi * n_host / wavelength_nm
        self.dtype = dtype = settings.numpy_dtype
        self.method = method = settings.method
        filt = lattice.spacing_nm if kind == "fcd" else None
        if method == "direct":
            self.neg_g = -dense_interaction_matrix(lattice.positions_nm, self.k, filtered_spacing_nm=filt)
            self.op = None
        else:
            self.op = FFTInteraction(lattice.indices, lattice.spacing_nm, self.k, filtered=filt is not None, dtype=dtype)
        self.set_diagonal(eps, n_host, s_factor)

    def set_diagonal(self, eps, n_host, s_factor):
        """(Re)compute the polarizabilities and the symmetric scaling."""
        eps_rel = eps / n_host**2  # relative to the host
        alpha = polarizability(eps_rel, self.lattice.spacing_nm, self.k, kind=self.kind, s_factor=s_factor)
        bad = ~np.isfinite(alpha) | (alpha == 0)
        if np.any(bad):
            raise InvalidParameterError(
                "eps must give a finite, non-zero polarizability (eps != n_host^2 and eps != -2 n_host^2); "
                f"got {eps[bad][0]!r}"
            )
        self.alpha_mat = alpha
        self.alpha_site = alpha[self.lattice.material_index]
        sqrt_alpha = np.repeat(np.sqrt(self.alpha_site), 3)
        self.s3 = sqrt_alpha.astype(self.dtype)  # D = diag(sqrt(alpha)), per component
        # The original residual r = E_inc - A P and the scaled one r_s satisfy r = r_s / D.
        self.w3 = 1.0 / np.abs(sqrt_alpha)
        if self.preconditioner == "circulant":
            self.pc = CirculantPreconditioner(
                self.lattice.indices, self.lattice.spacing_nm, self.k, self.alpha_site,
                filtered=self.kind == "fcd", shift=SHIFTS[self.kind], dtype=self.dtype,
            )

    def matvec_scaled(self, y):
        # (I - D G D) y, see module docstring.
        sy = (self.s3 * y).reshape(-1, 3)
        return y - self.s3 * self.op.apply(sy).reshape(-1)

    def solve_one(self, e_inc, *, x0, restart=100):
        tol, max_iter = self.settings.tol, self.settings.max_iter
        n3 = 3 * self.lattice.n_dipoles
        b = e_inc.reshape(-1)
        if self.method == "direct":
            a = self.neg_g.copy()
            a[np.diag_indices_from(a)] += np.repeat(1.0 / self.alpha_site, 3)  # A = diag(1/alpha) - G
            x = np.linalg.solve(a, b)
            res = float(np.linalg.norm(b - a @ x) / np.linalg.norm(b))
            return x.reshape(-1, 3), res <= tol, 0, 0, res, "direct"
        bs = (self.s3 * b.astype(self.dtype)).astype(self.dtype)
        y0 = r0 = None
        extra = 0
        if x0 is not None:
            y0 = (np.asarray(x0, dtype=complex).reshape(-1) / self.s3).astype(self.dtype)
            q = self.matvec_scaled(y0)
            extra = 1
            # Best multiple of the guess: c = argmin ||w (b_s - c A_s y0)|| (a scalar
            # least-squares fit, so the start is never worse than y0 or zero).
            wq, wb = self.w3 * q, self.w3 * bs
            qq = np.vdot(wq, wq)
            c = np.vdot(wq, wb) / qq if qq != 0 else 0.0
            y0 = (c * y0).astype(self.dtype)
            r0 = (bs - c * q).astype(self.dtype)
        with threadpool_limits(limits=1, user_api="blas"):
            # One BLAS thread: OpenBLAS workers otherwise contend with the FFT threads.
            kr = krylov_solve(
                self.matvec_scaled, bs, method=self.method, x0=y0, r0=r0, weight=self.w3,
                tol=tol, max_iter=max_iter, restart=restart, preconditioner=self.pc,
            )
        p = (self.s3 * kr.x).astype(np.complex128).reshape(n3 // 3, 3)
        return p, kr.converged, kr.n_iter, kr.matvecs + extra, kr.residual, kr.stop_reason


def _s_factor(kdir, edir):
    # LDR's S = sum_j (a_j e_j)^2 (Draine & Goodman 1993), |e_j|^2 for complex e.
    return float(np.sum(kdir**2 * np.abs(edir) ** 2))


def _finish(system, p, e_inc, wl, conv, n_iter, matvecs, res, reason, t0, *, n_host, kdir, edir, eps):
    st = system.settings
    kind, method, tol, dt = st.polarizability, st.method, st.tol, st.numpy_dtype
    c_ext, c_abs, c_abs_site = cross_sections(p, e_inc, system.alpha_site, system.k)
    c_abs_site.setflags(write=False)
    lat = system.lattice
    p.setflags(write=False)
    return DipoleSolution(
        wavelength_nm=wl, polarization=p, c_ext_nm2=c_ext, c_abs_nm2=c_abs, c_sca_nm2=c_ext - c_abs,
        converged=bool(conv), n_iter=int(n_iter), residual=float(res), method=method, polarizability=kind,
        matvecs=int(matvecs), elapsed_s=time.perf_counter() - t0, stop_reason=reason, n_host=n_host,
        k_direction=kdir, e_direction=edir, eps=eps, alpha_nm3=system.alpha_mat, spacing_nm=lat.spacing_nm,
        tol=tol, dtype=_DTYPES[np.dtype(dt)], equivalent_radius_nm=lat.equivalent_radius_nm,
        c_abs_site_nm2=c_abs_site, settings=st, preconditioner=system.preconditioner,
    )


def solve(
    lattice,
    eps,
    wavelength_nm,
    *,
    n_host=1.0,
    e_direction=(1.0, 0.0, 0.0),
    k_direction=(0.0, 0.0, -1.0),
    settings=None,
    x0=None,
    **overrides,
):
    """Solve the coupled-dipole equations for one plane wave.

    Parameters
    ----------
    lattice : Lattice
        Dipole sites, spacing and material of each site.
    eps : array_like of complex, shape (M,)
        Relative permittivity (to vacuum) of each material index, ``Im >= 0``
        (``exp(-i omega t)``).
    wavelength_nm : float
        Vacuum wavelength [nm].
    n_host : float, default 1.0
        Real refractive index of the host [-].
    e_direction : array_like, shape (3,), default (1, 0, 0)
        Polarization of the incident field (normalized; may be complex).
    k_direction : array_like, shape (3,), default (0, 0, -1)
        Propagation direction (normalized), perpendicular to ``e_direction``.
    settings : SolverSettings, optional
        Polarizability, method, tolerance, iteration cap, precision, memory
        limit; default ``SolverSettings()`` (FCD, COCG, 1e-5, complex128).
    x0 : array_like of complex, shape (N, 3), optional
        Initial dipoles (e.g. the previous wavelength of a sweep); the solver
        starts from its best scalar multiple.
    **overrides
        Individual :class:`SolverSettings` fields (``polarizability="ldr"``,
        ``tol=1e-6``, ...) applied on top of ``settings``.

    Returns
    -------
    DipoleSolution

    Warns
    -----
    NotConvergedWarning
        When the tolerance is not reached; the result still comes back, with
        ``converged=False``.

    Raises
    ------
    LatticeTooLargeError
        Before allocating, when the estimate exceeds the limit.
    InvalidParameterError, InvalidTypeError
        For bad input.
    """
    t0 = time.perf_counter()
    st = _settings_from(settings, overrides)
    n_host, kdir, edir, pc = _check_common(lattice, n_host, e_direction, k_direction, st)
    wl = _check_wavelength(lattice, wavelength_nm, n_host, st.polarizability)
    e = _check_eps(eps, lattice.n_materials)
    x0 = _check_x0(x0, lattice)
    system = _System(lattice, e, wl, n_host, st, _s_factor(kdir, edir), pc)
    e_inc = incident_field(lattice.positions_nm, system.k, kdir, edir)
    p, conv, n_iter, mv, res, reason = system.solve_one(e_inc, x0=x0)
    if not conv:
        warnings.warn(
            f"solve at {wl:g} nm stopped ({reason}) after {n_iter} iterations with residual {res:.3g} > tol {st.tol:g}; "
            "the result is returned with converged=False",
            NotConvergedWarning,
            stacklevel=2,
        )
    return _finish(system, p, e_inc, wl, conv, n_iter, mv, res, reason, t0, n_host=n_host, kdir=kdir, edir=edir, eps=e)


def _check_x0(x0, lattice):
    if x0 is None:
        return None
    try:
        x = np.asarray(x0, dtype=complex)
    except (TypeError, ValueError):
        raise InvalidTypeError(f"x0 must be a complex array of shape ({lattice.n_dipoles}, 3); got {type(x0).__name__}") from None
    if x.shape != (lattice.n_dipoles, 3) or not np.all(np.isfinite(x)):
        raise InvalidParameterError(f"x0 must be a finite array of shape ({lattice.n_dipoles}, 3); got shape {x.shape}")
    return x


def solve_polarizations(
    lattice,
    eps,
    wavelength_nm,
    *,
    e_directions=((1.0, 0.0, 0.0), (0.0, 1.0, 0.0)),
    k_direction=(0.0, 0.0, -1.0),
    n_host=1.0,
    settings=None,
    **overrides,
):
    """Solve several incident polarizations sharing one interaction set-up.

    Parameters are those of :func:`solve`; ``e_directions`` has shape (P, 3),
    each perpendicular to ``k_direction``.  The tensor transform is built once.
    (With ``polarizability="ldr"`` the polarizability depends on the
    polarization through ``S``, so the diagonal is rebuilt per polarization.)

    Returns
    -------
    list of DipoleSolution
        One per polarization, in order.
    """
    t0 = time.perf_counter()
    st = _settings_from(settings, overrides)
    e_dirs = np.atleast_2d(np.asarray(e_directions))
    if e_dirs.ndim != 2 or e_dirs.shape[1] != 3 or e_dirs.shape[0] == 0:
        raise InvalidParameterError(f"e_directions must have shape (P, 3); got shape {e_dirs.shape}")
    checked = [_check_common(lattice, n_host, ed, k_direction, st) for ed in e_dirs]
    n_host, kdir, _, pc = checked[0]
    wl = _check_wavelength(lattice, wavelength_nm, n_host, st.polarizability)
    e = _check_eps(eps, lattice.n_materials)
    out = []
    system = None
    for _n, _k, edir, _pc in checked:
        s = _s_factor(kdir, edir)
        if system is None:
            system = _System(lattice, e, wl, n_host, st, s, pc)
        elif st.polarizability == "ldr":
            system.set_diagonal(e, n_host, s)
        e_inc = incident_field(lattice.positions_nm, system.k, kdir, edir)
        t1 = time.perf_counter() if out else t0
        p, conv, n_iter, mv, res, reason = system.solve_one(e_inc, x0=None)
        out.append(_finish(system, p, e_inc, wl, conv, n_iter, mv, res, reason, t1, n_host=n_host, kdir=kdir, edir=edir, eps=e))
    return out


def solve_sweep(
    lattice,
    eps_per_wavelength,
    wavelengths_nm,
    *,
    n_host=1.0,
    e_direction=(1.0, 0.0, 0.0),
    k_direction=(0.0, 0.0, -1.0),
    settings=None,
    progress=None,
    **overrides,
):
    """Solve a wavelength sweep, warm-starting each from the previous solution.

    Parameters
    ----------
    lattice : Lattice
    eps_per_wavelength : array_like of complex, shape (W, M)
        Permittivity of each material at each wavelength [-].
    wavelengths_nm : array_like of float, shape (W,)
        Vacuum wavelengths [nm]; neighbours should be close for the warm start
        to help (sorted order is best).
    settings : SolverSettings, optional
        As in :func:`solve`; ``settings.warm_start`` starts each solve from the
        best multiple of the previous dipoles.
    progress : callable or None
        Called as ``progress(i, W)`` after wavelength ``i`` (0-based) finishes.
    **others
        As in :func:`solve`.

    Returns
    -------
    list of DipoleSolution
        One per wavelength, in input order.
    """
    st = _settings_from(settings, overrides)
    wls = np.asarray(wavelengths_nm, dtype=float).reshape(-1) if np.ndim(wavelengths_nm) else np.asarray([wavelengths_nm], float)
    if wls.size == 0:
        raise InvalidParameterError("wavelengths_nm must hold at least one value; got an empty array")
    try:
        eps_all = np.asarray(eps_per_wavelength, dtype=complex)
    except (TypeError, ValueError):
        raise InvalidTypeError(f"eps_per_wavelength must be a complex array of shape (W, M); got {type(eps_per_wavelength).__name__}") from None
    if not isinstance(lattice, Lattice):
        raise InvalidTypeError(f"lattice must be a surrogate.solver.Lattice; got {type(lattice).__name__}")
    if eps_all.ndim == 1 and lattice.n_materials == 1:
        eps_all = eps_all[:, None]
    if eps_all.ndim != 2 or eps_all.shape[0] != wls.size:
        raise InvalidParameterError(f"eps_per_wavelength must have shape ({wls.size}, M); got shape {eps_all.shape}")
    if progress is not None and not callable(progress):
        raise InvalidTypeError(f"progress must be callable or None; got {type(progress).__name__}")
    out = []
    prev = None
    warm = st.warm_start and st.method != "direct"
    for i, (wl, eps) in enumerate(zip(wls, eps_all)):
        sol = solve(
            lattice, eps, float(wl), n_host=n_host, e_direction=e_direction, k_direction=k_direction,
            settings=st, x0=prev if warm else None,
        )
        out.append(sol)
        prev = sol.polarization if np.all(np.isfinite(sol.polarization)) else None
        if progress is not None:
            progress(i, wls.size)
    return out
