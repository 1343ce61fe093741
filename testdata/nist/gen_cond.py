#!/usr/bin/python3
"""Generate cond.csv: 2-norm condition numbers of the NIST StRD design
matrices [1, x1, ..., xk] built from the data in Longley.dat and Norris.dat
(these are not NIST certified values; they are computed here).

Run with Debian's interpreter, python3-numpy and python3-mpmath:

    cd testdata/nist && /usr/bin/python3 gen_cond.py > cond.csv

cond2_mpmath is the ratio of the largest to the smallest singular value
from mpmath.svd_r at 50 significant digits (the data are exact decimals,
read as such), printed to 15 digits; cond2_numpy is numpy.linalg.cond in
double precision, for comparison.
"""
import sys

import mpmath
import numpy as np

mpmath.mp.dps = 50


def rows(name):
    """Data rows (y, x1, ..., xk) of a StRD file as decimal strings."""
    out = []
    with open(name) as fh:
        for line in fh:
            if line.startswith("#") or not line.strip():
                continue
            out.append(line.split())
    return out


def design(data):
    """[1, x1, ..., xk] for each row."""
    return [["1"] + r[1:] for r in data]


print("file,cond2_mpmath,cond2_numpy")
for name in ("Longley.dat", "Norris.dat"):
    x = design(rows(name))
    sv = mpmath.svd_r(mpmath.matrix([[mpmath.mpf(v) for v in r] for r in x]), compute_uv=False)
    sv = [sv[i] for i in range(len(sv))]
    exact = max(sv) / min(sv)
    approx = np.linalg.cond(np.array([[float(v) for v in r] for r in x]), 2)
    print("%s,%s,%.15g" % (name, mpmath.nstr(exact, 15), approx))
sys.stdout.flush()
