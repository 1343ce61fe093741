#!/usr/bin/python3
"""Peer benchmark for scripts/bench.sh: the job of `huesolve solve` on a
wide table, written plainly with NumPy and SciPy.

    numpy_pipeline.py plain|best REFS.json WIDE.csv OUT.csv

It is a yardstick for the benchmark only, never a dependency of huesolve
or of its tests; bench.sh runs it when Debian's python3-numpy and
python3-scipy are installed and says so when they are not.

Both modes read the reference set's absorptivities (times the path) and
an offset column as the design and the table with np.loadtxt, then fit
every scan with non-negative amounts and a free offset:
  plain: scipy.optimize.nnls for each scan (the offset as two columns,
         +1 and -1, since nnls keeps every coefficient non-negative);
  best:  one QR of the design, the unconstrained fit of all scans at
         once, and nnls only for the scans where an amount came out
         negative.
The amounts go to OUT.csv, one row a scan. There is no weighting, no
flagging and no uncertainty: it does less than huesolve does.
"""
import json
import sys

import numpy as np
from scipy.linalg import qr, solve_triangular
from scipy.optimize import nnls


def main():
    mode, refs, table, out = sys.argv[1:5]
    ref = json.load(open(refs))
    eps = np.array([c["absorptivity"] for c in ref["compounds"]]).T * ref["path_cm"]
    data = np.loadtxt(table, delimiter=",", skiprows=1, comments="#")
    y = data[:, 1:]
    if data.shape[0] != eps.shape[0]:
        sys.exit("the table's rows and the reference set's grid differ")
    k = eps.shape[1]
    ones = np.ones((eps.shape[0], 1))
    signed = np.hstack([eps, ones, -ones])
    if mode == "plain":
        amounts = np.empty((y.shape[1], k))
        for j in range(y.shape[1]):
            amounts[j] = nnls(signed, y[:, j])[0][:k]
    elif mode == "best":
        q, r = qr(np.hstack([eps, ones]), mode="economic")
        b = solve_triangular(r, q.T @ y)
        amounts = b[:k].T.copy()
        for j in np.nonzero((b[:k] < 0).any(axis=0))[0]:
            amounts[j] = nnls(signed, y[:, j])[0][:k]
    else:
        sys.exit("mode must be plain or best")
    np.savetxt(out, amounts, delimiter=",", fmt="%.6g")


if __name__ == "__main__":
    main()
