"""Figures of merit of one design, from its wavelength sweep and its hotspot field map.

Pure functions of arrays; :func:`figures_of_merit` assembles one row.

Definitions (units in the names)
--------------------------------
resonance_nm
    Wavelength of the maximum of the hotspot-enhancement spectrum, refined
    below the sweep step by the vertex of the parabola through 1/enhancement at
    the largest sample and its two neighbours (exact for a Lorentzian line:
    1/L(x) = ((x - x0)^2 + g^2) / A is a parabola).  ``resonance_resolved`` is
    False when the largest sample is the first or last of the sweep (the peak
    may lie outside it); the edge wavelength is then reported.
far_field_resonance_nm
    The same refinement applied to c_ext.
enhancement_at_laser
    |E|^2 / |E0|^2 at the hotspot at the laser wavelength [-].
peak_enhancement
    The refined maximum of the enhancement spectrum [-] (vertex value).
linewidth_nm, quality_factor
    Full width at half maximum of the enhancement resonance [nm], the half-maximum
    crossings found by linear interpolation between samples on each side of the
    peak (NaN when the spectrum does not fall to half on both sides inside the
    sweep); quality_factor = resonance_nm / linewidth_nm [-].
c_abs_at_laser_nm2
    Absorption cross section at the laser wavelength [nm^2].
heat_per_enhancement_nm2
    c_abs_at_laser_nm2 / enhancement_at_laser [nm^2]: power absorbed by the
    antenna per unit of hotspot intensity delivered (lower is better).
spot_fwhm_y_nm, spot_fwhm_z_nm, spot_area_nm2
    In the observation plane through the hotspot (perpendicular to x): the full
    widths at half maximum of |E|^2 along y and along z through the brightest
    point of the map, and the area of the half-maximum ellipse,
    pi / 4 * spot_fwhm_y_nm * spot_fwhm_z_nm [nm^2].
"""

from __future__ import annotations

import math

import numpy as np

from .errors import InvalidParameterError

__all__ = [
    "refine_peak",
    "half_max_width",
    "spot_widths",
    "figures_of_merit",
    "MERIT_COLUMNS",
]

#: Columns of one figures-of-merit row, in order.
MERIT_COLUMNS = (
    "resonance_nm",
    "resonance_resolved",
    "far_field_resonance_nm",
    "far_field_resonance_resolved",
    "enhancement_at_laser",
    "peak_enhancement",
    "linewidth_nm",
    "quality_factor",
    "c_abs_at_laser_nm2",
    "c_ext_at_laser_nm2",
    "heat_per_enhancement_nm2",
    "spot_fwhm_y_nm",
    "spot_fwhm_z_nm",
    "spot_area_nm2",
    "converged",
    "worst_residual",
    "total_iterations",
)


def refine_peak(x, y):
    """Peak position and height of a sampled, positive spectrum.

    Parameters
    ----------
    x : ndarray, shape (W,)
        Increasing abscissae (wavelengths [nm]).
    y : ndarray, shape (W,)
        Positive values.

    Returns
    -------
    x_peak, y_peak : float
        Vertex of the parabola through 1/y at the largest sample and its
        neighbours (clipped to that 3-point interval); the largest sample itself
        when it sits at an edge.
    resolved : bool
        False when the largest sample is the first or the last.

    Examples
    --------
    >>> x = np.arange(700.0, 1000.0, 20.0)
    >>> y = 1.0 / ((x - 853.0) ** 2 + 40.0**2)
    >>> round(refine_peak(x, y)[0], 6)
    853.0
    """
    x = np.asarray(x, dtype=float)
    y = np.asarray(y, dtype=float)
    i = int(np.argmax(y))
    if i == 0 or i == x.size - 1:
        return float(x[i]), float(y[i]), False
    xs, inv = x[i - 1 : i + 2], 1.0 / y[i - 1 : i + 2]
    a, b, c = np.polyfit(xs, inv, 2)  # 1/y = a x^2 + b x + c, exact through 3 points
    if a <= 0:
        return float(x[i]), float(y[i]), True
    xv = float(np.clip(-b / (2 * a), xs[0], xs[-1]))
    yv = 1.0 / float(np.polyval([a, b, c], xv))
    return xv, max(yv, float(y[i])), True


