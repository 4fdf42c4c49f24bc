"""Krylov solvers for the (symmetrically scaled) coupled-dipole system.

The scaled system ``A_s y = b_s`` is complex symmetric (``A_s^T = A_s``).  Every
solver here stops on the residual of the *original* system, recovered from the
scaled residual by an elementwise weight ``w`` (``r_orig = w * r_scaled``), and
the driver confirms it with a true residual ``||b - A x|| / ||b||`` from one
extra product, restarting when rounding made the recurrence too optimistic.
Breakdown and the iteration cap end a solve with ``converged=False``; they
never raise.

References
----------
.. [1] H. A. van der Vorst and J. B. M. Melissen, "A Petrov-Galerkin type
   method for solving Ax = b, where A is symmetric complex", IEEE Trans. Magn.
   26, 706 (1990): COCG.
.. [2] H. A. van der Vorst, "Bi-CGSTAB: a fast and smoothly converging variant
   of Bi-CG for the solution of nonsymmetric linear systems", SIAM J. Sci.
   Stat. Comput. 13, 631 (1992).
.. [3] Y. Saad and M. H. Schultz, "GMRES: a generalized minimal residual
   algorithm", SIAM J. Sci. Stat. Comput. 7, 856 (1986), via
   scipy.sparse.linalg.gmres.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import scipy.sparse.linalg as spla

from ..errors import InvalidParameterError

__all__ = ["KrylovResult", "METHODS", "krylov_solve"]

#: Iterative methods accepted by :func:`krylov_solve`.
METHODS = ("cocg", "bicgstab", "gmres")


@dataclass(frozen=True)
class KrylovResult:
    """Outcome of an iterative solve (internal)."""

    x: np.ndarray
    converged: bool
    n_iter: int
    matvecs: int
    residual: float
    stop_reason: str


class _Counted:
    def __init__(self, matvec):
        self._matvec = matvec
        self.count = 0

    def __call__(self, v):
        self.count += 1
        return self._matvec(v)


def _wnorm(w, v):
    return float(np.linalg.norm(w * v))


def _cocg(matvec, b, x, r, w, b_norm, tol, max_iter, precond=None):
    # COCG [1]: CG with the unconjugated bilinear form (u, v) = u^T v.
    #
    # Preconditioned form.  Let M = M^T ~ A^-1 and write M = L L^T (a complex
    # symmetric matrix has such a factor, e.g. L = M^(1/2); it is never formed).
    # COCG on the complex-symmetric split system L^T A L u = L^T b, x = L u, has
    # residual r~ = L^T r and direction p~ with p = L p~.  Substituting,
    #   mu    = p~^T (L^T A L) p~ = p^T A p,             alpha = rho / mu,
    #   x    += alpha p,          r -= alpha A p,
    #   z     = M r,              rho' = r~^T r~ = r^T L L^T r = r^T z,
    #   beta  = rho' / rho,       p = z + beta p         (L p~' = L L^T r + beta p),
    # so only products with M appear and the residual r is the unpreconditioned
    # one, on which the stopping test stays.  M = I gives plain COCG.
    z = r if precond is None else precond(r)
    p = z.copy()
    rho = np.dot(r, z)
    it = 0
    while it < max_iter:
        if rho == 0 or not np.isfinite(rho):
            return x, it, "breakdown"
        q = matvec(p)
        mu = np.dot(p, q)  # p^T A p
        it += 1
        if mu == 0 or not np.isfinite(mu):
            return x, it, "breakdown"
        alpha = rho / mu
        x += alpha * p
        r -= alpha * q
        if _wnorm(w, r) <= tol * b_norm:
            return x, it, "tol"
        z = r if precond is None else precond(r)
        rho_new = np.dot(r, z)
        beta = rho_new / rho
        rho = rho_new
        p *= beta
        p += z
    return x, it, "max_iter"


def _bicgstab(matvec, b, x, r, w, b_norm, tol, max_iter):
    # BiCGStab [2], Algorithm 1 with shadow residual r_hat = r_0.
    r_hat = r.copy()
    rho = alpha = omega = 1.0 + 0j
    v = np.zeros_like(r)
    p = np.zeros_like(r)
    it = 0
    while it < max_iter:
        rho_new = np.vdot(r_hat, r)
        if rho_new == 0 or omega == 0 or not np.isfinite(rho_new):
            return x, it, "breakdown"
        beta = (rho_new / rho) * (alpha / omega)
        rho = rho_new
        p -= omega * v
        p *= beta
        p += r
        v = matvec(p)
        den = np.vdot(r_hat, v)
        it += 1
        if den == 0 or not np.isfinite(den):
            return x, it, "breakdown"
        alpha = rho / den
        s = r - alpha * v
        if _wnorm(w, s) <= tol * b_norm:
            x += alpha * p
            return x, it, "tol"
        t = matvec(s)
        tt = np.vdot(t, t)
        if tt == 0 or not np.isfinite(tt):
            return x, it, "breakdown"
        omega = np.vdot(t, s) / tt
        x += alpha * p
        x += omega * s
        r = s - omega * t
        if _wnorm(w, r) <= tol * b_norm:
            return x, it, "tol"
    return x, it, "max_iter"


def _gmres(matvec, b, x, r, w, b_norm, tol, max_iter, restart):
    # Restarted GMRES [3] through scipy.  scipy stops on ||r|| <= rtol ||b|| of
    # this system; since ||w r|| <= max|w| ||r||, rtol = tol ||w b|| / (max|w| ||b||)
    # guarantees the weighted criterion.
    n = b.size
    op = spla.LinearOperator((n, n), matvec=matvec, dtype=b.dtype)
    rtol = tol * b_norm / (float(np.max(np.abs(w))) * float(np.linalg.norm(b)))
    count = [0]

    def cb(_):
        count[0] += 1

    restart = min(restart, max_iter)
    cycles = max(1, -(-max_iter // restart))
    y, info = spla.gmres(
        op, b, x0=x, rtol=rtol, atol=0.0, restart=restart, maxiter=cycles, callback=cb, callback_type="pr_norm"
    )
    reason = "tol" if info == 0 else ("max_iter" if info > 0 else "breakdown")
    return np.asarray(y, dtype=b.dtype), count[0], reason


def krylov_solve(
    matvec, b, *, method="cocg", x0=None, r0=None, weight=None, tol=1e-5, max_iter=5000, restart=100, max_restarts=3,
    preconditioner=None,
):
    """Solve ``A y = b`` for a complex-symmetric ``A`` given as a product.

    Parameters
    ----------
    matvec : callable
        ``v -> A v`` on 1-D complex arrays.
    b : ndarray of complex, shape (n,)
        Right-hand side.
    method : {"cocg", "bicgstab", "gmres"}
        COCG [1], BiCGStab [2] or restarted GMRES [3].
    x0 : ndarray or None
        Initial guess (default zero).
    r0 : ndarray or None
        Its residual ``b - A x0`` if already known (saves one product).
    weight : ndarray or None
        Elementwise map from this system's residual to the residual whose
        relative norm must fall below ``tol`` (default ones).
    tol : float
        Relative tolerance on ``||w (b - A y)|| / ||w b||``.
    max_iter : int
        Iteration cap (COCG and GMRES: one product per iteration; BiCGStab: two).
    restart : int
        GMRES restart length.
    max_restarts : int
        Restarts allowed when the true residual misses ``tol`` after the
        recurrence reached it.
    preconditioner : callable or None
        ``v -> M v`` with ``M = M^T ~ A^-1`` (complex symmetric, so COCG keeps
        its short recurrence); COCG only.  The stopping test and the true
        residual stay on the unpreconditioned system.

    Returns
    -------
    KrylovResult
        ``residual`` is the true weighted relative residual.
    """
    if preconditioner is not None and method != "cocg":
        raise InvalidParameterError(f"method must be 'cocg' when a preconditioner is given; got {method!r}")
    counted = _Counted(matvec)
    w = np.ones(b.shape, dtype=float) if weight is None else weight
    b_norm = _wnorm(w, b)
    x = np.zeros_like(b) if x0 is None else np.array(x0, dtype=b.dtype)
    if b_norm == 0:
        return KrylovResult(np.zeros_like(b), True, 0, 0, 0.0, "zero_rhs")
    if x0 is None:
        r = b.copy()
    else:
        r = np.array(r0, dtype=b.dtype) if r0 is not None else b - counted(x)
    n_iter = 0
    reason = "max_iter"
    res = _wnorm(w, r) / b_norm
    for _attempt in range(max_restarts + 1):
        if res <= tol:
            reason = "tol"
            break
        budget = max_iter - n_iter
        if budget <= 0:
            reason = "max_iter"
            break
        if method == "cocg":
            x, it, reason = _cocg(counted, b, x, r, w, b_norm, tol, budget, preconditioner)
        elif method == "bicgstab":
            x, it, reason = _bicgstab(counted, b, x, r, w, b_norm, tol, budget)
        else:
            x, it, reason = _gmres(counted, b, x, r, w, b_norm, tol, budget, restart)
        n_iter += it
        # True residual (one product): the recurrence drifts from it in finite precision.
        r = b - counted(x)
        res_new = _wnorm(w, r) / b_norm
        if reason != "tol" or res_new >= 0.999 * res:
            res = res_new
            break
        res = res_new
    converged = bool(res <= tol and np.all(np.isfinite(x)))
    if converged:
        reason = "tol"
    elif reason == "tol":
        reason = "stagnation"
    return KrylovResult(x, converged, n_iter, counted.count, float(res), reason)
