#!/usr/bin/python3
"""Generate nnls_fixture.json: random least-squares problems with
non-negative (and some free) coefficients, solved by SciPy.

Run with Debian's interpreter and python3-scipy:

    /usr/bin/python3 gen_nnls.py > nnls_fixture.json

All-non-negative problems are solved by scipy.optimize.nnls (the
Lawson-Hanson Fortran code). Problems with free columns are solved by
projecting the free block out (numpy.linalg.qr), scipy.optimize.nnls on the
projected problem, and back-substitution for the free coefficients; that
answer is cross-checked against scipy.optimize.lsq_linear(method="bvls")
with bounds (0, inf) / (-inf, inf) before it is written. The data are
random (fixed seed); only the answers come from SciPy.
"""
import json
import sys

import numpy as np
import scipy
from scipy.optimize import lsq_linear, nnls

rng = np.random.default_rng(20240517)


def bands(m, k, rng, offset=0.0):
    """k Gaussian bands on m points, optionally plus a constant offset."""
    t = np.linspace(0.0, 1.0, m)
    c = rng.uniform(0.1, 0.9, k)
    w = rng.uniform(0.05, 0.2, k)
    return np.exp(-0.5 * ((t[:, None] - c) / w) ** 2) + offset


def make(kind, m, n, nfree, rng):
    """Design A (m x n; the first nfree columns free) and y."""
    if kind == "gauss":
        a = rng.standard_normal((m, n))
    elif kind == "bands":
        a = bands(m, n, rng)
    elif kind == "bands_offset":
        a = bands(m, n, rng, offset=rng.uniform(0.05, 0.5))
    elif kind.startswith("neardup"):
        rel = {"neardup3": 1e-3, "neardup4": 1e-4}[kind]
        a = bands(m, n, rng)
        j = rng.integers(1, n)
        a[:, j] = a[:, 0] * (1 + rel * rng.standard_normal(m))
    elif kind == "scaled":
        a = bands(m, n, rng) * 10.0 ** rng.uniform(-3, 3, n)
    else:
        raise ValueError(kind)
    if nfree:
        t = np.linspace(-1.0, 1.0, m)
        for f in range(nfree):
            a[:, f] = t ** f
    x = rng.uniform(0.0, 2.0, n)
    # several zeros and some negative "true" values, which the constraint
    # turns into zeros
    x[rng.random(n) < 0.3] = 0.0
    x[rng.random(n) < 0.25] *= -1.0
    if nfree:
        x[:nfree] = rng.standard_normal(nfree)
    y = a @ x + 0.01 * rng.standard_normal(m) * np.abs(a @ x).max()
    if kind == "bands_offset":
        y += rng.uniform(-0.1, 0.3)
    # Round the data to 10 significant digits before solving: the file then
    # holds the exact inputs SciPy saw, in short decimal form.
    r10 = np.vectorize(lambda v: float("%.10g" % v))
    return r10(a), r10(y)


def solve_mixed(a, y, nfree):
    n = a.shape[1]
    if nfree == 0:
        x, rnorm = nnls(a, y, maxiter=50 * n)
        return x, rnorm
    q, r = np.linalg.qr(a[:, :nfree])
    proj = lambda v: v - q @ (q.T @ v)
    s = a[:, nfree:]
    c, _ = nnls(proj(s), proj(y), maxiter=50 * n)
    beta = np.linalg.solve(r, q.T @ (y - s @ c))
    x = np.concatenate([beta, c])
    lo = np.r_[np.full(nfree, -np.inf), np.zeros(n - nfree)]
    chk = lsq_linear(a, y, bounds=(lo, np.inf), method="bvls", tol=1e-14,
                     lsmr_tol=None, max_iter=1000)
    scale = max(1.0, np.abs(x).max())
    if np.abs(chk.x - x).max() > 1e-7 * scale:
        raise RuntimeError("projection and bvls disagree: %g" % np.abs(chk.x - x).max())
    return x, np.linalg.norm(y - a @ x)


shapes = [(5, 3), (8, 8), (12, 4), (20, 6), (30, 10), (50, 5), (60, 12),
          (101, 8), (150, 15), (401, 6)]
kinds = ["gauss", "bands", "bands_offset", "neardup3", "neardup4", "scaled"]
problems = []
for m, n in shapes:
    for kind in kinds:
        if kind.startswith("neardup") and n < 2:
            continue
        for nfree in (0, min(2, n - 1)):
            a, y = make(kind, m, n, nfree, rng)
            x, rnorm = solve_mixed(a, y, nfree)
            problems.append({
                "name": "%s_%dx%d_free%d" % (kind, m, n, nfree),
                "rows": m, "cols": n,
                "nonneg": [j >= nfree for j in range(n)],
                "cond": float(np.linalg.cond(a / np.linalg.norm(a, axis=0))),
                "a": [float(v) for v in a.ravel()],
                "y": [float(v) for v in y],
                "x": [float(v) for v in x],
                "rnorm": float(rnorm),
            })

# One problem per line, so that diffs and failures point at a problem.
head = json.dumps({
    "source": "scipy.optimize.nnls (Lawson-Hanson Fortran) and lsq_linear bvls cross-check",
    "generator": "testdata/scipy/gen_nnls.py",
    "scipy_version": scipy.__version__,
    "numpy_version": np.__version__,
    "python_version": sys.version.split()[0],
})
sys.stdout.write(head[:-1] + ',\n"problems": [\n')
sys.stdout.write(",\n".join(json.dumps(p) for p in problems))
sys.stdout.write("\n]}\n")
