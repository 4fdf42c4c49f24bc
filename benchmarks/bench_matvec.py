"""Cost of one interaction product against six bare FFTs of the same padded grid.

For spheres of 5k to 100k dipoles: median time of FFTInteraction.apply over the
median time of 3 forward + 3 inverse unpruned scipy.fft.fftn/ifftn of the
padded grid (contiguous, in place, all workers), both in this run; also the
tensor set-up time and the time per product against N log N.

Run: /work/venv/bin/python benchmarks/bench_matvec.py
"""

from __future__ import annotations

import time

import numpy as np
import scipy.fft

from _common import median_time, sphere_lattice
from surrogate.solver import FFTInteraction


def main():
    rows = []
    for n_target in (5_000, 10_000, 25_000, 50_000, 100_000):
        radius = (3 * n_target / (4 * np.pi)) ** (1 / 3)
        lat = sphere_lattice(radius, 1.0)
        for dtype in (np.complex128, np.complex64):
            t0 = time.perf_counter()
            op = FFTInteraction(lat.indices, lat.spacing_nm, 0.0157, filtered=False, dtype=dtype)
            t_setup = time.perf_counter() - t0
            p = np.ones((lat.n_dipoles, 3), dtype=dtype)
            t_mv = median_time(lambda: op.apply(p), repeat=7)
            grid = np.ones(op.padded_shape, dtype=dtype)

            def six_ffts():
                for _ in range(3):
                    scipy.fft.fftn(grid, overwrite_x=True, workers=-1)
                for _ in range(3):
                    scipy.fft.ifftn(grid, overwrite_x=True, workers=-1)

            t_fft = median_time(six_ffts, repeat=7)
            m = int(np.prod(op.padded_shape))
            rows.append((lat.n_dipoles, op.padded_shape, np.dtype(dtype).name, t_setup, t_mv, t_fft, t_mv / (m * np.log(m))))
    print(f"{'N':>7} {'padded grid':>16} {'dtype':>10} {'setup s':>8} {'matvec s':>9} {'6 FFT s':>8} {'ratio':>6} {'ns/(M log M)':>12}")
    for n, shape, dt, ts, tm, tf, per in rows:
        print(f"{n:7d} {str(shape):>16} {dt:>10} {ts:8.3f} {tm:9.4f} {tf:8.4f} {tm / tf:6.2f} {per * 1e9:12.2f}")


if __name__ == "__main__":
    main()
