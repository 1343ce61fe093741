#!/usr/bin/python3
"""Writes linearity.txt: reference values for the calibration-line tests of
package reference, computed with NumPy and SciPy (Debian python3-scipy).

Data sets:
  norris    NIST StRD Norris (x, y) from Norris.dat in this folder.
  straight  invented: a straight line, replicates at each level, a fixed
            pseudo-random error pattern.
  curved    invented: the same levels on a bending line (saturation).

For each: the straight-line fit (scipy.stats.linregress), the quadratic
residual sum of squares (numpy.polyfit), Mandel's fitting test as in
ISO 8466-1 (PG = ((N-2) s1^2 - (N-3) s2^2) / s2^2 against F(1, N-3)), and
the lack-of-fit F test against pure error (scipy.stats.f.sf).

Run:  /usr/bin/python3 gen-linearity.py > linearity.txt
"""
import sys

import numpy as np
import scipy
from scipy import stats


def norris():
    xs, ys = [], []
    for line in open("Norris.dat"):
        if line.startswith("#") or not line.strip():
            continue
        y, x = line.split()
        xs.append(float(x))
        ys.append(float(y))
    return np.array(xs), np.array(ys)


levels = [1.0, 2.0, 4.0, 6.0, 8.0, 10.0, 12.0]
x3 = np.repeat(levels, 3)
# A fixed error pattern (absorbance units), not random so it is reproducible.
err = np.array([0.0011, -0.0007, 0.0003, -0.0012, 0.0008, 0.0002, 0.0006, -0.0009,
                0.0001, -0.0004, 0.0010, -0.0005, 0.0007, -0.0011, 0.0004, -0.0002,
                0.0009, -0.0006, 0.0005, -0.0010, 0.0003])
sets = {
    "norris": norris(),
    "straight": (x3, 0.004 + 0.0812 * x3 + err),
    "curved": (x3, 0.004 + 0.0812 * x3 - 0.0003 * x3 ** 2 + err),
}

out = sys.stdout
out.write("# Reference values for package reference's calibration-line tests.\n")
out.write("# Made by gen-linearity.py with NumPy %s and SciPy %s (Debian python3-scipy).\n"
          % (np.__version__, scipy.__version__))
out.write("# Lines: 'data SET x y' and 'value SET NAME number'.\n")
for name, (x, y) in sets.items():
    if name != "norris":
        for a, b in zip(x, y):
            out.write("data %s %r %r\n" % (name, float(a), float(b)))
    n = len(x)
    lr = stats.linregress(x, y)
    res1 = y - (lr.intercept + lr.slope * x)
    rss1 = float(np.sum(res1 ** 2))
    c2 = np.polyfit(x, y, 2)
    rss2 = float(np.sum((y - np.polyval(c2, x)) ** 2))
    s1sq, s2sq = rss1 / (n - 2), rss2 / (n - 3)
    pg = ((n - 2) * s1sq - (n - 3) * s2sq) / s2sq
    pm = stats.f.sf(pg, 1, n - 3)
    # Pure error from replicates.
    groups = {}
    for a, b in zip(x, y):
        groups.setdefault(float(a), []).append(float(b))
    m = len(groups)
    sspe = sum(sum((v - np.mean(g)) ** 2 for v in g) for g in groups.values())
    vals = {
        "slope": lr.slope, "intercept": lr.intercept,
        "slope_se": lr.stderr, "intercept_se": lr.intercept_stderr,
        "residual_sd": np.sqrt(s1sq), "r2": lr.rvalue ** 2,
        "mandel_f": pg, "mandel_p": pm,
    }
    if n - m >= 1 and m >= 3:
        flof = ((rss1 - sspe) / (m - 2)) / (sspe / (n - m))
        vals["lof_f"] = flof
        vals["lof_p"] = stats.f.sf(flof, m - 2, n - m)
    for k, v in vals.items():
        out.write("value %s %s %r\n" % (name, k, float(v)))
# Critical values of Mandel's test at 99 % (ISO 8466-1 compares PG with
# F(1, N-3) at 99 %): N = 21 for the invented sets, N = 36 for Norris.
for dof in (18, 33):
    out.write("value crit f99_1_%d %r\n" % (dof, float(stats.f.ppf(0.99, 1, dof))))
