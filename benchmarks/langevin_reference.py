"""Reference values of the inverse Langevin function from mpmath, cached in ``langevin_reference.npz``.

    python -m benchmarks.langevin_reference          # regenerate the cache (about 10 s)

The points (10,200 of them, all exact float64 values) cover [0, 1 − 1e-12] three ways: uniform on
(0, 1), log-spaced small y down to 1e-10 (where series and cancellation matter), and 1 − y log-spaced
from 0.5 down to 1e-12 (the pole, where the chain is almost fully stretched); y = 0 and y = 1 − 1e-12
are included.  Each reference value is the root of coth(x) − 1/x = y solved by Newton's method in
mpmath at 50 significant digits, started from Cohen's Padé form (not from netstretch's own code), with
the residual checked at 50 digits, then rounded to float64 (0.5 ulp).
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

CACHE = Path(__file__).with_name("langevin_reference.npz")
SEED = 20261202
N_UNIFORM, N_SMALL, N_POLE = 4200, 3000, 3000
DPS = 50


def reference_points() -> np.ndarray:
    rng = np.random.default_rng(SEED)
    uniform = rng.uniform(0.0, 1.0, N_UNIFORM)
    small = np.logspace(-10, np.log10(0.5), N_SMALL)
    pole = 1.0 - np.logspace(np.log10(0.5), -12, N_POLE)
    y = np.concatenate(([0.0, 1.0 - 1e-12], uniform, small, pole))
    y = np.unique(y[(y >= 0.0) & (y <= 1.0 - 1e-12)])
    return y


def mp_inverse_langevin(y: float, dps: int = DPS):
    """Root of L(x) = y at ``dps`` digits (mpmath); returns an mpf.  Newton from Cohen's Padé start."""
    import mpmath as mp

    with mp.workdps(dps):
        yy = mp.mpf(y)  # the exact binary value of the double
        if yy == 0:
            return mp.mpf(0)
        x = yy * (3 - yy**2) / (1 - yy**2)  # Cohen 1991 rounded Padé: a start value only
        tol = mp.mpf(10) ** (-(dps - 8))
        for _ in range(200):
            if x < mp.mpf("0.01"):
                # L(x) = x/3 - x^3/45 + 2x^5/945 - x^7/4725 + ...: evaluate by series, no cancellation
                z = x * x
                fx = x * (mp.mpf(1) / 3 - z / 45 + 2 * z**2 / 945 - z**3 / 4725 + 2 * z**4 / 93555
                          - 1382 * z**5 / 638512875) - yy
                dfx = mp.mpf(1) / 3 - z / 15 + 2 * z**2 / 189 - z**3 / 675 + 2 * z**4 / 10395
            else:
                fx = mp.coth(x) - 1 / x - yy
                dfx = 1 / x**2 - 1 / mp.sinh(x) ** 2
            dx = fx / dfx
            xn = x - dx
            if xn <= 0:
                xn = x / 2
            x = xn
            if abs(dx) <= tol * abs(x):
                break
        else:
            raise RuntimeError(f"mpmath Newton did not converge for y = {y!r}")
        return x


def compute_reference(y: np.ndarray) -> np.ndarray:
    return np.array([float(mp_inverse_langevin(float(v))) for v in y])


def load_reference() -> tuple[np.ndarray, np.ndarray]:
    """(y, L⁻¹(y)) from the committed cache; regenerates it if it is missing."""
    if not CACHE.exists():
        write_cache()
    with np.load(CACHE) as data:
        return data["y"], data["x"]


def write_cache() -> Path:
    y = reference_points()
    x = compute_reference(y)
    np.savez_compressed(CACHE, y=y, x=x, dps=DPS, seed=SEED)
    return CACHE


if __name__ == "__main__":
    import time

    t0 = time.perf_counter()
    path = write_cache()
    y, x = load_reference()
    print(f"wrote {path} ({y.size} points, y in [{y.min():g}, 1 - {1 - y.max():.3g}]) "
          f"in {time.perf_counter() - t0:.1f} s")
