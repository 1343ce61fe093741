#!/usr/bin/python3
"""Generate scipy_mixture.json: invented mixtures of four Gaussian-band
compounds with noise, solved by SciPy, to check the sample model of
package unmix against an outside implementation.

Run with Debian's interpreter and python3-scipy:

    /usr/bin/python3 gen_mixture.py > scipy_mixture.json

Each case gives the reference grid (nm), the absorptivities (per unit
concentration per cm, path 1 cm), the calibration noise (AU), a sample
scan (absorbance) and a baseline ("offset" or "linear", the Legendre
columns 1 and t = (l - c)/h of package baseline). The answers:

  conc, baseline   scipy.optimize.lsq_linear(method="bvls"), compounds
                   bounded to [0, inf), baseline terms free; unweighted,
                   or weighted (rows divided by sigma) when "weighted"
  unconstrained    numpy.linalg.lstsq of the same (whitened) system
  lod              3.3 * sqrt(sum_i (P_ki s_i)^2), P = numpy.linalg.pinv of
                   the (whitened) design, s_i = sigma_i unweighted, 1
                   weighted (net analyte signal, Lorber 1986; ICH Q2)
  se, ci95_lo,     for unweighted cases with every compound off the bound
  ci95_hi          and its interval above zero only: the ordinary least-squares standard errors
                   sqrt(s^2 diag((X'X)^-1)), with s^2 = RSS/(n-p) and
                   diag((X'X)^-1) the squared row norms of pinv(X), and
                   the 95 % interval conc -/+ t * se with
                   t = scipy.stats.t.ppf(0.975, n-p) (n points, p
                   coefficients: compounds and baseline terms)

with the noise model sigma_i = noise_i * sqrt(1 + 10^(2 (A_i - 1))),
A_i the sample's absorbance clipped to [0, 2]. The data are invented
(fixed seed); only the answers come from SciPy and NumPy.
"""
import json
import sys

import numpy as np
import scipy
from scipy import stats
from scipy.optimize import lsq_linear

rng = np.random.default_rng(20261202)
grid = np.arange(400.0, 700.0 + 1e-9, 2.0)
bands = [[(430, 25, 0.05)], [(505, 30, 0.04)], [(560, 35, 0.06), (420, 30, 0.005)], [(630, 30, 0.08)]]
eps = np.array([sum(h * np.exp(-0.5 * ((grid - p) / w) ** 2) for p, w, h in b) for b in bands])
noise = np.full(grid.size, 0.002)


def case(name, conc, offset, slope, model, weighted):
    a = conc @ eps + offset + slope * (grid - 550) + 0.002 * rng.standard_normal(grid.size)
    a = np.round(a, 6)
    c, h = (grid[0] + grid[-1]) / 2, (grid[-1] - grid[0]) / 2
    cols = [np.ones_like(grid)]
    if model == "linear":
        cols.append((grid - c) / h)
    x = np.column_stack([eps.T] + cols)
    sig = noise * np.sqrt(1 + 10 ** (2 * (np.clip(a, 0, 2) - 1)))
    xs, ys = (x / sig[:, None], a / sig) if weighted else (x, a)
    nc = eps.shape[0]
    lb = np.r_[np.zeros(nc), np.full(len(cols), -np.inf)]
    res = lsq_linear(xs, ys, bounds=(lb, np.inf), method="bvls", tol=1e-14, lsmr_tol=None)
    free = np.linalg.lstsq(xs, ys, rcond=None)[0]
    p = np.linalg.pinv(xs)
    s = np.ones_like(sig) if weighted else sig
    lod = 3.3 * np.sqrt(((p * s) ** 2).sum(axis=1))
    out = {
        "name": name, "baseline": model, "weighted": weighted,
        "sample": a.tolist(),
        "conc": res.x[:nc].tolist(), "baseline_coef": res.x[nc:].tolist(),
        "unconstrained": free[:nc].tolist(), "lod": lod[:nc].tolist(),
    }
    if not weighted and (res.x[:nc] > 0).all():
        n, k = x.shape
        # Off the bound the bounded fit is the ordinary one.
        assert np.allclose(res.x, free, rtol=0, atol=1e-9)
        rss = float(((a - x @ free) ** 2).sum())
        s2 = rss / (n - k)
        se = np.sqrt(s2 * (p ** 2).sum(axis=1))
        t = stats.t.ppf(0.975, n - k)
        lo, hi = free - t * se, free + t * se
        if (lo[:nc] > 0).all():
            out.update({"dof": n - k, "s2": s2, "t975": t, "se": se[:nc].tolist(),
                        "ci95_lo": lo[:nc].tolist(), "ci95_hi": hi[:nc].tolist()})
    return out


cases = [
    case("four-offset", np.array([5, 3, 2, 8]), 0.01, 0, "offset", False),
    case("absent-linear", np.array([5, 3, 0, 8]), 0.03, 1e-4, "linear", False),
    case("two-absent", np.array([0, 6, 0.0, 1.5]), 0.0, 0, "offset", False),
    case("weighted-strong", np.array([12, 8, 10, 18]), 0.02, 0, "offset", True),
    case("four-linear", np.array([4, 6, 3, 2]), 0.015, -5e-5, "linear", False),
]
json.dump({
    "source": "scipy %s / numpy %s (gen_mixture.py)" % (scipy.__version__, np.__version__),
    "grid": grid.tolist(), "absorptivity": eps.tolist(), "noise": noise.tolist(), "cases": cases,
}, sys.stdout, indent=1)
sys.stdout.write("\n")
