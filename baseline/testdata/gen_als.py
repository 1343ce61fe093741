#!/usr/bin/python3
"""Generate als_scipy.txt: a synthetic absorbance spectrum (smooth known
background + Gaussian bands + noise) and its asymmetric least squares
background (Eilers & Boelens 2005) solved with scipy.sparse.linalg.spsolve,
the reference for the baseline package's tests.

Run with Debian's python3-scipy:  /usr/bin/python3 gen_als.py > als_scipy.txt
"""
import numpy as np
import scipy
from scipy import sparse
from scipy.sparse.linalg import spsolve


def als(y, lam, p, maxiter=100):
    n = len(y)
    # Second-difference operator D ((n-2) x n), penalty lam * D'D.
    D = sparse.diags([1.0, -2.0, 1.0], [0, 1, 2], shape=(n - 2, n))
    P = lam * (D.T @ D)
    w = np.ones(n)
    for it in range(1, maxiter + 1):
        W = sparse.diags(w, 0)
        z = spsolve(sparse.csc_matrix(W + P), w * y)
        nw = np.where(y > z, p, 1 - p)
        if np.array_equal(nw, w):
            return z, it
        w = nw
    raise RuntimeError("no convergence")


x = 300.0 + np.arange(500)
background = 0.15 + 0.25 * np.exp(-(x - 300) / 200) + 0.04 * ((x - 550) / 250) ** 2
bands = (0.8 * np.exp(-0.5 * ((x - 380) / 6) ** 2) + 0.5 * np.exp(-0.5 * ((x - 470) / 8) ** 2)
         + 1.0 * np.exp(-0.5 * ((x - 610) / 5) ** 2) + 0.3 * np.exp(-0.5 * ((x - 700) / 10) ** 2))
rng = np.random.default_rng(20050101)
y = background + bands + rng.normal(0, 0.002, x.size)

print("# Asymmetric least squares reference from SciPy %s (numpy %s), made by gen_als.py." % (scipy.__version__, np.__version__))
print("# Synthetic: grid 300..799 nm step 1; background 0.15 + 0.25 exp(-(x-300)/200) + 0.04 ((x-550)/250)^2;")
print("# Gaussian bands (height, centre, sd nm) (0.8,380,6) (0.5,470,8) (1.0,610,5) (0.3,700,10); noise sd 0.002.")
print("# Lines: x, background, y, then 'als LAMBDA P ITER z...' per setting (iterated until the weights repeat).")
print("x " + " ".join(repr(float(v)) for v in x))
print("background " + " ".join(repr(float(v)) for v in background))
print("y " + " ".join(repr(float(v)) for v in y))
for lam, p in [(1e5, 0.01), (1e6, 0.001), (1e3, 0.05)]:
    z, it = als(y, lam, p)
    print("als %r %r %d %s" % (lam, p, it, " ".join(repr(float(v)) for v in z)))