def half_max_width(x, y, x_peak, y_peak):
    """Full width at half maximum around a peak [units of x]; NaN if not bracketed."""
    x = np.asarray(x, dtype=float)
    y = np.asarray(y, dtype=float)
    half = 0.5 * y_peak
    i = int(np.argmax(y))
    left = right = math.nan
    for j in range(i, 0, -1):  # walk left to the first sample below half
        if y[j - 1] < half <= y[j]:
            left = x[j - 1] + (half - y[j - 1]) * (x[j] - x[j - 1]) / (y[j] - y[j - 1])
            break
    for j in range(i, x.size - 1):
        if y[j + 1] < half <= y[j]:
            right = x[j] + (y[j] - half) * (x[j + 1] - x[j]) / (y[j] - y[j + 1])
            break
    return right - left


def _width_through(coords, profile):
    """FWHM of a 1-D profile around its maximum, by linear interpolation; NaN if not bracketed."""
    peak = float(np.max(profile))
    return half_max_width(coords, profile, None, peak)


def spot_widths(y_nm, z_nm, intensity):
    """Half-maximum widths of a spot in the observation plane.

    Parameters
    ----------
    y_nm : ndarray, shape (Ny,)
    z_nm : ndarray, shape (Nz,)
        Increasing coordinates of the map's grid lines [nm].
    intensity : ndarray, shape (Ny, Nz)
        |E|^2 / |E0|^2 on the grid [-].

    Returns
    -------
    fwhm_y_nm, fwhm_z_nm, area_nm2 : float
        Widths along y and z through the brightest grid point, and
        pi / 4 * fwhm_y * fwhm_z; NaN where the map does not fall to half.
    """
    intensity = np.asarray(intensity, dtype=float)
    iy, iz = np.unravel_index(int(np.argmax(intensity)), intensity.shape)
    fy = _width_through(np.asarray(y_nm, float), intensity[:, iz])
    fz = _width_through(np.asarray(z_nm, float), intensity[iy, :])
    return fy, fz, math.pi / 4.0 * fy * fz


def figures_of_merit(
    wavelength_nm,
    enhancement,
    c_ext_nm2,
    c_abs_nm2,
    *,
    laser_nm,
    converged,
    residual,
    n_iter,
    spot=None,
):
    """One row of figures of merit (keys ``MERIT_COLUMNS``).

    Parameters
    ----------
    wavelength_nm : ndarray, shape (W,)
        Increasing sweep wavelengths [nm]; ``laser_nm`` must be one of them.
    enhancement : ndarray, shape (W,)
        |E|^2 / |E0|^2 at the hotspot [-].
    c_ext_nm2, c_abs_nm2 : ndarray, shape (W,)
        Cross sections [nm^2].
    laser_nm : float
        Laser wavelength [nm].
    converged : ndarray of bool, shape (W,)
    residual : ndarray, shape (W,)
    n_iter : ndarray of int, shape (W,)
    spot : (y_nm, z_nm, intensity) or None
        The observation-plane map at the laser wavelength.
    """
    wl = np.asarray(wavelength_nm, dtype=float)
    enh = np.asarray(enhancement, dtype=float)
    k = int(np.argmin(np.abs(wl - laser_nm)))
    if abs(wl[k] - laser_nm) > 1e-6 * laser_nm:
        raise InvalidParameterError(f"laser_nm must be one of the sweep wavelengths; got {laser_nm:g}")
    res, peak, resolved = refine_peak(wl, enh)
    ff_res, _, ff_resolved = refine_peak(wl, np.asarray(c_ext_nm2, float))
    width = half_max_width(wl, enh, res, peak) if resolved else math.nan
    c_abs_l = float(c_abs_nm2[k])
    enh_l = float(enh[k])
    if spot is not None:
        fy, fz, area = spot_widths(*spot)
    else:
        fy = fz = area = math.nan
    return {
        "resonance_nm": res,
        "resonance_resolved": bool(resolved),
        "far_field_resonance_nm": ff_res,
        "far_field_resonance_resolved": bool(ff_resolved),
        "enhancement_at_laser": enh_l,
        "peak_enhancement": peak,
        "linewidth_nm": width,
        "quality_factor": res / width if width > 0 else math.nan,
        "c_abs_at_laser_nm2": c_abs_l,
        "c_ext_at_laser_nm2": float(c_ext_nm2[k]),
        "heat_per_enhancement_nm2": c_abs_l / enh_l if enh_l > 0 else math.nan,
        "spot_fwhm_y_nm": fy,
        "spot_fwhm_z_nm": fz,
        "spot_area_nm2": area,
        "converged": bool(np.all(converged)),
        "worst_residual": float(np.max(residual)),
        "total_iterations": int(np.sum(n_iter)),
    }
