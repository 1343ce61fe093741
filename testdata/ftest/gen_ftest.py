#!/usr/bin/python3
"""Generate ftest_fixture.json: upper-tail probabilities and critical values
of Snedecor's F distribution with 1 numerator degree of freedom, as the
automatic nuisance model (unmix/auto.go) uses them for the extra-sum-of-
squares test of one added term.

Run with Debian's interpreter and python3-scipy:

    /usr/bin/python3 gen_ftest.py > ftest_fixture.json

For each denominator dof d2 and level alpha it writes the critical value
scipy.stats.f.isf(alpha, 1, d2), and for a few statistics F the survival
probability scipy.stats.f.sf(F, 1, d2).
"""
import json

import scipy
from scipy import stats

cases = []
for d2 in (5, 20, 100, 300, 1000):
    for alpha in (1e-2, 1e-3, 1e-6):
        cases.append({"d2": d2, "alpha": alpha, "f_crit": float(stats.f.isf(alpha, 1, d2))})
sf = []
for d2 in (5, 20, 100, 300, 1000):
    for f in (0.5, 3.0, 10.0, 40.0, 200.0):
        sf.append({"d2": d2, "f": f, "p": float(stats.f.sf(f, 1, d2))})
print(json.dumps({"source": "scipy %s, scipy.stats.f.isf and scipy.stats.f.sf" % scipy.__version__,
                  "critical": cases, "survival": sf}, indent=1))
